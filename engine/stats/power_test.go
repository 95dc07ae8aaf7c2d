package stats

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"testing"
)

// powerRefPath is the committed output of testdata/ref/power_reference.R
// (R 4.2.2, pwr 1.3-0); the tests need no R.
var powerRefPath = filepath.Join("..", "..", "testdata", "ref", "power_reference.csv")

var measureByName = map[string]Measure{"pearson": PearsonR, "spearman": Spearman, "kendall_b": KendallB}
var altByName = map[string]Alternative{"two-sided": TwoSided, "greater": Greater, "less": Less}

// TestPowerAgainstR checks CorrelationPower and CorrelationSampleSize against
// testdata/ref/power_reference.csv:
//
//   - "power": the Fisher-z formula written out in R, for the three
//     measures, three alternatives, α = 0.05 and 0.01, ρ from −0.5 to 0.95
//     and n from 5 to 1000: within 1e-12 (the same closed form, two
//     accurate normal distribution functions).
//   - "sample_size": the least n, found in R by evaluating every n: equal.
//   - Pearson only, pwr 1.3-0's pwr.r.test: its power within 0.4/(n − 3)
//     and its ceiling(n) equal to ours or one less. pwr takes the critical
//     value from the t test and adds the bias correction r/(2(n − 1)) to
//     atanh(r) (see the R script), both O(1/n) effects; the largest
//     differences in the file are 0.084 at n = 5, 0.033 at n = 10, 0.011
//     at n = 30 and 0.0003 at n = 1000, each below the bound.
func TestPowerAgainstR(t *testing.T) {
	recs := readCSV(t, powerRefPath)
	num := func(s string) float64 {
		if s == "NA" {
			return math.NaN()
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%s: %v", powerRefPath, err)
		}
		return v
	}
	var powers, sizes int
	for _, rec := range recs[1:] {
		kind, m, alt := rec[0], measureByName[rec[1]], altByName[rec[2]]
		rho, alpha, n, p, pwr := num(rec[3]), num(rec[4]), int(num(rec[5])), num(rec[6]), num(rec[7])
		switch kind {
		case "power":
			powers++
			got := CorrelationPower(m, rho, n, alpha, alt)
			if !closeAbs(got, p, 1e-12) {
				t.Errorf("CorrelationPower(%v, %v, %d, %v, %v) = %.17g, R formula gives %.17g", m, rho, n, alpha, alt, got, p)
			}
			if m == PearsonR && math.Abs(got-pwr) > 0.4/float64(n-3) {
				t.Errorf("CorrelationPower(pearson, %v, %d, %v, %v) = %.6f, pwr.r.test gives %.6f", rho, n, alpha, alt, got, pwr)
			}
		case "sample_size":
			sizes++
			got := CorrelationSampleSize(m, rho, p, alpha, alt)
			if got != n {
				t.Errorf("CorrelationSampleSize(%v, %v, %v, %v, %v) = %d, R search gives %d", m, rho, p, alpha, alt, got, n)
			}
			if m == PearsonR && (got < int(pwr) || got > int(pwr)+1) {
				t.Errorf("CorrelationSampleSize(pearson, %v, %v, %v, %v) = %d, pwr.r.test gives %v", rho, p, alpha, alt, got, pwr)
			}
		default:
			t.Fatalf("%s: unknown kind %q", powerRefPath, kind)
		}
	}
	if powers < 800 || sizes < 100 {
		t.Fatalf("checked %d powers and %d sample sizes, want at least 800 and 100", powers, sizes)
	}
}

// TestSampleSizeCohen checks two entries of J. Cohen (1988), Statistical
// Power Analysis for the Behavioral Sciences, 2nd ed., Table 3.4.1 (n to
// detect r at two-sided α = .05 with power .80), repeated in J. Cohen (1992),
// A power primer, Psychological Bulletin 112(1), 155–159, Table 2: r = .10
// needs n = 783 and r = .30 needs n = 85 — both from memory. They are
// confirmed by the R rows (the pure formula gives 783 and 85; pwr 782 and
// 85). From memory too, Cohen lists n = 28 for r = .50, where the Fisher-z
// formula gives 30 and pwr 29; that entry is not checked, since it evidently
// rests on a different approximation.
func TestSampleSizeCohen(t *testing.T) {
	for _, tc := range []struct {
		r    float64
		want int
	}{{0.10, 783}, {0.30, 85}} {
		if got := CorrelationSampleSize(PearsonR, tc.r, 0.80, 0.05, TwoSided); got != tc.want {
			t.Errorf("CorrelationSampleSize(pearson, %v, .80, .05) = %d, Cohen (1988) gives %d", tc.r, got, tc.want)
		}
	}
}

