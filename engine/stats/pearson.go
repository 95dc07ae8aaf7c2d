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
	return pearsonCentred(x, y, mean(x), mean(y))
}

// pearsonCentred is Pearson's r of x and y given their means as mean
// returns them, for columns that are neither constant nor in need of
// rescaling: the sums of products about the means in one pass, in index
// order.
func pearsonCentred(x, y []float64, mx, my float64) float64 {
	y = y[:len(x)]
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
// For n ≥ 2¹⁶ the two columns are ranked concurrently; the result does
// not depend on it. The result is bit
// for bit Pearson(Rank(x, rule), Rank(y, rule)), with the same summation
// order.
//
// It returns NaN when n < 2 or when x or y is constant. It panics when x and
// y differ in length, contain NaN, or rule is unknown.
//
// Reference: C. Spearman (1904), The proof and measurement of association
// between two things, American Journal of Psychology 15(1), 72–101.
func SpearmanRho(x, y []float64, rule TieRule) float64 {
	mustMatch(x, y)
	checkRule(rule)
	var rx, ry rankMoments
	// Side by side: each long sort also runs on two goroutines, but the
	// rank pass after it does not. (The engine ranks the shared columns of
	// a whole-file run one after the other instead, to hold one set of
	// sort scratch: engine/measure.go.)
	both(parallel(len(x)),
		func() { rx = rankWithMean(x, rule) },
		func() { ry = rankWithMean(y, rule) })
	if len(x) < 2 || rx.constant || ry.constant {
		return math.NaN()
	}
	return pearsonCentred(rx.ranks, ry.ranks, rx.mean, ry.mean)
}

// rankMoments is what Pearson needs to know of a column of ranks.
type rankMoments struct {
	ranks    []float64
	mean     float64 // mean(ranks), bit for bit
	constant bool    // every rank equal
}

// rankWithMean ranks x and finds what Pearson(rx, ·) would find of the
// ranks rx, bit for bit, with less work:
//
//   - rx is constant only when x has one distinct value and the rule is not
//     TieFirst (whose ranks are 1..n);
//   - rx lies in [1, n], so rescaled leaves it as it is;
//   - midranks (TieAverage) and TieFirst ranks sum to n(n+1)/2 in any
//     order, exactly while n(n+1)/2 < 2⁵¹: every partial sum is a multiple
//     of ½ that float64 holds exactly. So mean's sum is exact, its quotient
//     is (n+1)/2 exactly, and its correction, a sum of exact differences, is
//     0: mean returns (n+1)/2. Other rules, or larger n, take mean's two
//     passes.
func rankWithMean(x []float64, rule TieRule) rankMoments {
	rk := RankTies(x, rule)
	n := len(x)
	// TieFirst ranks are 1..n, never constant for n ≥ 2; under the other
	// rules tied values share a rank.
	m := rankMoments{ranks: rk.Ranks, constant: rk.Ties.Distinct <= 1 && rule != TieFirst}
	if n < 2 || m.constant {
		return m
	}
	if (rule == TieAverage || rule == TieFirst) && n < 1<<26 { // n(n+1)/2 < 2⁵¹
		m.mean = float64(n+1) / 2
	} else {
		m.mean = mean(rk.Ranks)
	}
	return m
}

// SpearmanRanks returns Spearman's ρ from ranks already computed, such as
// RankTies(x, rule).Ranks and RankTies(y, rule).Ranks: Pearson's r of rx and
// ry, bit for bit what SpearmanRho returns for the columns they rank. It
// returns NaN when n < 2 or when rx or ry is constant, and panics when they
// differ in length.
func SpearmanRanks(rx, ry []float64) float64 {
	return Pearson(rx, ry)
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
