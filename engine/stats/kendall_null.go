package stats

import (
	"fmt"
	"math"
	"sync"
	"sync/atomic"
)

// KendallExactMaxN is the largest n for which KendallExactP computes the
// exact null distribution. At n = 1000 the worst case, a statistic near the
// centre, needs the whole lower half of the distribution: about n³/12 ≈
// 8·10⁷ window steps, measured at 0.2 s, 1.5 times a sort of 10⁶ float64
// (BenchmarkKendallExactUncached), building a table of n(n−1)/4 + 1 ≈
// 250 000 float64 (2 MB) with 4 MB of scratch. Time grows as n³ and memory
// as n², so n = 2000 would take about 1.6 s and 8 MB per n. At n = 1000
// the normal approximation (KendallNormal) is already within about 2·10⁻³
// relative of the exact p-value down to two-sided p = 0.01, and the
// Edgeworth series with the fourth cumulant within 10⁻⁵
// (TestKendallExactCentre); only their far tails lose accuracy.
const KendallExactMaxN = 1000

// KendallExactP returns the exact p-value of Kendall's S = n_c − n_d for n
// untied pairs under independence, when all n! orderings of y against x
// are equally likely. Greater returns P(S ≥ s), Less P(S ≤ s), and
// TwoSided P(|S| ≥ |s|) = min(1, 2·P(S ≥ |s|)), the distribution being
// symmetric about 0.
//
// Without ties S = N − 2I, where N = n(n−1)/2 and I is the number of
// inversions of a random permutation, whose counts are the Mahonian
// numbers: Σ_j M(n, j) q^j = Π_{k=1..n} (1 + q + … + q^{k−1}). Every
// p-value is computed as a lower tail P(I ≤ i) with i ≤ N/2, summed
// directly (or as 1 − such a tail when the p-value is at least 1/2), so
// the smallest p-values keep full relative accuracy: the relative error
// is at most about (2n + 4)·2⁻⁵³ (2.2·10⁻¹³ at n = 1000; see
// inversionLowerCDF). A p-value below the smallest normal float64
// (2.2·10⁻³⁰⁸) comes back as a subnormal, correct to within one unit of
// 4.9·10⁻³²⁴. The result is 0 only when the true p-value is below the
// smallest positive float64, 4.9·10⁻³²⁴ (to within that rounding: values
// under half of it round to 0), as for a perfect ranking once n ≥ 178
// (1/177! ≈ 2.9·10⁻³²³ is still a subnormal; 1/1000! ≈ 2.5·10⁻²⁵⁶⁸ is far
// below); callers should then report "p < 5e-324".
//
// The distribution's lower half up to the needed inversion count is built
// once per n by the dynamic programme of inversionLowerCDF, O(n·m) for
// m = min(I, N − I), and cached: later calls with the same n and a tail
// no longer than one already built cost O(1). The cache is safe for
// concurrent use and holds at most kendallCacheFloats float64 (16 MiB).
//
// It panics when n < 2 or n > KendallExactMaxN, when |s| > N, when s and
// N differ in parity (S takes only the values N, N − 2, …, −N), or on an
// unknown alternative.
//
// References: M. G. Kendall (1938), A new measure of rank correlation,
// Biometrika 30(1/2), 81–93 (the exact distribution of S by adding one
// rank at a time); D. E. Knuth (1998), The Art of Computer Programming,
// vol. 3, 2nd ed., §5.1.1 (the generating function of inversions).
func KendallExactP(s int64, n int, alt Alternative) float64 {
	mustKnow(alt)
	if n < 2 || n > KendallExactMaxN {
		panic(fmt.Sprintf("stats: KendallExactP: n = %d outside [2, %d]", n, KendallExactMaxN))
	}
	total := pairsIn(n)
	if s > total || s < -total || (total-s)%2 != 0 {
		panic(fmt.Sprintf("stats: KendallExactP: S = %d impossible for n = %d (|S| ≤ %d, S ≡ %d mod 2)", s, n, total, total%2))
	}
	i := (total - s) / 2 // inversions (discordant pairs)
	switch alt {
	case Greater:
		return inversionsAtMost(n, i, 0)
	case Less: // P(I ≥ i) = P(I ≤ N − i) by symmetry
		return inversionsAtMost(n, total-i, 0)
	}
	return math.Min(1, inversionsAtMost(n, min(i, total-i), 1))
}

