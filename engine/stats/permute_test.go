package stats

import (
	"context"
	"errors"
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"
)

var allMeasures = []Measure{Spearman, KendallB, PearsonR, KendallA, KendallC, Gamma, SomersDYX, SomersDXY}

// oracleMeasure computes a measure on (x, y) the long way, from the
// package's ranking and pair-counting kernels and the published formulas
// (Kendall 1938 and 1945 for τ_a, τ_b; Stuart 1953 for τ_c; Goodman and
// Kruskal 1954 for γ; Somers 1962 for d). Spearman is Pearson's r on the
// rank vectors ry, which the caller permutes (TieFirst gives tied values
// distinct ranks that travel with them). Test-only code.
func oracleMeasure(m Measure, x, y, rx, ry []float64) float64 {
	switch m {
	case Spearman:
		return Pearson(rx, ry)
	case PearsonR:
		return Pearson(x, y)
	}
	c := CountPairs(x, y)
	s, n0 := float64(c.S()), float64(c.Pairs())
	switch m {
	case KendallA:
		return c.TauA()
	case KendallB:
		return c.TauB()
	case KendallC:
		mm := float64(min(c.TiesX.Distinct, c.TiesY.Distinct))
		if c.N < 2 || mm < 2 {
			return math.NaN()
		}
		n := float64(c.N)
		return 2 * mm * s / (n * n * (mm - 1))
	case Gamma:
		d := float64(c.Concordant + c.Discordant)
		if d == 0 {
			return math.NaN()
		}
		return s / d
	case SomersDYX:
		if d := n0 - float64(c.TiedX); d > 0 {
			return s / d
		}
		return math.NaN()
	case SomersDXY:
		if d := n0 - float64(c.TiedY); d > 0 {
			return s / d
		}
		return math.NaN()
	}
	panic("oracleMeasure: unknown measure")
}

// oraclePermutationP enumerates all n! permutations of y (Heap's
// algorithm; not only the distinct ones) and returns, per measure and
// alternative, the share at least as extreme as the observed arrangement,
// comparing the measures' values with a tolerance of 1e-9 (distinct values
// at n ≤ 8 differ by far more). Test-only code.
func oraclePermutationP(x, y []float64, rule TieRule, measures []Measure) map[Alternative][]float64 {
	n := len(x)
	rx, ry := Rank(x, rule), Rank(y, rule)
	yp, ryp := slices.Clone(y), slices.Clone(ry)
	obs := make([]float64, len(measures))
	for i, m := range measures {
		obs[i] = oracleMeasure(m, x, yp, rx, ryp)
	}
	counts := map[Alternative][]int{TwoSided: make([]int, len(measures)), Greater: make([]int, len(measures)), Less: make([]int, len(measures))}
	const tol = 1e-9
	visit := func() {
		for i, m := range measures {
			v := oracleMeasure(m, x, yp, rx, ryp)
			if v >= obs[i]-tol {
				counts[Greater][i]++
			}
			if v <= obs[i]+tol {
				counts[Less][i]++
			}
			if math.Abs(v) >= math.Abs(obs[i])-tol {
				counts[TwoSided][i]++
			}
		}
	}
	total := 0
	c := make([]int, n)
	visit()
	total++
	for i := 1; i < n; {
		if c[i] < i {
			j := 0
			if i%2 == 1 {
				j = c[i]
			}
			yp[i], yp[j] = yp[j], yp[i]
			ryp[i], ryp[j] = ryp[j], ryp[i]
			visit()
			total++
			c[i]++
			i = 1
		} else {
			c[i] = 0
			i++
		}
	}
	out := map[Alternative][]float64{}
	for alt, cs := range counts {
		out[alt] = make([]float64, len(measures))
		for i, k := range cs {
			out[alt][i] = float64(k) / float64(total)
			if math.IsNaN(obs[i]) {
				out[alt][i] = math.NaN()
			}
		}
	}
	return out
}

