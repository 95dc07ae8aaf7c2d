package stats

import (
	"fmt"
	"math"
	"math/bits"
	"sync"
)

// The null distribution of Spearman's ρ for n untied pairs: under
// independence all n! orderings of the y ranks against the x ranks are
// equally likely, and ρ = 1 − 6D/(n³ − n) with D = Σ (rank x − rank y)². D is
// always even (Σ dᵢ = 0, so Σ dᵢ² ≡ Σ dᵢ mod 2) and runs from 0 to
// (n³ − n)/3; its distribution is symmetric about (n³ − n)/6, the
// reflection D ↔ (n³ − n)/3 − D taking ρ to −ρ. The functions below work
// with h = D/2 ∈ [0, (n³ − n)/6].

// SpearmanExactMaxN is the largest n for which SpearmanExactP is available.
//
// The exact distribution is computed once per n by a dynamic programme over
// the 2ⁿ sets of ranks (see spearmanCounts), O(n⁴·2ⁿ) integer additions.
// For n = 18 it takes 0.23–0.28 s on one core (go test -bench
// SpearmanNullDistribution with GOMAXPROCS=1 on a shared AMD Turin-class
// virtual machine; up to 0.48 s while the host was busy), 2.2–2.6 times the
// sort of 10⁶ float64s in the same run. Its live memory peaks at 49 MB (two
// layers of the programme; the Go heap grows to about 120 MB), and the
// cached result is 970 uint64 counts. Each further n doubles the number of
// sets and widens their sums: n = 19 takes 0.84 s (3.2 times n = 18) and a
// 280 MB heap, past the budget of well under a second and 200 MB. The counts are exact
// integers throughout (n! < 2⁶⁴ for n ≤ 20).
const SpearmanExactMaxN = 18

// SpearmanEdgeworthMaxN is the largest n for which the engine's automatic
// choice uses SpearmanEdgeworthP; above it, it uses CorrelationT.
//
// Below it the series is clearly the better approximation: at n = 18, the
// largest n with an exact reference, the series is within 0.6% of the exact
// one-sided tail wherever that tail is at least 1e-3 and within 15% down to
// 1e-4, while Student's t is off by up to 26% and 43% on the same ranges
// (its tails are too light). The two approximations approach each other
// like 1/n: over all attainable ρ whose one-sided series tail is at least
// 1e-3, the largest relative difference between CorrelationT and the series
// is 8.6% at n = 50, 4.2% at n = 100, 1.03% at n = 400 and 0.82% at n = 500
// (at n = 500: 0.18% for tails ≥ 1e-2, 1.9% for tails ≥ 1e-4). So above
// n = 500 the choice moves no one-sided p-value of 1e-3 or more by 1%, and
// the t tail needs no validity bound, whereas the series breaks down far
// out in the tail (see SpearmanEdgeworthP; at n = 500 beyond 1e-16).
// TestSpearmanEdgeworthMaxN checks these figures.
const SpearmanEdgeworthMaxN = 500

