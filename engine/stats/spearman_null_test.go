package stats

import (
	"math"
	"math/big"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strconv"
	"sync"
	"testing"
)

// factorialU returns n! for n ≤ 20.
func factorialU(n int) uint64 {
	f := uint64(1)
	for k := 2; k <= n; k++ {
		f *= uint64(k)
	}
	return f
}

// cachedCounts returns the counts by h = D/2 for n, recovered from the
// cumulative counts that SpearmanExactP caches, so that the tests compute
// each n's distribution only once.
func cachedCounts(n int) []uint64 {
	cum := spearmanNullCum(n)
	c := slices.Clone(cum)
	for h := len(c) - 1; h > 0; h-- {
		c[h] -= c[h-1]
	}
	return c
}

// spearmanRhoOf returns ρ = 1 − 12h/(n³ − n) for the lattice point h = D/2.
func spearmanRhoOf(h, n int) float64 {
	return 1 - 12*float64(h)/float64(n*(n*n-1))
}

// TestSpearmanCountsEnumeration compares the dynamic programme with the
// brute-force oracle spearmanDCounts (all n! permutations by Heap's
// algorithm, spearman_exact_test.go) for n = 1..9, count by count. Odd D
// never occurs, so the oracle's odd entries must be 0.
func TestSpearmanCountsEnumeration(t *testing.T) {
	for n := 1; n <= 9; n++ {
		got, want := spearmanCounts(n), spearmanDCounts(n)
		if len(want) != 2*len(got)-1 {
			t.Fatalf("n = %d: DP has %d values of D/2, enumeration %d values of D", n, len(got), len(want))
		}
		for d, w := range want {
			if d%2 == 1 {
				if w != 0 {
					t.Errorf("n = %d: %d permutations with odd D = %d", n, w, d)
				}
				continue
			}
			if got[d/2] != uint64(w) {
				t.Errorf("n = %d, D = %d: DP %d, enumeration %d", n, d, got[d/2], w)
			}
		}
	}
}

// TestSpearmanCountsOEIS checks single counts of the DP for n up to
// SpearmanExactMaxN against the On-Line Encyclopedia of Integer Sequences.
// The triangle of counts by D = 2k is A175929 ("number of permutations of
// [n] with Σ (p(i) − i)² = 2k"); its definition is confirmed by the
// enumeration above, and by the three sequences below, whose formulas
// section identifies them with entries of A175929 (values read from the
// oeis.org pages, not from memory):
//
//   - A056876: permutations with Σ k·p(k) = Σ (n + 1 − k)·p(k), i.e. ρ = 0,
//     D = (n³ − n)/6 ("central coefficients ... of Spearman's rho").
//   - A391511: permutations with Σ (p(i) − i)² = n(n + 1)/2.
//   - A391664: permutations of [2m] with Σ (p(i) − i)² = 2m, = A175929(2m, m).
//
// The first three columns follow from counting: D = 0 only for the
// identity, D = 2 for the n − 1 swaps of neighbours, D = 4 for the C(n − 2, 2)
// pairs of disjoint neighbour swaps (squares summing to 4 with Σ d = 0 need
// four displacements of ±1).
func TestSpearmanCountsOEIS(t *testing.T) {
	a056876 := []uint64{1, 0, 0, 2, 6, 0, 184, 936, 6688, 0, 420480, 4298664, 44405142, 0,
		6732621476, 92014579912, 1345077232898, 0} // n = 1..18
	a391511 := []uint64{1, 0, 0, 2, 2, 0, 0, 78, 380, 0, 0, 43106, 230894, 0, 0,
		46470939, 295990436, 0, 0} // n = 0..18
	a391664 := []uint64{1, 1, 1, 9, 47, 177, 691, 3001, 13274, 57912} // m = 0..9, n = 2m
	for n := 2; n <= SpearmanExactMaxN; n++ {
		c := cachedCounts(n)
		at := func(d int) uint64 { // count of D = d; 0 off the lattice
			if d%2 == 1 || d < 0 || d/2 >= len(c) {
				return 0
			}
			return c[d/2]
		}
		nn := n * (n*n - 1)
		if got, want := at(nn/6), a056876[n-1]; got != want {
			t.Errorf("n = %d: %d permutations with ρ = 0, OEIS A056876 gives %d", n, got, want)
		}
		if got, want := at(n*(n+1)/2), a391511[n]; got != want {
			t.Errorf("n = %d: %d permutations with D = n(n+1)/2, OEIS A391511 gives %d", n, got, want)
		}
		if n%2 == 0 {
			if got, want := at(n), a391664[n/2]; got != want {
				t.Errorf("n = %d: %d permutations with D = n, OEIS A391664 gives %d", n, got, want)
			}
		}
		for k, want := range []uint64{1, uint64(n - 1), uint64((n - 2) * (n - 3) / 2)} {
			if k < len(c) && c[k] != want {
				t.Errorf("n = %d: %d permutations with D = %d, want %d", n, c[k], 2*k, want)
			}
		}
	}
}

