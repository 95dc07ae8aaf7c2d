package stats

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// The standard errors of OrdinalSEs are evaluated from counts per
// observation, which ordinalCounts finds in O(n log n) time and O(n) memory
// with one sort by x and a Fenwick tree over the ranks of y. The squared
// sums are accumulated centred (see OrdinalSEs), in float64; the counts and
// P, Q, w_r, w_c are exact integers.

// OrdinalSE returns the asymptotic (non-null) standard error of measure m
// (one of KendallA, KendallB, KendallC, Gamma, SomersDYX, SomersDXY) for the
// paired sample x, y, by the delta method: OrdinalSEs(x, y)[m], whose doc
// comment gives the formulas and their sources. It runs in O(n log n) and
// returns NaN when the measure is undefined (n < 2; x or y constant for τ_b
// and τ_c; the independent variable constant for Somers' d; no pair untied
// in both for γ).
//
// It panics when x and y differ in length, contain NaN, or m is not a
// Kendall-family measure.
//
// References: L. A. Goodman and W. H. Kruskal (1972), JASA 67(338),
// 415–421; M. B. Brown and J. K. Benedetti (1977), JASA 72(358), 309–315.
func OrdinalSE(x, y []float64, m Measure) float64 {
	mustKendallFamily(m)
	return OrdinalSEs(x, y)[m]
}

// OrdinalSEs returns the asymptotic (non-null) standard errors ("ASE1") of
// all six Kendall-family measures of the paired sample x, y, keyed by
// KendallA, KendallB, KendallC, Gamma, SomersDYX and SomersDXY. One
// O(n log n) pass serves them all, so this costs no more than one OrdinalSE.
//
// The errors follow from the delta method under multinomial sampling. The
// published formulas are written for an r × c table with cell counts n_ij;
// a sample of n observations is the same thing with one cell per distinct
// (x, y) value, so every sum over cells weighted by n_ij becomes a sum over
// observations i. Per observation i:
//
//	C_i   observations concordant with i (x and y both ordered the same way)
//	D_i   observations discordant with i
//	d_i = C_i − D_i
//	t_i   observations tied with i in x, i itself included (the row total)
//	u_i   observations tied with i in y, i itself included (the column total)
//
// and over the sample, counting ordered pairs:
//
//	P = ΣC_i = 2n_c,  Q = ΣD_i = 2n_d,  P − Q = 2S,
//	w_r = n² − Σ_rows t² = Σ(n − t_i),  w_c = n² − Σ_cols u² = Σ(n − u_i),
//
// so that w_r and w_c are twice the numbers of pairs untied on x and on y.
// The formulas, with every sum over observations i:
//
//	τ_a = (P − Q) / (n(n−1)),        ASE = 2/(n(n−1)) · √Σ(d_i − d̄)²
//	τ_c = m(P − Q) / (n²(m−1)),      ASE = 2m/(n²(m−1)) · √Σ(d_i − d̄)²
//	γ   = (P − Q) / (P + Q),         ASE = 4/(P + Q)² · √Σ(Q·C_i − P·D_i)²
//	d_yx = (P − Q) / w_r,            ASE = 2/w_r² · √Σ(w_r·d_i − (P − Q)(n − t_i))²
//	d_xy = (P − Q) / w_c,            ASE = 2/w_c² · √Σ(w_c·d_i − (P − Q)(n − u_i))²
//	τ_b = (P − Q) / w,  w = √(w_r w_c),
//	                                 ASE = 1/w² · √Σ(φ_i − φ̄)²,
//	                                 φ_i = 2w·d_i + τ_b(t_i·w_c + u_i·w_r)
//
// where d̄ = (P − Q)/n, m = min(distinct x, distinct y) and
// φ̄ = τ_b·n·(w_r + w_c). Written as centred sums of squares they are the
// published forms Σd_i² − (P − Q)²/n and Σφ_i² − n³τ_b²(w_r + w_c)²
// without their cancellation; the γ and d sums are centred already (their
// terms sum to 0). The τ_a formula is the τ_c one with m/(m−1) replaced by
// n/(n−1), the delta method for (P − Q)/n² scaled by the constant
// n/(n−1); it is also Hoeffding's U-statistic variance 4σ₁²/n with σ₁²
// estimated by the spread of d_i/(n−1).
//
// A standard error of 0 is possible (for example τ_a = ±1 without ties): the
// delta method then sees no sampling variation, and WaldInterval collapses to
// the point estimate. An undefined value is NaN: all six when n < 2; τ_b and
// τ_c when x or y is constant; d_yx when x is constant, d_xy when y is; γ
// when no pair is untied in both. The map is new on every call.
//
// It panics when x and y differ in length, contain NaN, or hold more than
// 2³¹ − 1 observations (the per-observation counts are int32).
//
// References:
//   - L. A. Goodman and W. H. Kruskal (1963), Measures of association for
//     cross classifications. III: Approximate sampling theory, Journal of
//     the American Statistical Association 58(302), 310–364 (the delta
//     method for γ).
//   - L. A. Goodman and W. H. Kruskal (1972), Measures of association for
//     cross classifications. IV: Simplification of asymptotic variances,
//     Journal of the American Statistical Association 67(338), 415–421 (the
//     forms above for γ and d).
//   - M. B. Brown and J. K. Benedetti (1977), Sampling behavior of tests for
//     correlation in two-way contingency tables, Journal of the American
//     Statistical Association 72(358), 309–315 (τ_b, τ_c, γ, d).
//   - A. Stuart (1953), The estimation and comparison of strengths of
//     association in contingency tables, Biometrika 40(1/2), 105–110 (τ_c).
//   - W. Hoeffding (1948), A class of statistics with asymptotically normal
//     distribution, Annals of Mathematical Statistics 19(3), 293–325 (τ_a).
//   - A. Agresti (2010), Analysis of Ordinal Categorical Data, 2nd ed.
//     (Wiley, Hoboken), section 7.1 (the family and its delta-method
//     standard errors, in table notation).
func OrdinalSEs(x, y []float64) map[Measure]float64 {
	mustMatch(x, y)
	oc := ordinalCounts(x, y)
	return oc.standardErrors()
}