// SpearmanExactP returns the exact p-value of Spearman's ρ for n untied
// pairs under independence, all n! orderings being equally likely. rho is
// the observed coefficient, computed from untied ranks; it is converted to
// the integer statistic D = Σ d² = (1 − ρ)(n³ − n)/6 by rounding to the
// nearest even integer, which absorbs the rounding error of ρ.
//
// Greater gives P(ρ ≥ rho), Less P(ρ ≤ rho), TwoSided P(|ρ| ≥ |rho|),
// which is twice the smaller one-sided tail because the null distribution
// is symmetric (and 1 when rho is 0). Tails are summed directly from exact
// integer counts and divided by n! once, so every p-value carries full
// relative precision; the smallest is 1/n! one-sided (2/n! two-sided) at
// |rho| = 1. It is never 0.
//
// The distribution for each n is computed on first use (for n = 18 in
// about a quarter of a second, see SpearmanExactMaxN) and cached; the cache
// is safe for concurrent use, and later calls cost about 10 ns.
//
// It returns NaN when rho is NaN or outside [−1, 1] (beyond the rounding to
// the nearest attainable D). It panics when n < 2 or n > SpearmanExactMaxN
// and on an unknown alternative: the caller chooses the method by n.
//
// References: M. G. Kendall (1970), Rank Correlation Methods, 4th ed.
// (Griffin, London), for D, its range, symmetry and exact null
// distribution; the dynamic programme is described at spearmanCounts.
func SpearmanExactP(rho float64, n int, alt Alternative) float64 {
	mustKnow(alt)
	if n < 2 || n > SpearmanExactMaxN {
		panic(fmt.Sprintf("stats: SpearmanExactP needs 2 ≤ n ≤ %d, got n = %d", SpearmanExactMaxN, n))
	}
	hf, ok := spearmanHalfD(rho, n)
	if !ok {
		return math.NaN()
	}
	cum := spearmanNullCum(n)
	h, maxH := int(hf), len(cum)-1
	total := float64(cum[maxH]) // n! ≤ 18! < 2⁵³: exact, as is every count
	switch alt {
	case Greater: // ρ′ ≥ ρ ⇔ h′ ≤ h
		return float64(cum[h]) / total
	case Less: // ρ′ ≤ ρ ⇔ h′ ≥ h ⇔ (by symmetry) h′ ≤ maxH − h
		return float64(cum[maxH-h]) / total
	}
	a := min(h, maxH-h) // the h of |ρ|
	if 2*a >= maxH {
		return 1
	}
	// h′ ≤ a and h′ ≥ maxH − a are disjoint and equally likely.
	return float64(2*cum[a]) / total
}

// spearmanHalfD converts ρ to h = D/2 = (1 − ρ)(n³ − n)/12, rounded to the
// nearest integer, and reports false when ρ is NaN or h falls outside
// [0, (n³ − n)/6].
func spearmanHalfD(rho float64, n int) (float64, bool) {
	nf := float64(n)
	nn := nf * (nf*nf - 1)
	h := math.Round((1 - rho) * nn / 12)
	if !(h >= 0 && h <= nn/6) {
		return 0, false
	}
	return h, true
}

// spearmanNullCache holds, for each n, cum[h] = the number of permutations
// with D ≤ 2h; cum[(n³ − n)/6] = n!.
var spearmanNullCache [SpearmanExactMaxN + 1]struct {
	once sync.Once
	cum  []uint64
}

// spearmanNullCum returns the cached cumulative counts for n, computing
// them on first use.
func spearmanNullCum(n int) []uint64 {
	c := &spearmanNullCache[n]
	c.once.Do(func() {
		cum := spearmanCounts(n)
		for h := 1; h < len(cum); h++ {
			cum[h] += cum[h-1]
		}
		c.cum = cum
	})
	return c.cum
}

// spearmanCounts returns, for 1 ≤ n ≤ 20, the number of permutations p of
// 1..n whose sum of squared rank differences D = Σ (i − p(i))² equals 2h,
// for h = 0..(n³ − n)/6: row n of OEIS A175929. The counts sum to
// n! < 2⁶⁴.
//
// Since D = 2Σi² − 2S with S = Σ i·p(i), it counts permutations by S. The
// ranks are placed at positions 1, 2, …, n in turn; after k positions the
// state is the set A of ranks used, and F_A(s) counts the placements of A
// on positions 1..k with partial sum s. Placing rank b at position k gives
// F_B(s) = Σ_{b ∈ B} F_{B∖{b}}(s − k·b), evaluated layer by layer over the
// 2ⁿ sets. This is the dynamic programme over subsets of M. Held and
// R. M. Karp (1962), A dynamic programming approach to sequencing problems,
// Journal of SIAM 10(1), 196–210, applied to the permanent of the matrix
// (x^(i·j)), whose polynomial coefficients are the counts by S. Only
// additions of non-negative integers occur, so the counts are exact; all
// tail sums are then formed from them without cancellation.
func spearmanCounts(n int) []uint64 {
	if n < 1 || n > 20 {
		panic(fmt.Sprintf("stats: spearmanCounts needs 1 ≤ n ≤ 20, got %d", n))
	}
	l32 := &spearmanLayer[uint32]{off: []int{0}, lo: []int32{0}, size: []int32{1}, rev: []bool{false}, data: []uint32{1}}
	var l64 *spearmanLayer[uint64]
	for k := 1; k <= n; k++ {
		switch {
		case k <= 12: // entries ≤ k! ≤ 12! < 2³²
			l32 = spearmanStep[uint32, uint32](n, k, l32)
		case k == 13:
			l64 = spearmanStep[uint32, uint64](n, k, l32)
			l32 = nil
		default:
			l64 = spearmanStep[uint64, uint64](n, k, l64)
		}
	}
	// The last layer holds one set, 1..n, with S from Σ i(n + 1 − i) up to
	// Σ i²; h = Σi² − S runs the other way.
	counts := make([]uint64, (n*n*n-n)/6+1)
	m := len(counts) - 1
	if l64 != nil {
		for i, v := range l64.data {
			counts[m-i] = v
		}
	} else {
		for i, v := range l32.data {
			counts[m-i] = uint64(v)
		}
	}
	return counts
}