// TestSpearmanExactProperties checks, for every n = 2..SpearmanExactMaxN and
// every attainable ρ: the counts sum to n! and are symmetric; P(ρ = 1) is
// 1/n!; no p-value is 0; Greater falls and Less rises with ρ (also between
// lattice points); the one-sided tails at neighbouring lattice points add
// to 1; TwoSided is twice the smaller tail, capped at 1.
func TestSpearmanExactProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261203, 2))
	for n := 2; n <= SpearmanExactMaxN; n++ {
		c := cachedCounts(n)
		maxH := len(c) - 1
		var sum uint64
		for h, v := range c {
			sum += v
			if v != c[maxH-h] {
				t.Fatalf("n = %d: count(h = %d) = %d, count(h = %d) = %d; the null is symmetric", n, h, v, maxH-h, c[maxH-h])
			}
		}
		if fact := factorialU(n); sum != fact {
			t.Fatalf("n = %d: counts sum to %d, want n! = %d", n, sum, fact)
		}
		inv := 1 / float64(factorialU(n))
		for _, chk := range []struct {
			rho  float64
			alt  Alternative
			want float64
		}{
			{1, Greater, inv}, {-1, Less, inv}, {1, TwoSided, 2 * inv}, {-1, TwoSided, 2 * inv},
			{1, Less, 1}, {-1, Greater, 1},
		} {
			if got := SpearmanExactP(chk.rho, n, chk.alt); math.Abs(got-chk.want) > 1e-15*chk.want {
				t.Errorf("n = %d: SpearmanExactP(%v, %v) = %v, want %v", n, chk.rho, chk.alt, got, chk.want)
			}
		}
		prevG, prevL := 2.0, -1.0
		for h := maxH; h >= 0; h-- { // ρ rising from −1 to 1
			rho := spearmanRhoOf(h, n)
			g, l, two := SpearmanExactP(rho, n, Greater), SpearmanExactP(rho, n, Less), SpearmanExactP(rho, n, TwoSided)
			if !(g > 0 && l > 0 && two > 0 && g <= 1 && l <= 1 && two <= 1) {
				t.Fatalf("n = %d, ρ = %v: p-values %v, %v, %v outside (0, 1]", n, rho, g, l, two)
			}
			if g > prevG || l < prevL {
				t.Fatalf("n = %d, ρ = %v: Greater %v (before %v), Less %v (before %v) not monotone", n, rho, g, prevG, l, prevL)
			}
			if h > 0 { // P(ρ′ ≤ ρ) + P(ρ′ ≥ next ρ) = 1
				if s := l + SpearmanExactP(spearmanRhoOf(h-1, n), n, Greater); math.Abs(s-1) > 1e-15 {
					t.Fatalf("n = %d, h = %d: tails add to %v", n, h, s)
				}
			}
			if want := math.Min(1, 2*math.Min(g, l)); math.Abs(two-want) > 1e-15*want {
				t.Fatalf("n = %d, ρ = %v: TwoSided %v, twice the smaller tail %v", n, rho, two, want)
			}
			prevG, prevL = g, l
		}
		// Between lattice points ρ rounds to the nearest one: still monotone.
		rhos := make([]float64, 200)
		for i := range rhos {
			rhos[i] = 2*rng.Float64() - 1
		}
		slices.Sort(rhos)
		prevG = 2
		for _, rho := range rhos {
			g := SpearmanExactP(rho, n, Greater)
			if g > prevG || g <= 0 {
				t.Fatalf("n = %d, ρ = %v: Greater %v after %v", n, rho, g, prevG)
			}
			prevG = g
		}
	}
}