// tiedCases are small samples with ties for the enumeration tests, fixed by
// hand and by a seeded generator.
func tiedCases() []struct {
	name string
	x, y []float64
	rule TieRule
} {
	cases := []struct {
		name string
		x, y []float64
		rule TieRule
	}{
		{"ties_both_n6", []float64{1, 2, 2, 3, 3, 4}, []float64{2, 1, 3, 3, 5, 5}, TieAverage},
		{"heavy_x_n7", []float64{1, 1, 1, 2, 2, 2, 3}, []float64{0.5, 1.5, 0.7, 2.2, 1.1, 3.4, 2.9}, TieMin},
		{"heavy_y_n7", []float64{3, 1, 4, 1.5, 5, 9, 2.6}, []float64{0, 1, 0, 1, 1, 2, 2}, TieMax},
		{"negative_n8", []float64{1, 2, 3, 4, 5, 6, 7, 8}, []float64{4, 4, 3, 3, 2, 2, 1, 1}, TieDense},
		{"first_rule_n7", []float64{1, 1, 2, 3, 3, 4, 5}, []float64{2, 2, 1, 3, 4, 4, 6}, TieFirst},
		{"constant_y_n6", []float64{1, 2, 3, 4, 5, 6}, []float64{7, 7, 7, 7, 7, 7}, TieAverage},
		{"constant_x_n6", []float64{2, 2, 2, 2, 2, 2}, []float64{1, 3, 2, 5, 4, 6}, TieAverage},
	}
	rng := rand.New(rand.NewPCG(20261202, 6))
	for _, n := range []int{6, 7, 8} {
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(4))
			y[i] = float64(rng.IntN(3)) + 0.5*x[i]
		}
		cases = append(cases, struct {
			name string
			x, y []float64
			rule TieRule
		}{"random_n" + string(rune('0'+n)), x, y, TieAverage})
	}
	return cases
}

// TestExactAgainstOracle compares the exact conditional p-values (distinct
// arrangements of the multiset with fewer of them, lexicographic order) with
// the brute-force oracle over all n! permutations, for n = 6..8 with ties in
// x, y or both, every measure, alternative and tie rule used above. Both are
// ratios of counts, so they must agree to rounding (1e-12).
func TestExactAgainstOracle(t *testing.T) {
	for _, tc := range tiedCases() {
		t.Run(tc.name, func(t *testing.T) {
			want := oraclePermutationP(tc.x, tc.y, tc.rule, allMeasures)
			for _, alt := range allAlts {
				res, err := ExactPermutationTest(context.Background(), tc.x, tc.y,
					PermutationSpec{Measures: allMeasures, Rule: tc.rule, Alt: alt, Workers: 3})
				if err != nil {
					t.Fatal(err)
				}
				if !res.Exact {
					t.Errorf("Exact = false")
				}
				for i, m := range allMeasures {
					if !closeAbs(res.P[i], want[alt][i], 1e-12) {
						t.Errorf("%v %v: p = %.17g, oracle over all n! permutations gives %.17g", m, alt, res.P[i], want[alt][i])
					}
				}
			}
		})
	}
}

// TestExactArrangementCount: the enumeration visits Arrangements(x, y)
// arrangements, rearranging the column with fewer of them.
func TestExactArrangementCount(t *testing.T) {
	for _, tc := range tiedCases() {
		if tc.rule == TieFirst {
			continue // Spearman under TieFirst counts rank orders; see below
		}
		res, err := ExactPermutationTest(context.Background(), tc.x, tc.y,
			PermutationSpec{Measures: []Measure{KendallB}, Rule: tc.rule, Alt: TwoSided})
		if err != nil {
			t.Fatal(err)
		}
		if want := Arrangements(tc.x, tc.y); float64(res.Draws) != want && !math.IsNaN(res.P[0]) {
			t.Errorf("%s: enumerated %d arrangements, Arrangements gives %v", tc.name, res.Draws, want)
		}
	}
	x := []float64{1, 1, 2, 3, 3, 4, 5}
	y := []float64{2, 2, 1, 3, 4, 4, 6}
	res, err := ExactPermutationTest(context.Background(), x, y, PermutationSpec{Measures: []Measure{Spearman}, Rule: TieFirst, Alt: Less})
	if err != nil {
		t.Fatal(err)
	}
	if want := Arrangements(Rank(x, TieFirst), Rank(y, TieFirst)); float64(res.Draws) != want || want != 5040 {
		t.Errorf("TieFirst: enumerated %d arrangements, want 7! = %v", res.Draws, want)
	}
}

// TestExactUntiedSpearman checks the exact p-values of Spearman's ρ without
// ties against the null distribution of D = Σ(pᵢ − i)² counted over all n!
// permutations by spearmanDCounts (spearman_exact_test.go), which that file
// checks against Zar's (1972) table. ρ = 1 − 6D/(n³ − n), so P(ρ ≥ ρ₀) =
// P(D ≤ D₀), and |ρ| ≥ |ρ₀| ⟺ |D_max − 2D| ≥ |D_max − 2D₀|.
func TestExactUntiedSpearman(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for n := 4; n <= 7; n++ {
		counts := spearmanDCounts(n)
		maxD := len(counts) - 1
		var total int64
		for _, k := range counts {
			total += k
		}
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(10 * (i + 1))
		}
		for trial := range 12 {
			perm := rng.Perm(n)
			if trial == 0 {
				perm = []int{} // the identity
				for i := range n {
					perm = append(perm, i)
				}
			}
			y := make([]float64, n)
			d0 := 0
			for i, p := range perm {
				y[i] = math.Sqrt(float64(p + 1)) // increasing in p: rank p+1
				d0 += (p - i) * (p - i)
			}
			var ge, le, two int64
			for d, k := range counts {
				if d <= d0 {
					ge += k
				}
				if d >= d0 {
					le += k
				}
				if abs(maxD-2*d) >= abs(maxD-2*d0) {
					two += k
				}
			}
			for _, c := range []struct {
				alt  Alternative
				want int64
			}{{Greater, ge}, {Less, le}, {TwoSided, two}} {
				res, err := ExactPermutationTest(context.Background(), x, y,
					PermutationSpec{Measures: []Measure{Spearman}, Rule: TieAverage, Alt: c.alt})
				if err != nil {
					t.Fatal(err)
				}
				if want := float64(c.want) / float64(total); math.Abs(res.P[0]-want) > 1e-15 {
					t.Errorf("n = %d, y order %v, %v: p = %v, enumeration of D gives %v", n, perm, c.alt, res.P[0], want)
				}
			}
		}
	}
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