// TestPowerMonteCarlo compares CorrelationPower with the rejection rate of
// the engine's own tests at n = 50 over 2000 bivariate normal samples (fixed
// seed): Spearman's ρ by CorrelationT, Kendall's τ_b by KendallNormal and
// Pearson's r by CorrelationT, two-sided and one-sided at α = 0.05. The
// normal correlation r is set to give the target population value:
// ρ_S = (6/π) asin(r/2) and τ = (2/π) asin(r), the standard results for the
// bivariate normal law (due to K. Pearson 1907 and R. Greiner 1909; the
// attributions from memory). A wrong conversion would show here as a
// mismatch of power. The tolerance is four
// Monte Carlo standard errors, √(p(1 − p)/2000) ≤ 0.0112, plus 0.02 for the
// approximation itself: in a run of 20,000 samples per case the formula was
// within 0.011 of the simulated power for Pearson (Fisher's z slightly
// understates the t test's power) and within 0.003 for Spearman and Kendall.
func TestPowerMonteCarlo(t *testing.T) {
	const n, reps, alpha = 50, 2000, 0.05
	rng := rand.New(rand.NewPCG(20261203, 50))
	x, y := make([]float64, n), make([]float64, n)
	draw := func(r float64) {
		for i := range x {
			a, b := rng.NormFloat64(), rng.NormFloat64()
			x[i], y[i] = a, r*a+math.Sqrt(1-r*r)*b
		}
	}
	for _, tc := range []struct {
		m     Measure
		value float64 // the population ρ_S, τ or r
		alt   Alternative
	}{
		{Spearman, 0.3, TwoSided},
		{Spearman, 0.25, Greater},
		{KendallB, 0.2, TwoSided},
		{KendallB, -0.15, Less},
		{PearsonR, 0.3, TwoSided},
	} {
		var r float64
		switch tc.m {
		case Spearman:
			r = 2 * math.Sin(math.Pi*tc.value/6)
		case KendallB:
			r = math.Sin(math.Pi * tc.value / 2)
		default:
			r = tc.value
		}
		rejected := 0
		for range reps {
			draw(r)
			var p float64
			switch tc.m {
			case Spearman:
				p = CorrelationT(SpearmanRho(x, y, TieAverage), n, tc.alt)
			case KendallB:
				p = KendallNormal(CountPairs(x, y), tc.alt)
			default:
				p = CorrelationT(Pearson(x, y), n, tc.alt)
			}
			if p < alpha {
				rejected++
			}
		}
		sim := float64(rejected) / reps
		want := CorrelationPower(tc.m, tc.value, n, alpha, tc.alt)
		tol := 4*math.Sqrt(want*(1-want)/reps) + 0.02
		if math.Abs(sim-want) > tol {
			t.Errorf("%v = %v, %v: simulated power %.4f, CorrelationPower %.4f (tolerance %.4f)", tc.m, tc.value, tc.alt, sim, want, tol)
		}
	}
}

// TestPowerProperties checks what follows from the formula without numbers
// from outside: the power at ρ = 0 is α; the one-sided powers mirror each
// other and the two-sided power is even in ρ; the power grows with n; and
// the sample size found is the least n whose power reaches the target.
func TestPowerProperties(t *testing.T) {
	for _, m := range []Measure{PearsonR, Spearman, KendallB} {
		for _, alpha := range []float64{0.1, 0.05, 0.001} {
			for _, alt := range allAlts {
				if got := CorrelationPower(m, 0, 40, alpha, alt); math.Abs(got-alpha) > 1e-15 {
					t.Errorf("%v, ρ = 0, %v: power %.17g, want α = %v", m, alt, got, alpha)
				}
			}
			for _, rho := range []float64{0.05, 0.2, 0.45, 0.7, 0.9} {
				for _, n := range []int{6, 12, 40, 300} {
					g, l := CorrelationPower(m, rho, n, alpha, Greater), CorrelationPower(m, -rho, n, alpha, Less)
					tp, tm := CorrelationPower(m, rho, n, alpha, TwoSided), CorrelationPower(m, -rho, n, alpha, TwoSided)
					if g != l || tp != tm {
						t.Errorf("%v, ρ = ±%v, n = %d: greater %v vs less %v, two-sided %v vs %v", m, rho, n, g, l, tp, tm)
					}
					if next := CorrelationPower(m, rho, n+1, alpha, TwoSided); !(next > tp) && tp < 1 {
						t.Errorf("%v, ρ = %v: power %v at n = %d, %v at n + 1", m, rho, tp, n, next)
					}
				}
				for _, target := range []float64{0.5, 0.8, 0.95} {
					for _, alt := range []Alternative{TwoSided, Greater} {
						n := CorrelationSampleSize(m, rho, target, alpha, alt)
						if n == 0 {
							t.Fatalf("%v, ρ = %v, %v: no sample size", m, rho, alt)
						}
						if CorrelationPower(m, rho, n, alpha, alt) < target {
							t.Errorf("%v, ρ = %v, %v: power at n = %d below %v", m, rho, alt, n, target)
						}
						if p := CorrelationPower(m, rho, n-1, alpha, alt); p >= target {
							t.Errorf("%v, ρ = %v, %v: n − 1 = %d already has power %v ≥ %v", m, rho, alt, n-1, p, target)
						}
					}
				}
			}
		}
	}
}