// TestSpearmanExactEdges checks NaN inputs, the rounding of ρ to the
// lattice and the panics for caller bugs.
func TestSpearmanExactEdges(t *testing.T) {
	for _, rho := range []float64{math.NaN(), 1.01, -1.01, math.Inf(1)} {
		for _, alt := range allAlts {
			if got := SpearmanExactP(rho, 10, alt); !math.IsNaN(got) {
				t.Errorf("SpearmanExactP(%v, 10, %v) = %v, want NaN", rho, alt, got)
			}
			if got := SpearmanEdgeworthP(rho, 30, alt); !math.IsNaN(got) {
				t.Errorf("SpearmanEdgeworthP(%v, 30, %v) = %v, want NaN", rho, alt, got)
			}
		}
	}
	if got := SpearmanEdgeworthP(0.5, 2, TwoSided); !math.IsNaN(got) {
		t.Errorf("SpearmanEdgeworthP(0.5, 2, TwoSided) = %v, want NaN", got)
	}
	// ρ off by rounding error from an attainable value, or 1 + 1 ulp.
	rho := 1 - 6*36.0/990
	for _, r := range []float64{rho, math.Nextafter(rho, 2), math.Nextafter(rho, -2)} {
		if got, want := SpearmanExactP(r, 10, Greater), 19107.0/3628800; math.Abs(got-want) > 1e-15*want {
			t.Errorf("SpearmanExactP(%.17g, 10, Greater) = %v, want %v", r, got, want)
		}
	}
	if got := SpearmanExactP(math.Nextafter(1, 2), 10, Greater); got != 1/3628800.0 {
		t.Errorf("SpearmanExactP(1 + ulp, 10, Greater) = %v, want 1/10!", got)
	}
	mustPanic := func(what string, f func()) {
		t.Helper()
		defer func() {
			if recover() == nil {
				t.Errorf("%s did not panic", what)
			}
		}()
		f()
	}
	mustPanic("SpearmanExactP(n = 1)", func() { SpearmanExactP(0.5, 1, TwoSided) })
	mustPanic("SpearmanExactP(n = max + 1)", func() { SpearmanExactP(0.5, SpearmanExactMaxN+1, TwoSided) })
	mustPanic("SpearmanExactP(alt = 0)", func() { SpearmanExactP(0.5, 10, Alternative(0)) })
	mustPanic("SpearmanEdgeworthP(alt = 7)", func() { SpearmanEdgeworthP(0.5, 30, Alternative(7)) })
}

// TestSpearmanExactZar checks two-sided critical values of ρ against
// J. H. Zar (1972), Significance testing of the Spearman rank correlation
// coefficient, JASA 67(339), 578–580, Table 1, printed to three decimals.
// A table entry c is the smallest attainable |ρ| whose exact two-sided
// p-value P(|ρ′| ≥ c) is at most α (0: none). The entries for n ≤ 10 are
// those of TestSpearmanExactCriticalValues; all entries are from memory,
// and each agrees with enumeration (n ≤ 10) or with OEIS-checked counts.
// Here the check runs through SpearmanExactP itself.
func TestSpearmanExactZar(t *testing.T) {
	table := []struct {
		n        int
		c05, c01 float64 // two-sided α = 0.05 and 0.01
	}{
		{5, 1.000, 0}, {6, 0.886, 1.000}, {7, 0.786, 0.929}, {8, 0.738, 0.881},
		{9, 0.700, 0.833}, {10, 0.648, 0.794}, {11, 0.618, 0.755}, {12, 0.587, 0.727},
		{13, 0.560, 0.703}, {14, 0.538, 0.679}, {15, 0.521, 0.654}, {16, 0.503, 0.635},
		{17, 0.488, 0.618}, {18, 0.472, 0.600},
	}
	for _, row := range table {
		maxH := row.n * (row.n*row.n - 1) / 6
		for _, chk := range []struct{ alpha, tabled float64 }{{0.05, row.c05}, {0.01, row.c01}} {
			crit := 0.0
			for h := 0; 2*h < maxH; h++ { // |ρ| from 1 down to 0
				rho := spearmanRhoOf(h, row.n)
				if SpearmanExactP(rho, row.n, TwoSided) > chk.alpha {
					break
				}
				crit = rho
			}
			if got := math.Round(crit*1000) / 1000; got != chk.tabled {
				t.Errorf("n = %d, α = %v: critical ρ %.6f (→ %.3f), Zar gives %.3f", row.n, chk.alpha, crit, got, chk.tabled)
			}
		}
	}
}

