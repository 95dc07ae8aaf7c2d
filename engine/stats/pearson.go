package stats

import (
	"fmt"
	"math"
)

// Pearson returns Pearson's product-moment correlation coefficient of x and y,
//
//	r = Σ(xᵢ − x̄)(yᵢ − ȳ) / √(Σ(xᵢ − x̄)² · Σ(yᵢ − ȳ)²),
//
// computed in two passes over centred values (the means are refined by a
// second pass over the residuals), which keeps full precision on data with a
// large offset such as the NIST StRD "Norris" set. The result is clamped to
// [−1, 1].
//
// Columns whose magnitudes would overflow or underflow the sums of squares
// (beyond 2^±500) are first scaled by a power of two, which is exact and
// leaves r unchanged.
//
// It returns NaN when n < 2, when x or y is constant, or when a value is
// ±Inf or NaN. It panics when x and y differ in length.
//
// Reference: K. Pearson (1896), Mathematical contributions to the theory of
// evolution. III. Regression, heredity, and panmixia, Philosophical
// Transactions of the Royal Society A 187, 253–318.
func Pearson(x, y []float64) float64 {
	mustMatch(x, y)
	if len(x) < 2 || isConstant(x) || isConstant(y) {
		return math.NaN()
	}
	x, y = rescaled(x), rescaled(y)
	mx, my := mean(x), mean(y)
	var sxx, syy, sxy float64
	for i := range x {
		dx, dy := x[i]-mx, y[i]-my
		sxx += dx * dx
		syy += dy * dy
		sxy += dx * dy
	}
	// √(sxx·syy) is one correctly rounded operation, so identical columns
	// give exactly 1 (√sxx·√syy can give 1 − 2⁻⁵²); the product of roots is
	// the fallback only when sxx·syy would overflow or underflow.
	den := math.Sqrt(sxx * syy)
	if math.IsInf(den, 0) || den == 0 {
		den = math.Sqrt(sxx) * math.Sqrt(syy)
	}
	return clamp1(sxy / den)
}

// SpearmanRho returns Spearman's rank correlation ρ of x and y: Pearson's r
// of Rank(x, rule) and Rank(y, rule). With ties this is the exact value; the
// shortcut 1 − 6Σd²/(n(n²−1)) holds only without ties and is never used.
//
// It returns NaN when n < 2 or when x or y is constant. It panics when x and
// y differ in length, contain NaN, or rule is unknown.
//
// Reference: C. Spearman (1904), The proof and measurement of association
// between two things, American Journal of Psychology 15(1), 72–101.
func SpearmanRho(x, y []float64, rule TieRule) float64 {
	mustMatch(x, y)
	return Pearson(Rank(x, rule), Rank(y, rule))
}

// mean returns the arithmetic mean of x (len(x) > 0), corrected by the mean
// of the residuals so that rounding in the first sum is recovered.
// rescaled returns x itself when its largest magnitude lies in
// [2⁻⁵⁰⁰, 2⁵⁰⁰], where squares and their sums cannot overflow or lose
// precision to underflow; otherwise a copy scaled by a power of two so the
// largest magnitude lies in [0.5, 1). Scaling by 2ᵏ is exact.
func rescaled(x []float64) []float64 {
	var m float64
	for _, v := range x {
		m = math.Max(m, math.Abs(v))
	}
	if m == 0 || math.IsInf(m, 0) || math.IsNaN(m) || (m >= 0x1p-500 && m <= 0x1p500) {
		return x
	}
	_, exp := math.Frexp(m)
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = math.Ldexp(v, -exp)
	}
	return out
}

func mean(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	n := float64(len(x))
	m := s / n
	var c float64
	for _, v := range x {
		c += v - m
	}
	return m + c/n
}

// isConstant reports whether every value of x equals x[0] (len(x) > 0).
func isConstant(x []float64) bool {
	for _, v := range x[1:] {
		if v != x[0] {
			return false
		}
	}
	return true
}

// clamp1 limits v to [−1, 1], passing NaN through; rounding can push a
// correlation of a near-perfect relation a few ulps past ±1.
func clamp1(v float64) float64 {
	switch {
	case v > 1:
		return 1
	case v < -1:
		return -1
	}
	return v
}

// mustMatch panics when x and y differ in length: the engine pairs the
// columns, so a mismatch here is a bug.
func mustMatch(x, y []float64) {
	if len(x) != len(y) {
		panic(fmt.Sprintf("stats: x has %d values and y has %d", len(x), len(y)))
	}
}