// spearmanLayer holds, for every set A of k ranks, the distribution of the
// partial sum Σ_{j=1..k} j·p(j) over the k! ways of placing the ranks of A
// at positions 1..k. Sets are numbered in colexicographic order (the order
// of their bit masks). Entry i of a set's counts is the number of
// placements whose partial sum is lo + i. Entries are at most k!, so uint32
// holds them for k ≤ 12.
//
// Mirroring the ranks (b → n + 1 − b) maps a set A to A′ and a partial sum
// s to (n + 1)·k(k + 1)/2 − s, so A′'s counts are A's read backwards. Only
// the set of each mirror pair with the smaller mask is stored; the other
// points at it with rev set. This halves both the memory and the work.
type spearmanLayer[T uint32 | uint64] struct {
	off  []int   // start of the set's counts in data (its mirror's if rev)
	lo   []int32 // smallest partial sum of the set
	size []int32 // number of entries: largest − smallest partial sum + 1
	rev  []bool  // the counts are the mirror set's, read backwards
	data []T
}

// spearmanBinom[n][k] is the binomial coefficient C(n, k) for n ≤ 20 (0
// when k > n).
var spearmanBinom = func() (c [21][21]int) {
	for n := range c {
		c[n][0] = 1
		for k := 1; k <= n; k++ {
			c[n][k] = c[n-1][k-1] + c[n-1][k]
		}
	}
	return c
}()

// colexRank returns the position of the set with 1-based ranks el
// (ascending) among the sets of its size in colexicographic order,
// Σ_t C(el[t] − 1, t + 1) (the combinatorial number system; D. E. Knuth,
// The Art of Computer Programming, vol. 4A (2011), §7.2.1.3).
func colexRank(el []int) int {
	r := 0
	for t, e := range el {
		r += spearmanBinom[e-1][t+1]
	}
	return r
}

