package stats

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Each p-value method is its own function named for its reference
// distribution (CorrelationT, KendallNormal). Exact and permutation
// p-values will be further functions beside these, and the engine records
// which one it used as a PMethod.

// CorrelationT returns the p-value of a correlation r from n pairs by
// Student's t distribution with n − 2 degrees of freedom:
//
//	t = r √((n − 2) / (1 − r²)).
//
// For Pearson's r this is exact under bivariate normality; for Spearman's ρ
// it is the usual large-sample approximation. Greater tests r > 0, Less tests
// r < 0, TwoSided doubles the smaller tail (capped at 1). Tail areas are
// computed directly, never as 1 − CDF, so small p-values keep their relative
// accuracy.
//
// When |r| = 1 the statistic is infinite: the p-value is 0 for TwoSided and
// for the one-sided alternative in the direction of r, and 1 for the other.
// It returns NaN when n < 3 or r is NaN, and panics on an unknown
// alternative.
//
// Reference: R. A. Fisher (1915), Frequency distribution of the values of the
// correlation coefficient in samples from an indefinitely large population,
// Biometrika 10(4), 507–521.
func CorrelationT(r float64, n int, alt Alternative) float64 {
	mustKnow(alt)
	if n < 3 || math.IsNaN(r) {
		return math.NaN()
	}
	df := float64(n - 2)
	var t float64
	switch {
	case r >= 1:
		t = math.Inf(1)
	case r <= -1:
		t = math.Inf(-1)
	default:
		t = r * math.Sqrt(df/(1-r*r))
	}
	dist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}
	return tailP(dist.CDF, t, alt)
}

// KendallNormal returns the p-value of Kendall's S = n_c − n_d by the normal
// approximation z = S / √Var(S), with the variance corrected for ties in both
// rankings (PairCounts.VarS) and no continuity correction. It serves τ_b as
// well as τ_a, since all share the numerator S. Greater tests a positive
// association, Less a negative one, TwoSided doubles the smaller tail (capped
// at 1).
//
// It returns NaN when n < 3 or Var(S) is 0 (x or y constant), and panics on
// an unknown alternative.
//
// Reference: M. G. Kendall (1970), Rank Correlation Methods, 4th ed.
// (Griffin, London), ch. 4.
func KendallNormal(c PairCounts, alt Alternative) float64 {
	mustKnow(alt)
	v := c.VarS()
	if c.N < 3 || !(v > 0) {
		return math.NaN()
	}
	z := float64(c.S()) / math.Sqrt(v)
	return tailP(distuv.UnitNormal.CDF, z, alt)
}

// tailP returns the p-value of statistic s whose null distribution is
// symmetric about 0 with distribution function cdf. Upper tails are taken as
// cdf(−s): gonum's Normal.Survival loses relative accuracy far out
// (about 2e-2 at z = 8), while Normal.CDF(−|z|) stays accurate to ~1e-13
// down to 1e-300.
func tailP(cdf func(float64) float64, s float64, alt Alternative) float64 {
	switch alt {
	case Greater:
		return cdf(-s)
	case Less:
		return cdf(s)
	}
	return math.Min(1, 2*cdf(-math.Abs(s)))
}

// mustKnow panics on an alternative that is not declared: the recipe decoder
// maps the user's words, so reaching an unknown value here is a bug.
func mustKnow(alt Alternative) {
	switch alt {
	case TwoSided, Greater, Less:
		return
	}
	panic(fmt.Sprintf("stats: unknown alternative %v", alt))
}