// mustKendallFamily panics unless m is one of the pair-count measures.
func mustKendallFamily(m Measure) {
	switch m {
	case KendallA, KendallB, KendallC, Gamma, SomersDYX, SomersDXY:
		return
	}
	panic(fmt.Sprintf("stats: %v is not a Kendall-family measure", m))
}

// obsCounts holds, per observation (in no particular order), the counts the
// standard errors need. The counts are int32: n is limited to 2³¹ − 1.
type obsCounts struct {
	n      int
	conc   []int32 // C_i
	disc   []int32 // D_i
	tx, ty []int32 // t_i, u_i: tie-group sizes in x and y, i included
	distX  int     // distinct x values
	distY  int     // distinct y values
	sumC   int64   // P
	sumD   int64   // Q
	sumTx2 int64   // Σ over x groups of t²
	sumTy2 int64   // Σ over y groups of u²
}

// ordinalCounts computes C_i, D_i, t_i and u_i for every observation in
// O(n log n): it ranks y densely (one sort), sorts the observations by x and
// then y rank, and walks the x groups in ascending order with a Fenwick tree
// that holds the y ranks of the observations already passed (smaller x).
// For observation i in an x group, with L(·) counting observations of
// smaller x and G(·) those of greater x:
//
//	L(y < yᵢ), L(y > yᵢ)   from the tree,
//	G(y < yᵢ) = #(y < yᵢ) − L(y < yᵢ) − #(same x, y < yᵢ),
//	G(y > yᵢ) = #(y > yᵢ) − L(y > yᵢ) − #(same x, y > yᵢ),
//
// and C_i = L(y < yᵢ) + G(y > yᵢ), D_i = L(y > yᵢ) + G(y < yᵢ). The group is
// added to the tree only after all its members are counted, so pairs tied in
// x are neither concordant nor discordant.
func ordinalCounts(x, y []float64) obsCounts {
	n := len(x)
	oc := obsCounts{n: n}
	if n > math.MaxInt32 {
		panic(fmt.Sprintf("stats: OrdinalSE: %d observations exceed the supported 2³¹ − 1", n))
	}
	if n == 0 {
		return oc
	}
	type obs struct {
		x, y float64
		r    int32 // dense rank of y, 0-based
	}
	p := make([]obs, n)
	for i := range x {
		if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
			panic(fmt.Sprintf("stats: OrdinalSE: NaN at index %d", i))
		}
		p[i] = obs{x: x[i], y: y[i]}
	}

	// Dense ranks of y; below[r] counts the observations with y rank < r.
	slices.SortFunc(p, func(a, b obs) int { return cmpFloat(a.y, b.y) })
	below := make([]int32, 0, 64)
	sizeY := make([]int32, 0, 64)
	for start := 0; start < n; {
		end := start + 1
		for end < n && p[end].y == p[start].y {
			end++
		}
		r := int32(len(sizeY))
		for k := start; k < end; k++ {
			p[k].r = r
		}
		below = append(below, int32(start))
		sizeY = append(sizeY, int32(end-start))
		oc.sumTy2 += int64(end-start) * int64(end-start)
		start = end
	}
	oc.distY = len(sizeY)

	slices.SortFunc(p, func(a, b obs) int {
		if c := cmpFloat(a.x, b.x); c != 0 {
			return c
		}
		return int(a.r) - int(b.r)
	})

	oc.conc = make([]int32, n)
	oc.disc = make([]int32, n)
	oc.tx = make([]int32, n)
	oc.ty = make([]int32, n)
	tree := make([]int32, oc.distY+1) // Fenwick tree over y ranks, 1-based
	for start := 0; start < n; {
		end := start + 1
		for end < n && p[end].x == p[start].x {
			end++
		}
		t := int32(end - start)
		oc.distX++
		oc.sumTx2 += int64(t) * int64(t)
		passed := int32(start) // observations with smaller x
		for s := start; s < end; {
			r := p[s].r
			e := s + 1
			for e < end && p[e].r == r {
				e++
			}
			lLess := fenwickPrefix(tree, int(r)) // ranks 0..r−1
			lMore := passed - lLess - (fenwickPrefix(tree, int(r)+1) - lLess)
			sameLess := int32(s - start)
			sameMore := int32(end - e)
			gLess := below[r] - lLess - sameLess
			gMore := int32(n) - below[r] - sizeY[r] - lMore - sameMore
			ci, di := lLess+gMore, lMore+gLess
			for k := s; k < e; k++ {
				oc.conc[k], oc.disc[k] = ci, di
				oc.tx[k], oc.ty[k] = t, sizeY[r]
			}
			oc.sumC += int64(ci) * int64(e-s)
			oc.sumD += int64(di) * int64(e-s)
			s = e
		}
		for k := start; k < end; k++ {
			fenwickAdd(tree, int(p[k].r)+1)
		}
		start = end
	}
	return oc
}

