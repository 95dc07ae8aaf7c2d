package stats

import (
	"cmp"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
	"unsafe"

	"concordat/engine/bigmem"
)

// radixScratch is the scratch of one radix sort: order-preserving keys
// (floatKey) and positions, twice, as the passes alternate between the two
// copies. After sort, keys(), idx() hold the sorted keys and positions and
// the other copies are free for the caller's use until the scratch is put
// back. Separate key and position slices (24 bytes a value) rather than
// 16-byte (key, position) records (32 bytes a value) cost ~13% more CPU
// time at n = 10⁷ but a quarter less memory, which matters more: on this
// machine memory touched for the first time measured ~5 ms of CPU per MB
// (2.2 s for 400 MB), far more than the sort itself.
type radixScratch struct {
	k   [2][]uint64
	i   [2][]int32
	cur int // the copy holding the sorted result
}

func (s *radixScratch) keys() []uint64    { return s.k[s.cur] }
func (s *radixScratch) idx() []int32      { return s.i[s.cur] }
func (s *radixScratch) spareIdx() []int32 { return s.i[1-s.cur] }

// floatKey maps v to an unsigned integer with the same order: for positive
// values (sign bit clear) it sets the sign bit, for negative ones it flips
// every bit, so larger magnitudes of negative numbers come first. v + 0 turns
// −0 into +0 (IEEE 754, rounding to nearest) and leaves every other value
// as it is, so −0 and +0 get one key and tie, as == says. ±Inf map to the
// extreme keys. NaN must not reach here: its key would sort above +Inf or
// below −Inf. The branch-free form measured 3× faster in the histogram pass
// than a branch on the sign, whose outcome is random for centred data.
func floatKey(v float64) uint64 {
	b := math.Float64bits(v + 0)
	return b ^ (uint64(int64(b)>>63) | 1<<63)
}

// radixPool keeps radix scratch between calls (*radixScratch), so that
// ranking many columns of the same length allocates and faults in its
// buffers once; the pool lets them go at garbage collection. Scratch for
// long inputs is kept in bigScratch instead.
var radixPool sync.Pool

// poolMinLen is the length from which radix scratch goes through the pool:
// that of the radix path. Measured with Rank at n = 300 and 1000, pooling
// made it 1.5–3× faster than allocating fresh scratch each call. Shorter
// inputs take the comparison sort and allocate their few hundred bytes of
// scratch, which keeps the allocation count of short kernels the same from
// call to call (under the race detector the pool drops items at random, and
// tests of allocation-free loops count allocations).
const poolMinLen = radixMinLen + 1

// bigScratch keeps the scratch of long sorts (bigScratchMin values or more)
// until ReleaseScratch: at 10⁷ values it is 240 MB, and a sync.Pool may miss
// it (an item put from one processor is not always found from another),
// which makes the next column fault in 240 MB more. At most bigScratchKeep
// are kept, the largest.
var bigScratch struct {
	sync.Mutex
	free []*radixScratch
}

const (
	bigScratchMin  = parallelMin
	bigScratchKeep = 2
)

// ReleaseScratch lets go of the sort scratch kept for long inputs; the
// engine calls it when a run has computed its results.
func ReleaseScratch() {
	bigScratch.Lock()
	bigScratch.free = nil
	bigScratch.Unlock()
}

// getRadixScratch returns scratch for n values, kept from an earlier call
// or new.
func getRadixScratch(n int) *radixScratch {
	if n < poolMinLen {
		return newRadixScratch(n)
	}
	var s *radixScratch
	if n >= bigScratchMin {
		s = takeBigScratch(n)
	} else if p, ok := radixPool.Get().(*radixScratch); ok && cap(p.i[0]) >= n {
		s = p
	}
	if s == nil {
		return newRadixScratch(n)
	}
	for c := range 2 {
		s.i[c] = s.i[c][:n]
		if cap(s.k[c]) < n { // given away by spareAsFloats
			s.k[c] = bigmem.Make[uint64](n, n)
		}
		s.k[c] = s.k[c][:n]
	}
	return s
}

