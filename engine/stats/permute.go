package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"
)

// A conditional permutation test of association holds both margins fixed:
// x stays where it is and the values of y are rearranged against it, every
// arrangement being equally likely under independence. The reference
// distribution of a statistic is its distribution over those arrangements
// (Pitman 1937). PermutationTest samples arrangements (Monte Carlo);
// ExactPermutationTest enumerates all distinct ones.
//
// Every measure's statistic is reduced to a quantity that ranks the
// arrangements in the same order and is cheaper to compute:
//
//   - Spearman: x and y are ranked once under the rule, and the statistic is
//     T = Σ a_i b_π(i) with a and b the centred ranks; ρ = T / √(Σa²Σb²),
//     whose denominator is the same for every arrangement.
//   - PearsonR: the same on the centred raw values.
//   - KendallA, KendallB, KendallC, SomersDYX, SomersDXY: each is S = n_c − n_d
//     times a positive factor fixed by the tie structures of x and y, which
//     an arrangement does not change, so the test counts on the integer S and
//     gives the five measures the same p-value.
//   - Gamma: γ = S / (n_c + n_d), whose denominator does change with the
//     arrangement; it is compared as an exact fraction (128-bit products).
//
// The p-value counts the arrangements at least as extreme as the observed
// one: Greater P(T ≥ t), Less P(T ≤ t), TwoSided P(|T| ≥ |t|), T centred so
// that 0 means no association (the conditional means of S and of the centred
// dot products are 0). This two-sided p-value is not twice the smaller one-sided
// p-value: when ties make the conditional distribution asymmetric the two
// differ, and P(|T| ≥ |t|) is the one that keeps its meaning.
//
// The two float statistics (Spearman, PearsonR) are compared with a
// tolerance of permRelTol·√(Σa²Σb²), that is 10⁻⁹ on the scale of ρ or r:
// arrangements that give the observed correlation up to rounding count as at
// least as extreme. (Beyond n ≈ 2000 untied ranks, attainable values of ρ
// closer than 10⁻⁹ also count as equal; their probability is negligible.)
// S and γ are compared exactly.
//
// Reference: E. J. G. Pitman (1937), Significance tests which may be applied
// to samples from any populations. II. The correlation coefficient test,
// Supplement to the Journal of the Royal Statistical Society 4(2), 225–232.

// PermutationSpec says what a permutation test computes and how.
type PermutationSpec struct {
	Measures []Measure // statistics to test, any of the declared measures
	Rule     TieRule   // ranking rule for Spearman (unused otherwise); ranks travel with their values
	Alt      Alternative
	Draws    int       // Monte Carlo draws (ignored when enumerating); must be ≥ 1
	Key      StreamKey // the random stream (ignored when enumerating)
	Workers  int       // goroutines; ≤ 0 means 1
	// Progress, when not nil, is called from the workers after each block
	// with the arrangements done so far and the total; it must be cheap and
	// safe for concurrent use, and calls may arrive out of order.
	Progress func(done, total int)
}

// PermutationResult is the outcome of a permutation test.
type PermutationResult struct {
	P     []float64 // per measure, in the order of Spec.Measures; NaN when the statistic is undefined
	Exact bool      // true when all arrangements were enumerated
	Draws int       // arrangements enumerated, or Monte Carlo draws (0 when every statistic is undefined)
}

// MaxEnumeration is the largest number of arrangements ExactPermutationTest
// enumerates: 10! = 3 628 800, all orders of 10 untied values. At that size
// one worker needs 0.5 to 1 s for Spearman and Kendall's τ_b together
// (BenchmarkExactPermutation on an x86-64 virtual machine); the work spreads
// over Workers.
const MaxEnumeration = 3628800

// ErrTooManyArrangements is returned by ExactPermutationTest when the data
// have more than MaxEnumeration distinct arrangements; the caller falls back
// to PermutationTest.
var ErrTooManyArrangements = errors.New("too many arrangements to enumerate")

// permBlock is the number of Monte Carlo draws per random block. It is part
// of the reproducibility contract: changing it changes every p-value.
const permBlock = 1024