// cmpFloat orders float64 values that are not NaN (−0 equals +0).
func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// fenwickPrefix returns the count held at 1-based positions 1..k.
func fenwickPrefix(tree []int32, k int) int32 {
	var s int32
	for ; k > 0; k &= k - 1 {
		s += tree[k]
	}
	return s
}

// fenwickAdd adds one at 1-based position k.
func fenwickAdd(tree []int32, k int) {
	for ; k < len(tree); k += k & -k {
		tree[k]++
	}
}

// standardErrors evaluates the six formulas from the per-observation counts.
func (oc *obsCounts) standardErrors() map[Measure]float64 {
	nan := math.NaN()
	se := map[Measure]float64{
		KendallA: nan, KendallB: nan, KendallC: nan,
		Gamma: nan, SomersDYX: nan, SomersDXY: nan,
	}
	if oc.n < 2 {
		return se
	}
	n := float64(oc.n)
	P, Q := float64(oc.sumC), float64(oc.sumD)
	s2 := P - Q                                        // 2S, exact below 2⁵³
	wr := float64(int64(oc.n)*int64(oc.n) - oc.sumTx2) // twice the pairs untied on x
	wc := float64(int64(oc.n)*int64(oc.n) - oc.sumTy2) // twice the pairs untied on y
	dbar := s2 / n

	var ssD, ssG, ssYX, ssXY float64
	for i := range oc.conc {
		c, d := float64(oc.conc[i]), float64(oc.disc[i])
		di := c - d
		ssD += (di - dbar) * (di - dbar)
		g := Q*c - P*d
		ssG += g * g
		a := wr*di - s2*(n-float64(oc.tx[i]))
		ssYX += a * a
		b := wc*di - s2*(n-float64(oc.ty[i]))
		ssXY += b * b
	}

	se[KendallA] = 2 / (n * (n - 1)) * math.Sqrt(ssD)
	if m := float64(min(oc.distX, oc.distY)); m >= 2 {
		se[KendallC] = 2 * m / (n * n * (m - 1)) * math.Sqrt(ssD)
	}
	if P+Q > 0 {
		se[Gamma] = 4 / ((P + Q) * (P + Q)) * math.Sqrt(ssG)
	}
	if wr > 0 {
		se[SomersDYX] = 2 / (wr * wr) * math.Sqrt(ssYX)
	}
	if wc > 0 {
		se[SomersDXY] = 2 / (wc * wc) * math.Sqrt(ssXY)
	}
	if wr > 0 && wc > 0 {
		w := math.Sqrt(wr) * math.Sqrt(wc)
		tau := s2 / w
		phiBar := tau * n * (wr + wc)
		var ssB float64
		for i := range oc.conc {
			di := float64(oc.conc[i]) - float64(oc.disc[i])
			phi := 2*w*di + tau*(float64(oc.tx[i])*wc+float64(oc.ty[i])*wr) - phiBar
			ssB += phi * phi
		}
		se[KendallB] = math.Sqrt(ssB) / (wr * wc)
	}
	return se
}

