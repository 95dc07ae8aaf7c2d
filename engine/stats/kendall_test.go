package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// kendallOracle classifies every pair directly, in O(n²), and counts tie
// groups with a map: a second, independent route to every field of
// PairCounts. Test-only code.
func kendallOracle(x, y []float64) PairCounts {
	n := len(x)
	c := PairCounts{N: n}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			dx, dy := x[i]-x[j], y[i]-y[j]
			switch {
			case dx == 0 && dy == 0:
				c.TiedX++
				c.TiedY++
				c.TiedXY++
			case dx == 0:
				c.TiedX++
			case dy == 0:
				c.TiedY++
			case (dx > 0) == (dy > 0):
				c.Concordant++
			default:
				c.Discordant++
			}
		}
	}
	c.TiesX = oracleTieGroups(x)
	c.TiesY = oracleTieGroups(y)
	return c
}

func oracleTieGroups(v []float64) TieGroups {
	sizes := map[float64]int{}
	for _, a := range v {
		sizes[a]++
	}
	g := TieGroups{Distinct: len(sizes)}
	for _, size := range sizes {
		t := float64(size)
		g.SumT1 += t * (t - 1)
		g.SumT2 += t * (t - 1) * (t - 2)
		g.SumT25 += t * (t - 1) * (2*t + 5)
	}
	return g
}

// TestCountPairsOracle compares CountPairs with the O(n²) oracle on many
// random samples with heavy ties (fixed seed), field by field. The sums are
// small integers, so exact equality is the right test.
func TestCountPairsOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 1))
	for trial := range 3000 {
		n := rng.IntN(201) // 0..200
		kx, ky := 1+rng.IntN(12), 1+rng.IntN(12)
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(kx))
			y[i] = float64(rng.IntN(ky))
			switch trial % 4 {
			case 1: // continuous y: no ties in y
				y[i] = rng.NormFloat64()
			case 2: // y follows x, with noise: long concordant runs
				y[i] = x[i] + float64(rng.IntN(3))
			case 3: // y against x: many discordant pairs
				y[i] = -x[i] + float64(rng.IntN(2))
			}
		}
		got, want := CountPairs(x, y), kendallOracle(x, y)
		if got != want {
			t.Fatalf("trial %d (n = %d):\n got %+v\nwant %+v\nx = %v\ny = %v", trial, n, got, want, x, y)
		}
	}
}

// TestCountPairsLong exercises several merge levels (runs of 16 merged up to
// n = 5000) against the oracle.
func TestCountPairsLong(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for _, n := range []int{15, 16, 17, 31, 32, 33, 1000, 5000} {
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(50))
			y[i] = float64(rng.IntN(40)) + x[i]/10
		}
		if got, want := CountPairs(x, y), kendallOracle(x, y); got != want {
			t.Fatalf("n = %d:\n got %+v\nwant %+v", n, got, want)
		}
	}
}

// TestKendallHollanderWolfe checks the worked example of Hollander & Wolfe,
// Nonparametric Statistical Methods (1973), p. 187f.: Hunter L lightness
// against consumer panel scores for 9 lots of canned tuna. The book's
// statistic is K = n_c − n_d = 16 with n_c = 26 (R prints T = 26), so
// τ = 16/36 = 4/9 = 0.4444; there are no ties, so τ_b = τ_a. The data are as
// reproduced in R 4.2.2's documentation of cor.test, whose example prints
// T = 26 and tau 0.4444444 (rerun here with that R).
func TestKendallHollanderWolfe(t *testing.T) {
	x := []float64{44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1}
	y := []float64{2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8}
	c := CountPairs(x, y)
	if c.Concordant != 26 || c.Discordant != 10 || c.TiedX != 0 || c.TiedY != 0 {
		t.Errorf("counts = %+v, want 26 concordant and 10 discordant pairs, no ties", c)
	}
	if got := c.TauB(); math.Abs(got-4.0/9) > 1e-15 {
		t.Errorf("tau-b = %.17g, want 4/9", got)
	}
	if got := c.TauA(); math.Abs(got-4.0/9) > 1e-15 {
		t.Errorf("tau-a = %.17g, want 4/9", got)
	}
}

