package stats

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// The comparison-sort kernels that the radix sorts replaced, kept as oracles.
// Test-only code.

// rankCompareSort is Rank as it was before the radix sort: it sorts (value,
// position) pairs with a comparison sort, then walks the tie groups.
func rankCompareSort(x []float64, rule TieRule) []float64 {
	n := len(x)
	p := make([]valueIndex, n)
	for i, v := range x {
		if math.IsNaN(v) {
			panic(fmt.Sprintf("stats: Rank: NaN at index %d", i))
		}
		p[i] = valueIndex{v: v, i: i}
	}
	slices.SortFunc(p, compareValueIndex)
	r := make([]float64, n)
	dense := 0
	for start := 0; start < n; {
		end := start + 1
		for end < n && p[end].v == p[start].v {
			end++
		}
		dense++
		var shared float64
		switch rule {
		case TieAverage:
			shared = float64(start+1+end) / 2
		case TieMin:
			shared = float64(start + 1)
		case TieMax:
			shared = float64(end)
		case TieDense:
			shared = float64(dense)
		case TieFirst:
			for k := start; k < end; k++ {
				r[p[k].i] = float64(k + 1)
			}
			start = end
			continue
		}
		for k := start; k < end; k++ {
			r[p[k].i] = shared
		}
		start = end
	}
	return r
}

// tieShareOracle is TieShare as it was: slices.Sort of a copy (NaN sorts
// first and equals nothing).
func tieShareOracle(x []float64) float64 {
	n := len(x)
	if n < 2 {
		return 0
	}
	s := slices.Clone(x)
	slices.Sort(s)
	tied := 0
	for start := 0; start < n; {
		end := start + 1
		for end < n && s[end] == s[start] {
			end++
		}
		if end-start > 1 {
			tied += end - start
		}
		start = end
	}
	return float64(tied) / float64(n)
}

// add is TieGroups' accumulation as the comparison-sort CountPairs did it,
// singletons included.
func (g *TieGroups) add(size int) {
	g.Distinct++
	t := float64(size)
	g.SumT1 += t * (t - 1)
	g.SumT2 += t * (t - 1) * (t - 2)
	g.SumT25 += t * (t - 1) * (2*t + 5)
}

