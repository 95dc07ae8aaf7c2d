package stats

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// The three intervals below share one construction: transform the estimate
// to z = atanh(estimate), treat z as normal with standard error se, and map
// the limits back with tanh. They differ only in se. For the alternative
// TwoSided the interval is two-sided with the normal quantile at
// (1 + level)/2; for Greater it is [lo, 1] and for Less [−1, hi], each with
// the quantile at level. Limits always lie in [−1, 1].
//
// An estimate of exactly ±1 has z = ±∞, and both limits of the two-sided
// interval are then ±1 (the interval collapses to the point): the method
// gives no information about the uncertainty of a perfect sample
// correlation, and the caller should say so.
//
// level must lie strictly between 0 and 1 and alt must be a declared
// alternative; anything else panics, because the recipe decoder checks both.

// FisherInterval returns a confidence interval for Pearson's correlation from
// r and the sample size n by Fisher's z transformation, with
// se = 1/√(n − 3). It returns NaN, NaN when n ≤ 3 or r is NaN.
//
// Reference: R. A. Fisher (1921), On the "probable error" of a coefficient of
// correlation deduced from a small sample, Metron 1, 3–32.
func FisherInterval(r float64, n int, level float64, alt Alternative) (lo, hi float64) {
	if n <= 3 || math.IsNaN(r) {
		mustInterval(level, alt)
		return math.NaN(), math.NaN()
	}
	return atanhInterval(r, 1/math.Sqrt(float64(n-3)), level, alt)
}

// BonettWrightInterval returns a confidence interval for Spearman's ρ from
// its estimate rho and the sample size n, with
//
//	se² = (1 + ρ²/2) / (n − 3).
//
// It returns NaN, NaN when n ≤ 3 or rho is NaN.
//
// Reference: D. G. Bonett and T. A. Wright (2000), Sample size requirements
// for estimating Pearson, Kendall and Spearman correlations, Psychometrika
// 65(1), 23–28.
func BonettWrightInterval(rho float64, n int, level float64, alt Alternative) (lo, hi float64) {
	if n <= 3 || math.IsNaN(rho) {
		mustInterval(level, alt)
		return math.NaN(), math.NaN()
	}
	return atanhInterval(rho, math.Sqrt((1+rho*rho/2)/float64(n-3)), level, alt)
}

// fiellerVar is the numerator of the variance of atanh(τ), se² = 0.437/(n − 4):
// Fieller, Hartley and Pearson (1957), Biometrika 44, 470–481.
const fiellerVar = 0.437

// FiellerInterval returns a confidence interval for Kendall's τ from its
// estimate tau and the sample size n, with se² = 0.437/(n − 4). It returns
// NaN, NaN when n ≤ 4 or tau is NaN.
//
// Reference: E. C. Fieller, H. O. Hartley and E. S. Pearson (1957), Tests for
// rank correlation coefficients. I, Biometrika 44(3/4), 470–481.
func FiellerInterval(tau float64, n int, level float64, alt Alternative) (lo, hi float64) {
	if n <= 4 || math.IsNaN(tau) {
		mustInterval(level, alt)
		return math.NaN(), math.NaN()
	}
	return atanhInterval(tau, math.Sqrt(fiellerVar/float64(n-4)), level, alt)
}

// atanhInterval builds the interval described above the functions.
func atanhInterval(est, se, level float64, alt Alternative) (lo, hi float64) {
	mustInterval(level, alt)
	z := math.Atanh(clamp1(est))
	switch alt {
	case Greater:
		return math.Tanh(z - distuv.UnitNormal.Quantile(level)*se), 1
	case Less:
		return -1, math.Tanh(z + distuv.UnitNormal.Quantile(level)*se)
	}
	q := distuv.UnitNormal.Quantile((1 + level) / 2)
	return math.Tanh(z - q*se), math.Tanh(z + q*se)
}

func mustInterval(level float64, alt Alternative) {
	mustKnow(alt)
	if !(level > 0 && level < 1) {
		panic(fmt.Sprintf("stats: confidence level %v outside (0, 1)", level))
	}
}