// inversionsAtMost returns 2^e · P(I ≤ i) for the inversion count I of a
// random permutation of n, rounded once. A tail of the small side, 2i ≤ N,
// comes straight from the cached table; one of the large side, at least
// 1/2, is 1 − P(I ≤ N − i − 1).
func inversionsAtMost(n int, i int64, e int) float64 {
	total := pairsIn(n)
	if 2*i <= total {
		return math.Ldexp(lowerCDF(n, int(i))[i], e-inversionScale)
	}
	j := total - i - 1
	if j < 0 {
		return math.Ldexp(1, e)
	}
	return math.Ldexp(1-math.Ldexp(lowerCDF(n, int(j))[j], -inversionScale), e)
}

// inversionScale is the binary exponent by which inversionLowerCDF scales
// its probabilities. With values up to 2^512 (probabilities ≤ 1), the
// normal float64 range reaches down to probabilities of 2^−1534, so every
// term that can contribute to a representable p-value (≥ 2^−1074) stays
// normal with a margin of 2^−460.
const inversionScale = 512

// inversionLowerCDF returns c[j] = 2^inversionScale · P(I ≤ j), j = 0..m,
// for the inversion count I of a uniformly random permutation of n; m must
// not exceed ⌊N/2⌋, N = n(n−1)/2.
//
// Method (Kendall 1938): inserting the k-th element into a random
// permutation of k − 1 adds U_k inversions, uniform on 0..k−1 and
// independent, so the probabilities p_k of the inversion count of k
// elements satisfy
//
//	p_k(j) = (1/k) Σ_{t=j−k+1..j} p_{k−1}(t),
//
// a window sum updated as w(j) = w(j−1) + p_{k−1}(j) − p_{k−1}(j−k). Each
// p_k is symmetric about N_k/2 (N_k = k(k−1)/2) and unimodal, being a
// convolution of uniform (log-concave) sequences, so only its lower half
// j ≤ ⌊N_k/2⌋ is computed and p_{k−1}(t) for t > N_{k−1}/2 is read as
// p_{k−1}(N_{k−1} − t). Only j ≤ m is needed at every level, so the cost
// is Σ_k min(m, N_k/2) ≤ n·m steps.
//
// Accuracy. For j ≤ N_k/2 the window centre j − (k+1)/2 lies at least 1
// below the mode N_{k−1}/2 of p_{k−1}, so the term p_{k−1}(j−k) leaving
// the window is the one furthest from the mode, the smallest of the k
// terms of w(j−1): the subtraction removes at most w(j−1)/k and cancels
// nothing. The running sum is kept as hi + lo: each addition is done as
// Dekker's Fast2Sum (larger operand first, which for the subtraction holds
// by the bound just shown), whose rounding error is exact and collected in
// lo. So hi + lo differs from the exact window sum of the stored inputs
// only by the roundings of lo, at most about 8u²(j+1)²·w(j) ≤ 10⁻²⁰·w(j)
// (u = 2⁻⁵³; w is nondecreasing on the lower half, so |lo| ≤ 4u(j+1)w).
// The stored p_k(j) = fl(fl(hi + lo)/k) therefore has relative error at
// most that of its inputs plus 2u, hence 2(k−1)u + O(10⁻²⁰) after k
// levels; the prefix sums are compensated the same way and add about u
// more. Without the compensation the bound would grow like u·j per level,
// up to about 10⁻¹⁰ at n = 1000. Terms below 2^−1534 (scaled: subnormal
// or flushed to 0) carry absolute errors below 2^−1550 in all, negligible
// against any p-value of 2^−1074 or more.
//
// The values at index j do not depend on m (each step reads only smaller
// indices), so tables built to different lengths agree where they overlap.
//
// References: M. G. Kendall (1938), Biometrika 30(1/2), 81–93; Fast2Sum:
// T. J. Dekker (1971), A floating-point technique for extending the
// available precision, Numerische Mathematik 18(3), 224–242; compensated
// summation: A. Neumaier (1974), Rundungsfehleranalyse einiger Verfahren
// zur Summation endlicher Summen, ZAMM 54(1), 39–51.
func inversionLowerCDF(n, m int) []float64 {
	if half := int(pairsIn(n) / 2); m > half || m < 0 {
		panic(fmt.Sprintf("stats: inversionLowerCDF: m = %d outside [0, %d]", m, half))
	}
	prev := make([]float64, 1, m+1)
	prev[0] = math.Ldexp(1, inversionScale) // one element: no inversions
	cur := make([]float64, 0, m+1)
	for k := 2; k <= n; k++ {
		full := (k - 1) * (k - 2) / 2 // N_{k−1}, the largest count of level k−1
		half := full / 2              // last index stored for level k−1, if m allows
		top := min(m, k*(k-1)/4)
		cur = cur[:top+1]
		div := float64(k)
		var hi, lo float64
		for j := 0; j <= top; j++ {
			t := j
			if t > half {
				t = full - t // mirror into the stored lower half
			}
			hi, lo = addFast2Sum(hi, lo, prev[t])
			if j >= k {
				b := prev[j-k] // b ≤ hi/k, so hi is the larger operand
				s := hi - b
				lo += (hi - s) - b
				hi = s
			}
			cur[j] = (hi + lo) / div
		}
		prev, cur = cur, prev
	}
	// In place: prev[j] becomes the sum of prev[0..j].
	var hi, lo float64
	for j, a := range prev {
		hi, lo = addFast2Sum(hi, lo, a)
		prev[j] = hi + lo
	}
	return prev
}

