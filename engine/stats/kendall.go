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

// addTied adds a group of size ≥ 2 to the sums (a singleton adds 0 to each,
// so skipping singletons leaves the sums bit for bit as they were). It does
// not count Distinct.
func (g *TieGroups) addTied(size int) {
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

// CountPairs classifies all pairs of (xᵢ, yᵢ) in O(n log n) time, in the
// manner of Knight (1966): sorted by x, then y, the discordant pairs are the
// inversions of the y sequence. Here both columns are first sorted by an LSD
// radix sort (Argsort's, concurrently for large n), which gives the tie
// groups of x and of y. The column with fewer distinct values is replaced
// by dense codes 0..k−1 and read in the order of the other column (pairs
// tied in both and discordant pairs are the same whichever column leads):
//
//   - k ≤ fenwickMaxCodes (heavy ties): one pass over the leading column's
//     tie groups with a Fenwick tree over the k codes counts, for each value,
//     the earlier values in lower groups with a larger code, in O(n log k);
//     a group's values are queried before any is added, so pairs tied in
//     the leading column are not counted;
//   - otherwise the codes within each tie group of the leading column are
//     sorted, and the discordant pairs are the inversions of the code
//     sequence, counted by a bottom-up merge sort in O(n log n) (its two
//     halves concurrently for large n).
//
// It panics when x and y differ in length, contain NaN, or have 2³¹ or more
// values.
//
// Reference: W. R. Knight (1966), A computer method for calculating Kendall's
// tau with ungrouped data, Journal of the American Statistical Association
// 61(314), 436–439; P. M. Fenwick (1994), A new data structure for
// cumulative frequency tables, Software: Practice and Experience 24(3),
// 327–336.
func CountPairs(x, y []float64) PairCounts {
	return countPairs(x, y, fenwickMaxCodes)
}

// countPairs is CountPairs with the largest number of codes for the Fenwick
// tree as a parameter, so that tests can run either path on any data.
func countPairs(x, y []float64, fenwickMax int) PairCounts {
	mustMatch(x, y)
	n := len(x)
	c := PairCounts{N: n}
	if n == 0 {
		return c
	}
	checkArgsortLen(n, "CountPairs")
	sx, sy := getRadixScratch(n), getRadixScratch(n)
	defer putRadixScratch(sx)
	defer putRadixScratch(sy)
	both(parallel(n),
		func() {
			sx.sort(x, "CountPairs")
			c.TiesX, c.TiedX = sortedTieGroups(sx.keys())
		},
		func() {
			sy.sort(y, "CountPairs")
			c.TiesY, c.TiedY = sortedTieGroups(sy.keys())
		})

	lead, coded, k := sx, sy, c.TiesY.Distinct
	if c.TiesX.Distinct < k {
		lead, coded, k = sy, sx, c.TiesX.Distinct
	}
	// The dense code of each observation's coded value, by position, and
	// the codes in the leading column's sorted order, in the spare position
	// slices of the two sorts.
	codes, s := coded.spareIdx(), lead.spareIdx()
	denseCodes(coded.keys(), coded.idx(), codes)
	li := lead.idx()
	gather := func(lo, hi int) {
		for m, i := range li[lo:hi] {
			s[lo+m] = codes[i]
		}
	}
	both(parallel(n), func() { gather(0, n/2) }, func() { gather(n/2, n) })
	if k <= fenwickMax {
		c.Discordant, c.TiedXY = discordantFenwick(lead.keys(), s, k)
	} else {
		c.TiedXY = sortWithinGroups(lead.keys(), s)
		c.Discordant = countInversions(s, codes)
	}

	// Pairs tied in y only number TiedY − TiedXY; the rest are untied in
	// both and are concordant or discordant.
	c.Concordant = c.Pairs() - c.TiedX - (c.TiedY - c.TiedXY) - c.Discordant
	return c
}

// sortedTieGroups returns the tie groups of sorted keys s, the sums taken in
// ascending order of value, and the number of pairs tied within them.
func sortedTieGroups(keys []uint64) (TieGroups, int64) {
	var g TieGroups
	var pairs int64
	n := len(keys)
	for start := 0; start < n; {
		key := keys[start]
		end := start + 1
		for end < n && keys[end] == key {
			end++
		}
		g.Distinct++
		if end-start > 1 {
			g.addTied(end - start)
			pairs += pairsIn(end - start)
		}
		start = end
	}
	return g, pairs
}

// denseCodes writes to codes[idx[m]] the number of distinct values below
// keys[m], keys being sorted: equal values get one code, and codes keep the
// order of the values. For large inputs the two halves are written
// concurrently (each scattered write goes to its own position).
func denseCodes(keys []uint64, idx []int32, codes []int32) {
	n := len(keys)
	idx = idx[:n]
	// fill writes the codes of keys[lo:hi], code being that of keys[lo].
	fill := func(lo, hi int, code int32) {
		for m := lo; m < hi; m++ {
			if m > lo && keys[m] != keys[m-1] {
				code++
			}
			codes[idx[m]] = code
		}
	}
	if !parallel(n) {
		fill(0, n, 0)
		return
	}
	mid := n / 2
	var code int32 // of keys[mid]
	for m := 1; m <= mid; m++ {
		if keys[m] != keys[m-1] {
			code++
		}
	}
	both(true, func() { fill(0, mid, 0) }, func() { fill(mid, n, code) })
}

// fenwickMaxCodes is the largest number of distinct codes for which
// CountPairs counts discordant pairs with a Fenwick tree rather than by
// merge sort. Measured at n = 10⁷ (random codes, CPU time): the tree took
// 0.18 s for 7 codes, 0.29 s for 2¹², 0.36 s for 2¹⁶ and 1.1 s for 2²⁰, where
// it no longer fits the core's cache; the merge sort takes ~0.55 s whatever
// the codes.
const fenwickMaxCodes = 1 << 16

// discordantFenwick counts, for codes s in the order of the sorted keys
// lead (whose tie groups are runs of equal keys), the pairs i < j in
// different groups with s[i] > s[j] (discordant pairs), and the pairs in the
// same group with equal codes (pairs tied in both columns). Codes lie in
// 0..k−1. It runs in O(n log k) time with O(k) memory: a Fenwick tree holds
// how many values of the earlier groups have each code.
func discordantFenwick(lead []uint64, s []int32, k int) (disc, tiedXY int64) {
	tree := make([]int32, k+1) // 1-based Fenwick tree of code counts
	stamp := make([]int32, k)  // the last group (numbered from 1) holding a code
	count := make([]int32, k)  // its occurrences so far in that group
	n := len(lead)
	group := int32(0)
	for start := 0; start < n; {
		key := lead[start]
		end := start + 1
		for end < n && lead[end] == key {
			end++
		}
		group++
		for _, c := range s[start:end] {
			// The start values of earlier groups are in the tree; those
			// with a code ≤ c are its prefix up to c.
			disc += int64(int32(start) - fenwickPrefix(tree, int(c)+1))
			if stamp[c] != group {
				stamp[c], count[c] = group, 0
			}
			tiedXY += int64(count[c])
			count[c]++
		}
		for _, c := range s[start:end] {
			fenwickAdd(tree, int(c)+1)
		}
		start = end
	}
	return disc, tiedXY
}

// sortWithinGroups sorts s within each tie group of the sorted keys lead
// (runs of equal keys) and returns the number of pairs with equal codes in
// the same group (pairs tied in both columns).
func sortWithinGroups(lead []uint64, s []int32) int64 {
	var tiedXY int64
	n := len(lead)
	for start := 0; start < n; {
		key := lead[start]
		end := start + 1
		for end < n && lead[end] == key {
			end++
		}
		if end-start > 1 {
			g := s[start:end]
			slices.Sort(g)
			for a := 0; a < len(g); {
				b := a + 1
				for b < len(g) && g[b] == g[a] {
					b++
				}
				tiedXY += pairsIn(b - a)
				a = b
			}
		}
		start = end
	}
	return tiedXY
}

// pairsIn returns t(t−1)/2, the number of pairs among t observations.
func pairsIn(t int) int64 {
	return int64(t) * int64(t-1) / 2
}

// countInversions returns the number of pairs i < j with a[i] > a[j] (equal
// values are not inversions), sorting a and using buf (of the same length)
// as scratch. For large inputs the two halves are sorted and counted
// concurrently and the pairs across them counted from the sorted halves.
func countInversions(a, buf []int32) int64 {
	if !parallel(len(a)) {
		_, inv := sortCountingInversions(a, buf)
		return inv
	}
	mid := len(a) / 2
	var l, r []int32
	var il, ir int64
	both(true,
		func() { l, il = sortCountingInversions(a[:mid], buf[:mid]) },
		func() { r, ir = sortCountingInversions(a[mid:], buf[mid:]) })
	inv := il + ir
	i := 0
	for _, v := range r {
		for i < len(l) && l[i] <= v {
			i++
		}
		inv += int64(len(l) - i) // the values of l greater than v
	}
	return inv
}

// insertionRun is the length of the runs that sortCountingInversions sorts by
// insertion before merging; short runs are faster to sort that way.
const insertionRun = 16

// sortCountingInversions sorts a ascending and returns the sorted values
// (held in a or in buf, which must have the same length) and the number of
// pairs i < j with a[i] > a[j]. Equal values are not inversions. It is a
// bottom-up merge sort: O(n log n) time, no allocation.
func sortCountingInversions(a, buf []int32) ([]int32, int64) {
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
			inv += mergeCounting(dst[lo:hi], src[lo:mid], src[mid:hi])
		}
		src, dst = dst, src
	}
	return src, inv
}

