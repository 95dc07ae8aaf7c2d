package stats

import (
	"flag"
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"sync"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

var update = flag.Bool("update", false, "recompute "+kendallExactPath+" with exact big-integer arithmetic (slow: about half a minute)")

var (
	// kendallRPath is written by testdata/ref/kendall_null_reference.R.
	kendallRPath = filepath.Join("..", "..", "testdata", "ref", "kendall_null_reference.csv")
	// kendallExactPath is written by TestKendallExactN1000 under -update.
	kendallExactPath = filepath.Join("..", "..", "testdata", "ref", "kendall_null_exact.csv")
)

// exactRelBound is the relative error KendallExactP is proven to stay
// within for results in the normal float64 range, (2n + 4)·2⁻⁵³ (see
// inversionLowerCDF), plus 2⁻⁵³ for the rounding of the reference value to
// float64. It is 2.2·10⁻¹³ at n = 1000.
func exactRelBound(n int) float64 { return float64(2*n+5) * 0x1p-53 }

// warmN1000 builds the whole lower half at n = 1000 once, so that the tests
// using n = 1000 do not each grow the table again.
func warmN1000() { KendallExactP(0, 1000, TwoSided) }

// checkTail compares a p-value with the float64 nearest to its exact value:
// within exactRelBound in the normal range; within one unit (2⁻¹⁰⁷⁴) when
// the exact value is subnormal; exactly 0 when the exact value rounds to 0,
// and never 0 otherwise.
func checkTail(t *testing.T, what string, n int, got, want float64) {
	t.Helper()
	switch {
	case want == 0:
		if got != 0 {
			t.Errorf("%s = %g, want 0 (the exact value is below 2^-1075)", what, got)
		}
	case got == 0:
		t.Errorf("%s = 0, want %.17g (representable)", what, want)
	case want < 0x1p-1022:
		if math.Abs(got-want) > 0x1p-1074 {
			t.Errorf("%s = %g, want %g within one subnormal unit", what, got, want)
		}
	case math.Abs(got-want) > exactRelBound(n)*want:
		t.Errorf("%s = %.17g, want %.17g (relative error %.2g > %.2g)", what, got, want, math.Abs(got-want)/want, exactRelBound(n))
	}
}

// inversionCounts enumerates all n! permutations (Heap's algorithm) and
// returns how many have each number of inversions, counted pair by pair.
// Test-only brute force.
func inversionCounts(n int) []int64 {
	counts := make([]int64, n*(n-1)/2+1)
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	count := func() {
		inv := 0
		for i := range p {
			for j := i + 1; j < n; j++ {
				if p[i] > p[j] {
					inv++
				}
			}
		}
		counts[inv]++
	}
	count()
	c := make([]int, n)
	for i := 1; i < n; {
		if c[i] < i {
			j := 0
			if i%2 == 1 {
				j = c[i]
			}
			p[i], p[j] = p[j], p[i]
			count()
			c[i]++
			i = 1
		} else {
			c[i] = 0
			i++
		}
	}
	return counts
}

// mahonianCounts returns the exact Mahonian numbers M(n, j), j = 0..m: the
// number of permutations of n with j inversions. It builds whole rows (no
// symmetry, no scaling) with the recurrence M(k, j) = Σ_{t=j−k+1..j}
// M(k−1, t), in big integers, so it shares no rounding with the code under
// test. Test-only oracle.
func mahonianCounts(n, m int) []big.Int {
	prev := make([]big.Int, m+1)
	cur := make([]big.Int, m+1)
	prev[0].SetInt64(1)
	var w big.Int
	for k := 2; k <= n; k++ {
		full := (k - 1) * (k - 2) / 2 // largest count with k − 1 elements
		w.SetInt64(0)
		for j := 0; j <= min(m, k*(k-1)/2); j++ {
			if j <= full {
				w.Add(&w, &prev[j])
			}
			if j >= k {
				w.Sub(&w, &prev[j-k])
			}
			cur[j].Set(&w)
		}
		for j := min(m, k*(k-1)/2) + 1; j <= m; j++ {
			cur[j].SetInt64(0)
		}
		prev, cur = cur, prev
	}
	return prev
}

// exactLowerTails returns the float64 nearest to P(I ≤ j) = Σ_{t≤j} M(n, t)
// / n!, j = 0..len(counts)−1, rounding once from a 256-bit quotient.
func exactLowerTails(n int, counts []big.Int) []float64 {
	fact := new(big.Int).MulRange(1, int64(n))
	den := new(big.Float).SetPrec(256).SetInt(fact)
	out := make([]float64, len(counts))
	var sum big.Int
	for j := range counts {
		sum.Add(&sum, &counts[j])
		q := new(big.Float).SetPrec(256).SetInt(&sum)
		out[j], _ = q.Quo(q, den).Float64()
	}
	return out
}

// TestMahonianRows checks rows n = 1..7 of the Mahonian numbers, OEIS
// A008302 ("Triangle of Mahonian numbers T(n,k): coefficients in expansion
// of Product_{i=0..n-1} (1 + x + ... + x^i)"). The rows are from memory,
// confirmed here by enumerating all n! permutations (they agree exactly),
// and each row sums to n!. KendallExactP must reproduce their cumulative
// sums over n!: Greater at S = N − 2j is P(I ≤ j).
func TestMahonianRows(t *testing.T) {
	rows := [][]int64{
		{1},
		{1, 1},
		{1, 2, 2, 1},
		{1, 3, 5, 6, 5, 3, 1},
		{1, 4, 9, 15, 20, 22, 20, 15, 9, 4, 1},
		{1, 5, 14, 29, 49, 71, 90, 101, 101, 90, 71, 49, 29, 14, 5, 1},
		{1, 6, 20, 49, 98, 169, 259, 359, 455, 531, 573, 573, 531, 455, 359, 259, 169, 98, 49, 20, 6, 1},
	}
	fact := int64(1)
	for i, row := range rows {
		n := i + 1
		fact *= int64(n)
		if got := inversionCounts(n); !slices.Equal(got, row) {
			t.Errorf("n = %d: enumeration gives %v, A008302 row %v", n, got, row)
		}
		var sum int64
		for _, c := range row {
			sum += c
		}
		if sum != fact {
			t.Errorf("n = %d: row sums to %d, want n! = %d", n, sum, fact)
		}
		if n < 2 {
			continue
		}
		total := pairsIn(n)
		var cum int64
		for j, c := range row {
			cum += c
			want := float64(cum) / float64(fact) // one rounding of an exact ratio
			got := KendallExactP(total-2*int64(j), n, Greater)
			checkTail(t, fmt.Sprintf("n = %d, P(I ≤ %d)", n, j), n, got, want)
		}
	}
}

// TestKendallExactEnumeration compares every p-value for n = 2..9 with the
// brute-force distribution of all n! permutations: P(S ≥ s) = P(I ≤ i),
// P(S ≤ s) = P(I ≥ i) with i = (N − s)/2, and the two-sided value
// min(1, 2·min of the two), each the float64 nearest an exact ratio of
// integers.
func TestKendallExactEnumeration(t *testing.T) {
	fact := int64(1)
	for n := 2; n <= 9; n++ {
		fact *= int64(n)
		counts := inversionCounts(n)
		total := pairsIn(n)
		for i := range counts {
			var low, high int64 // permutations with ≤ i and ≥ i inversions
			for j, c := range counts {
				if j <= i {
					low += c
				}
				if j >= i {
					high += c
				}
			}
			s := total - 2*int64(i)
			two := math.Min(1, float64(2*min(low, high))/float64(fact))
			for _, chk := range []struct {
				alt  Alternative
				want float64
			}{
				{Greater, float64(low) / float64(fact)},
				{Less, float64(high) / float64(fact)},
				{TwoSided, two},
			} {
				checkTail(t, fmt.Sprintf("n = %d, S = %d, %v", n, s, chk.alt), n, KendallExactP(s, n, chk.alt), chk.want)
			}
		}
	}
}

// TestKendallExactAgainstR checks KendallExactP against R 4.2.2,
// cor.test(x, y, method = "kendall", exact = TRUE), for n = 3..49 without
// ties (file testdata/ref/kendall_null_reference.csv, script
// kendall_null_reference.R). R's exact p-values come from the distribution
// of T = n_c; its two-sided value is min(1, 2·min(P(T ≤ t), P(T ≥ t))), the
// same as ours by symmetry. R computes its upper tails as 1 − P(T ≤ t − 1),
// so those carry an absolute error of a few units of 2⁻⁵³ whatever their
// size (at n = 49, S = N it prints 1.6e-15 for 1/49! = 1.6e-63): they are
// compared within 1e-12 relative plus 1e-14 absolute (the largest such
// difference is 3.1e-15); R's lower tails, summed directly, within 1e-12
// relative (largest: 1.6e-15). The SuppDists 1.1-9.7 column (pKendall,
// exact for n < 13, lower tails only, an implementation independent of
// R's) carries its own rounding of up to 9e-13 relative (it gives
// 0.16666666666651503 for P(S ≥ 3) = 1/6 at n = 3), so it is compared
// within 1e-11.
func TestKendallExactAgainstR(t *testing.T) {
	recs := readCSV(t, kendallRPath)
	if len(recs) < 1000 {
		t.Fatalf("%s has %d rows, want over 1000", kendallRPath, len(recs))
	}
	alts := map[string]Alternative{"two-sided": TwoSided, "greater": Greater, "less": Less}
	var suppdists int
	for line, rec := range recs[1:] {
		where := fmt.Sprintf("%s line %d", kendallRPath, line+2)
		n, err1 := strconv.Atoi(rec[0])
		i, err2 := strconv.ParseInt(rec[1], 10, 64)
		s, err3 := strconv.ParseInt(rec[2], 10, 64)
		alt, ok := alts[rec[3]]
		pR, err4 := strconv.ParseFloat(rec[4], 64)
		if err1 != nil || err2 != nil || err3 != nil || err4 != nil || !ok {
			t.Fatalf("%s: cannot parse %q", where, rec)
		}
		if s != pairsIn(n)-2*i {
			t.Fatalf("%s: S = %d, I = %d inconsistent for n = %d", where, s, i, n)
		}
		got := KendallExactP(s, n, alt)
		// R's upper tail (in T, i.e. in S) is a difference from 1.
		rSubtracts := alt == Greater || (alt == TwoSided && s > 0)
		tol := 1e-12 * pR
		if rSubtracts {
			tol += 1e-14
		}
		if math.Abs(got-pR) > tol || got == 0 {
			t.Errorf("%s: n = %d, S = %d, %v: got %.17g, R %.17g", where, n, s, alt, got, pR)
		}
		if rec[5] != "NA" {
			suppdists++
			pS, err := strconv.ParseFloat(rec[5], 64)
			if err != nil {
				t.Fatalf("%s: %v", where, err)
			}
			if !closeRel(got, pS, 1e-11) {
				t.Errorf("%s: n = %d, S = %d, %v: got %.17g, SuppDists %.17g", where, n, s, alt, got, pS)
			}
		}
	}
	if suppdists < 300 {
		t.Errorf("only %d SuppDists values checked", suppdists)
	}
}

// TestKendallExactHollanderWolfe: the tuna example of Hollander & Wolfe
// (TestKendallHollanderWolfe) has n = 9, S = 16; R 4.2.2's documentation
// of cor.test runs it with alternative = "greater" and prints T = 26,
// p-value = 0.05972 (from memory; the same case, n = 9 with 10 inversions,
// is in the R reference file at full precision). Four significant digits:
// tolerance half a unit in the last place.
func TestKendallExactHollanderWolfe(t *testing.T) {
	if got := KendallExactP(16, 9, Greater); math.Abs(got-0.05972) > 5e-6 {
		t.Errorf("P(S ≥ 16 | n = 9) = %.6f, want 0.05972", got)
	}
}

// TestKendallExactFarTail checks relative accuracy far into the tails
// against exact rationals (big-integer Mahonian counts over n!, rounded
// once to float64): at n = 200 every lower tail P(I ≤ i), i ≤ 2000, which
// runs from 1/200! ≈ 1.3e-375 (below float64: must be 0) through the
// underflow boundary (the first representable value, at i = 48, is a
// subnormal) up to about 6e-93; and at n = 1000, i ≤ 2000, where every tail
// is below 1e-1700, so the only correct float64 answer is 0. Representable
// tails at n = 1000 start near i = 73 000: TestKendallExactN1000.
func TestKendallExactFarTail(t *testing.T) {
	warmN1000()
	for _, n := range []int{200, 1000} {
		const m = 2000
		want := exactLowerTails(n, mahonianCounts(n, m))
		total := pairsIn(n)
		nonzero := 0
		for i, w := range want {
			s := total - 2*int64(i)
			what := fmt.Sprintf("n = %d, P(I ≤ %d)", n, i)
			checkTail(t, what+" greater", n, KendallExactP(s, n, Greater), w)
			checkTail(t, what+" less", n, KendallExactP(-s, n, Less), w)
			if w != 0 {
				nonzero++
			}
		}
		// The two-sided value doubles the tail: compare where doubling is
		// exact in the reference too (normal range).
		for _, i := range []int{100, 500, 2000} {
			if want[i] >= 0x1p-1021 {
				checkTail(t, fmt.Sprintf("n = %d, i = %d, two-sided", n, i), n, KendallExactP(total-2*int64(i), n, TwoSided), 2*want[i])
			}
		}
		switch n {
		case 200: // the range must cross the underflow boundary
			if want[0] != 0 || want[m] < 1e-100 || nonzero < m-100 {
				t.Errorf("n = 200: reference tails %g … %g, %d nonzero; the test no longer spans the boundary", want[0], want[m], nonzero)
			}
		case 1000:
			if nonzero != 0 {
				t.Errorf("n = 1000: %d reference tails representable; expected none below i = 2000", nonzero)
			}
		}
	}
}

// TestKendallExactN1000 checks n = 1000 tails in the representable far tail
// against exact rationals stored in testdata/ref/kendall_null_exact.csv:
// big-integer Mahonian counts M(1000, j) for j ≤ 100 000 (mahonianCounts),
// summed and divided by 1000! with 256 bits, rounded once to float64. The
// rows cover the underflow boundary (the exact tail first rounds to a
// nonzero float64 at i = 73 046, the smallest subnormal), subnormal tails,
// and normal ones from about 1e-305 to 1e-211 (i = 100 000). The
// computation takes about half a minute, so the values are stored;
//
//	go test -run TestKendallExactN1000 ./engine/stats/ -args -update
//
// rewrites the file.
func TestKendallExactN1000(t *testing.T) {
	const n = 1000
	warmN1000()
	if *update {
		writeKendallExact(t, n, 100000)
	}
	recs := readCSV(t, kendallExactPath)
	zeros, rows := 0, 0
	for line, rec := range recs[1:] {
		nn, err1 := strconv.Atoi(rec[0])
		i, err2 := strconv.ParseInt(rec[1], 10, 64)
		want, err3 := strconv.ParseFloat(rec[2], 64)
		if err1 != nil || err2 != nil || err3 != nil || nn != n {
			t.Fatalf("%s line %d: cannot parse %q", kendallExactPath, line+2, rec)
		}
		rows++
		if want == 0 {
			zeros++
		}
		s := pairsIn(n) - 2*i
		checkTail(t, fmt.Sprintf("n = %d, P(I ≤ %d)", n, i), n, KendallExactP(s, n, Greater), want)
	}
	if rows < 10 || zeros == 0 || zeros == rows {
		t.Errorf("%s: %d rows, %d of them 0; want rows on both sides of the underflow boundary", kendallExactPath, rows, zeros)
	}
}

// writeKendallExact computes the exact lower tails of the inversion count
// at n up to m and writes the chosen rows to kendallExactPath.
func writeKendallExact(t *testing.T, n, m int) {
	want := exactLowerTails(n, mahonianCounts(n, m))
	first := slices.IndexFunc(want, func(p float64) bool { return p != 0 })
	if first < 1 {
		t.Fatalf("n = %d: no underflow boundary below i = %d", n, m)
	}
	rows := []int{first - 10, first - 1, first, first + 1, first + 10, first + 100, first + 1000}
	for i := 75000; i <= m; i += 1000 {
		if i <= 80000 || i%5000 == 0 {
			rows = append(rows, i)
		}
	}
	out := "n,inversions,p_lower\n"
	for _, i := range rows {
		out += fmt.Sprintf("%d,%d,%s\n", n, i, strconv.FormatFloat(want[i], 'g', 17, 64))
	}
	if err := os.WriteFile(kendallExactPath, []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestKendallExactCentre compares n = 1000 with two approximations near the
// centre, where they are accurate. (1) KendallNormal (no continuity
// correction) within 1e-3 relative at one- and two-sided p ≈ 0.05: its
// error is the sum of the continuity term (≈ +2e-4 relative) and the
// kurtosis term (≈ −3.5e-4), both O(1/n). (2) The Edgeworth series with the
// fourth cumulant and a continuity correction,
//
//	P(S ≥ s) ≈ Q(x) + φ(x)·γ₂/24·(x³ − 3x),  x = (s − 1)/σ,
//
// within 1e-5 relative for |z| ≤ 3: its error is O(1/n²), about 3e-6 here
// and 25 times larger at n = 200, as O(1/n²) predicts. S = N − 2I, with
// I a sum of independent uniforms on 0..k−1, whose cumulants are
// κ₂ = (k² − 1)/12 and κ₄ = −(k⁴ − 1)/120 (from memory; at k = 2 they give
// the Bernoulli(½) values 1/4 and −1/8), so γ₂ = Σκ₄/(Σκ₂)². Sources:
// Kendall (1970), Rank Correlation Methods, 4th ed., ch. 5 (S as a sum of
// independent uniform scores); H. Cramér (1946), Mathematical Methods of
// Statistics (Princeton), ch. 17 (the Edgeworth series).
func TestKendallExactCentre(t *testing.T) {
	const n = 1000
	warmN1000()
	total := pairsIn(n)
	var k2, k4 float64
	for k := 1; k <= n; k++ {
		kk := float64(k)
		k2 += (kk*kk - 1) / 12
		k4 -= (kk*kk*kk*kk - 1) / 120
	}
	sigma := 2 * math.Sqrt(k2) // S = N − 2I
	gamma2 := k4 / (k2 * k2)
	if want := math.Sqrt(float64(n*(n-1)*(2*n+5)) / 18); math.Abs(sigma-want) > 1e-9*want {
		t.Fatalf("σ from cumulants %.12g, Kendall's √(n(n−1)(2n+5)/18) = %.12g", sigma, want)
	}
	atZ := func(z float64) int64 { // the attainable S nearest z·σ
		s := int64(math.Round(z * sigma))
		if (total-s)%2 != 0 {
			s++
		}
		return s
	}
	for _, c := range []struct {
		z   float64
		alt Alternative
	}{{1.645, Greater}, {1.96, TwoSided}} {
		s := atZ(c.z)
		pc := PairCounts{N: n, Concordant: (total + s) / 2, Discordant: (total - s) / 2}
		exact, normal := KendallExactP(s, n, c.alt), KendallNormal(pc, c.alt)
		if !closeRel(normal, exact, 1e-3) {
			t.Errorf("S = %d, %v: exact %.10g, normal %.10g", s, c.alt, exact, normal)
		}
	}
	for _, z := range []float64{0.5, 1, 1.645, 1.96, 2.326, 2.576, 3} {
		s := atZ(z)
		x := float64(s-1) / sigma
		phi := math.Exp(-x*x/2) / math.Sqrt(2*math.Pi)
		edgeworth := distuv.UnitNormal.CDF(-x) + phi*gamma2/24*(x*x*x-3*x)
		if exact := KendallExactP(s, n, Greater); !closeRel(edgeworth, exact, 1e-5) {
			t.Errorf("S = %d (z ≈ %v): exact %.12g, Edgeworth %.12g", s, z, exact, edgeworth)
		}
	}
}

// TestKendallExactProperties checks, for every S at n = 2..60 and at
// sampled S for n = 171, 500 and 1000: the symmetry P(S ≥ s) = P(S ≤ −s)
// (bit for bit) and TwoSided(s) = TwoSided(−s) = min(1, 2·min tail);
// monotonicity of each tail in s; P(S ≥ −N) = 1; P(S ≥ s) + P(S ≤ s) −
// P(S = s) = 1; and no 0 where the value is representable (n ≤ 170 always;
// 1/171! ≈ 8e-310 is still subnormal).
func TestKendallExactProperties(t *testing.T) {
	warmN1000()
	check := func(n int, ss []int64) {
		total := pairsIn(n)
		prevG, prevL := 2.0, -1.0
		for k, s := range ss {
			g, l, two := KendallExactP(s, n, Greater), KendallExactP(s, n, Less), KendallExactP(s, n, TwoSided)
			if g2 := KendallExactP(-s, n, Less); g2 != g {
				t.Fatalf("n = %d, S = %d: P(S ≥ s) = %.17g, P(S ≤ −s) = %.17g", n, s, g, g2)
			}
			if two2 := KendallExactP(-s, n, TwoSided); two2 != two {
				t.Fatalf("n = %d, S = %d: two-sided %.17g at s, %.17g at −s", n, s, two, two2)
			}
			// Each side rounds once; below 2⁻¹⁰²² that is a subnormal unit.
			if want := math.Min(1, 2*math.Min(g, l)); math.Abs(two-want) > exactRelBound(n)*want+0x1p-1074 {
				t.Fatalf("n = %d, S = %d: two-sided %.17g, min(1, 2·min tail) %.17g", n, s, two, want)
			}
			if g > prevG || l < prevL {
				t.Fatalf("n = %d, S = %d: tails not monotone (greater %.17g after %.17g, less %.17g after %.17g)", n, s, g, prevG, l, prevL)
			}
			if n <= 170 && (g == 0 || l == 0) {
				t.Fatalf("n = %d, S = %d: a zero p-value (greater %g, less %g)", n, s, g, l)
			}
			if k+1 < len(ss) && ss[k+1] == s+2 { // P(S = s) = P(S ≥ s) − P(S ≥ s + 2)
				point := g - KendallExactP(s+2, n, Greater)
				if sum := g + l - point; math.Abs(sum-1) > 1e-14 {
					t.Fatalf("n = %d, S = %d: P(S ≥ s) + P(S ≤ s) − P(S = s) = %.17g", n, s, sum)
				}
			}
			prevG, prevL = g, l
		}
		if g := KendallExactP(-total, n, Greater); g != 1 {
			t.Errorf("n = %d: P(S ≥ −N) = %.17g, want 1", n, g)
		}
	}
	for n := 2; n <= 60; n++ {
		total := pairsIn(n)
		var ss []int64
		for s := -total; s <= total; s += 2 {
			ss = append(ss, s)
		}
		check(n, ss)
	}
	rng := rand.New(rand.NewPCG(20261203, 1))
	for _, n := range []int{171, 500, 1000} {
		total := pairsIn(n)
		ss := []int64{-total, -total + 2, total - 2, total}
		for range 400 {
			ss = append(ss, total-2*rng.Int64N(total+1))
		}
		slices.Sort(ss)
		check(n, slices.Compact(ss))
		if n == 171 && KendallExactP(total, n, Greater) == 0 {
			t.Errorf("n = 171: P(S = N) = 1/171! is representable but came back 0")
		}
	}
}

// TestKendallExactPerfectRanking: P(S = N) = 1/n! (one permutation of n!
// has no inversions), computed exactly with math/big and rounded once, at
// n = 168..180, across the end of the normal range (1/170! ≈ 1.4e-307,
// 1/171! ≈ 8e-310) and the underflow to 0 (1/177! ≈ 2.9e-323 is the last
// representable one).
func TestKendallExactPerfectRanking(t *testing.T) {
	for n := 168; n <= 180; n++ {
		fact := new(big.Float).SetPrec(256).SetInt(new(big.Int).MulRange(1, int64(n)))
		want, _ := new(big.Float).SetPrec(256).Quo(big.NewFloat(1), fact).Float64()
		if (n <= 177) != (want != 0) {
			t.Fatalf("n = %d: 1/n! rounds to %g; the test's premise is wrong", n, want)
		}
		total := pairsIn(n)
		checkTail(t, fmt.Sprintf("n = %d, P(S ≥ N)", n), n, KendallExactP(total, n, Greater), want)
		checkTail(t, fmt.Sprintf("n = %d, P(S ≤ −N)", n), n, KendallExactP(-total, n, Less), want)
	}
}

// TestInversionTableLength: a table built to a shorter length equals the
// start of a longer one bit for bit, so p-values do not depend on the order
// of earlier calls (the cache grows tables as calls ask for more).
func TestInversionTableLength(t *testing.T) {
	for _, n := range []int{2, 3, 10, 101, 300} {
		half := int(pairsIn(n) / 2)
		long := inversionLowerCDF(n, half)
		for _, m := range []int{0, half / 3, half - 1} {
			if m < 0 {
				continue
			}
			if short := inversionLowerCDF(n, m); !slices.Equal(short, long[:m+1]) {
				t.Errorf("n = %d: table to %d differs from the start of the table to %d", n, m, half)
			}
		}
	}
}

// forgetInversionTables empties the cache. Test-only.
func forgetInversionTables() {
	c := &inversionCache
	c.mu.Lock()
	defer c.mu.Unlock()
	clear(c.tables)
	c.floats = 0
}

// TestKendallExactConcurrent runs many goroutines over a few n, each
// asking for tails in a different order so tables grow while others read
// them (run with -race), and compares every answer with a fresh table. It
// then checks the cache's accounting and, with the bound lowered, that it
// evicts down to the bound.
func TestKendallExactConcurrent(t *testing.T) {
	forgetInversionTables()
	defer forgetInversionTables()
	ns := []int{40, 150, 300, 450}
	want := map[int][]float64{}
	for _, n := range ns {
		c := inversionLowerCDF(n, int(pairsIn(n)/2))
		for j := range c {
			c[j] = math.Ldexp(c[j], -inversionScale)
		}
		want[n] = c
	}
	var wg sync.WaitGroup
	errs := make(chan string, 100)
	for g := range 8 {
		wg.Go(func() {
			rng := rand.New(rand.NewPCG(7, uint64(g)))
			for range 300 {
				n := ns[rng.IntN(len(ns))]
				total := pairsIn(n)
				i := rng.Int64N(total/2 + 1)
				if got := KendallExactP(total-2*i, n, Greater); got != want[n][i] {
					errs <- fmt.Sprintf("n = %d, i = %d: %.17g, fresh table %.17g", n, i, got, want[n][i])
					return
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for e := range errs {
		t.Error(e)
	}

	c := &inversionCache
	c.mu.Lock()
	sum := 0
	for n, e := range c.tables {
		if tb := e.cdf.Load(); tb == nil || len(*tb) != e.size {
			t.Errorf("n = %d: entry size %d does not match its table", n, e.size)
		}
		sum += e.size
	}
	if sum != c.floats || c.floats > kendallCacheFloats {
		t.Errorf("cache counts %d floats, tables hold %d, bound %d", c.floats, sum, kendallCacheFloats)
	}
	c.mu.Unlock()

	// With room for 3000 floats, whole tables at n = 40, 60, 80 (391, 886
	// and 1581 values) fit; after n = 40 is used again, the table at
	// n = 100 (2476 values) must push out 60, then 80, the least recently
	// used.
	defer func(old int) { kendallCacheFloats = old }(kendallCacheFloats)
	kendallCacheFloats = 3000
	forgetInversionTables()
	for _, n := range []int{40, 60, 80, 40, 100} {
		KendallExactP(0, n, TwoSided)
	}
	c.mu.Lock()
	var kept []int
	for n := range c.tables {
		kept = append(kept, n)
	}
	slices.Sort(kept)
	if !slices.Equal(kept, []int{40, 100}) || c.floats != 391+2476 {
		t.Errorf("after eviction the cache holds n = %v (%d floats), want [40 100] (2867)", kept, c.floats)
	}
	c.mu.Unlock()
}

// TestKendallExactPanics: invalid n, impossible S and unknown alternatives
// are caller bugs.
func TestKendallExactPanics(t *testing.T) {
	mustPanic(t, "n = 1", func() { KendallExactP(0, 1, Greater) })
	mustPanic(t, "n too large", func() { KendallExactP(0, KendallExactMaxN+2, Greater) })
	mustPanic(t, "S > N", func() { KendallExactP(12, 5, Greater) })
	mustPanic(t, "S < −N", func() { KendallExactP(-12, 5, Less) })
	mustPanic(t, "wrong parity", func() { KendallExactP(3, 5, TwoSided) }) // N = 10: S even
	mustPanic(t, "wrong parity, odd N", func() { KendallExactP(2, 6, TwoSided) })
	mustPanic(t, "unknown alternative", func() { KendallExactP(0, 5, Alternative(0)) })
	mustPanic(t, "table too long", func() { inversionLowerCDF(5, 6) })
}

// Benchmarks at n = 1000. BenchmarkKendallNullSortBaseline sorts 10⁶
// float64, so the others can be quoted as multiples of one sort:
//
//	go test -run '^$' -bench 'KendallNull|KendallExact' ./engine/stats/
func BenchmarkKendallNullSortBaseline(b *testing.B) {
	rng := rand.New(rand.NewPCG(42, 1))
	x := make([]float64, 1_000_000)
	for i := range x {
		x[i] = rng.NormFloat64()
	}
	s := make([]float64, len(x))
	for b.Loop() {
		copy(s, x)
		slices.Sort(s)
	}
}

// BenchmarkKendallExactUncached builds the table for one call: central is
// S = 0 (the whole lower half, m = N/2 = 249 750), far is the first
// representable tail (m = 73 046, p ≈ 5e-324).
func BenchmarkKendallExactUncached(b *testing.B) {
	const n = 1000
	total := pairsIn(n)
	for _, c := range []struct {
		name string
		i    int64
	}{{"central", total / 2}, {"far", 73046}} {
		b.Run(c.name, func(b *testing.B) {
			for b.Loop() {
				forgetInversionTables()
				KendallExactP(total-2*c.i, n, Greater)
			}
		})
	}
	forgetInversionTables()
}

// BenchmarkKendallExactCached: one call with the table already built, S
// cycling over the whole range.
func BenchmarkKendallExactCached(b *testing.B) {
	const n = 1000
	total := pairsIn(n)
	KendallExactP(0, n, TwoSided)
	s := -total
	for b.Loop() {
		KendallExactP(s, n, TwoSided)
		if s += 2 * 997; s > total {
			s -= 2 * total
		}
	}
}