// permRelTol is the relative tolerance of the float statistics (see above).
const permRelTol = 1e-9

// Arrangements returns the number of distinct arrangements a conditional
// permutation test of x and y enumerates. Permuting y against x or x against
// y gives the same distribution of pairs, so the test rearranges whichever
// column has fewer distinct orders:
//
//	min( n! / Π_g t_g! , n! / Π_h u_h! )
//
// with t_g the sizes of the tie groups of x and u_h those of y; each
// distinct order of a multiset stands for the same number of permutations,
// so enumerating distinct orders is exact. The count is computed in float64
// and exact up to 2⁵³; beyond about 170! it is +Inf.
//
// Spearman's ρ under TieFirst gives tied values distinct ranks, so its
// enumeration covers Arrangements(Rank(x, TieFirst), Rank(y, TieFirst)).
//
// It panics when x and y differ in length or contain NaN.
func Arrangements(x, y []float64) float64 {
	mustMatch(x, y)
	return math.Min(multisetOrders(groupSizes(x)), multisetOrders(groupSizes(y)))
}

// groupSizes returns the sizes of the groups of equal values of v.
func groupSizes(v []float64) []int {
	s := slices.Clone(v)
	for i, a := range s {
		if math.IsNaN(a) {
			panic(fmt.Sprintf("stats: Arrangements: NaN at index %d", i))
		}
	}
	slices.Sort(s)
	var sizes []int
	for start := 0; start < len(s); {
		end := start + 1
		for end < len(s) && s[end] == s[start] {
			end++
		}
		sizes = append(sizes, end-start)
		start = end
	}
	return sizes
}

// multisetOrders returns the multinomial coefficient (Σt)! / Π t! as the
// product of binomial coefficients C(m, t) over the groups, m the running
// total; every intermediate value is an integer, so the result is exact
// while it stays below 2⁵³.
func multisetOrders(sizes []int) float64 {
	res, m := 1.0, 0
	for _, t := range sizes {
		for k := 1; k <= t; k++ {
			m++
			res = res * float64(m) / float64(k)
		}
	}
	return res
}

// PermutationTest returns Monte Carlo p-values of the conditional
// permutation test of association between x and y (see above) for each of
// spec.Measures. It draws spec.Draws uniform random permutations of y
// against x (Fisher–Yates) from the stream spec.Key, in blocks of 1024
// draws, block b drawing from spec.Key.Block(b); the p-values depend on the
// key only, not on spec.Workers. With b of the m draws at least as extreme
// as the data,
//
//	p = (b + 1) / (m + 1),
//
// which counts the observed arrangement as one of the draws, so p is never
// 0 and the test keeps its level.
//
// A measure whose statistic is undefined for the data gets p = NaN: all
// when n < 2; Spearman when the ranks of x or y are constant; PearsonR when
// x or y is constant or holds ±Inf; KendallB, KendallC and Gamma when x or y
// is constant; SomersDYX when x is, SomersDXY when y is. On a constant
// column KendallA and the other Somers' d are 0 in every arrangement, so
// their p is 1. When every measure is undefined, nothing is drawn and Draws
// is 0. It returns ctx.Err() when ctx ends before
// all blocks are done (checked between blocks). It panics when x and y
// differ in length or contain NaN, when spec.Draws < 1, or on an unknown
// measure, alternative, or (for Spearman) tie rule.
//
// Reference: B. Phipson and G. K. Smyth (2010), Permutation p-values should
// never be zero: calculating exact p-values when permutations are randomly
// drawn, Statistical Applications in Genetics and Molecular Biology 9(1),
// article 39.
func PermutationTest(ctx context.Context, x, y []float64, spec PermutationSpec) (PermutationResult, error) {
	if spec.Draws < 1 {
		panic(fmt.Sprintf("stats: PermutationTest: %d draws", spec.Draws))
	}
	s := newPermSetup(x, y, spec, false)
	res := PermutationResult{P: make([]float64, len(spec.Measures))}
	if !s.any() {
		s.fill(res.P, permCounts{}, 0, false)
		return res, nil
	}
	m := spec.Draws
	blocks := (m + permBlock - 1) / permBlock
	size := func(b int) int { return min(permBlock, m-b*permBlock) }
	workers := max(1, min(spec.Workers, blocks))
	ws := make([]*permWorker, workers)
	err := runBlocks(ctx, blocks, workers, size, m, spec.Progress, func(w, b int) {
		if ws[w] == nil {
			ws[w] = s.newWorker()
		}
		pw := ws[w]
		pw.rng.reset(spec.Key, uint64(b))
		copy(pw.c, s.init)
		for range size(b) {
			pw.rng.shuffle(pw.c)
			s.eval(pw.c, pw)
		}
	})
	if err != nil {
		return PermutationResult{}, err
	}
	s.fill(res.P, sumCounts(ws), int64(m), false)
	res.Draws = m
	return res, nil
}