// TestExactUntiedKendall checks the exact p-values of Kendall's τ without
// ties against the Mahonian numbers, the counts of permutations of n items
// by number of inversions I (S = n(n−1)/2 − 2I). The rows for n = 4 and 5
// are from memory (OEIS A008302; Kendall 1970, Rank Correlation Methods,
// Appendix Table 1, gives the same distribution as frequencies of S) and
// are confirmed here by counting inversions over all n! orders.
func TestExactUntiedKendall(t *testing.T) {
	mahonian := map[int][]int64{
		4: {1, 3, 5, 6, 5, 3, 1},
		5: {1, 4, 9, 15, 20, 22, 20, 15, 9, 4, 1},
	}
	for n, row := range mahonian {
		// Confirm the remembered row by enumeration.
		got := make([]int64, len(row))
		var visit func(p []int, k int)
		visit = func(p []int, k int) {
			if k == len(p) {
				inv := 0
				for i := range p {
					for j := i + 1; j < len(p); j++ {
						if p[i] > p[j] {
							inv++
						}
					}
				}
				got[inv]++
				return
			}
			for i := k; i < len(p); i++ {
				p[k], p[i] = p[i], p[k]
				visit(p, k+1)
				p[k], p[i] = p[i], p[k]
			}
		}
		p := make([]int, n)
		for i := range p {
			p[i] = i
		}
		visit(p, 0)
		if !slices.Equal(got, row) {
			t.Fatalf("n = %d: inversions counted %v, remembered Mahonian row %v", n, got, row)
		}

		var total int64
		for _, k := range row {
			total += k
		}
		x := []float64{1, 2, 3, 4, 5}[:n]
		perms := [][]int{}
		for range 10 {
			perms = append(perms, rand.New(rand.NewPCG(uint64(n), uint64(len(perms)))).Perm(n))
		}
		for _, perm := range perms {
			y := make([]float64, n)
			inv0 := 0
			for i, a := range perm {
				y[i] = float64(a)
				for j := i + 1; j < n; j++ {
					if a > perm[j] {
						inv0++
					}
				}
			}
			maxI := len(row) - 1
			var ge, le, two int64
			for i, k := range row {
				if i <= inv0 { // S ≥ S₀ ⟺ I ≤ I₀
					ge += k
				}
				if i >= inv0 {
					le += k
				}
				if abs(maxI-2*i) >= abs(maxI-2*inv0) {
					two += k
				}
			}
			for _, c := range []struct {
				alt  Alternative
				want int64
			}{{Greater, ge}, {Less, le}, {TwoSided, two}} {
				res, err := ExactPermutationTest(context.Background(), x, y,
					PermutationSpec{Measures: []Measure{KendallB, KendallA, Gamma}, Alt: c.alt, Workers: 2})
				if err != nil {
					t.Fatal(err)
				}
				want := float64(c.want) / float64(total)
				for i, m := range []Measure{KendallB, KendallA, Gamma} {
					if math.Abs(res.P[i]-want) > 1e-15 {
						t.Errorf("n = %d, y %v, %v, %v: p = %v, Mahonian tail gives %v", n, perm, m, c.alt, res.P[i], want)
					}
				}
			}
		}
	}
}