// mergeCounting merges the sorted runs l and r into dst (of length
// len(l)+len(r)), stably, and returns the number of pairs of a value of l
// greater than a value of r.
//
// It merges from both ends at once, the smallest remaining value to the
// front and the largest to the back, so that each step's choice (a
// conditional move, not a branch, which would be mispredicted half the time
// on random codes) waits on half as many loads: at n = 10⁷ the sort measured
// 1.5× faster than merging from the front alone, and that 1.5× faster than
// a branching merge. The front counts, for each value of r it places, the
// values of l not yet placed by the front; the back counts, for each value
// of l it places, the values of r not yet placed by the back. A pair with
// its value of r placed by the front and its value of l by the back is
// counted by both; every such pair is an inversion (the merge is stable),
// so their number is subtracted once at the end.
func mergeCounting(dst, l, r []int32) int64 {
	var inv int64
	nl := len(l)
	i, j, k := 0, 0, 0                       // front: next of l, of r, of dst
	bi, bj, bk := nl-1, len(r)-1, len(dst)-1 // back: last unplaced of l, r, dst
	for i <= bi && j <= bj {
		a, b := l[i], r[j]
		t := 0
		if b < a { // equal values: l's first, as a stable merge
			t = 1
		}
		dst[k] = min(a, b)
		inv += int64(t * (nl - i))
		i += 1 - t
		j += t
		k++
		if i > bi || j > bj {
			break
		}
		a, b = l[bi], r[bj]
		u := 0
		if a > b { // equal values: r's last
			u = 1
		}
		dst[bk] = max(a, b)
		inv += int64(u * (bj + 1))
		bi -= u
		bj -= 1 - u
		bk--
	}
	// What remains comes from one run only and lies between the two ends.
	k += copy(dst[k:], l[i:bi+1])
	copy(dst[k:], r[j:bj+1])
	return inv - int64(nl-1-bi)*int64(j)
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
