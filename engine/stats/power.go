package stats

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// fisherZVar returns, for measure m, the variance of atanh of the estimate
// from n pairs as c/(n − off): c at the population value rho, c0 at 0, and
// off. The constants are those of the intervals in interval.go:
//
//	Pearson   c = 1,           off = 3   (Fisher 1921)
//	Spearman  c = 1 + ρ²/2,    off = 3   (Bonett & Wright 2000)
//	Kendall   c = 0.437,       off = 4   (Fieller, Hartley & Pearson 1957)
//
// It panics on an unknown measure.
func fisherZVar(m Measure, rho float64) (c, c0 float64, off int) {
	switch m {
	case PearsonR:
		return 1, 1, 3
	case Spearman:
		return 1 + rho*rho/2, 1, 3
	case KendallB:
		return fiellerVar, fiellerVar, 4
	}
	panic(fmt.Sprintf("stats: unknown measure %v", m))
}

// CorrelationPower returns the power of the level-alpha test of no
// association (population value 0) by measure m — Spearman, KendallB or
// PearsonR — when the population value is rho and n pairs are observed. It
// uses Fisher's z: ẑ = atanh(estimate) is taken as normal with mean
// ζ = atanh(rho) and variance c(ρ)/(n − off), where (c, off) is (1, 3) for
// Pearson's r (Fisher 1921), (1 + ρ²/2, 3) for Spearman's ρ (Bonett & Wright
// 2000) and (0.437, 4) for Kendall's τ (Fieller, Hartley & Pearson 1957);
// for Kendall rho is the population τ.
//
// The test rejects when ẑ lies beyond q·se₀, with q the upper α (one-sided)
// or α/2 (two-sided) normal quantile and se₀ the standard error under the
// null, ρ = 0; the power is then computed with the standard error se₁ at
// rho. With Φ the normal distribution function:
//
//	Greater:  Φ((ζ − q·se₀)/se₁)
//	Less:     Φ((−ζ − q·se₀)/se₁)
//	TwoSided: Φ((ζ − q·se₀)/se₁) + Φ((−ζ − q·se₀)/se₁)
//
// The two-sided power includes the small chance of rejecting in the
// direction opposite to rho. For Pearson and Kendall se₀ = se₁ and this is
// the usual Fisher-z power (Cohen 1988, ch. 3, whose sample-size formula
// n = ((z_α + z_β)/ζ)² + 3 it inverts when the opposite tail is ignored).
// For Spearman the null standard error is the one of the test actually
// carried out (ρ = 0 gives c = 1), and only the power uses Bonett and
// Wright's c(ρ); using c(ρ) for both, as a confidence-interval argument
// would, gives a slightly larger sample size. At rho = 0 the power is
// alpha. The engine tests Spearman's ρ with CorrelationT and Kendall's τ_b
// with KendallNormal, not on the z scale; in simulations of bivariate
// normal data at n = 50 (see power_test.go) the formula came within 0.011
// of the rejection rates of those tests and of the t test of Pearson's r,
// whose power Fisher's z slightly understates. Using c(ρ) also for the
// critical value made the Spearman power up to 0.05 too low at n = 20.
//
// It returns NaN when n ≤ off (n < 4, or n < 5 for Kendall), when rho is
// NaN or |rho| > 1; rho = ±1 gives power 1 (or 0 against the one-sided
// alternative of the other sign). It panics on an unknown measure or
// alternative and when alpha is not strictly between 0 and 1.
//
// References: R. A. Fisher (1921), On the "probable error" of a coefficient
// of correlation deduced from a small sample, Metron 1, 3–32; J. Cohen
// (1988), Statistical Power Analysis for the Behavioral Sciences, 2nd ed.
// (Erlbaum, Hillsdale NJ), ch. 3; D. G. Bonett and T. A. Wright (2000),
// Sample size requirements for estimating Pearson, Kendall and Spearman
// correlations, Psychometrika 65(1), 23–28; E. C. Fieller, H. O. Hartley
// and E. S. Pearson (1957), Tests for rank correlation coefficients. I,
// Biometrika 44(3/4), 470–481.
func CorrelationPower(m Measure, rho float64, n int, alpha float64, alt Alternative) float64 {
	c, c0, off := fisherZVar(m, rho)
	mustKnow(alt)
	mustLevel("alpha", alpha)
	if n <= off || math.IsNaN(rho) || math.Abs(rho) > 1 {
		return math.NaN()
	}
	df := float64(n - off)
	se0, se1 := math.Sqrt(c0/df), math.Sqrt(c/df)
	z := math.Atanh(rho) // ±Inf at ρ = ±1, where Φ gives 1 or 0
	switch alt {
	case Greater:
		q := -distuv.UnitNormal.Quantile(alpha)
		return distuv.UnitNormal.CDF((z - q*se0) / se1)
	case Less:
		q := -distuv.UnitNormal.Quantile(alpha)
		return distuv.UnitNormal.CDF((-z - q*se0) / se1)
	}
	q := -distuv.UnitNormal.Quantile(alpha / 2)
	return distuv.UnitNormal.CDF((z-q*se0)/se1) + distuv.UnitNormal.CDF((-z-q*se0)/se1)
}

// maxSampleSize bounds the search of CorrelationSampleSize: beyond 2⁵⁰ pairs
// no study is planned, and n − off stays exact in a float64.
const maxSampleSize = 1 << 50

// CorrelationSampleSize returns the smallest n for which CorrelationPower(m,
// rho, n, alpha, alt) ≥ power. It searches over n rather than rounding up a
// closed form, so the opposite tail of the two-sided test and the
// different null and alternative standard errors of Spearman's ρ are
// accounted for exactly. The power grows with n whenever rho lies on the
// side of the alternative (for TwoSided: rho ≠ 0), so a doubling search
// followed by bisection finds the answer in O(log n) evaluations.
//
// The smallest n considered is off + 1 (4, or 5 for Kendall), the least n
// with a defined power. It returns 0 when no n up to 2⁵⁰ reaches the power:
// rho is 0 and power > alpha (the power stays alpha), rho lies against a
// one-sided alternative, is NaN or |rho| > 1. It panics on an unknown measure or alternative, and
// when alpha or power is not strictly between 0 and 1.
//
// References: as for CorrelationPower.
func CorrelationSampleSize(m Measure, rho, power, alpha float64, alt Alternative) int {
	_, _, off := fisherZVar(m, rho)
	mustKnow(alt)
	mustLevel("alpha", alpha)
	mustLevel("power", power)
	reaches := func(n int) bool { return CorrelationPower(m, rho, n, alpha, alt) >= power }
	lo := off + 1
	if reaches(lo) {
		return lo
	}
	// Invariant: reaches(lo) is false and reaches(hi) is true.
	hi := 2 * lo
	for !reaches(hi) {
		if hi >= maxSampleSize {
			return 0
		}
		lo, hi = hi, 2*hi
	}
	for hi-lo > 1 {
		mid := lo + (hi-lo)/2
		if reaches(mid) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}

// mustLevel panics when a probability argument (a significance level or a
// target power) is not strictly between 0 and 1: the recipe decoder checks
// both, so reaching a bad value here is a bug.
func mustLevel(what string, v float64) {
	if !(v > 0 && v < 1) {
		panic(fmt.Sprintf("stats: %s %v outside (0, 1)", what, v))
	}
}