// TestMonteCarloNearExact: Monte Carlo p-values lie within 4 Monte Carlo
// standard errors √(p(1−p)/m), plus the 1/(m+1) shift of (b+1)/(m+1), of
// the exact p-values (fixed key, so the check is deterministic; 4 SE makes
// a false alarm among these ~150 checks unlikely, < 1%, for any key).
func TestMonteCarloNearExact(t *testing.T) {
	const m = 20000
	for k, tc := range tiedCases() {
		for _, alt := range allAlts {
			spec := PermutationSpec{Measures: allMeasures, Rule: tc.rule, Alt: alt, Draws: m,
				Key: NewStreamKey(int64(k), "mc-vs-exact", alt.String()), Workers: 2}
			exact, err := ExactPermutationTest(context.Background(), tc.x, tc.y, spec)
			if err != nil {
				t.Fatal(err)
			}
			mc, err := PermutationTest(context.Background(), tc.x, tc.y, spec)
			if err != nil {
				t.Fatal(err)
			}
			if mc.Exact {
				t.Errorf("Monte Carlo result says Exact")
			}
			for i, meas := range allMeasures {
				p := exact.P[i]
				if math.IsNaN(p) {
					if !math.IsNaN(mc.P[i]) {
						t.Errorf("%s %v %v: Monte Carlo p = %v, exact is NaN", tc.name, meas, alt, mc.P[i])
					}
					continue
				}
				se := math.Sqrt(p * (1 - p) / m)
				if d := math.Abs(mc.P[i] - p); d > 4*se+1.0/(m+1) {
					t.Errorf("%s %v %v: Monte Carlo p = %.5f, exact %.5f: %.1f SE apart", tc.name, meas, alt, mc.P[i], p, d/se)
				}
			}
		}
	}
}

// permData returns a seeded sample with ties in both columns.
func permData(n int, seed uint64) (x, y []float64) {
	rng := rand.New(rand.NewPCG(seed, 99))
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(rng.IntN(7))
		y[i] = float64(rng.IntN(5)) + 0.3*x[i] + 0.1*float64(rng.IntN(2))
	}
	return x, y
}

// TestPermutationWorkerInvariance: the p-values are bit-identical for 1, 2,
// 4 and 7 workers, Monte Carlo (draws not a multiple of the block) and exact.
func TestPermutationWorkerInvariance(t *testing.T) {
	x, y := permData(60, 1)
	xs, ys := permData(9, 2)
	for _, alt := range allAlts {
		var mc0, ex0 []float64
		for _, w := range []int{1, 2, 4, 7} {
			spec := PermutationSpec{Measures: allMeasures, Rule: TieAverage, Alt: alt, Draws: 5000,
				Key: NewStreamKey(42, "invariance"), Workers: w}
			mc, err := PermutationTest(context.Background(), x, y, spec)
			if err != nil {
				t.Fatal(err)
			}
			ex, err := ExactPermutationTest(context.Background(), xs, ys, spec)
			if err != nil {
				t.Fatal(err)
			}
			if mc.Draws != 5000 {
				t.Errorf("Draws = %d, want 5000", mc.Draws)
			}
			if mc0 == nil {
				mc0, ex0 = mc.P, ex.P
				continue
			}
			if !slices.Equal(mc.P, mc0) {
				t.Errorf("%v, %d workers: Monte Carlo p = %v, 1 worker gave %v", alt, w, mc.P, mc0)
			}
			if !slices.Equal(ex.P, ex0) {
				t.Errorf("%v, %d workers: exact p = %v, 1 worker gave %v", alt, w, ex.P, ex0)
			}
		}
	}
}

// TestPermutationKeyMatters: another key gives other draws (and the same key
// the same ones).
func TestPermutationKeyMatters(t *testing.T) {
	x, y := permData(40, 3)
	run := func(key StreamKey) float64 {
		res, err := PermutationTest(context.Background(), x, y,
			PermutationSpec{Measures: []Measure{Spearman}, Rule: TieAverage, Alt: TwoSided, Draws: 3000, Key: key})
		if err != nil {
			t.Fatal(err)
		}
		return res.P[0]
	}
	a, b, c := run(NewStreamKey(1, "t")), run(NewStreamKey(1, "t")), run(NewStreamKey(2, "t"))
	if a != b {
		t.Errorf("same key: %v and %v", a, b)
	}
	if a == c {
		t.Errorf("different keys gave the same p = %v (3000 draws; a coincidence is very unlikely)", a)
	}
}

// TestPermutationNeverZero: a perfect relation gives the smallest Monte
// Carlo p, 1/(m+1), never 0; its exact p is 1/n! (one arrangement).
func TestPermutationNeverZero(t *testing.T) {
	n := 50
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(i)
		y[i] = float64(i * i)
	}
	const m = 999
	res, err := PermutationTest(context.Background(), x, y,
		PermutationSpec{Measures: allMeasures, Rule: TieAverage, Alt: Greater, Draws: m, Key: NewStreamKey(7)})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range res.P {
		if p != 1.0/(m+1) {
			t.Errorf("%v: p = %v, want 1/(m+1) = %v", allMeasures[i], p, 1.0/(m+1))
		}
	}
	ex, err := ExactPermutationTest(context.Background(), x[:7], y[:7],
		PermutationSpec{Measures: allMeasures, Rule: TieAverage, Alt: Greater})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range ex.P {
		if p != 1.0/5040 {
			t.Errorf("exact %v: p = %v, want 1/7! = %v", allMeasures[i], p, 1.0/5040)
		}
	}
}