// ExactPermutationTest returns exact p-values of the conditional
// permutation test of association between x and y (see above) for each of
// spec.Measures, by enumerating every distinct arrangement of the column
// with fewer of them (see Arrangements) in lexicographic order. With b of
// the total arrangements at least as extreme as the data (the data's own
// among them),
//
//	p = b / total.
//
// The enumeration is split by the values at the first two positions into
// tasks that spec.Workers goroutines share; counts are summed as integers,
// so the result does not depend on the worker count. spec.Draws and spec.Key
// are ignored.
//
// Undefined statistics get p = NaN as in PermutationTest. It returns an
// error wrapping ErrTooManyArrangements, before any work, when there are
// more than MaxEnumeration arrangements, and ctx.Err() when ctx ends
// (checked between tasks). It panics as PermutationTest does.
//
// Reference: next arrangement of a multiset: D. E. Knuth (2011), The Art of
// Computer Programming, Vol. 4A, §7.2.1.2, Algorithm L.
func ExactPermutationTest(ctx context.Context, x, y []float64, spec PermutationSpec) (PermutationResult, error) {
	s := newPermSetup(x, y, spec, true)
	if s.orders > MaxEnumeration {
		return PermutationResult{}, fmt.Errorf("stats: exact permutation test: %.4g arrangements: %w (limit %d)",
			s.orders, ErrTooManyArrangements, MaxEnumeration)
	}
	res := PermutationResult{P: make([]float64, len(spec.Measures)), Exact: true}
	if !s.any() {
		s.fill(res.P, permCounts{}, 0, true)
		return res, nil
	}
	tasks := s.prefixTasks()
	size := func(b int) int { return tasks[b].orders }
	total := int(s.orders)
	workers := max(1, min(spec.Workers, len(tasks)))
	ws := make([]*permWorker, workers)
	err := runBlocks(ctx, len(tasks), workers, size, total, spec.Progress, func(w, b int) {
		if ws[w] == nil {
			ws[w] = s.newWorker()
		}
		pw := ws[w]
		tasks[b].fill(pw.c, pw.left)
		suffix := pw.c[len(tasks[b].prefix):]
		for {
			s.eval(pw.c, pw)
			pw.enumerated++
			if !nextArrangement(suffix) {
				break
			}
		}
	})
	if err != nil {
		return PermutationResult{}, err
	}
	counts := sumCounts(ws)
	if counts.enumerated != int64(total) {
		panic(fmt.Sprintf("stats: enumerated %d arrangements, expected %d", counts.enumerated, total))
	}
	s.fill(res.P, counts, int64(total), true)
	res.Draws = total
	return res, nil
}

// permColumn is one column coded for permutation: equal values share a code
// (for Spearman under TieFirst every observation has its own code, since
// tied values carry distinct ranks), and the tables give what each code
// contributes to the statistics.
type permColumn struct {
	codes  []int32   // code of each observation
	count  []int     // multiplicity of each code
	kc     []int32   // Kendall code of each code: the dense rank of its value, from 0
	groups []int     // sizes of the groups of equal values
	sp     []float64 // centred rank of each code (Spearman)
	pe     []float64 // centred value of each code (PearsonR)
	spOK   bool      // the ranks are not constant
	peOK   bool      // the values are finite and not constant
	sumSp2 float64   // Σ over observations of the squared centred rank
	sumPe2 float64   // Σ over observations of the squared centred value
}