// takeBigScratch removes and returns the smallest kept scratch that holds n
// values, or nil.
func takeBigScratch(n int) *radixScratch {
	bigScratch.Lock()
	defer bigScratch.Unlock()
	best := -1
	for j, s := range bigScratch.free {
		if c := cap(s.i[0]); c >= n && (best < 0 || c < cap(bigScratch.free[best].i[0])) {
			best = j
		}
	}
	if best < 0 {
		return nil
	}
	s := bigScratch.free[best]
	bigScratch.free = slices.Delete(bigScratch.free, best, best+1)
	return s
}

// spareAsFloats hands the key copy that does not hold the sorted keys to
// the caller as n float64s (their bits are the old keys) and drops it from
// the scratch, which allocates a new one when next used. RankTies writes the
// ranks there: at 10⁷ values that is 80 MB the process does not fault in
// twice.
//
// Scratch taken from the pool for fewer values than it holds keeps its
// copy, and the caller gets new memory: handing a 2000-value ranking an
// 80 MB buffer would make the next long sort allocate it again.
func (s *radixScratch) spareAsFloats() []float64 {
	k := s.k[1-s.cur]
	if len(k) == 0 || cap(k) > len(k)+len(k)/8 {
		return make([]float64, len(k))
	}
	s.k[1-s.cur] = nil
	// uint64 and float64 have the same size and alignment and hold no
	// pointers, so the memory may be read as either.
	return unsafe.Slice((*float64)(unsafe.Pointer(unsafe.SliceData(k))), len(k))
}

// newRadixScratch allocates scratch for n values.
func newRadixScratch(n int) *radixScratch {
	s := new(radixScratch)
	for c := range 2 {
		s.k[c], s.i[c] = bigmem.Make[uint64](n, n), bigmem.Make[int32](n, n)
	}
	return s
}

// putRadixScratch keeps scratch for later calls.
func putRadixScratch(s *radixScratch) {
	switch c := cap(s.i[0]); {
	case c >= bigScratchMin:
		bigScratch.Lock()
		bigScratch.free = append(bigScratch.free, s)
		if len(bigScratch.free) > bigScratchKeep {
			small := 0
			for j, f := range bigScratch.free {
				if cap(f.i[0]) < cap(bigScratch.free[small].i[0]) {
					small = j
				}
			}
			bigScratch.free = slices.Delete(bigScratch.free, small, small+1)
		}
		bigScratch.Unlock()
	case c >= poolMinLen:
		radixPool.Put(s)
	}
}

// checkArgsortLen panics when n does not fit the int32 positions of the
// radix sort.
func checkArgsortLen(n int, who string) {
	if n > math.MaxInt32 {
		panic(fmt.Sprintf("stats: %s: %d values, more than 2³¹−1", who, n))
	}
}

// sort sorts the keys of x (floatKey) with their positions by key, equal
// keys in order of position (a stable sort), into s (len(x) values).
//
// It is a least-significant-digit radix sort with 8-bit digits: one pass
// builds the histograms of all eight digits, then each digit is a stable
// counting-sort pass, skipped when that digit is the same in every key
// (integer-valued or coarsely rounded data often need 2 of the 8 passes).
// It runs in O(n) time for the fixed key width: at most 9 reads of x or the
// keys. 8-bit digits measured fastest at n = 10⁷ (continuous data, CPU
// time: 8 passes of 8 bits 0.30 s, 6 of 11 bits 0.55 s, 4 of 16 bits 0.77 s,
// whose 65 536 buckets thrash the caches and TLB); slices.Sort of a copy of
// the values alone takes several times longer (BenchmarkArgsort).
//
// It panics, naming who, if x contains NaN or has 2³¹ or more values.
func (s *radixScratch) sort(x []float64, who string) {
	n := len(x)
	checkArgsortLen(n, who)
	s.cur = 0
	if n == 0 {
		return
	}
	if n <= radixMinLen {
		s.sortSmall(x, who)
		return
	}
	if parallel(n) {
		s.sortParallel(x, who)
		return
	}
	s.sortSerial(x, who)
}

