package stats

import (
	"fmt"
	"math"
	"slices"
)

// TieGroups summarises the groups of equal values in one column, as the
// tie-corrected variance of Kendall's S needs them (Kendall 1970, Rank
// Correlation Methods, 4th ed., ch. 4). Each sum runs over the tie groups,
// t being a group's size; singletons contribute 0. The sums are float64 so
// that n up to 10⁷ cannot overflow (t³ reaches 10²¹); below 2⁵³ they are
// exact.
type TieGroups struct {
	Distinct int     // number of distinct values (groups, singletons included)
	SumT1    float64 // Σ t(t−1)
	SumT2    float64 // Σ t(t−1)(t−2)
	SumT25   float64 // Σ t(t−1)(2t+5)
}

func (g *TieGroups) add(size int) {
	g.Distinct++
	t := float64(size)
	g.SumT1 += t * (t - 1)
	g.SumT2 += t * (t - 1) * (t - 2)
	g.SumT25 += t * (t - 1) * (2*t + 5)
}

// PairCounts classifies the n(n−1)/2 pairs of observations (xᵢ, yᵢ),
// (xⱼ, yⱼ) of a paired sample. Every pair is exactly one of: concordant,
// discordant, tied in x only, tied in y only, tied in both. From these counts
// the whole family of Kendall-type measures follows without another pass:
// the methods TauA, TauB, TauC (which uses TiesX.Distinct and
// TiesY.Distinct), Gamma, SomersDYX and SomersDXY, dispatched by Estimate,
// and VarS, the null variance of S. Their standard errors need counts per
// observation, not per sample: see OrdinalSE.
type PairCounts struct {
	N int // number of observations

	Concordant int64 // pairs ordered the same way in x and in y
	Discordant int64 // pairs ordered opposite ways in x and in y

	TiedX  int64 // pairs tied in x, including those tied in both
	TiedY  int64 // pairs tied in y, including those tied in both
	TiedXY int64 // pairs tied in both x and y

	TiesX TieGroups // tie groups of x
	TiesY TieGroups // tie groups of y
}

// CountPairs classifies all pairs of (xᵢ, yᵢ) in O(n log n) time: it sorts
// the observations by x, then y, counts the tie groups of x and of (x, y),
// and counts the discordant pairs as the inversions of the y sequence by a
// merge sort, whose result also gives the tie groups of y.
//
// It panics when x and y differ in length or contain NaN.
//
// Reference: W. R. Knight (1966), A computer method for calculating Kendall's
// tau with ungrouped data, Journal of the American Statistical Association
// 61(314), 436–439.
func CountPairs(x, y []float64) PairCounts {
	mustMatch(x, y)
	n := len(x)
	c := PairCounts{N: n}
	if n == 0 {
		return c
	}
	type obs struct{ x, y float64 }
	p := make([]obs, n)
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			panic(fmt.Sprintf("stats: CountPairs: NaN at index %d", i))
		}
		p[i] = obs{x[i], y[i]}
	}
	slices.SortFunc(p, func(a, b obs) int {
		switch {
		case a.x < b.x:
			return -1
		case a.x > b.x:
			return 1
		case a.y < b.y:
			return -1
		case a.y > b.y:
			return 1
		}
		return 0
	})

	for start := 0; start < n; {
		end := start + 1
		for end < n && p[end].x == p[start].x {
			end++
		}
		c.TiesX.add(end - start)
		c.TiedX += pairsIn(end - start)
		for s := start; s < end; { // y is sorted within the x group
			e := s + 1
			for e < end && p[e].y == p[s].y {
				e++
			}
			c.TiedXY += pairsIn(e - s)
			s = e
		}
		start = end
	}

	ys := make([]float64, n)
	for i := range p {
		ys[i] = p[i].y
	}
	p = nil // let the pairs go before the merge buffer is allocated
	ys, c.Discordant = sortCountingInversions(ys, make([]float64, n))

	for start := 0; start < n; {
		end := start + 1
		for end < n && ys[end] == ys[start] {
			end++
		}
		c.TiesY.add(end - start)
		c.TiedY += pairsIn(end - start)
		start = end
	}

	// Pairs tied in y only number TiedY − TiedXY; the rest are untied in
	// both and are concordant or discordant.
	c.Concordant = c.Pairs() - c.TiedX - (c.TiedY - c.TiedXY) - c.Discordant
	return c
}