// TestSpearmanExactPublished checks the example of the pspearman package
// documentation (P. Savicky, R package pspearman 0.3-1, ?pspearman):
// pspearman(36, 10, approximation = "exact") = 0.005265377 = P(D ≤ 36) for
// n = 10, printed to 7 significant digits (tolerance half a unit there),
// and our exact count 19107/10! behind it.
func TestSpearmanExactPublished(t *testing.T) {
	rho := 1 - 6*36.0/990
	if got := SpearmanExactP(rho, 10, Greater); math.Abs(got-0.005265377) > 5e-10 {
		t.Errorf("SpearmanExactP(ρ(D = 36), 10, Greater) = %.10g, pspearman documents 0.005265377", got)
	}
	if got := spearmanNullCum(10)[18]; got != 19107 {
		t.Errorf("permutations of 10 with D ≤ 36: %d, want 19107", got)
	}
}

// spearmanRefRow is one row of testdata/ref/spearman_null_reference.csv.
type spearmanRefRow struct {
	source string
	n      int
	d, rho float64 // rho is NaN where the row has none
	alt    Alternative
	value  float64
}

// loadSpearmanNullReference reads the committed output of
// testdata/ref/spearman_null_reference.R (R 4.2.2, SuppDists 1.1-9.7).
func loadSpearmanNullReference(t *testing.T) []spearmanRefRow {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "ref", "spearman_null_reference.csv")
	recs := readCSV(t, path)
	alts := map[string]Alternative{"two.sided": TwoSided, "greater": Greater, "less": Less, "": 0}
	parse := func(s string, line int) float64 {
		if s == "" {
			return math.NaN()
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%s line %d: %v", path, line, err)
		}
		return v
	}
	var rows []spearmanRefRow
	for i, rec := range recs[1:] {
		if len(rec) != 6 {
			t.Fatalf("%s line %d: %d fields, want 6", path, i+2, len(rec))
		}
		n, err := strconv.Atoi(rec[1])
		alt, ok := alts[rec[4]]
		if err != nil || !ok {
			t.Fatalf("%s line %d: bad n %q or alternative %q", path, i+2, rec[1], rec[4])
		}
		rows = append(rows, spearmanRefRow{rec[0], n, parse(rec[2], i+2), parse(rec[3], i+2), alt, parse(rec[5], i+2)})
	}
	return rows
}

// TestSpearmanExactAgainstR compares SpearmanExactP with R 4.2.2 and
// SuppDists 1.1-9.7 (testdata/ref/spearman_null_reference.R):
//
//   - n ≤ 9: R enumerates all n! orderings, so its P(D ≥ d) (the prho_upper
//     rows) and cor.test(exact = TRUE) p-values are exact. Both sides
//     divide an integer count by n!; R forms some lower tails as 1 − upper,
//     so the tolerance is 1e-13 relative plus 1e-16 absolute.
//   - SuppDists::pSpearman gives P(ρ′ ≤ ρ) and documents exact computation
//     for n ≤ 100. For n = 10 and 11 it agrees with us to 2e-7 relative
//     (largest deviations, 1.4e-8 and 1.6e-7, in the far tail: it does not
//     sum in integers), except at ρ = 1, where it gives 1 − 1/n! for
//     P(ρ′ ≤ 1) = 1, which is skipped. For n ≥ 12 version 1.1-9.7 is not
//     exact (see the R script), so it is not used there.
//   - 10 ≤ n ≤ 18: R's value is the AS 89 Edgeworth series, not an exact
//     probability, so here our enumeration is the reference and R is only
//     a sanity check: they must agree within 5% for tails ≥ 1e-2 and 25%
//     for tails ≥ 1e-3 (the series' own error, largest at n = 10, where it
//     reaches 1.6% and 24%).
func TestSpearmanExactAgainstR(t *testing.T) {
	checked := 0
	for _, r := range loadSpearmanNullReference(t) {
		if r.n > SpearmanExactMaxN {
			continue
		}
		nn := float64(r.n * (r.n*r.n - 1))
		switch r.source {
		case "prho_upper":
			if r.d > nn/3 { // P(D ≥ d) = 0 past the maximum; not a p-value
				continue
			}
			got := SpearmanExactP(1-6*r.d/nn, r.n, Less) // ρ′ ≤ ρ ⇔ D′ ≥ d
			if r.n <= 9 {
				if math.Abs(got-r.value) > 1e-13*r.value+1e-16 {
					t.Errorf("n = %d, P(D ≥ %v): %.17g, R (exact) %.17g", r.n, r.d, got, r.value)
				}
			} else if (r.value >= 1e-2 && math.Abs(got/r.value-1) > 0.05) ||
				(r.value >= 1e-3 && math.Abs(got/r.value-1) > 0.25) {
				t.Errorf("n = %d, P(D ≥ %v): exact %.6g, R's AS 89 series %.6g: further apart than the series' known error", r.n, r.d, got, r.value)
			}
		case "cor_test":
			if r.n > 9 {
				continue // the series; checked in TestSpearmanEdgeworthAgainstR
			}
			if got := SpearmanExactP(r.rho, r.n, r.alt); math.Abs(got-r.value) > 1e-13*r.value+1e-16 {
				t.Errorf("n = %d, ρ = %v, %v: %.17g, R cor.test (exact) %.17g", r.n, r.rho, r.alt, got, r.value)
			}
			if want := 1 - 6*r.d/nn; math.Abs(want-r.rho) > 1e-14 {
				t.Errorf("n = %d: R's ρ %v and S %v disagree", r.n, r.rho, r.d)
			}
		case "suppdists":
			if r.rho == 1 {
				continue
			}
			if got := SpearmanExactP(r.rho, r.n, Less); math.Abs(got-r.value) > 2e-7*r.value {
				t.Errorf("n = %d, P(ρ′ ≤ %v): %.17g, SuppDists %.17g", r.n, r.rho, got, r.value)
			}
		default:
			continue
		}
		checked++
	}
	if checked < 2500 {
		t.Errorf("checked %d reference values, want at least 2500", checked)
	}
}