// sortSerial is sort on one goroutine, for x longer than radixMinLen.
func (s *radixScratch) sortSerial(x []float64, who string) {
	n := len(x)
	var hist [8][256]uint32
	histograms(x, [2]int{0, n}, &hist, who)
	first := floatKey(x[0])
	passes := 0
	for d := range 8 {
		shift := uint(8 * d)
		h := &hist[d]
		if h[uint8(first>>shift)] == uint32(n) {
			continue // this digit is the same in every key
		}
		var sum uint32
		for j, c := range h {
			h[j] = sum
			sum += c
		}
		// Pass p writes copy p%2; the first reads x itself.
		dk, di := s.k[passes%2][:n], s.i[passes%2][:n]
		if passes == 0 {
			for i, v := range x {
				k := floatKey(v)
				j := uint8(k >> shift)
				p := h[j]
				h[j] = p + 1
				dk[p] = k
				di[p] = int32(i)
			}
		} else {
			sk, si := s.k[1-passes%2][:n], s.i[1-passes%2][:n]
			for m, k := range sk {
				j := uint8(k >> shift)
				p := h[j]
				h[j] = p + 1
				dk[p] = k
				di[p] = si[m]
			}
		}
		s.cur = passes % 2
		passes++
	}
	if passes == 0 { // every key is equal: the input order is sorted
		k, i := s.k[0][:n], s.i[0][:n]
		for m := range k {
			k[m], i[m] = first, int32(m)
		}
	}
}

// sortParallel is sort on two goroutines, for long x: each takes half of
// the values in every pass. A pass first counts its digit in each half of
// its input (the first pass uses the histograms of x's halves, made in the
// same read that checks for NaN), so that the first half's values of each
// digit go before the second half's: the sort stays stable and its result
// is the serial one, bit for bit. Ranking two columns one after the other
// this way, rather than side by side with a serial sort each, takes about
// the same time and half the scratch memory, which on the test machine is
// what costs most (see radixScratch).
func (s *radixScratch) sortParallel(x []float64, who string) {
	n := len(x)
	mid := n / 2
	halves := [2][2]int{{0, mid}, {mid, n}}
	var hist [2][8][256]uint32
	both(true, func() { histograms(x, halves[0], &hist[0], who) }, func() { histograms(x, halves[1], &hist[1], who) })
	first := floatKey(x[0])
	passes := 0
	var count [2][256]uint32
	for d := range 8 {
		shift := uint(8 * d)
		if hist[0][d][uint8(first>>shift)]+hist[1][d][uint8(first>>shift)] == uint32(n) {
			continue // this digit is the same in every key
		}
		dk, di := s.k[passes%2][:n], s.i[passes%2][:n]
		sk, si := s.k[1-passes%2][:n], s.i[1-passes%2][:n]
		if passes == 0 {
			count[0], count[1] = hist[0][d], hist[1][d]
		} else {
			both(true, func() { countDigit(sk[:mid], shift, &count[0]) }, func() { countDigit(sk[mid:], shift, &count[1]) })
		}
		// Starting positions: every value of a smaller digit first, then
		// within a digit the first half's values before the second's.
		var sum uint32
		for j := range 256 {
			c0, c1 := count[0][j], count[1][j]
			count[0][j], count[1][j] = sum, sum+c0
			sum += c0 + c1
		}
		scatter := func(w int) {
			lo, hi := halves[w][0], halves[w][1]
			h := &count[w]
			if passes == 0 {
				for i := lo; i < hi; i++ {
					k := floatKey(x[i])
					j := uint8(k >> shift)
					p := h[j]
					h[j] = p + 1
					dk[p] = k
					di[p] = int32(i)
				}
				return
			}
			for m := lo; m < hi; m++ {
				k := sk[m]
				j := uint8(k >> shift)
				p := h[j]
				h[j] = p + 1
				dk[p] = k
				di[p] = si[m]
			}
		}
		both(true, func() { scatter(0) }, func() { scatter(1) })
		s.cur = passes % 2
		passes++
	}
	if passes == 0 { // every key is equal: the input order is sorted
		k, i := s.k[0][:n], s.i[0][:n]
		for m := range k {
			k[m], i[m] = first, int32(m)
		}
	}
}