// TestPermutationUndefined: undefined measures get NaN, defined ones a
// p-value; τ_a and the Somers' d whose denominator survives are 0 on a
// constant column, so p = 1.
func TestPermutationUndefined(t *testing.T) {
	x := []float64{4, 4, 4, 4, 4, 4}
	y := []float64{1, 2, 3, 4, 5, 6}
	for _, exact := range []bool{false, true} {
		spec := PermutationSpec{Measures: allMeasures, Rule: TieAverage, Alt: TwoSided, Draws: 100}
		var res PermutationResult
		var err error
		if exact {
			res, err = ExactPermutationTest(context.Background(), x, y, spec)
		} else {
			res, err = PermutationTest(context.Background(), x, y, spec)
		}
		if err != nil {
			t.Fatal(err)
		}
		for i, m := range allMeasures {
			switch m {
			case KendallA, SomersDXY:
				if res.P[i] != 1 {
					t.Errorf("exact=%v %v: p = %v, want 1 (the statistic is always 0)", exact, m, res.P[i])
				}
			default:
				if !math.IsNaN(res.P[i]) {
					t.Errorf("exact=%v %v: p = %v, want NaN", exact, m, res.P[i])
				}
			}
		}
	}
	res, err := PermutationTest(context.Background(), []float64{1}, []float64{2},
		PermutationSpec{Measures: allMeasures, Rule: TieAverage, Alt: Less, Draws: 10})
	if err != nil {
		t.Fatal(err)
	}
	if res.Draws != 0 {
		t.Errorf("n = 1: Draws = %d, want 0", res.Draws)
	}
	for i, p := range res.P {
		if !math.IsNaN(p) {
			t.Errorf("n = 1, %v: p = %v, want NaN", allMeasures[i], p)
		}
	}
	inf := []float64{1, 2, math.Inf(1), 4}
	res, err = PermutationTest(context.Background(), inf, []float64{1, 3, 2, 4},
		PermutationSpec{Measures: []Measure{PearsonR, Spearman}, Rule: TieAverage, Alt: Less, Draws: 10})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(res.P[0]) || math.IsNaN(res.P[1]) {
		t.Errorf("x with +Inf: p = %v, want NaN for Pearson and a value for Spearman", res.P)
	}
}

// TestPermutationCancel: a cancelled context stops the test between blocks
// and returns ctx.Err().
func TestPermutationCancel(t *testing.T) {
	x, y := permData(200, 4)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	spec := PermutationSpec{Measures: []Measure{KendallB}, Alt: TwoSided, Draws: 50000, Workers: 2}
	if _, err := PermutationTest(ctx, x, y, spec); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled before: err = %v, want context.Canceled", err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	defer cancel()
	spec.Progress = func(done, total int) {
		if total != 50000 || done <= 0 || done > total {
			t.Errorf("progress(%d, %d)", done, total)
		}
		cancel()
	}
	if _, err := PermutationTest(ctx, x, y, spec); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled during: err = %v, want context.Canceled", err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	spec.Progress = func(int, int) { cancel() }
	if _, err := ExactPermutationTest(ctx, x[:9], y[:9], spec); !errors.Is(err, context.Canceled) {
		t.Errorf("exact, cancelled during: err = %v, want context.Canceled", err)
	}
}

// TestPermutationProgress: the last report of a complete run is (total,
// total).
func TestPermutationProgress(t *testing.T) {
	x, y := permData(30, 5)
	var last int
	spec := PermutationSpec{Measures: []Measure{Spearman}, Rule: TieAverage, Alt: TwoSided, Draws: 2500,
		Progress: func(done, total int) { last = max(last, done) }}
	if _, err := PermutationTest(context.Background(), x, y, spec); err != nil {
		t.Fatal(err)
	}
	if last != 2500 {
		t.Errorf("last progress %d, want 2500", last)
	}
}

func TestExactTooMany(t *testing.T) {
	x := make([]float64, 11)
	for i := range x {
		x[i] = float64(i)
	}
	y := slices.Clone(x)
	y[0] = 1 // 11!/2! = 19 958 400 > 10!
	_, err := ExactPermutationTest(context.Background(), x, y, PermutationSpec{Measures: []Measure{KendallB}, Alt: TwoSided})
	if !errors.Is(err, ErrTooManyArrangements) {
		t.Errorf("err = %v, want ErrTooManyArrangements", err)
	}
	// Eleven values of which x has three groups: 11!/(4!4!3!) = 11 550
	// arrangements of x, so the enumeration rearranges x.
	x = []float64{1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3}
	if got := Arrangements(x, y); got != 11550 {
		t.Errorf("Arrangements = %v, want 11550", got)
	}
	res, err := ExactPermutationTest(context.Background(), x, y, PermutationSpec{Measures: []Measure{KendallB}, Alt: TwoSided})
	if err != nil || res.Draws != 11550 {
		t.Errorf("Draws = %d, err = %v; want 11550 arrangements", res.Draws, err)
	}
}