// spearmanStep builds layer k from layer k − 1 by the pull recursion
//
//	F_B(s) = Σ_{b ∈ B} F_{B∖{b}}(s − k·b),
//
// which places rank b at position k after the other ranks of B took
// positions 1..k − 1.
func spearmanStep[S, D uint32 | uint64](n, k int, prev *spearmanLayer[S]) *spearmanLayer[D] {
	count := spearmanBinom[n][k]
	next := &spearmanLayer[D]{
		off:  make([]int, count),
		lo:   make([]int32, count),
		size: make([]int32, count),
		rev:  make([]bool, count),
	}
	var el, mel [20]int // the ranks of B and of its mirror, ascending, 1-based
	shift := uint(32 - n)
	// First pass: the range of each set's partial sums, and storage for the
	// sets that are not mirrors of a smaller mask. By the rearrangement
	// inequality the smallest sum pairs the largest rank with position 1,
	// the largest pairs ranks and positions in the same order.
	stored, r := 0, 0
	for m := uint32(1)<<k - 1; m < 1<<n; m, r = nextSubset(m), r+1 {
		ranksOf(m, el[:k])
		lo, hi := 0, 0
		for j := 1; j <= k; j++ {
			lo += j * el[k-j]
			hi += j * el[j-1]
		}
		next.lo[r], next.size[r] = int32(lo), int32(hi-lo+1)
		if mir := bits.Reverse32(m) >> shift; mir < m {
			ranksOf(mir, mel[:k])
			next.off[r] = next.off[colexRank(mel[:k])]
			next.rev[r] = true
		} else {
			next.off[r] = stored
			stored += hi - lo + 1
		}
	}
	next.data = make([]D, stored)
	// Second pass: add every predecessor's counts, shifted, into each stored
	// set. Removing el[t] moves the later ranks down one place in the colex
	// sum, hence its prefix and suffix parts below.
	var pre [21]int
	r = 0
	for m := uint32(1)<<k - 1; m < 1<<n; m, r = nextSubset(m), r+1 {
		if next.rev[r] {
			continue
		}
		ranksOf(m, el[:k])
		for t := 0; t < k; t++ {
			pre[t+1] = pre[t] + spearmanBinom[el[t]-1][t+1]
		}
		dst := next.data[next.off[r] : next.off[r]+int(next.size[r])]
		lo := int(next.lo[r])
		suf := 0
		for t := k - 1; t >= 0; t-- {
			q := pre[t] + suf // colex rank of B∖{el[t]}
			suf += spearmanBinom[el[t]-1][t]
			size := int(prev.size[q])
			src := prev.data[prev.off[q] : prev.off[q]+size]
			at := int(prev.lo[q]) + k*el[t] - lo
			d := dst[at : at+size]
			if prev.rev[q] {
				for i, v := range src {
					d[size-1-i] += D(v)
				}
			} else {
				for i, v := range src {
					d[i] += D(v)
				}
			}
		}
	}
	return next
}

// nextSubset returns the next larger bit mask with the same number of set
// bits (Gosper's hack: M. Beeler, R. W. Gosper and R. Schroeppel (1972),
// HAKMEM, MIT AI Memo 239, item 175).
func nextSubset(m uint32) uint32 {
	c := m & -m
	r := m + c
	return (((r ^ m) >> 2) / c) | r
}

// ranksOf writes the 1-based ranks of the set bits of m, ascending, to el.
func ranksOf(m uint32, el []int) {
	for i := range el {
		el[i] = bits.TrailingZeros32(m) + 1
		m &= m - 1
	}
}

