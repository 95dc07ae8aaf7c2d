package stats

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// Without ties the classical formula is Spearman's rho (Spearman 1904;
// Kendall 1970, ch. 2): SpearmanRhoD agrees with SpearmanRho to rounding.
func TestSpearmanRhoDWithoutTies(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 2026))
	for n := 2; n < 60; n += 3 {
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i], y[i] = r.NormFloat64(), r.NormFloat64()+0.5*x[i]
		}
		if got, want := SpearmanRhoD(x, y), SpearmanRho(x, y, TieAverage); math.Abs(got-want) > 1e-12 {
			t.Errorf("n = %d: SpearmanRhoD = %v, SpearmanRho = %v", n, got, want)
		}
	}
}

// With ties the formula is not rho. Worked by hand: x = 1, 2, 2, 3 has
// midranks 1, 2.5, 2.5, 4; y = 1, 3, 2, 4 has ranks 1, 3, 2, 4; d = 0,
// −0.5, 0.5, 0, Σd² = 0.5, so ρ_D = 1 − 6·0.5/(4·15) = 0.95 exactly, while
// Pearson's r of the ranks is 4.5/√(4.5·5) = 0.948683….
func TestSpearmanRhoDWithTies(t *testing.T) {
	x, y := []float64{1, 2, 2, 3}, []float64{1, 3, 2, 4}
	if got := SpearmanRhoD(x, y); math.Abs(got-0.95) > 1e-15 {
		t.Errorf("SpearmanRhoD = %v, want 0.95", got)
	}
	if got, want := SpearmanRho(x, y, TieAverage), 4.5/math.Sqrt(4.5*5); math.Abs(got-want) > 1e-15 {
		t.Errorf("SpearmanRho = %v, want %v", got, want)
	}
	if !math.IsNaN(SpearmanRhoD([]float64{1}, []float64{2})) {
		t.Error("n = 1 should be NaN")
	}
}

// The continuity correction of S by one unit (Kendall 1970, ch. 4; from
// memory): checked against the formula written out, and against the exact
// null without ties, which it must approach more closely than the
// uncorrected normal does wherever the tail is not tiny.
func TestKendallNormalCorrected(t *testing.T) {
	// The example of ExampleKendallNormal: S = 23, Var(S) = 58.8452.
	c := CountPairs([]float64{1, 2, 2, 3, 1, 4, 3, 2}, []float64{12, 30, 25, 41, 18, 66, 35, 30})
	sd := math.Sqrt(c.VarS())
	for _, tc := range []struct {
		alt  Alternative
		want float64
	}{
		{TwoSided, 2 * distuv.UnitNormal.CDF(-22/sd)},
		{Greater, distuv.UnitNormal.CDF(-22 / sd)},
		{Less, distuv.UnitNormal.CDF(24 / sd)},
	} {
		if got := KendallNormalCorrected(c, tc.alt); math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("%v: %v, want %v", tc.alt, got, tc.want)
		}
	}
	// n = 10 without ties: S = 45 − 2I for I inversions.
	n := 10
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(i)
	}
	for s := int64(1); s <= 25; s += 2 {
		exact := KendallExactP(s, n, Greater)
		pc := PairCounts{N: n, Concordant: (45 + s) / 2, Discordant: (45 - s) / 2}
		corrected, plain := KendallNormalCorrected(pc, Greater), KendallNormal(pc, Greater)
		if math.Abs(corrected-exact) > math.Abs(plain-exact) {
			t.Errorf("S = %d: corrected %v is farther from the exact %v than the uncorrected %v", s, corrected, exact, plain)
		}
	}
	if !math.IsNaN(KendallNormalCorrected(PairCounts{N: 2}, TwoSided)) {
		t.Error("n = 2 should be NaN")
	}
	if got := KendallNormalCorrected(PairCounts{N: 10, Concordant: 22, Discordant: 23}, TwoSided); got != 1 {
		t.Errorf("|S| = 1 two-sided: %v, want 1", got)
	}
}

// The half-step correction of rho: the t p-value at rho moved toward the
// null by 6/(n³ − n), which is half a step of D = Σd² (D is always even).
func TestSpearmanTCorrected(t *testing.T) {
	n := 12
	c := 6 / float64(n*n*n-n)
	for _, rho := range []float64{0.5, -0.5, 0.001} {
		if got, want := SpearmanTCorrected(rho, n, Greater), CorrelationT(rho-c, n, Greater); got != want {
			t.Errorf("greater %v: %v, want %v", rho, got, want)
		}
		if got, want := SpearmanTCorrected(rho, n, Less), CorrelationT(rho+c, n, Less); got != want {
			t.Errorf("less %v: %v, want %v", rho, got, want)
		}
		if got, want := SpearmanTCorrected(rho, n, TwoSided), CorrelationT(math.Max(0, math.Abs(rho)-c), n, TwoSided); got != want {
			t.Errorf("two-sided %v: %v, want %v", rho, got, want)
		}
	}
	if !math.IsNaN(SpearmanTCorrected(math.NaN(), n, TwoSided)) || !math.IsNaN(SpearmanTCorrected(0.5, 2, TwoSided)) {
		t.Error("NaN expected")
	}
	// A corrected p is larger than the uncorrected one in the direction
	// of the estimate: the correction is conservative.
	if SpearmanTCorrected(0.5, n, TwoSided) <= CorrelationT(0.5, n, TwoSided) {
		t.Error("the correction should enlarge the p-value")
	}
}