// TestArrangements: hand-computed multinomial coefficients.
func TestArrangements(t *testing.T) {
	for _, tc := range []struct {
		x, y []float64
		want float64
	}{
		{nil, nil, 1},
		{[]float64{1, 2, 3}, []float64{1, 1, 2}, 3},                    // 3!/2! = 3 < 3!
		{[]float64{1, 2, 3, 4}, []float64{5, 6, 7, 8}, 24},             // 4!
		{[]float64{1, 1, 2, 2, 3, 3}, []float64{1, 1, 1, 2, 2, 3}, 60}, // min(6!/8 = 90, 6!/12 = 60)
		{[]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, MaxEnumeration},
	} {
		if got := Arrangements(tc.x, tc.y); got != tc.want {
			t.Errorf("Arrangements(%v, %v) = %v, want %v", tc.x, tc.y, got, tc.want)
		}
	}
	big := make([]float64, 200)
	for i := range big {
		big[i] = float64(i)
	}
	if got := Arrangements(big, big); !math.IsInf(got, 1) {
		t.Errorf("200 distinct values: %v, want +Inf", got)
	}
}

// TestNextArrangement: Algorithm L visits each distinct arrangement of a
// multiset once, in increasing lexicographic order; their number is the
// multinomial coefficient.
func TestNextArrangement(t *testing.T) {
	c := []int32{0, 0, 1, 1, 1, 2, 3}
	key := func(c []int32) string {
		b := make([]byte, len(c))
		for i, v := range c {
			b[i] = byte('0' + v)
		}
		return string(b)
	}
	seen := map[string]bool{key(c): true}
	prev := slices.Clone(c)
	for nextArrangement(c) {
		if slices.Compare(prev, c) >= 0 {
			t.Fatalf("%v does not follow %v", c, prev)
		}
		if seen[key(c)] {
			t.Fatalf("%v visited twice", c)
		}
		seen[key(c)] = true
		copy(prev, c)
	}
	count := len(seen)
	if want := 7 * 6 * 5 * 4 * 3 * 2 / (2 * 6); count != want {
		t.Errorf("%d arrangements, want 7!/(2!3!) = %d", count, want)
	}
}

// TestPairCounter: the allocation-free pair count of the permutation
// worker, countSmall (n ≤ 1024) and countTree, agrees with CountPairs on the
// observed arrangement and on shuffled ones, with ties in x, in y and in
// both, and n across several words and across smallPairsMax.
func TestPairCounter(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for trial := range 300 {
		n := 1 + rng.IntN(120)
		switch trial % 10 {
		case 0:
			n = 1 + rng.IntN(2000)
		case 5:
			n = smallPairsMax - 1 + rng.IntN(3)
		}
		x, y := make([]float64, n), make([]float64, n)
		kx, ky := 1+rng.IntN(10), 1+rng.IntN(10)
		for i := range x {
			x[i] = float64(rng.IntN(kx))
			y[i] = float64(rng.IntN(ky))
			if trial%3 == 0 {
				y[i] = rng.NormFloat64()
			}
			if trial%4 == 0 {
				x[i] = rng.NormFloat64()
			}
		}
		s := newPermSetup(x, y, PermutationSpec{Measures: []Measure{KendallA, Gamma}, Alt: TwoSided}, false)
		var smallC, treeC pairCounter
		smallC.init(&s.kend, false)
		treeC.init(&s.kend, true)
		if (smallC.small != nil) != (n <= smallPairsMax) || treeC.small != nil {
			t.Fatalf("n = %d: wrong counter chosen", n)
		}
		xs := slices.Sorted(slices.Values(x))
		w := s.newWorker()
		w.rng.reset(NewStreamKey(int64(trial)), 0)
		s.startBlock(w)
		for d := range 3 {
			if d > 0 {
				w.rng.swapIndices(w.js)
				applySwaps(w.kendV, w.js)
			}
			// The arrangement rebuilt as data: the fixed column in sorted
			// order against the permuted column's slot starts, which order
			// its values.
			yp := make([]float64, n)
			for i, p := range w.kendV {
				yp[i] = float64(p)
			}
			c := CountPairs(xs, yp)
			if nc, nd := smallC.count(&s.kend, w.kendV); nc != c.Concordant || nd != c.Discordant {
				t.Fatalf("trial %d, draw %d, small/tree: n_c, n_d = %d, %d; CountPairs gives %d, %d", trial, d, nc, nd, c.Concordant, c.Discordant)
			}
			if nc, nd := treeC.count(&s.kend, w.kendV); nc != c.Concordant || nd != c.Discordant {
				t.Fatalf("trial %d, draw %d, tree: n_c, n_d = %d, %d; CountPairs gives %d, %d", trial, d, nc, nd, c.Concordant, c.Discordant)
			}
			if d == 0 && (c.S() != s.s0 || c.Concordant+c.Discordant != s.d0) {
				t.Fatalf("trial %d: observed S, n_c + n_d = %d, %d; CountPairs gives %d, %d", trial, s.s0, s.d0, c.S(), c.Concordant+c.Discordant)
			}
		}
	}
}