// countPairsOracle is CountPairs as it was before the radix sorts: a
// comparison sort of (x, y) pairs, tie groups of x and (x, y) from it, and the
// discordant pairs as the inversions of the y sequence by a merge sort of
// float64 values, which also gives the tie groups of y.
func countPairsOracle(x, y []float64) PairCounts {
	n := len(x)
	c := PairCounts{N: n}
	if n == 0 {
		return c
	}
	type obs struct{ x, y float64 }
	p := make([]obs, n)
	for i := range x {
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
		for s := start; s < end; {
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
	ys, c.Discordant = sortCountingInversionsFloat(ys, make([]float64, n))
	for start := 0; start < n; {
		end := start + 1
		for end < n && ys[end] == ys[start] {
			end++
		}
		c.TiesY.add(end - start)
		c.TiedY += pairsIn(end - start)
		start = end
	}
	c.Concordant = c.Pairs() - c.TiedX - (c.TiedY - c.TiedXY) - c.Discordant
	return c
}

// sortCountingInversionsFloat is the float64 merge sort with inversion count
// that the comparison-sort CountPairs used (branching merge).
func sortCountingInversionsFloat(a, buf []float64) ([]float64, int64) {
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
					inv += int64(mid - i)
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

var negZero = math.Copysign(0, -1)

// radixSample returns n values drawn from kind (fixed by the caller's rng):
// heavily tied values with ±Inf, −0 and +0 mixed in, rounded values, or
// continuous ones.
func radixSample(rng *rand.Rand, n int, kind int) []float64 {
	x := make([]float64, n)
	levels := 1 + rng.IntN(12)
	for i := range x {
		switch kind % 5 {
		case 0: // a few levels, both signs, zeros of both signs, infinities
			switch rng.IntN(10) {
			case 0:
				x[i] = math.Inf(1)
			case 1:
				x[i] = math.Inf(-1)
			case 2:
				x[i] = negZero
			case 3:
				x[i] = 0
			default:
				x[i] = float64(rng.IntN(levels)-levels/2) / 4
			}
		case 1: // rounded to 2 decimals
			x[i] = math.Round(rng.NormFloat64()*100) / 100
		case 2: // continuous, no ties
			x[i] = rng.NormFloat64()
		case 3: // zero-inflated: a large group of −0 and +0, the rest continuous
			if rng.IntN(2) == 0 {
				x[i] = []float64{0, negZero}[rng.IntN(2)]
			} else {
				x[i] = rng.ExpFloat64() * 1e300 // large magnitudes
			}
		case 4: // tiny and subnormal magnitudes of both signs
			x[i] = float64(rng.IntN(7)-3) * 5e-324 * float64(1+rng.IntN(3))
		}
	}
	return x
}

// TestFloatKeyOrder checks that floatKey orders special values as < does
// and maps −0 and +0 to one key.
func TestFloatKeyOrder(t *testing.T) {
	vals := []float64{math.Inf(-1), -math.MaxFloat64, -1e300, -2, -1, -math.SmallestNonzeroFloat64,
		0, math.SmallestNonzeroFloat64, 2.2250738585072014e-308, 1, 1.0000000000000002, 2, math.MaxFloat64, math.Inf(1)}
	for i := 1; i < len(vals); i++ {
		if floatKey(vals[i-1]) >= floatKey(vals[i]) {
			t.Errorf("floatKey(%v) = %#x ≥ floatKey(%v) = %#x", vals[i-1], floatKey(vals[i-1]), vals[i], floatKey(vals[i]))
		}
	}
	if floatKey(negZero) != floatKey(0) {
		t.Errorf("floatKey(−0) = %#x, floatKey(+0) = %#x; want equal", floatKey(negZero), floatKey(0))
	}
}

// TestArgsortStable compares Argsort with a stable comparison sort of
// positions on random tied samples (fixed seed), sizes across the 1024
// pool threshold and beyond several digit passes.
func TestArgsortStable(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 4))
	for trial := range 400 {
		n := rng.IntN(300)
		if trial%20 == 0 {
			n = 5000 + rng.IntN(5000)
		}
		x := radixSample(rng, n, trial)
		want := make([]int32, n)
		for i := range want {
			want[i] = int32(i)
		}
		slices.SortStableFunc(want, func(a, b int32) int {
			switch {
			case x[a] < x[b]:
				return -1
			case x[a] > x[b]:
				return 1
			}
			return 0
		})
		if got := Argsort(x); !slices.Equal(got, want) {
			t.Fatalf("trial %d (n = %d, kind %d): Argsort differs from a stable sort", trial, n, trial%5)
		}
	}
	if got := Argsort(nil); len(got) != 0 {
		t.Errorf("Argsort(nil) = %v, want empty", got)
	}
	// Every key equal: no digit pass runs, the input order is the answer.
	if got := Argsort([]float64{3, 3, 3}); !slices.Equal(got, []int32{0, 1, 2}) {
		t.Errorf("Argsort(3, 3, 3) = %v, want [0 1 2]", got)
	}
	mustPanic(t, "NaN", func() { Argsort([]float64{1, math.NaN()}) })
}

// TestRankTiesOracle compares RankTies with the comparison-sort ranking bit
// for bit, under all five rules, on random heavily tied samples with ±Inf,
// −0 and +0 (fixed seed), and its tie groups with the map-based oracle and
// with CountPairs' groups.
func TestRankTiesOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 5))
	rules := []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst}
	for trial := range 600 {
		n := rng.IntN(200)
		if trial%50 == 0 {
			n = 3000 + rng.IntN(3000)
		}
		x := radixSample(rng, n, trial)
		for _, rule := range rules {
			rk := RankTies(x, rule)
			want := rankCompareSort(x, rule)
			for i := range want {
				if math.Float64bits(rk.Ranks[i]) != math.Float64bits(want[i]) {
					t.Fatalf("trial %d, %v: rank[%d] = %v, want %v (x[%d] = %v)", trial, rule, i, rk.Ranks[i], want[i], i, x[i])
				}
			}
			if got := Rank(x, rule); !slices.Equal(got, want) {
				t.Fatalf("trial %d, %v: Rank differs from the oracle", trial, rule)
			}
			// Tie groups: the map-based oracle (exact small sums) and
			// CountPairs' groups of x (the same walk order).
			if g := oracleTieGroups(x); n > 0 && rk.Ties != g {
				t.Fatalf("trial %d: Ties = %+v, want %+v", trial, rk.Ties, g)
			}
			if n > 0 {
				if c := countPairsOracle(x, x); rk.Ties != c.TiesX {
					t.Fatalf("trial %d: Ties = %+v, comparison-sort CountPairs has %+v", trial, rk.Ties, c.TiesX)
				}
			}
			if n >= 2 {
				if got, want := float64(rk.Tied)/float64(n), tieShareOracle(x); got != want {
					t.Fatalf("trial %d: Tied/n = %v, TieShare oracle %v", trial, got, want)
				}
			}
		}
	}
	mustPanic(t, "NaN", func() { RankTies([]float64{1, math.NaN()}, TieAverage) })
	mustPanic(t, "unknown rule", func() { RankTies([]float64{1}, 0) })
}