func newPermColumn(v []float64, rule TieRule, fine, needSp, needPe bool) permColumn {
	n := len(v)
	p := make([]valueIndex, n)
	for i, a := range v {
		if math.IsNaN(a) {
			panic(fmt.Sprintf("stats: permutation test: NaN at index %d", i))
		}
		p[i] = valueIndex{v: a, i: i}
	}
	slices.SortFunc(p, compareValueIndex) // ties in order of appearance, as TieFirst ranks them
	c := permColumn{codes: make([]int32, n)}
	dense := int32(-1)
	for k := range p {
		newValue := k == 0 || p[k].v != p[k-1].v
		if newValue {
			dense++
			c.groups = append(c.groups, 0)
		}
		c.groups[dense]++
		if newValue || fine {
			c.count = append(c.count, 0)
			c.kc = append(c.kc, dense)
		}
		code := int32(len(c.count) - 1)
		c.count[code]++
		c.codes[p[k].i] = code
	}
	if needSp && n > 0 {
		r := Rank(v, rule)
		c.spOK = n >= 2 && !isConstant(r)
		c.sp, c.sumSp2 = centredTable(r, c.codes, len(c.count))
	}
	if needPe && n > 0 {
		c.peOK = n >= 2 && !isConstant(v)
		for _, a := range v {
			if math.IsInf(a, 0) {
				c.peOK = false
			}
		}
		if c.peOK {
			c.pe, c.sumPe2 = centredTable(rescaled(v), c.codes, len(c.count))
		}
	}
	return c
}

// centredTable returns v − mean(v) by code (every observation of a code has
// the same value) and Σ(vᵢ − mean)² over observations.
func centredTable(v []float64, codes []int32, k int) ([]float64, float64) {
	m := mean(v)
	t := make([]float64, k)
	var ss float64
	for i, code := range codes {
		d := v[i] - m
		t[code] = d
		ss += float64(d * d)
	}
	return t, ss
}

// permSetup holds everything an arrangement does not change. The fixed
// column's observations are sorted by value (its tie groups end at
// groupEnd); the permuted column is a sequence of codes aligned with them,
// init being the observed arrangement.
type permSetup struct {
	measures []Measure
	defined  []bool
	alt      Alternative

	fixedSp, fixedPe []float64 // fixed column, per position
	groupEnd         []int32   // ends of the fixed column's tie groups
	permSp, permPe   []float64 // permuted column, per code
	permKc           []int32
	permDistinct     int     // distinct values of the permuted column
	permCount        []int   // multiplicity of each code of the permuted column
	init             []int32 // the observed arrangement
	orders           float64 // distinct arrangements of the permuted column

	doSp, doPe, doS, doG bool
	sp0, spTol           float64
	pe0, peTol           float64
	s0, d0               int64 // observed S and n_c + n_d
}