// TestCmpProducts checks the 128-bit comparison against math/big.
func TestCmpProducts(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	vals := []int64{0, 1, -1, 2, -2, math.MaxInt64, math.MinInt64 + 1, 1 << 62, -(1 << 62), 3037000499, -3037000500}
	for range 2000 {
		vals = append(vals, int64(rng.Uint64()), int64(rng.Uint64()>>uint(rng.IntN(63))))
	}
	for i := 0; i+3 < len(vals); i++ {
		a, b, c, d := vals[i], vals[i+1], vals[i+2], vals[i+3]
		l := new(big.Int).Mul(big.NewInt(a), big.NewInt(b))
		r := new(big.Int).Mul(big.NewInt(c), big.NewInt(d))
		if got, want := cmpProducts(a, b, c, d), l.Cmp(r); got != want {
			t.Fatalf("cmpProducts(%d, %d, %d, %d) = %d, math/big says %d", a, b, c, d, got, want)
		}
		if got := cmpProducts(a, b, a, b); got != 0 {
			t.Fatalf("cmpProducts(%d, %d, same) = %d", a, b, got)
		}
	}
}

func TestPermutationPanics(t *testing.T) {
	x, y := []float64{1, 2, 3}, []float64{3, 1, 2}
	ok := PermutationSpec{Measures: []Measure{Spearman}, Rule: TieAverage, Alt: TwoSided, Draws: 10}
	bad := func(f func(*PermutationSpec)) PermutationSpec { s := ok; f(&s); return s }
	ctx := context.Background()
	mustPanic(t, "no draws", func() { PermutationTest(ctx, x, y, bad(func(s *PermutationSpec) { s.Draws = 0 })) })
	mustPanic(t, "unknown measure", func() { PermutationTest(ctx, x, y, bad(func(s *PermutationSpec) { s.Measures = []Measure{0} })) })
	mustPanic(t, "unknown alternative", func() { ExactPermutationTest(ctx, x, y, bad(func(s *PermutationSpec) { s.Alt = 0 })) })
	mustPanic(t, "unknown rule", func() { PermutationTest(ctx, x, y, bad(func(s *PermutationSpec) { s.Rule = 0 })) })
	mustPanic(t, "length", func() { PermutationTest(ctx, x, y[:2], ok) })
	mustPanic(t, "NaN", func() { PermutationTest(ctx, []float64{1, math.NaN(), 3}, y, ok) })
	mustPanic(t, "Arrangements NaN", func() { Arrangements([]float64{1, math.NaN()}, []float64{1, 2}) })
}

// TestSpearmanInnerLoopAllocs: a Monte Carlo test allocates a fixed amount
// (setup and per-worker scratch), whatever the number of draws, for every
// measure, with Kendall's counts in countSmall (n = 40) and in countTree
// (n = 1100).
func TestSpearmanInnerLoopAllocs(t *testing.T) {
	x, y := permData(40, 8)
	xl, yl := permData(1100, 8)
	for _, c := range []struct {
		x, y []float64
		ms   []Measure
	}{{x, y, []Measure{Spearman}}, {x, y, []Measure{Spearman, KendallB, Gamma, PearsonR}}, {xl, yl, []Measure{KendallB, Gamma}}} {
		allocs := func(draws int) float64 {
			spec := PermutationSpec{Measures: c.ms, Rule: TieAverage, Alt: TwoSided, Draws: draws}
			return testing.AllocsPerRun(2, func() { PermutationTest(context.Background(), c.x, c.y, spec) })
		}
		if a, b := allocs(permBlock), allocs(3*permBlock); a != b {
			t.Errorf("n = %d, %v: %v allocations for 1 block, %v for 3: the draws allocate", len(c.x), c.ms, a, b)
		}
	}
}