// TestRankTiesLargeGroups: group sums beyond 2⁵³, where the order of
// summation matters, agree bit for bit with the comparison-sort CountPairs
// (both sum in ascending order of value).
func TestRankTiesLargeGroups(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	n := 400_000
	x := make([]float64, n)
	for i := range x {
		x[i] = float64(rng.IntN(3)) // three groups of ~133 000: t³ ≈ 2.4e15
	}
	rk := RankTies(x, TieAverage)
	if want := countPairsOracle(x, x).TiesX; rk.Ties != want {
		t.Fatalf("Ties = %+v, want %+v", rk.Ties, want)
	}
}

// TestTieShareOracle compares TieShare with the comparison-sort version,
// NaN included (NaN is never tied).
func TestTieShareOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 6))
	for trial := range 500 {
		x := radixSample(rng, rng.IntN(100), trial)
		for i := range x {
			if rng.IntN(8) == 0 {
				x[i] = math.NaN()
			}
		}
		if got, want := TieShare(x), tieShareOracle(x); got != want {
			t.Fatalf("trial %d: TieShare = %v, want %v (x = %v)", trial, got, want, x)
		}
	}
}

// TestSpearmanBitIdentical: SpearmanRho equals Pearson on the
// comparison-sort ranks bit for bit, also above parallelMin, where the
// columns are ranked concurrently.
func TestSpearmanBitIdentical(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 7))
	for trial := range 60 {
		n := 2 + rng.IntN(300)
		if trial%20 == 0 {
			n = parallelMin + rng.IntN(1000)
		}
		x, y := radixSample(rng, n, trial), radixSample(rng, n, trial/5)
		for i := range x { // keep Pearson defined: no infinities
			if math.IsInf(x[i], 0) {
				x[i] = 7
			}
			if math.IsInf(y[i], 0) {
				y[i] = -7
			}
		}
		for _, rule := range []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst} {
			got := SpearmanRho(x, y, rule)
			want := Pearson(rankCompareSort(x, rule), rankCompareSort(y, rule))
			if math.Float64bits(got) != math.Float64bits(want) && !(math.IsNaN(got) && math.IsNaN(want)) {
				t.Fatalf("trial %d (n = %d), %v: SpearmanRho = %.17g, want %.17g", trial, n, rule, got, want)
			}
		}
	}
	// A NaN in either column panics in the caller, also when the columns
	// are ranked concurrently.
	n := parallelMin
	x, y := make([]float64, n), make([]float64, n)
	y[n-1] = math.NaN()
	mustPanic(t, "NaN in y, concurrent", func() { SpearmanRho(x, y, TieAverage) })
	mustPanic(t, "NaN in x, concurrent", func() { SpearmanRho(y, x, TieAverage) })
	mustPanic(t, "NaN in both, concurrent", func() { SpearmanRho(y, y, TieAverage) })
	mustPanic(t, "unknown rule", func() { SpearmanRho(x, x, 0) })
}

// TestCountPairsRadixOracle compares CountPairs with the comparison-sort
// CountPairs field by field on random samples (fixed seed): heavy ties in
// one, both or neither column, ±Inf and signed zeros, sizes on both sides of
// fenwickMaxCodes and parallelMin, so that both counting paths and the
// concurrent ones run.
func TestCountPairsRadixOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 8))
	for trial := range 400 {
		n := rng.IntN(400)
		switch trial % 40 {
		case 0:
			n = parallelMin + rng.IntN(5000)
		case 1, 2:
			n = 10_000 + rng.IntN(10_000)
		}
		x := radixSample(rng, n, trial)
		y := radixSample(rng, n, trial/5+trial%3)
		if trial%7 == 0 { // y follows x: long concordant runs
			for i := range y {
				y[i] = x[i] + float64(rng.IntN(2))
			}
		}
		want := countPairsOracle(x, y)
		if got := CountPairs(x, y); got != want {
			t.Fatalf("trial %d (n = %d):\n got %+v\nwant %+v", trial, n, got, want)
		}
		// Each counting path on the same data.
		if got := countPairs(x, y, 0); got != want {
			t.Fatalf("trial %d (n = %d), merge sort:\n got %+v\nwant %+v", trial, n, got, want)
		}
		if got := countPairs(x, y, math.MaxInt); got != want {
			t.Fatalf("trial %d (n = %d), Fenwick tree:\n got %+v\nwant %+v", trial, n, got, want)
		}
	}
	// Many distinct values but heavy ties (merge path with large groups to
	// sort), and few distinct values at large n (Fenwick path, concurrent
	// sorts).
	for _, levels := range []int{2 * fenwickMaxCodes, fenwickMaxCodes, fenwickMaxCodes + 1, 5} {
		n := 3 * parallelMin
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(levels))
			y[i] = float64(rng.IntN(levels)) - x[i]/3
		}
		if got, want := CountPairs(x, y), countPairsOracle(x, y); got != want {
			t.Fatalf("levels %d:\n got %+v\nwant %+v", levels, got, want)
		}
	}
	n := parallelMin
	x, y := make([]float64, n), make([]float64, n)
	y[n/2] = math.NaN()
	mustPanic(t, "NaN in y, concurrent", func() { CountPairs(x, y) })
	mustPanic(t, "NaN in x, concurrent", func() { CountPairs(y, x) })
}