// WaldInterval returns the Wald confidence interval est ∓ q·se, clamped to
// [−1, 1], for an estimate with asymptotic standard error se (OrdinalSE).
// For TwoSided, q is the standard normal quantile at (1 + level)/2; for
// Greater the interval is [est − q·se, 1] and for Less [−1, est + q·se], with
// q at level. An se of 0 gives the point est (clamped), and +Inf gives
// [−1, 1].
//
// It returns NaN, NaN when est or se is NaN. It panics when level is not
// strictly between 0 and 1, alt is not a declared alternative, or se is
// negative.
//
// Reference: A. Agresti (2010), Analysis of Ordinal Categorical Data, 2nd
// ed. (Wiley, Hoboken), section 7.1 (Wald intervals est ± z·ASE for γ, τ_b
// and Somers' d).
func WaldInterval(est, se, level float64, alt Alternative) (lo, hi float64) {
	mustInterval(level, alt)
	if math.IsNaN(est) || math.IsNaN(se) {
		return math.NaN(), math.NaN()
	}
	if se < 0 {
		panic(fmt.Sprintf("stats: WaldInterval: negative standard error %v", se))
	}
	switch alt {
	case Greater:
		return clamp1(est - distuv.UnitNormal.Quantile(level)*se), 1
	case Less:
		return -1, clamp1(est + distuv.UnitNormal.Quantile(level)*se)
	}
	q := distuv.UnitNormal.Quantile((1 + level) / 2)
	return clamp1(est - q*se), clamp1(est + q*se)
}