// TestPowerEdges checks the documented undefined cases, the limits and the
// panics.
func TestPowerEdges(t *testing.T) {
	nan := []struct {
		m   Measure
		rho float64
		n   int
	}{
		{PearsonR, 0.5, 3}, {Spearman, 0.5, 3}, {KendallB, 0.5, 4}, {PearsonR, 0.5, -1},
		{PearsonR, math.NaN(), 50}, {Spearman, 1.5, 50}, {KendallB, -1.01, 50},
	}
	for _, tc := range nan {
		if p := CorrelationPower(tc.m, tc.rho, tc.n, 0.05, TwoSided); !math.IsNaN(p) {
			t.Errorf("CorrelationPower(%v, %v, %d) = %v, want NaN", tc.m, tc.rho, tc.n, p)
		}
	}
	for _, tc := range []struct {
		m Measure
		n int
	}{{PearsonR, 4}, {Spearman, 4}, {KendallB, 5}} {
		if p := CorrelationPower(tc.m, 0.3, tc.n, 0.05, TwoSided); math.IsNaN(p) {
			t.Errorf("CorrelationPower(%v, 0.3, %d) is NaN, want a power", tc.m, tc.n)
		}
	}
	for _, m := range []Measure{PearsonR, Spearman, KendallB} {
		if p := CorrelationPower(m, 1, 10, 0.05, TwoSided); p != 1 {
			t.Errorf("%v, ρ = 1, two-sided: power %v, want 1", m, p)
		}
		if p := CorrelationPower(m, 1, 10, 0.05, Less); p != 0 {
			t.Errorf("%v, ρ = 1, less: power %v, want 0", m, p)
		}
		if n := CorrelationSampleSize(m, 0.999, 0.8, 0.05, TwoSided); n != map[Measure]int{PearsonR: 4, Spearman: 4, KendallB: 5}[m] {
			t.Errorf("%v, ρ = 0.999: sample size %d, want the smallest defined n", m, n)
		}
		for _, tc := range []struct {
			rho float64
			alt Alternative
		}{{0, TwoSided}, {0.3, Less}, {-0.3, Greater}, {math.NaN(), TwoSided}, {2, TwoSided}} {
			if n := CorrelationSampleSize(m, tc.rho, 0.8, 0.05, tc.alt); n != 0 {
				t.Errorf("%v, ρ = %v, %v: sample size %d, want 0 (unreachable)", m, tc.rho, tc.alt, n)
			}
		}
	}
	// A tiny ρ needs a huge but finite n: n ≈ 7.85/ρ² + 3.
	if n := CorrelationSampleSize(PearsonR, 1e-5, 0.8, 0.05, TwoSided); n < 78_000_000_000 || n > 79_000_000_000 {
		t.Errorf("ρ = 1e-5: sample size %d, want about 7.85e10", n)
	}
	mustPanic(t, "unknown measure", func() { CorrelationPower(0, 0.3, 50, 0.05, TwoSided) })
	mustPanic(t, "unknown alternative", func() { CorrelationPower(PearsonR, 0.3, 50, 0.05, 0) })
	mustPanic(t, "alpha 0", func() { CorrelationPower(PearsonR, 0.3, 50, 0, TwoSided) })
	mustPanic(t, "alpha 1", func() { CorrelationPower(PearsonR, 0.3, 50, 1, TwoSided) })
	mustPanic(t, "alpha NaN", func() { CorrelationPower(PearsonR, 0.3, 50, math.NaN(), TwoSided) })
	mustPanic(t, "sample size, unknown measure", func() { CorrelationSampleSize(0, 0.3, 0.8, 0.05, TwoSided) })
	mustPanic(t, "sample size, unknown alternative", func() { CorrelationSampleSize(Spearman, 0.3, 0.8, 0.05, 0) })
	mustPanic(t, "sample size, power 1", func() { CorrelationSampleSize(Spearman, 0.3, 1, 0.05, TwoSided) })
	mustPanic(t, "sample size, alpha 0", func() { CorrelationSampleSize(Spearman, 0.3, 0.8, 0, TwoSided) })
}
