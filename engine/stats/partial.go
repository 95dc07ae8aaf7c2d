package stats

import (
	"fmt"
	"math"
)

// dependTol is the relative size below which a column counts as linearly
// dependent on the intercept and the controls before it: what remains of it
// after the projection has a norm below dependTol times its centred norm.
// It is the default tolerance of R's qr() (?qr, R 4.2.2), which lm() uses to
// drop collinear columns; here such a column makes the result NaN.
const dependTol = 1e-7

// PartialCorrelation returns the partial correlation of x and y given the
// control columns z (k = len(z) columns, each of length n = len(x)): the
// Pearson correlation of the residuals of x and of y after least-squares
// regression on an intercept and z,
//
//	r_xy·z = ⟨eₓ, e_y⟩ / (‖eₓ‖ ‖e_y‖),   eₓ = x − P x,  e_y = y − P y,
//
// P the orthogonal projection onto the span of 1, z₁, …, z_k. For k = 1 it
// equals Yule's first-order formula
//
//	r_xy·z = (r_xy − r_xz r_yz) / √((1 − r_xz²)(1 − r_yz²)),
//
// and for k = 0 it is Pearson(x, y). The projection is formed by modified
// Gram–Schmidt on the centred controls, each projection done twice
// ("twice is enough"), which keeps the residuals orthogonal to the controls
// to rounding error unless the controls are nearly dependent (which gives
// NaN, below), without ever forming an n × n matrix. It runs in O(n k²) time with O(n k) extra memory. Columns
// are scaled by powers of two first, as in Pearson, which is exact and
// leaves the result unchanged. The result is clamped to [−1, 1].
//
// It returns NaN when n ≤ k + 2, when a value is ±Inf or NaN, when a control
// is constant or linearly dependent on the intercept and the controls
// before it, or when x or y is (up to rounding) a linear function of the
// controls, that is, its residual is ~0. "Dependent" and "~0" mean that
// what remains after the projection is shorter than 1e-7 times the centred
// column. It panics when x, y and the columns of z differ in length.
//
// References: G. U. Yule (1907), On the theory of correlation for any
// number of variables, treated by a new system of notation, Proceedings of
// the Royal Society A 79, 182–193 (partial correlation, first-order
// formula); Å. Björck (1967), Solving linear least squares problems by
// Gram–Schmidt orthogonalization, BIT 7, 1–21; L. Giraud, J. Langou and
// M. Rozložník (2005), The loss of orthogonality in the Gram–Schmidt
// orthogonalization process, Computers & Mathematics with Applications
// 50(7), 1069–1075 (reorthogonalization).
func PartialCorrelation(x, y []float64, z [][]float64) float64 {
	mustMatch(x, y)
	for j, c := range z {
		if len(c) != len(x) {
			panic(fmt.Sprintf("stats: x has %d values and control %d has %d", len(x), j, len(c)))
		}
	}
	n, k := len(x), len(z)
	if n <= k+2 || !allFinite(x) || !allFinite(y) {
		return math.NaN()
	}
	for _, c := range z {
		if !allFinite(c) {
			return math.NaN()
		}
	}
	basis := make([][]float64, 0, k) // orthonormal, each orthogonal to 1
	for _, c := range z {
		q, norm := residual(c, basis)
		if norm == 0 {
			return math.NaN()
		}
		for i := range q {
			q[i] /= norm
		}
		basis = append(basis, q)
	}
	ex, nx := residual(x, basis)
	ey, ny := residual(y, basis)
	if nx == 0 || ny == 0 {
		return math.NaN()
	}
	var sxy float64
	for i := range ex {
		sxy += ex[i] * ey[i]
	}
	return clamp1(sxy / nx / ny)
}

// residual returns v − P v and its Euclidean norm, P the projection onto the
// span of 1 and the orthonormal basis (whose vectors are orthogonal to 1).
// The copy of v is scaled by a power of two, centred, and then every
// projection is subtracted twice. It returns a norm of 0 when what remains
// is shorter than dependTol times the centred v (or v is constant).
func residual(v []float64, basis [][]float64) ([]float64, float64) {
	r := make([]float64, len(v))
	copy(r, rescaled(v))
	center(r)
	start := norm2(r)
	if start == 0 {
		return r, 0
	}
	for range 2 {
		center(r)
		for _, q := range basis {
			var d float64
			for i := range r {
				d += q[i] * r[i]
			}
			for i := range r {
				r[i] -= d * q[i]
			}
		}
	}
	end := norm2(r)
	if end <= dependTol*start {
		return r, 0
	}
	return r, end
}

// center subtracts the (refined) mean of r from every element.
func center(r []float64) {
	m := mean(r)
	for i := range r {
		r[i] -= m
	}
}

// norm2 returns the Euclidean norm of v. The inputs were scaled so that
// their squares cannot overflow or underflow.
func norm2(v []float64) float64 {
	var s float64
	for _, a := range v {
		s += a * a
	}
	return math.Sqrt(s)
}