func newPermSetup(x, y []float64, spec PermutationSpec, enumerate bool) *permSetup {
	mustMatch(x, y)
	mustKnow(spec.Alt)
	var needSp, needPe bool
	for _, m := range spec.Measures {
		switch m {
		case Spearman:
			needSp = true
		case PearsonR:
			needPe = true
		case KendallA, KendallB, KendallC, SomersDYX, SomersDXY, Gamma:
		default:
			panic(fmt.Sprintf("stats: unknown measure %v", m))
		}
	}
	fine := needSp && spec.Rule == TieFirst
	n := len(x)
	cx := newPermColumn(x, spec.Rule, fine, needSp, needPe)
	cy := newPermColumn(y, spec.Rule, fine, needSp, needPe)

	s := &permSetup{measures: spec.Measures, alt: spec.Alt, defined: make([]bool, len(spec.Measures))}
	pairs := pairsIn(n)
	var tiedX, tiedY int64
	for _, t := range cx.groups {
		tiedX += pairsIn(t)
	}
	for _, t := range cy.groups {
		tiedY += pairsIn(t)
	}
	dx, dy := len(cx.groups), len(cy.groups)
	for i, m := range spec.Measures {
		var ok bool
		switch m {
		case Spearman:
			ok = cx.spOK && cy.spOK
		case PearsonR:
			ok = cx.peOK && cy.peOK
		case KendallA:
			ok = n >= 2
		case KendallB:
			ok = pairs-tiedX > 0 && pairs-tiedY > 0
		case KendallC, Gamma:
			ok = n >= 2 && dx >= 2 && dy >= 2 // then some pair is untied in both
		case SomersDYX:
			ok = pairs-tiedX > 0
		case SomersDXY:
			ok = pairs-tiedY > 0
		}
		s.defined[i] = ok
		switch {
		case !ok:
		case m == Spearman:
			s.doSp = true
		case m == PearsonR:
			s.doPe = true
		case m == Gamma:
			s.doG = true
		default:
			s.doS = true
		}
	}

	// The column with fewer distinct orders is the one rearranged when
	// enumerating; Monte Carlo always rearranges y.
	fixed, perm := cx, cy
	ox, oy := multisetOrders(cx.count), multisetOrders(cy.count)
	s.orders = oy
	if enumerate && ox < oy {
		fixed, perm = cy, cx
		s.orders = ox
	}

	// Sort the fixed column's observations by value (a counting sort on the
	// dense codes) and align the permuted codes with them.
	start := make([]int, len(fixed.groups)+1)
	for i, t := range fixed.groups {
		start[i+1] = start[i] + t
	}
	s.groupEnd = make([]int32, len(fixed.groups))
	for i := range fixed.groups {
		s.groupEnd[i] = int32(start[i+1])
	}
	order := make([]int, n)
	for i, code := range fixed.codes {
		g := fixed.kc[code]
		order[start[g]] = i
		start[g]++
	}
	s.init = make([]int32, n)
	for j, i := range order {
		s.init[j] = perm.codes[i]
	}
	if s.doSp {
		s.fixedSp = gather(fixed.sp, fixed.codes, order)
		s.permSp = perm.sp
		s.sp0 = dotCodes(s.fixedSp, s.permSp, s.init)
		s.spTol = permRelTol * math.Sqrt(fixed.sumSp2) * math.Sqrt(perm.sumSp2)
	}
	if s.doPe {
		s.fixedPe = gather(fixed.pe, fixed.codes, order)
		s.permPe = perm.pe
		s.pe0 = dotCodes(s.fixedPe, s.permPe, s.init)
		s.peTol = permRelTol * math.Sqrt(fixed.sumPe2) * math.Sqrt(perm.sumPe2)
	}
	s.permKc = perm.kc
	s.permDistinct = len(perm.groups)
	s.permCount = perm.count
	if s.doS || s.doG {
		w := s.newWorker()
		nc, nd := w.countPairs(s.groupEnd, s.permKc, s.init)
		s.s0, s.d0 = nc-nd, nc+nd
	}
	return s
}

// gather returns, for each position j, the table entry of observation
// order[j].
func gather(table []float64, codes []int32, order []int) []float64 {
	out := make([]float64, len(order))
	for j, i := range order {
		out[j] = table[codes[i]]
	}
	return out
}

func (s *permSetup) any() bool { return s.doSp || s.doPe || s.doS || s.doG }

// permCounts accumulates, per worker, the arrangements at least as extreme
// as the observed one.
type permCounts struct {
	sp, pe, s, g int64
	enumerated   int64
}

// permWorker is one goroutine's scratch: the arrangement, the generator,
// the Fenwick tree for Kendall's counts, and its counts.
type permWorker struct {
	c    []int32
	left []int // codes not yet placed (enumeration)
	rng  blockRNG
	tree []int32
	cnt  []int32
	permCounts
}