// TestSpearmanEdgeworthAgainstR checks SpearmanEdgeworthP against R 4.2.2's
// implementation of the same series (the prho_upper rows for n ≥ 10 and
// cor.test(exact = TRUE) for 10 ≤ n < 1290): 1e-12 relative wherever our
// function uses the series and R computes the tail directly. R forms the
// lower tail of ρ ("greater", and "two.sided" for ρ > 0) as 1 − upper, which
// costs it relative precision, so there the tolerance adds 4e-16 absolute.
// Beyond the series' edge our value is by design not the series (R's may
// be negative there, clamped to 0): an upper tail must then lie in
// (0, p_edge], p_edge being the series' value at the edge, and a lower tail
// (its complement) in [1 − p_edge, 1].
func TestSpearmanEdgeworthAgainstR(t *testing.T) {
	inSeries := func(n int, d float64) bool { // our function uses the series at P(D′ ≥ d)
		nf := float64(n)
		x := (6*(d-1)/(nf*(nf*nf-1)) - 1) * math.Sqrt(nf-1)
		return math.Abs(x) <= spearmanEdgeworthEdge(n).x
	}
	series, beyond := 0, 0
	for _, r := range loadSpearmanNullReference(t) {
		if r.n < 10 || r.source == "suppdists" {
			continue
		}
		nf := float64(r.n)
		nn := nf * (nf*nf - 1)
		switch r.source {
		case "prho_upper":
			if r.d == 0 || r.d > nn/3 {
				continue
			}
			rho := 1 - 6*r.d/nn
			got := SpearmanEdgeworthP(rho, r.n, Less)
			if inSeries(r.n, r.d) {
				if math.Abs(got-r.value) > 1e-12*r.value {
					t.Errorf("n = %d, P(D ≥ %v): %.17g, R %.17g", r.n, r.d, got, r.value)
				}
				// The mirror image, through the other alternative.
				if g := SpearmanEdgeworthP(-rho, r.n, Greater); math.Abs(g-got) > 1e-15*got {
					t.Errorf("n = %d, ρ = %v: Greater(−ρ) %.17g, Less(ρ) %.17g", r.n, rho, g, got)
				}
				series++
				continue
			}
			pe := spearmanEdgeworthEdge(r.n).p
			if r.d-1 > nn/6 && !(got > 0 && got <= pe) || r.d-1 < nn/6 && !(got >= 1-pe && got <= 1) {
				t.Errorf("n = %d, P(D ≥ %v) beyond the series' edge: %.6g, series at the edge %.6g", r.n, r.d, got, pe)
			}
			beyond++
		case "cor_test":
			d := math.Round(r.d)
			if r.alt == Greater || (r.alt == TwoSided && r.rho > 0) {
				d = nn/3 - d // the tail computed is P(D′ ≥ maxD − d)
			}
			if !inSeries(r.n, d) {
				continue
			}
			tol := 1e-12 * r.value
			if r.alt == Greater || (r.alt == TwoSided && r.rho > 0) {
				tol += 4e-16
			}
			if got := SpearmanEdgeworthP(r.rho, r.n, r.alt); math.Abs(got-r.value) > tol {
				t.Errorf("n = %d, ρ = %v, %v: %.17g, R cor.test %.17g", r.n, r.rho, r.alt, got, r.value)
			}
			series++
		}
	}
	if series < 2500 || beyond < 100 {
		t.Errorf("checked %d values in the series and %d beyond its edge, want ≥ 2500 and ≥ 100", series, beyond)
	}
}