// pairsIn returns t(t−1)/2, the number of pairs among t observations.
func pairsIn(t int) int64 {
	return int64(t) * int64(t-1) / 2
}

// insertionRun is the length of the runs that sortCountingInversions sorts by
// insertion before merging; short runs are faster to sort that way.
const insertionRun = 16

// sortCountingInversions sorts a ascending and returns the sorted values
// (held in a or in buf, which must have the same length) and the number of
// pairs i < j with a[i] > a[j]. Equal values are not inversions. It is a
// bottom-up merge sort: O(n log n) time, no allocation.
func sortCountingInversions(a, buf []float64) ([]float64, int64) {
	n := len(a)
	var inv int64
	for lo := 0; lo < n; lo += insertionRun {
		hi := min(lo+insertionRun, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1] > v {
				a[j] = a[j-1]
				j--
			}
			a[j] = v
			inv += int64(i - j)
		}
	}
	src, dst := a, buf
	for width := insertionRun; width < n; width *= 2 {
		for lo := 0; lo < n; lo += 2 * width {
			mid := min(lo+width, n)
			hi := min(lo+2*width, n)
			i, j, k := lo, mid, lo
			for i < mid && j < hi {
				if src[j] < src[i] {
					dst[k] = src[j]
					j++
					inv += int64(mid - i) // src[j] passes every value left in the left run
				} else {
					dst[k] = src[i]
					i++
				}
				k++
			}
			k += copy(dst[k:], src[i:mid])
			copy(dst[k:], src[j:hi])
		}
		src, dst = dst, src
	}
	return src, inv
}

// Pairs returns n(n−1)/2, the number of pairs of observations.
func (c PairCounts) Pairs() int64 { return pairsIn(c.N) }

// S returns Kendall's score S = n_c − n_d.
func (c PairCounts) S() int64 { return c.Concordant - c.Discordant }

// TauA returns Kendall's τ_a = S / (n(n−1)/2), which counts tied pairs as
// neither concordant nor discordant but keeps them in the denominator. It
// returns NaN when n < 2.
//
// Reference: M. G. Kendall (1938), A new measure of rank correlation,
// Biometrika 30(1/2), 81–93.
func (c PairCounts) TauA() float64 {
	if c.N < 2 {
		return math.NaN()
	}
	return float64(c.S()) / float64(c.Pairs())
}

// TauB returns Kendall's τ_b, which corrects τ for pairs tied in x, in y, or
// in both:
//
//	τ_b = (n_c − n_d) / √((n_0 − n_1)(n_0 − n_2))
//
// where n_0 = n(n−1)/2 and n_1, n_2 count the pairs tied in x and in y. It
// returns NaN when n < 2 or when x or y is constant. The result is clamped to
// [−1, 1].
//
// Reference: M. G. Kendall (1945), The treatment of ties in ranking problems,
// Biometrika 33(3), 239–251.
func (c PairCounts) TauB() float64 {
	n0 := c.Pairs()
	dx, dy := n0-c.TiedX, n0-c.TiedY
	if c.N < 2 || dx == 0 || dy == 0 {
		return math.NaN()
	}
	return clamp1(float64(c.S()) / math.Sqrt(float64(dx)*float64(dy)))
}

// TauC returns Stuart's τ_c, which adjusts τ_a for the largest |S| a table
// with m rows or m columns allows:
//
//	τ_c = 2mS / (n²(m − 1)),  m = min(distinct x values, distinct y values).
//
// It returns NaN when m < 2 (x or y constant, or n < 2). The result is
// clamped to [−1, 1].
//
// Reference: A. Stuart (1953), The estimation and comparison of strengths of
// association in contingency tables, Biometrika 40(1/2), 105–110.
func (c PairCounts) TauC() float64 {
	m := min(c.TiesX.Distinct, c.TiesY.Distinct)
	if m < 2 {
		return math.NaN()
	}
	n, mf := float64(c.N), float64(m)
	return clamp1(2 * mf * float64(c.S()) / (n * n * (mf - 1)))
}

// Gamma returns Goodman and Kruskal's γ, S over the pairs that are untied in
// both x and y:
//
//	γ = (n_c − n_d) / (n_c + n_d).
//
// It returns NaN when no pair is untied in both (n_c + n_d = 0). The result
// is clamped to [−1, 1].
//
// Reference: L. A. Goodman and W. H. Kruskal (1954), Measures of association
// for cross classifications, Journal of the American Statistical Association
// 49(268), 732–764.
func (c PairCounts) Gamma() float64 {
	untied := c.Concordant + c.Discordant
	if untied == 0 {
		return math.NaN()
	}
	return clamp1(float64(c.S()) / float64(untied))
}