// SpearmanEdgeworthP returns the p-value of Spearman's ρ for n untied pairs
// by the Edgeworth series of Best and Roberts (1975) for the upper tail of
// D. rho is converted to D as in SpearmanExactP, and the alternatives mean
// the same: Greater P(ρ ≥ rho), Less P(ρ ≤ rho), TwoSided P(|ρ| ≥ |rho|)
// as twice the smaller tail, capped at 1.
//
// With D standardised by its exact null mean (n³ − n)/6 and variance
// n²(n − 1)(n + 1)²/36, and a continuity correction of 1 (half the step of
// D),
//
//	x = (6(D − 1)/(n³ − n) − 1)·√(n − 1),   y = x²,   b = 1/n,
//	P(D′ ≥ D) ≈ Q(x) + x·e^(−y/2)·Σ_{j=0..5} y^j·(c_j1·b + c_j2·b² + c_j3·b³),
//
// Q being the upper normal tail. The sum is an Edgeworth expansion to
// order n⁻³ (kurtosis, sixth- and eighth-cumulant terms) with its cumulant
// ratios expanded in powers of b and the factor 1/√(2π) folded into the
// twelve published coefficients (table as89). A tail
// P(D′ ≥ D) with x < 0 is computed as 1 − P(D′ ≥ (n³ − n)/3 + 2 − D),
// so lower and upper tails are both summed directly, never as 1 − a small
// number.
//
// Validity. The series is meant for mid n: at n = 18 (the largest exact
// n) it is within 0.6% of the exact tail down to 1e-3 and within 15% down
// to 1e-4 (at n = 10, 4.6% down to 1e-2). Far out in the tail it breaks
// down: at n = 18 it falls below the t approximation (and below half the
// exact tail) at a tail of 3.4e-5, turns negative at 1.5e-5, and then grows
// again, to 3e10 times the exact value at |ρ| = 1; for n from 23 to 25 it
// stops decreasing instead, and at n = 26 it stays above the t tail all the
// way, reaching 4e-8 at |ρ| = 1 against an exact 1/26! = 2.5e-27. So for
// each n the series is used only from x = 0 up to its edge: the last point
// of a grid in x (step 1/64) up to which it is positive and decreasing and,
// from x = 2 on (tails below 2.3%), lies between the t tail T of
// CorrelationT and 2T. (For n ≤ 5 every x is below 2; only the first two
// tests apply.) The edge is found once per n (in under 0.5 ms) and cached.
// The series' value there is about 1.3e-5 for n = 19, 1e-6 to 4e-6 for
// n = 22 to 40, 2.7e-10 for n = 100 and 1e-16 for n = 500. Beyond the edge
// the result is the t tail, capped at the series' value at the edge (so p
// never increases with |ρ|) and floored at 1/n!, the exact probability of
// ρ = 1 (or at the smallest positive float64 where 1/n! underflows,
// n > 170): positive and monotone, but no better than the t approximation,
// which is too small there (at n = 18 the series ends at an exact tail of
// 3.9e-5; just past it the result is 0.49 times the exact tail, and 0.0016
// times it at its worst, ρ = ±0.994).
//
// It returns NaN when n < 3 or rho is NaN or outside [−1, 1], and panics
// on an unknown alternative.
//
// Reference: D. J. Best and D. E. Roberts (1975), Algorithm AS 89: The
// upper tail probabilities of Spearman's rho, Journal of the Royal
// Statistical Society, Series C (Applied Statistics) 24(3), 377–379.
func SpearmanEdgeworthP(rho float64, n int, alt Alternative) float64 {
	mustKnow(alt)
	if n < 3 {
		return math.NaN()
	}
	h, ok := spearmanHalfD(rho, n)
	if !ok {
		return math.NaN()
	}
	nf := float64(n)
	maxH := nf * (nf*nf - 1) / 6
	switch alt {
	case Greater: // D′ ≤ D ⇔ (by symmetry) D′ ≥ maxD − D
		return spearmanEdgeworthUpper(2*(maxH-h), n)
	case Less:
		return spearmanEdgeworthUpper(2*h, n)
	}
	a := math.Min(h, maxH-h)
	if 2*a >= maxH {
		return 1
	}
	return math.Min(1, 2*spearmanEdgeworthUpper(2*(maxH-a), n))
}

// SpearmanEdgeworthReach reports whether SpearmanEdgeworthP(rho, n, ·)
// evaluates the Edgeworth series itself for the tail that |rho| reaches
// (series = true), or lies beyond the series' edge for n and returns the
// capped t tail instead. edgeP is the series' one-sided tail at the edge:
// the exact one-sided tail beyond the edge is smaller than about edgeP, so
// a caller can report "p below about edgeP" (twice that, two-sided) rather
// than pass the t tail off as the series. It returns false, NaN when n < 3
// or rho is NaN or outside [−1, 1].
func SpearmanEdgeworthReach(rho float64, n int) (series bool, edgeP float64) {
	if n < 3 {
		return false, math.NaN()
	}
	h, ok := spearmanHalfD(rho, n)
	if !ok {
		return false, math.NaN()
	}
	nf := float64(n)
	nn := nf * (nf*nf - 1)
	maxH := nn / 6
	a := math.Min(h, maxH-h) // the tail |rho| reaches, as an upper tail of D′
	d := 2 * (maxH - a)
	x := (6*(d-1)/nn - 1) * math.Sqrt(nf-1)
	edge := spearmanEdgeworthEdge(n)
	return x <= edge.x, edge.p
}