// addFast2Sum adds a ≥ 0 to the running sum hi + lo (hi ≥ 0): hi becomes
// fl(hi + a) and the rounding error, exact by Dekker's Fast2Sum with the
// larger operand first, is added to lo.
func addFast2Sum(hi, lo, a float64) (float64, float64) {
	big, small := hi, a
	if a > hi {
		big, small = a, hi
	}
	s := big + small
	return s, lo + (small - (s - big))
}

// kendallCacheFloats bounds the float64 held by the tables of the
// inversion-count cache: 2^21 values, 16 MiB, room for eight complete
// tables at n = 1000 (each ⌊N/2⌋ + 1 = 249 751 values). Tables in use by
// a running call may outlive their eviction until that call returns. It
// is a variable only so that a test can lower it.
var kendallCacheFloats = 1 << 21

// inversionCache keeps, per n, the longest lower CDF built so far, and
// evicts the least recently used n when the tables exceed
// kendallCacheFloats.
var inversionCache = struct {
	mu     sync.Mutex // guards the fields below and every entry's used and size
	tick   uint64
	floats int
	tables map[int]*inversionEntry
}{tables: map[int]*inversionEntry{}}

type inversionEntry struct {
	grow sync.Mutex                // held while a longer table is built
	cdf  atomic.Pointer[[]float64] // immutable once published
	used uint64                    // last use, in inversionCache.tick
	size int                       // len(*cdf) as counted in inversionCache.floats
}

// lowerCDF returns a table c with c[j] = 2^inversionScale · P(I ≤ j) for
// j = 0..len(c)−1, len(c) > i, from the cache or built and cached. A new
// table covers at least twice the previous one (up to ⌊N/2⌋), so a run of
// growing requests costs at most about twice its final build.
func lowerCDF(n, i int) []float64 {
	c := &inversionCache
	c.mu.Lock()
	e := c.tables[n]
	if e == nil {
		e = &inversionEntry{}
		c.tables[n] = e
	}
	c.tick++
	e.used = c.tick
	c.mu.Unlock()

	if t := e.cdf.Load(); t != nil && len(*t) > i {
		return *t
	}
	e.grow.Lock()
	defer e.grow.Unlock()
	old := 0
	if t := e.cdf.Load(); t != nil {
		if len(*t) > i {
			return *t // built by another caller meanwhile
		}
		old = len(*t)
	}
	m := min(int(pairsIn(n)/2), max(i, 2*old))
	t := inversionLowerCDF(n, m)
	e.cdf.Store(&t)

	c.mu.Lock()
	defer c.mu.Unlock()
	if c.tables[n] == e { // not evicted while building
		c.floats += len(t) - e.size
		e.size = len(t)
	}
	for c.floats > kendallCacheFloats {
		var victim int
		var oldest *inversionEntry
		for k, v := range c.tables {
			if v != e && v.size > 0 && (oldest == nil || v.used < oldest.used) {
				victim, oldest = k, v
			}
		}
		if oldest == nil {
			break // e alone; one table never exceeds the bound
		}
		c.floats -= oldest.size
		delete(c.tables, victim)
	}
	return t
}