// allFinite reports whether v holds no ±Inf or NaN.
func allFinite(v []float64) bool {
	for _, a := range v {
		if math.IsInf(a, 0) || math.IsNaN(a) {
			return false
		}
	}
	return true
}

// PartialSpearman returns the partial Spearman correlation of x and y given
// the controls z: PartialCorrelation of Rank(x, rule), Rank(y, rule) and the
// ranks of every control column under the same rule. It runs in
// O(n log n + n k²).
//
// It returns NaN in the cases PartialCorrelation does (n ≤ k + 2, a
// constant or collinear control, a residual ~0). It panics when the columns
// differ in length, contain NaN, or rule is unknown.
//
// It is to PartialCorrelation what SpearmanRho is to Pearson: the same
// computation on ranks, so the references are those of PartialCorrelation
// and SpearmanRho.
func PartialSpearman(x, y []float64, z [][]float64, rule TieRule) float64 {
	mustMatch(x, y)
	for j, c := range z {
		if len(c) != len(x) {
			panic(fmt.Sprintf("stats: x has %d values and control %d has %d", len(x), j, len(c)))
		}
	}
	rz := make([][]float64, len(z))
	for j, c := range z {
		rz[j] = Rank(c, rule)
	}
	return PartialCorrelation(Rank(x, rule), Rank(y, rule), rz)
}

// PartialT returns the p-value of a partial correlation r from n
// observations and k controls by Student's t distribution with n − 2 − k
// degrees of freedom:
//
//	t = r √((n − 2 − k) / (1 − r²)).
//
// Fisher (1924) showed that under normality a partial correlation on k
// controls from n observations is distributed as a simple correlation from
// n − k observations, so this is CorrelationT(r, n − k, alt) and follows
// its conventions: Greater tests r > 0, Less r < 0, TwoSided doubles the
// smaller tail (capped at 1); for |r| = 1 the p-value is 0 in the direction
// of r and 1 against it. For a partial Spearman ρ it is the usual
// large-sample approximation.
//
// It returns NaN when n − 2 − k < 1 or r is NaN, and panics when k < 0 or
// alt is unknown.
//
// Reference: R. A. Fisher (1924), The distribution of the partial
// correlation coefficient, Metron 3, 329–332.
func PartialT(r float64, n, k int, alt Alternative) float64 {
	mustKnow(alt)
	mustControls(k)
	return CorrelationT(r, n-k, alt)
}

// PartialFisherInterval returns a confidence interval for a partial
// (Pearson) correlation r from n observations and k controls by Fisher's z
// transformation, with
//
//	se = 1/√(n − 3 − k),
//
// the interval of FisherInterval with n − k in place of n, by Fisher's
// (1924) result that the partial correlation behaves as a simple one from
// n − k observations. It returns NaN, NaN when n − 3 − k ≤ 0 or r is NaN,
// and panics when k < 0, level is outside (0, 1) or alt is unknown.
//
// References: R. A. Fisher (1921), On the "probable error" of a coefficient
// of correlation deduced from a small sample, Metron 1, 3–32; R. A. Fisher
// (1924), The distribution of the partial correlation coefficient, Metron 3,
// 329–332.
func PartialFisherInterval(r float64, n, k int, level float64, alt Alternative) (lo, hi float64) {
	mustControls(k)
	df := n - 3 - k
	if df <= 0 || math.IsNaN(r) {
		mustInterval(level, alt)
		return math.NaN(), math.NaN()
	}
	return atanhInterval(r, 1/math.Sqrt(float64(df)), level, alt)
}

// PartialBonettWrightInterval returns a confidence interval for a partial
// Spearman ρ from n observations and k controls on the atanh scale, with
//
//	se² = (1 + ρ²/2) / (n − 3 − k).
//
// The standard error is Bonett and Wright's (2000) for Spearman's ρ, with
// n − k in place of n. That shift by the number of controls is the usual
// convention, carried over from Fisher's (1924) result for the Pearson
// partial correlation; it is not derived for rank partial correlations. It
// returns NaN, NaN when n − 3 − k ≤ 0 or rho is NaN, and panics when k < 0,
// level is outside (0, 1) or alt is unknown.
//
// References: D. G. Bonett and T. A. Wright (2000), Sample size
// requirements for estimating Pearson, Kendall and Spearman correlations,
// Psychometrika 65(1), 23–28; R. A. Fisher (1924), The distribution of the
// partial correlation coefficient, Metron 3, 329–332.
func PartialBonettWrightInterval(rho float64, n, k int, level float64, alt Alternative) (lo, hi float64) {
	mustControls(k)
	df := n - 3 - k
	if df <= 0 || math.IsNaN(rho) {
		mustInterval(level, alt)
		return math.NaN(), math.NaN()
	}
	return atanhInterval(rho, math.Sqrt((1+rho*rho/2)/float64(df)), level, alt)
}

// mustControls panics on a negative number of controls, which only a bug
// can produce.
func mustControls(k int) {
	if k < 0 {
		panic(fmt.Sprintf("stats: %d controls", k))
	}
}