// TestCountInversions compares the merge-sort count, sequential and split
// across two goroutines, with direct counting (fixed seed).
func TestCountInversions(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 9))
	for trial := range 300 {
		n := rng.IntN(300)
		k := 1 + rng.IntN(50)
		a := make([]int32, n)
		for i := range a {
			a[i] = int32(rng.IntN(k))
		}
		var want int64
		for i := range a {
			for j := i + 1; j < n; j++ {
				if a[i] > a[j] {
					want++
				}
			}
		}
		sorted, got := sortCountingInversions(a, make([]int32, n))
		if got != want || !slices.IsSorted(sorted) {
			t.Fatalf("trial %d: sortCountingInversions = %d (sorted %v), want %d", trial, got, slices.IsSorted(sorted), want)
		}
	}
	// The concurrent split against the sequential count.
	n := 3*parallelMin + 17
	a := make([]int32, n)
	for i := range a {
		a[i] = int32(rng.IntN(n / 4))
	}
	b := slices.Clone(a)
	_, want := sortCountingInversions(b, make([]int32, n))
	if got := countInversions(a, make([]int32, n)); got != want {
		t.Fatalf("countInversions = %d, sequential %d", got, want)
	}
}

// TestSortParallelMatchesSerial runs the two-goroutine radix sort and the
// serial one on the same samples (every kind of radixSample, odd and even
// lengths past parallelMin, a constant column) and wants the same keys and
// positions; whichever path sort takes, the result is the same.
func TestSortParallelMatchesSerial(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 9))
	for trial := range 12 {
		n := parallelMin + rng.IntN(3*parallelMin)
		x := radixSample(rng, n, trial)
		if trial == 11 {
			for i := range x {
				x[i] = 2.5
			}
		}
		serial, par := newRadixScratch(n), newRadixScratch(n)
		serial.sortSerial(x, "test")
		par.sortParallel(x, "test")
		if !slices.Equal(serial.keys(), par.keys()) || !slices.Equal(serial.idx(), par.idx()) {
			t.Fatalf("trial %d (n = %d, kind %d): the parallel sort differs from the serial one", trial, n, trial%5)
		}
	}
	x := make([]float64, 2*parallelMin)
	x[len(x)-3] = math.NaN()
	mustPanic(t, "NaN at index 131069", func() { newRadixScratch(len(x)).sortParallel(x, "test") })
}

// TestRankSortedSplit compares rankSorted, which ranks two halves from
// rankSplitMin values on, with one pass over all the sorted values
// (rankRange from 0), under every rule: the same ranks bit for bit, the same
// counts, and tie sums that agree (exactly here, as every group's terms are
// small integers).
func TestRankSortedSplit(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 10))
	for trial := range 10 {
		n := rankSplitMin + rng.IntN(2*rankSplitMin)
		x := radixSample(rng, n, trial)
		if trial == 9 { // one giant tie group over the middle: no cut
			for i := n / 4; i < 3*n/4; i++ {
				x[i] = 1
			}
		}
		s := newRadixScratch(n)
		s.sort(x, "test")
		for _, rule := range []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst} {
			got, want := make([]float64, n), make([]float64, n)
			gg, gt := rankSorted(s.keys(), s.idx(), rule, got)
			wg, wt := rankRange(s.keys(), s.idx(), 0, n, 0, rule, want)
			if !slices.Equal(got, want) || gt != wt || gg != wg {
				t.Fatalf("trial %d (n = %d, kind %d), rule %v: split ranking differs: groups %+v, tied %d; whole %+v, tied %d",
					trial, n, trial%5, rule, gg, gt, wg, wt)
			}
		}
	}
}