// histograms adds the eight digit histograms of the keys of x[r[0]:r[1]] to
// h, and panics, naming who, at a NaN.
func histograms(x []float64, r [2]int, h *[8][256]uint32, who string) {
	for i := r[0]; i < r[1]; i++ {
		v := x[i]
		if v != v {
			panic(fmt.Sprintf("stats: %s: NaN at index %d", who, i))
		}
		k := floatKey(v)
		h[0][uint8(k)]++
		h[1][uint8(k>>8)]++
		h[2][uint8(k>>16)]++
		h[3][uint8(k>>24)]++
		h[4][uint8(k>>32)]++
		h[5][uint8(k>>40)]++
		h[6][uint8(k>>48)]++
		h[7][uint8(k>>56)]++
	}
}

// countDigit sets h to the histogram of the digit at shift of keys.
func countDigit(keys []uint64, shift uint, h *[256]uint32) {
	*h = [256]uint32{}
	for _, k := range keys {
		h[uint8(k>>shift)]++
	}
}

// radixMinLen is the length up to which sort uses a comparison sort: below
// it the radix sort's fixed cost (eight 256-bucket histograms and their
// prefix sums) outweighs its passes. Measured with Rank: at n = 30 the
// comparison sort took 1.0 µs and the radix sort 1.7 µs; at n = 100 both
// ~3.4 µs; at n = 300 14 µs against 7–9 µs.
const radixMinLen = 64

// sortSmall is sort for short x: a comparison sort of positions by (key,
// position), which is the stable order.
func (s *radixScratch) sortSmall(x []float64, who string) {
	n := len(x)
	k, i := s.k[1][:n], s.i[0][:n]
	for m, v := range x {
		if v != v {
			panic(fmt.Sprintf("stats: %s: NaN at index %d", who, m))
		}
		k[m], i[m] = floatKey(v), int32(m)
	}
	slices.SortFunc(i, func(a, b int32) int {
		if c := cmp.Compare(k[a], k[b]); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	sorted := s.k[0][:n]
	for m, j := range i {
		sorted[m] = k[j]
	}
	s.cur = 0
}

// Argsort returns the positions of x's values in ascending order: x[o[0]] ≤
// x[o[1]] ≤ … for o = Argsort(x). The sort is stable (equal values keep
// their order of appearance) and treats −0 and +0 as equal, as == does; ±Inf
// are ordinary extreme values.
//
// It is an LSD radix sort on order-preserving 64-bit patterns of the values
// (8-bit digits, a digit that is constant across all values skipped), in
// O(n) time with 24 bytes of scratch per value, reused between calls.
// Inputs of up to 64 values are sorted by comparison instead. At n = 10⁷
// (BenchmarkArgsort, fastest of 5) it took 0.37 s on continuous values,
// 4.5× faster than slices.Sort of the values alone and 7.7× faster than
// sorting (value, position) pairs; on values rounded to 2 decimals 0.19 s
// (2.8× and 9.9×); on 5-level codes 0.08 s (1.7× and 18×).
//
// It panics if x contains NaN or has 2³¹ or more values (positions are
// int32).
func Argsort(x []float64) []int32 {
	n := len(x)
	s := getRadixScratch(n)
	s.sort(x, "Argsort")
	o := make([]int32, n)
	copy(o, s.idx())
	putRadixScratch(s)
	return o
}

// parallelMin is the length from which the kernels here split work across
// two goroutines. Measured on SpearmanRho's two rankings: concurrent
// ranking gained nothing at n = 2¹⁴ and 5–40% at 2¹⁶ (a shared machine;
// noisy); at 10⁶ and above it nearly halves the time.
const parallelMin = 1 << 16

// parallel reports whether work on n values should be split across
// goroutines.
func parallel(n int) bool {
	return n >= parallelMin && runtime.GOMAXPROCS(0) > 1
}

// both runs f and g, concurrently when conc is true, and returns when both
// have finished. A panic in either is raised again in the caller's
// goroutine, f's first, so that a kernel called with bad input (NaN) panics
// where the caller can see it.
func both(conc bool, f, g func()) {
	if !conc {
		f()
		g()
		return
	}
	var gPanic any
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer func() { gPanic = recover() }()
		g()
	}()
	func() {
		defer func() { <-done }()
		f()
	}()
	if gPanic != nil {
		panic(gPanic)
	}
}