// TestSpearmanEdgeworthCoefficients re-derives the two leading AS 89
// coefficients. For a symmetric statistic the first Edgeworth term is
// φ(x)·(γ₂/24)·(x³ − 3x) (H. Cramér (1946), Mathematical Methods of
// Statistics, Princeton, §17.7). Kendall's exact fourth moment of ρ under
// independence, E(ρ⁴) = 3(25n³ − 38n² − 35n + 72)/(25n(n + 1)(n − 1)³)
// (M. G. Kendall (1970), Rank Correlation Methods, 4th ed.; from memory,
// and checked here exactly in rational arithmetic against our
// distributions for n = 3..SpearmanExactMaxN), with Var ρ = 1/(n − 1)
// gives γ₂ = −(114/25)/n + O(n⁻²). Hence the coefficient of x·b is
// 3·(114/25)/(24√(2π)) = 0.2274 and that of x³·b is −(114/25)/(24√(2π)) =
// −0.0758, as published (to their four decimals).
func TestSpearmanEdgeworthCoefficients(t *testing.T) {
	for n := 3; n <= SpearmanExactMaxN; n++ {
		c := cachedCounts(n)
		nn := int64(n * (n*n - 1))
		m4, total := new(big.Rat), new(big.Rat)
		for h, v := range c {
			cnt := new(big.Rat).SetInt(new(big.Int).SetUint64(v))
			r := big.NewRat(nn-12*int64(h), nn) // ρ at D = 2h
			r.Mul(r, r)
			r.Mul(r, r)
			m4.Add(m4, r.Mul(r, cnt))
			total.Add(total, cnt)
		}
		m4.Quo(m4, total)
		k := int64(n)
		want := big.NewRat(3*(25*k*k*k-38*k*k-35*k+72), 25*k*(k+1)*(k-1)*(k-1)*(k-1))
		if m4.Cmp(want) != 0 {
			t.Errorf("n = %d: E(ρ⁴) = %s, Kendall's formula gives %s", n, m4.RatString(), want.RatString())
		}
	}
	g := 114.0 / 25 / (24 * math.Sqrt(2*math.Pi))
	if got := math.Round(3*g*1e4) / 1e4; got != as89[0][0] {
		t.Errorf("coefficient of x·b: derived %.4f, table %v", got, as89[0][0])
	}
	if got := math.Round(-g*1e4) / 1e4; got != as89[1][0] {
		t.Errorf("coefficient of x³·b: derived %.4f, table %v", got, as89[1][0])
	}
}

// TestSpearmanEdgeworthProperties checks, over every attainable ρ (every
// 97th for n > 100), that the approximation is a valid, monotone tail
// probability: in (0, 1], Greater falling and Less rising with ρ, the two
// mirror images of each other, TwoSided twice the smaller tail capped at 1,
// and 1/n! one-sided at |ρ| = 1 (for n ≥ 6, where the series has an edge). The n include tiny ones (3..9) and those
// where the series breaks down in different ways (18..26, 30, 40).
func TestSpearmanEdgeworthProperties(t *testing.T) {
	for _, n := range []int{3, 4, 5, 6, 7, 8, 9, 10, 12, 15, 18, 19, 20, 21, 22, 23, 24, 25, 26, 30, 40, 60, 100, 170, 171, 300, 500} {
		maxH := n * (n*n - 1) / 6
		stride := 1
		if n > 100 {
			stride = 97
		}
		prevG, prevL := 2.0, -1.0
		for h := maxH; h >= 0; h -= stride { // ρ rising
			if h < stride {
				h = 0
			}
			rho := spearmanRhoOf(h, n)
			g, l, two := SpearmanEdgeworthP(rho, n, Greater), SpearmanEdgeworthP(rho, n, Less), SpearmanEdgeworthP(rho, n, TwoSided)
			if !(g > 0 && l > 0 && two > 0 && g <= 1 && l <= 1 && two <= 1) {
				t.Fatalf("n = %d, ρ = %v: p-values %v, %v, %v outside (0, 1]", n, rho, g, l, two)
			}
			if g > prevG || l < prevL {
				t.Fatalf("n = %d, ρ = %v: Greater %v (before %v), Less %v (before %v) not monotone", n, rho, g, prevG, l, prevL)
			}
			if m := SpearmanEdgeworthP(-rho, n, Less); math.Abs(m-g) > 1e-15*g {
				t.Fatalf("n = %d, ρ = %v: Greater %v, Less at −ρ %v", n, rho, g, m)
			}
			if want := math.Min(1, 2*math.Min(g, l)); math.Abs(two-want) > 1e-15*want {
				t.Fatalf("n = %d, ρ = %v: TwoSided %v, twice the smaller tail %v", n, rho, two, want)
			}
			prevG, prevL = g, l
		}
		if n >= 6 { // for n ≤ 5 all x < 2, and the series is used up to |ρ| = 1
			if got, want := SpearmanEdgeworthP(1, n, Greater), spearmanExtremeP(n); got != want {
				t.Errorf("n = %d: P(ρ ≥ 1) = %v, want %v", n, got, want)
			}
		}
	}
}