func (s *permSetup) newWorker() *permWorker {
	return &permWorker{
		c:    make([]int32, len(s.init)),
		left: make([]int, len(s.permCount)),
		tree: make([]int32, s.permDistinct+1),
		cnt:  make([]int32, s.permDistinct),
	}
}

func sumCounts(ws []*permWorker) permCounts {
	var t permCounts
	for _, w := range ws {
		if w == nil {
			continue
		}
		t.sp += w.sp
		t.pe += w.pe
		t.s += w.s
		t.g += w.g
		t.enumerated += w.enumerated
	}
	return t
}

// eval adds the arrangement c to the worker's counts. It does not allocate.
func (s *permSetup) eval(c []int32, w *permWorker) {
	if s.doSp && s.extremeFloat(dotCodes(s.fixedSp, s.permSp, c), s.sp0, s.spTol) {
		w.sp++
	}
	if s.doPe && s.extremeFloat(dotCodes(s.fixedPe, s.permPe, c), s.pe0, s.peTol) {
		w.pe++
	}
	if s.doS || s.doG {
		nc, nd := w.countPairs(s.groupEnd, s.permKc, c)
		if s.doS && s.extremeS(nc-nd) {
			w.s++
		}
		if s.doG && s.extremeGamma(nc-nd, nc+nd) {
			w.g++
		}
	}
}

// dotCodes returns Σ a_i · table[c_i], summed in index order. The explicit
// conversion keeps the compiler from fusing the multiply and add, so every
// platform rounds the same way.
func dotCodes(a, table []float64, c []int32) float64 {
	var s float64
	for i, code := range c {
		s += float64(a[i] * table[code])
	}
	return s
}

func (s *permSetup) extremeFloat(t, t0, tol float64) bool {
	switch s.alt {
	case Greater:
		return t >= t0-tol
	case Less:
		return t <= t0+tol
	}
	return math.Abs(t) >= math.Abs(t0)-tol
}

func (s *permSetup) extremeS(v int64) bool {
	switch s.alt {
	case Greater:
		return v >= s.s0
	case Less:
		return v <= s.s0
	}
	return abs64(v) >= abs64(s.s0)
}

// extremeGamma compares γ = v/d with the observed γ₀ = s0/d0 exactly, by
// cross-multiplication (d, d0 > 0).
func (s *permSetup) extremeGamma(v, d int64) bool {
	switch s.alt {
	case Greater:
		return cmpProducts(v, s.d0, s.s0, d) >= 0
	case Less:
		return cmpProducts(v, s.d0, s.s0, d) <= 0
	}
	return cmpProducts(abs64(v), s.d0, abs64(s.s0), d) >= 0
}

func abs64(v int64) int64 {
	if v < 0 {
		return -v
	}
	return v
}

// cmpProducts returns the sign of a·b − c·d, computed exactly in 128 bits.
func cmpProducts(a, b, c, d int64) int {
	h1, l1 := mul128(a, b)
	h2, l2 := mul128(c, d)
	switch {
	case h1 < h2:
		return -1
	case h1 > h2:
		return 1
	case l1 < l2:
		return -1
	case l1 > l2:
		return 1
	}
	return 0
}

// mul128 returns the signed 128-bit product a·b as a high word (signed) and
// a low word: the unsigned product of the two's-complement words, less b·2⁶⁴
// when a < 0 and a·2⁶⁴ when b < 0.
func mul128(a, b int64) (hi int64, lo uint64) {
	h, l := bits.Mul64(uint64(a), uint64(b))
	if a < 0 {
		h -= uint64(b)
	}
	if b < 0 {
		h -= uint64(a)
	}
	return int64(h), l
}

