package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// The functions in this file compute coefficients and p-values the way
// some published analyses did, so that a printed table can be recognised
// (engine/reproduce.go). None of them is what concordat reports: the
// formula 1 − 6Σd²/(n(n²−1)) is not Spearman's rho when there are ties,
// and a continuity correction is a choice a table should say it made.

// SpearmanRhoD returns the classical formula for Spearman's ρ,
//
//	ρ_D = 1 − 6 Σ dᵢ² / (n(n² − 1)),
//
// with dᵢ the difference between the midranks (average ranks) of xᵢ and
// yᵢ. Without ties it equals SpearmanRho(x, y, TieAverage) (up to
// rounding); with ties it does not, because midranks have a smaller
// variance than 1..n, and the formula then overstates |ρ| for a positive
// association and understates it for a negative one less predictably
// (Kendall 1970, ch. 3, gives the corrections for ties that this formula
// leaves out). Many programs and textbooks nevertheless apply it to tied
// data; concordat computes it only to recognise such tables.
//
// It returns NaN when n < 2. It panics when x and y differ in length or
// contain NaN.
//
// References: C. Spearman (1904), The proof and measurement of association
// between two things, American Journal of Psychology 15(1), 72–101;
// M. G. Kendall (1970), Rank Correlation Methods, 4th ed. (Griffin,
// London), ch. 2–3.
func SpearmanRhoD(x, y []float64) float64 {
	mustMatch(x, y)
	n := len(x)
	if n < 2 {
		return math.NaN()
	}
	rx, ry := Rank(x, TieAverage), Rank(y, TieAverage)
	var sum float64
	for i := range rx {
		d := rx[i] - ry[i]
		sum += d * d
	}
	fn := float64(n)
	return 1 - 6*sum/(fn*(fn*fn-1))
}

// KendallNormalCorrected returns the p-value of Kendall's S by the normal
// approximation with a continuity correction of one unit: without ties S
// moves in steps of 2, so half a step is 1, and
//
//	z = (|S| − 1) / √Var(S)
//
// for a two-sided test (0 when |S| ≤ 1), z = (S − 1)/√Var(S) for Greater and
// (S + 1)/√Var(S) for Less. Var(S) is corrected for ties (PairCounts.VarS),
// though with ties S need not move in steps of 2; the correction is then
// a convention rather than a refinement.
//
// It returns NaN when n < 3 or Var(S) is 0, and panics on an unknown
// alternative.
//
// Reference: M. G. Kendall (1970), Rank Correlation Methods, 4th ed.
// (Griffin, London), ch. 4, the continuity correction of S (from memory).
func KendallNormalCorrected(c PairCounts, alt Alternative) float64 {
	mustKnow(alt)
	v := c.VarS()
	if c.N < 3 || !(v > 0) {
		return math.NaN()
	}
	s, sd := float64(c.S()), math.Sqrt(v)
	switch alt {
	case Greater:
		return distuv.UnitNormal.CDF(-(s - 1) / sd)
	case Less:
		return distuv.UnitNormal.CDF((s + 1) / sd)
	}
	z := math.Max(0, math.Abs(s)-1) / sd
	return math.Min(1, 2*distuv.UnitNormal.CDF(-z))
}

// SpearmanTCorrected returns the p-value of Spearman's ρ by Student's t
// (CorrelationT) after a continuity correction of ρ by half a step of
// D = Σd²: without ties D takes only even values (Σdᵢ = 0, so Σdᵢ² ≡ Σdᵢ
// mod 2), half a step is 1 in D, and ρ = 1 − 6D/(n³ − n) moves by
//
//	c = 6 / (n³ − n)
//
// toward the null: |ρ| − c for a two-sided test (0 when |ρ| ≤ c), ρ − c for
// Greater and ρ + c for Less. The correction is derived here by the same
// reasoning as Kendall's for S (see KendallNormalCorrected); some programs
// offer it as an option for the approximate test of ρ.
//
// It returns NaN when n < 3 or rho is NaN, and panics on an unknown
// alternative.
func SpearmanTCorrected(rho float64, n int, alt Alternative) float64 {
	mustKnow(alt)
	if n < 3 || math.IsNaN(rho) {
		return math.NaN()
	}
	fn := float64(n)
	c := 6 / (fn*fn*fn - fn)
	switch alt {
	case Greater:
		return CorrelationT(math.Max(-1, rho-c), n, alt)
	case Less:
		return CorrelationT(math.Min(1, rho+c), n, alt)
	}
	r := math.Max(0, math.Abs(rho)-c)
	return CorrelationT(r, n, alt)
}