// TestSpearmanEdgeworthVsExact records the series' accuracy against the
// exact distribution at n = 10..SpearmanExactMaxN, the figures quoted in
// the doc comments, and the t approximation's for contrast. Bounds are the
// measured maxima of |p/exact − 1| over all ρ with exact one-sided tail at
// least 1e-2, 1e-3 and 1e-4, rounded up in the second digit.
func TestSpearmanEdgeworthVsExact(t *testing.T) {
	bounds := map[int][3]float64{ // n → bounds for tails ≥ 1e-2, 1e-3, 1e-4; 0: none
		10: {0.047, 0, 0},
		18: {0.002, 0.006, 0.15},
	}
	tBounds := map[int][3]float64{18: {0.084, 0.26, 0.44}} // CorrelationT
	for n := 10; n <= SpearmanExactMaxN; n++ {
		maxH := n * (n*n - 1) / 6
		var worst, worstT [3]float64
		for h := maxH / 2; h >= 0; h-- {
			rho := spearmanRhoOf(h, n)
			ex := SpearmanExactP(rho, n, Greater)
			e := SpearmanEdgeworthP(rho, n, Greater)
			if !(e > 0) || e > 1 {
				t.Fatalf("n = %d, ρ = %v: %v", n, rho, e)
			}
			for i, lim := range []float64{1e-2, 1e-3, 1e-4} {
				if ex >= lim {
					worst[i] = math.Max(worst[i], math.Abs(e/ex-1))
					worstT[i] = math.Max(worstT[i], math.Abs(CorrelationT(rho, n, Greater)/ex-1))
				}
			}
		}
		t.Logf("n = %d: series within %.4f / %.4f / %.4f of exact for tails ≥ 1e-2 / 1e-3 / 1e-4; t within %.4f / %.4f / %.4f",
			n, worst[0], worst[1], worst[2], worstT[0], worstT[1], worstT[2])
		b, bt := bounds[n], tBounds[n]
		for i := range b {
			if b[i] > 0 && worst[i] > b[i] || bt[i] > 0 && worstT[i] > bt[i] {
				t.Errorf("n = %d: relative errors %v (t %v), bounds %v (t %v)", n, worst, worstT, b, bt)
			}
		}
	}
}

// TestSpearmanNullConcurrent computes p-values from many goroutines at
// once, for every exact n and for series n, against serial results; run
// with -race it checks that both caches are safe for concurrent use.
func TestSpearmanNullConcurrent(t *testing.T) {
	type query struct {
		n   int
		rho float64
	}
	var qs []query
	for n := 2; n <= 40; n++ {
		for _, rho := range []float64{-1, -0.7, 0, 0.35, 0.9} {
			qs = append(qs, query{n, rho})
		}
	}
	p := func(q query) float64 {
		if q.n <= SpearmanExactMaxN {
			return SpearmanExactP(q.rho, q.n, TwoSided)
		}
		return SpearmanEdgeworthP(q.rho, q.n, TwoSided)
	}
	got := make([][]float64, 8)
	var wg sync.WaitGroup
	for w := range got {
		got[w] = make([]float64, len(qs))
		wg.Go(func() {
			order := rand.New(rand.NewPCG(uint64(w), 3)).Perm(len(qs))
			for _, i := range order {
				got[w][i] = p(qs[i])
			}
		})
	}
	wg.Wait()
	for i, q := range qs {
		want := p(q)
		for w := range got {
			if got[w][i] != want {
				t.Fatalf("n = %d, ρ = %v: goroutine %d got %v, serial %v", q.n, q.rho, w, got[w][i], want)
			}
		}
	}
}