// TestKendallHandExample checks a sample small enough to classify by hand,
// with ties in x and in y; the oracle and R (TestAgainstR) carry the rest.
func TestKendallHandExample(t *testing.T) {
	// Hand-computed by listing all 6 pairs: (1,2), (1,3), (1,4), (3,4) are
	// concordant; (2,3) is tied in x; (2,4) is tied in y. So n_c = 4,
	// n_d = 0, n_1 = n_2 = 1, and τ_b = 4/√(5·5) = 0.8.
	x := []float64{1, 2, 2, 3}
	y := []float64{1, 3, 2, 3}
	c := CountPairs(x, y)
	want := PairCounts{
		N: 4, Concordant: 4, Discordant: 0, TiedX: 1, TiedY: 1, TiedXY: 0,
		// hand-computed: one group of 2 → t(t−1) = 2, t(t−1)(t−2) = 0,
		// t(t−1)(2t+5) = 18; three distinct values in each column.
		TiesX: TieGroups{Distinct: 3, SumT1: 2, SumT2: 0, SumT25: 18},
		TiesY: TieGroups{Distinct: 3, SumT1: 2, SumT2: 0, SumT25: 18},
	}
	if c != want {
		t.Fatalf("CountPairs = %+v, want %+v", c, want)
	}
	if got := c.TauB(); got != 0.8 {
		t.Errorf("TauB = %v, want 0.8 (hand-computed)", got)
	}
	if got := c.TauA(); got != 4.0/6 {
		t.Errorf("TauA = %v, want 4/6 (hand-computed)", got)
	}
	if got := KendallTauB(x, y); got != 0.8 {
		t.Errorf("KendallTauB = %v, want 0.8 (hand-computed)", got)
	}
}

// TestVarSNoTies checks the untied variance n(n−1)(2n+5)/18 (Kendall 1938,
// Biometrika 30, 81–93) on a reversed sample, where S = −n(n−1)/2.
func TestVarSNoTies(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5, 6, 7}
	y := []float64{7, 6, 5, 4, 3, 2, 1}
	c := CountPairs(x, y)
	if got, want := c.VarS(), 7.0*6*19/18; math.Abs(got-want) > 1e-12 {
		t.Errorf("VarS = %v, want %v", got, want)
	}
	if c.S() != -21 || c.TauB() != -1 {
		t.Errorf("S = %d, TauB = %v; want −21 and −1 (every pair discordant)", c.S(), c.TauB())
	}
}

func TestKendallUndefined(t *testing.T) {
	for _, tc := range []struct {
		name string
		x, y []float64
	}{
		{"empty", nil, nil},
		{"one", []float64{1}, []float64{2}},
		{"constant_x", []float64{3, 3, 3, 3}, []float64{1, 2, 3, 4}},
		{"constant_y", []float64{1, 2, 3, 4}, []float64{0, 0, 0, 0}},
	} {
		if got := KendallTauB(tc.x, tc.y); !math.IsNaN(got) {
			t.Errorf("%s: KendallTauB = %v, want NaN", tc.name, got)
		}
		if c := CountPairs(tc.x, tc.y); !math.IsNaN(KendallNormal(c, TwoSided)) {
			t.Errorf("%s: KendallNormal = %v, want NaN", tc.name, KendallNormal(c, TwoSided))
		}
	}
}

func TestCountPairsPanics(t *testing.T) {
	mustPanic(t, "length mismatch", func() { CountPairs([]float64{1, 2}, []float64{1}) })
	mustPanic(t, "NaN", func() { CountPairs([]float64{1, math.NaN()}, []float64{1, 2}) })
}

func mustPanic(t *testing.T, what string, f func()) {
	t.Helper()
	defer func() {
		if recover() == nil {
			t.Errorf("%s: no panic", what)
		}
	}()
	f()
}