// TestSpearmanIntegerMatchesFloat: Spearman's exact integer statistic and
// the float statistic on centred ranks with the tolerance (the path beyond
// spIntMaxN, forced here) count the same arrangements, Monte Carlo (the
// same draws) and exact, on tied data under every rule and alternative.
func TestSpearmanIntegerMatchesFloat(t *testing.T) {
	rules := []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst}
	run := func(x, y []float64, spec PermutationSpec, intMax int) (mc, ex []float64) {
		defer func(v int) { spIntMaxN = v }(spIntMaxN)
		spIntMaxN = intMax
		r, err := PermutationTest(context.Background(), x, y, spec)
		if err != nil {
			t.Fatal(err)
		}
		mc = r.P
		if n := len(x); n <= 9 {
			r, err = ExactPermutationTest(context.Background(), x, y, spec)
			if err != nil {
				t.Fatal(err)
			}
			ex = r.P
		}
		return mc, ex
	}
	for trial := range 30 {
		n := []int{5, 8, 9, 40, 300}[trial%5]
		x, y := permData(n, uint64(trial))
		for _, alt := range allAlts {
			spec := PermutationSpec{Measures: []Measure{Spearman, KendallB}, Rule: rules[trial%len(rules)], Alt: alt,
				Draws: 3000, Key: NewStreamKey(int64(trial), "int-float"), Workers: 2}
			mcI, exI := run(x, y, spec, 1<<19)
			mcF, exF := run(x, y, spec, 0)
			if !slices.Equal(mcI, mcF) || !slices.Equal(exI, exF) {
				t.Errorf("trial %d (n = %d, %v, %v): integer p = %v / %v, float p = %v / %v",
					trial, n, spec.Rule, alt, mcI, exI, mcF, exF)
			}
		}
	}
}

// TestIntDotExtreme: the integer comparisons of intDot agree with the
// definition, |nT − ΣaΣb| ≥ |nT₀ − ΣaΣb| (two-sided) and T ≷ T₀ (one-sided),
// evaluated in math/big, for every arrangement of small integer scores,
// including arrangements exactly on the thresholds.
func TestIntDotExtreme(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for trial := range 200 {
		n := 2 + rng.IntN(6)
		a, b := make([]int32, n), make([]int32, n)
		for i := range a {
			a[i] = int32(rng.IntN(2*n) + 1)
			b[i] = int32(rng.IntN(2*n) + 1)
		}
		d := newIntDot(a, nil, b)
		var sa, sb int64
		for i := range a {
			sa += int64(a[i])
			sb += int64(b[i])
		}
		nc := new(big.Int).Mul(big.NewInt(sa), big.NewInt(sb))
		dev := func(t int64) *big.Int {
			v := new(big.Int).Mul(big.NewInt(int64(n)), big.NewInt(t))
			return v.Sub(v, nc).Abs(v)
		}
		dev0 := dev(d.t0)
		perm := slices.Clone(b)
		var visit func(k int)
		visit = func(k int) {
			if k == n {
				tt := dotInt(a, perm)
				if got, want := d.extreme(tt, TwoSided), dev(tt).Cmp(dev0) >= 0; got != want {
					t.Fatalf("trial %d: T = %d, T₀ = %d: two-sided extreme %v, want %v", trial, tt, d.t0, got, want)
				}
				if d.extreme(tt, Greater) != (tt >= d.t0) || d.extreme(tt, Less) != (tt <= d.t0) {
					t.Fatalf("trial %d: one-sided comparison of %d with %d", trial, tt, d.t0)
				}
				return
			}
			for i := k; i < n; i++ {
				perm[k], perm[i] = perm[i], perm[k]
				visit(k + 1)
				perm[k], perm[i] = perm[i], perm[k]
			}
		}
		visit(0)
	}
}

// TestShuffleDot: the fused shuffles leave the same arrangement as
// applySwaps, and their sums equal dotInt and dotFloat on it (the float
// sum bit for bit: the same order of summation).
func TestShuffleDot(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 32))
	var r blockRNG
	r.reset(NewStreamKey(31, "shuffle dot"), 0)
	for _, n := range []int{1, 2, 3, 4, 7, 64, 1001} {
		ai, bi := make([]int32, n), make([]int32, n)
		af, bf := make([]float64, n), make([]float64, n)
		order := make([]int32, n)
		for i := range n {
			ai[i], bi[i] = int32(rng.IntN(1000)), int32(rng.IntN(1000))
			af[i], bf[i] = rng.NormFloat64(), rng.NormFloat64()
			order[i] = int32(i)
		}
		bi0, bf0 := slices.Clone(bi), slices.Clone(bf)
		js := make([]int32, n)
		for range 5 {
			r.swapIndices(js)
			applySwaps(order, js)
			ti, tf := shuffleDotInt(bi, ai, js), shuffleDotFloat(bf, af, js)
			for i, o := range order {
				if bi[i] != bi0[o] || bf[i] != bf0[o] {
					t.Fatalf("n = %d: position %d holds another item than applySwaps put there", n, i)
				}
			}
			if got := dotInt(ai, bi); got != ti {
				t.Fatalf("n = %d: shuffleDotInt %d, dotInt %d", n, ti, got)
			}
			if got := dotFloat(af, bf); math.Float64bits(got) != math.Float64bits(tf) {
				t.Fatalf("n = %d: shuffleDotFloat %v, dotFloat %v", n, tf, got)
			}
		}
	}
}