// Benchmarks. BenchmarkSpearmanNullSortBaseline sorts 10⁶ float64s, so the
// cost of computing the exact distribution for SpearmanExactMaxN (uncached)
// can be quoted as a multiple of one sort:
//
//	go test -run '^$' -bench SpearmanNull -benchmem ./engine/stats/

func BenchmarkSpearmanNullSortBaseline(b *testing.B) {
	x, _ := benchData(1_000_000)
	s := make([]float64, len(x))
	for b.Loop() {
		copy(s, x)
		slices.Sort(s)
	}
}

func BenchmarkSpearmanNullDistribution(b *testing.B) {
	for _, n := range []int{12, 16, SpearmanExactMaxN} {
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				spearmanCounts(n)
			}
		})
	}
}

func BenchmarkSpearmanNullExactPCached(b *testing.B) {
	SpearmanExactP(0, SpearmanExactMaxN, TwoSided) // fill the cache
	for b.Loop() {
		SpearmanExactP(0.47, SpearmanExactMaxN, TwoSided)
	}
}

func BenchmarkSpearmanNullEdgeworthP(b *testing.B) {
	SpearmanEdgeworthP(0, 100, TwoSided) // find the series' edge once
	b.Run("series", func(b *testing.B) {
		for b.Loop() {
			SpearmanEdgeworthP(0.2, 100, TwoSided)
		}
	})
	b.Run("beyond_edge", func(b *testing.B) {
		for b.Loop() {
			SpearmanEdgeworthP(0.8, 100, TwoSided)
		}
	})
}

// TestSpearmanEdgeworthMaxN checks the figures that justify
// SpearmanEdgeworthMaxN: the largest relative difference between
// CorrelationT and the series over attainable ρ (every 7th lattice point;
// both are smooth in ρ) with one-sided series tail at least 1e-3. Bounds
// are the figures quoted, rounded up in the last digit shown.
func TestSpearmanEdgeworthMaxN(t *testing.T) {
	for _, c := range []struct {
		n        int
		min, max float64 // bounds on the largest difference
	}{
		{50, 0.085, 0.087}, {100, 0.041, 0.043}, {400, 0.010, 0.0104}, {SpearmanEdgeworthMaxN, 0.0081, 0.0083},
	} {
		maxH := c.n * (c.n*c.n - 1) / 6
		worst := 0.0
		for h := maxH / 2; h >= 0; h -= 7 {
			rho := spearmanRhoOf(h, c.n)
			e := SpearmanEdgeworthP(rho, c.n, Greater)
			if e < 1e-3 {
				break
			}
			worst = math.Max(worst, math.Abs(CorrelationT(rho, c.n, Greater)/e-1))
		}
		if worst < c.min || worst > c.max {
			t.Errorf("n = %d: t and series differ by up to %.5f, expected within [%v, %v]", c.n, worst, c.min, c.max)
		}
	}
}

// TestSpearmanEdgeworthReach: inside the edge the series is used; past it
// SpearmanEdgeworthP returns the capped t tail, which Reach reports, and
// the exact tail there (n = 18, where it is known) is below twice edgeP.
func TestSpearmanEdgeworthReach(t *testing.T) {
	const n = 18
	if in, _ := SpearmanEdgeworthReach(0.3, n); !in {
		t.Error("rho = 0.3 at n = 18 should be within the series")
	}
	in, edgeP := SpearmanEdgeworthReach(0.95, n)
	if in || !(edgeP > 0 && edgeP < 1e-3) {
		t.Fatalf("rho = 0.95: series %v, edgeP %v", in, edgeP)
	}
	if ex := SpearmanExactP(0.95, n, Greater); !(ex < 2*edgeP) {
		t.Errorf("exact tail %v not below about edgeP %v", ex, edgeP)
	}
	if in, _ := SpearmanEdgeworthReach(-0.95, n); in {
		t.Error("the reach must be symmetric in rho")
	}
	if in, p := SpearmanEdgeworthReach(math.NaN(), n); in || !math.IsNaN(p) {
		t.Error("NaN rho")
	}
}