// as89 holds the coefficients of the Edgeworth series of Best and Roberts
// (1975), Algorithm AS 89: as89[j][i] multiplies x^(2j+1)·b^(i+1)·e^(−x²/2).
// Transcribed from memory of the published algorithm and confirmed two
// ways in spearman_null_test.go: the series reproduces R's implementation
// of AS 89 to 1e-12, and the two leading coefficients (0.2274 and −0.0758)
// are re-derived from Kendall's exact fourth moment of ρ.
var as89 = [6][3]float64{
	{0.2274, 0.2531, 0.1745},
	{-0.0758, 0.1033, 0.3932},
	{0, -0.0879, -0.0151},
	{0, 0.0072, -0.0831},
	{0, 0, 0.0131},
	{0, 0, -4.6e-4},
}

// spearmanEdgeworthSeries returns the unclamped series for P(D′ ≥ D) at the
// standardised, continuity-corrected x.
func spearmanEdgeworthSeries(x float64, n int) float64 {
	b := 1 / float64(n)
	y := x * x
	poly := 0.0
	for j := len(as89) - 1; j >= 0; j-- {
		c := as89[j]
		poly = poly*y + b*(c[0]+b*(c[1]+b*c[2]))
	}
	return 0.5*math.Erfc(x/math.Sqrt2) + x*poly*math.Exp(-y/2)
}

// spearmanEdgeworthUpper approximates P(D′ ≥ d) for an even d in
// [0, (n³ − n)/3], following the rules of SpearmanEdgeworthP.
func spearmanEdgeworthUpper(d float64, n int) float64 {
	if d <= 0 {
		return 1
	}
	nf := float64(n)
	nn := nf * (nf*nf - 1)
	x := (6*(d-1)/nn - 1) * math.Sqrt(nf-1)
	if x < 0 {
		// P(D′ ≥ d) = 1 − P(D′ ≤ d − 2) = 1 − P(D′ ≥ maxD + 2 − d), whose x is −x.
		return 1 - spearmanEdgeworthUpper(nn/3+2-d, n)
	}
	edge := spearmanEdgeworthEdge(n)
	if x <= edge.x {
		return spearmanEdgeworthSeries(x, n)
	}
	t := CorrelationT(1-6*d/nn, n, Less)
	return math.Max(math.Min(t, edge.p), spearmanExtremeP(n))
}

// spearmanEdge is where the series stops being used for one n: up to x
// (inclusive), with series value p there.
type spearmanEdge struct{ x, p float64 }

// spearmanEdges caches spearmanEdge by n; safe for concurrent use.
var spearmanEdges sync.Map

// spearmanEdgeworthEdge returns the edge of the series for n (see
// SpearmanEdgeworthP), computing it on first use: the last point of the
// grid x = k/64 up to which the series is positive and decreasing and, from
// x = 2 on, within [T, 2T] of the t tail T. It is +Inf when the series
// passes every test up to the largest attainable x, √(n − 1).
func spearmanEdgeworthEdge(n int) spearmanEdge {
	if e, ok := spearmanEdges.Load(n); ok {
		return e.(spearmanEdge)
	}
	const step = 1.0 / 64
	nf := float64(n)
	nn := nf * (nf*nf - 1)
	xmax := math.Sqrt(nf - 1)
	edge := spearmanEdge{x: math.Inf(1)}
	last := spearmanEdge{x: 0, p: 0.5}
	for k := 1; float64(k)*step <= xmax; k++ {
		x := float64(k) * step
		p := spearmanEdgeworthSeries(x, n)
		ok := p > 0 && p < last.p
		if ok && x >= 2 {
			// ρ at the D whose continuity-corrected x this is.
			t := CorrelationT(-x/math.Sqrt(nf-1)-6/nn, n, Less)
			ok = t <= p && p <= 2*t
		}
		if !ok {
			edge = last
			break
		}
		last = spearmanEdge{x: x, p: p}
	}
	spearmanEdges.Store(n, edge)
	return edge
}

// spearmanExtremeP returns 1/n!, the exact null probability of ρ = 1, or
// the smallest positive float64 when that underflows.
func spearmanExtremeP(n int) float64 {
	lg, _ := math.Lgamma(float64(n) + 1)
	return math.Max(math.Exp(-lg), math.SmallestNonzeroFloat64)
}