// countPairs returns the concordant and discordant pairs of the fixed
// column (sorted, tie groups ending at groupEnd) against the permuted codes
// c, whose Kendall codes are kc[c[i]]. It walks the fixed column's tie
// groups in order; each observation is compared, through a Fenwick tree of
// the Kendall codes seen in earlier groups, with every observation of a
// smaller fixed value: those with a smaller code are concordant, those with
// a larger one discordant, equal codes are tied in y. Pairs within a group
// are tied in x. It runs in O(n log k) for k distinct codes and does not
// allocate.
//
// Reference: P. M. Fenwick (1994), A new data structure for cumulative
// frequency tables, Software: Practice and Experience 24(3), 327–336.
func (w *permWorker) countPairs(groupEnd, kc, c []int32) (nc, nd int64) {
	tree, cnt := w.tree, w.cnt
	clear(tree)
	clear(cnt)
	var seen int64
	start := int32(0)
	for _, end := range groupEnd {
		for i := start; i < end; i++ {
			v := kc[c[i]]
			var less int64
			for j := v; j > 0; j &= j - 1 {
				less += int64(tree[j])
			}
			nc += less
			nd += seen - less - int64(cnt[v])
		}
		for i := start; i < end; i++ {
			v := kc[c[i]]
			cnt[v]++
			for j := int(v) + 1; j < len(tree); j += j & -j {
				tree[j]++
			}
		}
		seen += int64(end - start)
		start = end
	}
	return nc, nd
}

// fill writes the p-value of each measure: b/total when exact, else
// (b + 1)/(total + 1); NaN for undefined measures.
func (s *permSetup) fill(p []float64, c permCounts, total int64, exact bool) {
	for i, m := range s.measures {
		if !s.defined[i] {
			p[i] = math.NaN()
			continue
		}
		var b int64
		switch m {
		case Spearman:
			b = c.sp
		case PearsonR:
			b = c.pe
		case Gamma:
			b = c.g
		default:
			b = c.s
		}
		if exact {
			p[i] = float64(b) / float64(total)
		} else {
			p[i] = float64(b+1) / float64(total+1)
		}
	}
}

// prefixTask is one share of the enumeration: the arrangements that start
// with prefix.
type prefixTask struct {
	prefix []int32
	count  []int // multiplicities of all codes (shared)
	orders int   // arrangements of the rest
}

// prefixTasks splits the enumeration by the codes at the first two
// positions (one task when n < 3), in lexicographic order.
func (s *permSetup) prefixTasks() []prefixTask {
	n := len(s.init)
	left := slices.Clone(s.permCount)
	rest := func() int {
		var sizes []int
		for _, t := range left {
			if t > 0 {
				sizes = append(sizes, t)
			}
		}
		return int(multisetOrders(sizes))
	}
	if n < 3 {
		return []prefixTask{{count: s.permCount, orders: rest()}}
	}
	var tasks []prefixTask
	for a := range left {
		if left[a] == 0 {
			continue
		}
		left[a]--
		for b := range left {
			if left[b] == 0 {
				continue
			}
			left[b]--
			tasks = append(tasks, prefixTask{prefix: []int32{int32(a), int32(b)}, count: s.permCount, orders: rest()})
			left[b]++
		}
		left[a]++
	}
	return tasks
}

// fill writes the task's first arrangement into c: the prefix, then the
// remaining codes in ascending order. left is scratch of len(t.count).
func (t prefixTask) fill(c []int32, left []int) {
	copy(left, t.count)
	copy(c, t.prefix)
	for _, code := range t.prefix {
		left[code]--
	}
	k := len(t.prefix)
	for code, m := range left {
		for range m {
			c[k] = int32(code)
			k++
		}
	}
}

// nextArrangement rearranges c into the next arrangement of its multiset in
// lexicographic order and reports whether there was one (Knuth's Algorithm
// L): find the last i with c[i] < c[i+1], swap c[i] with the last element
// greater than it, and reverse the tail after i. Equal codes are never
// swapped with each other, so every distinct arrangement appears once.
func nextArrangement(c []int32) bool {
	i := len(c) - 2
	for i >= 0 && c[i] >= c[i+1] {
		i--
	}
	if i < 0 {
		return false
	}
	j := len(c) - 1
	for c[j] <= c[i] {
		j--
	}
	c[i], c[j] = c[j], c[i]
	slices.Reverse(c[i+1:])
	return true
}