// SomersDYX returns Somers' d of y on x (y dependent), S over the pairs
// untied on the independent variable x:
//
//	d_yx = (n_c − n_d) / (n_0 − n_1),
//
// with n_0 = n(n−1)/2 and n_1 the pairs tied in x. It returns NaN when no
// pair is untied on x (x constant, or n < 2). The result is clamped to
// [−1, 1].
//
// Reference: R. H. Somers (1962), A new asymmetric measure of association for
// ordinal variables, American Sociological Review 27(6), 799–811.
func (c PairCounts) SomersDYX() float64 {
	return somersD(c.S(), c.Pairs()-c.TiedX)
}

// SomersDXY returns Somers' d of x on y (x dependent), S over the pairs
// untied on the independent variable y:
//
//	d_xy = (n_c − n_d) / (n_0 − n_2),
//
// with n_0 = n(n−1)/2 and n_2 the pairs tied in y. It returns NaN when no
// pair is untied on y (y constant, or n < 2). The result is clamped to
// [−1, 1].
//
// Reference: R. H. Somers (1962), A new asymmetric measure of association for
// ordinal variables, American Sociological Review 27(6), 799–811.
func (c PairCounts) SomersDXY() float64 {
	return somersD(c.S(), c.Pairs()-c.TiedY)
}

func somersD(s, untied int64) float64 {
	if untied == 0 {
		return math.NaN()
	}
	return clamp1(float64(s) / float64(untied))
}

// Estimate returns the Kendall-family measure m from the counts: TauA for
// KendallA, TauB for KendallB, TauC for KendallC, and the methods of the
// same name for Gamma, SomersDYX and SomersDXY, with their NaN cases. It
// panics for any other Measure (Spearman and PearsonR are not pair counts).
func (c PairCounts) Estimate(m Measure) float64 {
	switch m {
	case KendallA:
		return c.TauA()
	case KendallB:
		return c.TauB()
	case KendallC:
		return c.TauC()
	case Gamma:
		return c.Gamma()
	case SomersDYX:
		return c.SomersDYX()
	case SomersDXY:
		return c.SomersDXY()
	}
	panic(fmt.Sprintf("stats: PairCounts.Estimate: %v is not a Kendall-family measure", m))
}

// VarS returns the variance of S = n_c − n_d under independence, corrected
// for ties in both rankings:
//
//	Var(S) = [n(n−1)(2n+5) − Σt(t−1)(2t+5) − Σu(u−1)(2u+5)] / 18
//	       + [Σt(t−1)(t−2)][Σu(u−1)(u−2)] / [9n(n−1)(n−2)]
//	       + [Σt(t−1)][Σu(u−1)] / [2n(n−1)]
//
// where t runs over the tie groups of x and u over those of y. Without ties
// it reduces to n(n−1)(2n+5)/18. It returns NaN when n < 3.
//
// Reference: M. G. Kendall (1970), Rank Correlation Methods, 4th ed.
// (Griffin, London), ch. 4, the variance of S when both rankings contain
// ties.
func (c PairCounts) VarS() float64 {
	if c.N < 3 {
		return math.NaN()
	}
	n := float64(c.N)
	v := (n*(n-1)*(2*n+5) - c.TiesX.SumT25 - c.TiesY.SumT25) / 18
	v += c.TiesX.SumT2 * c.TiesY.SumT2 / (9 * n * (n - 1) * (n - 2))
	v += c.TiesX.SumT1 * c.TiesY.SumT1 / (2 * n * (n - 1))
	return v
}

// KendallTauB returns Kendall's τ_b between x and y: CountPairs(x, y).TauB().
// It runs in O(n log n) and returns NaN when n < 2 or x or y is constant. It
// panics when x and y differ in length or contain NaN.
//
// Reference: M. G. Kendall (1945), The treatment of ties in ranking problems,
// Biometrika 33(3), 239–251; algorithm: W. R. Knight (1966), JASA 61(314),
// 436–439.
func KendallTauB(x, y []float64) float64 {
	return CountPairs(x, y).TauB()
}
