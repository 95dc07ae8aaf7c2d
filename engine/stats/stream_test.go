package stats

import (
	"context"
	"crypto/sha256"
	"errors"
	"math"
	"math/big"
	"math/bits"
	"math/rand/v2"
	"slices"
	"sync/atomic"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// TestNewStreamKeyEncoding rebuilds the documented encoding by hand: the
// domain tag, the seed as 8 bytes big-endian, each label as 8 bytes of
// length and its bytes.
func TestNewStreamKeyEncoding(t *testing.T) {
	msg := []byte("concordat/stream/v1\x00")
	msg = append(msg, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xff, 0xfe) // seed −2
	msg = append(msg, 0, 0, 0, 0, 0, 0, 0, 3)
	msg = append(msg, "ab\x00"...)
	msg = append(msg, 0, 0, 0, 0, 0, 0, 0, 0) // an empty label
	if got, want := NewStreamKey(-2, "ab\x00", ""), StreamKey(sha256.Sum256(msg)); got != want {
		t.Errorf("NewStreamKey = %x, want %x", got, want)
	}
}

// TestNewStreamKeyUnambiguous: label boundaries, label count and the seed
// all change the key.
func TestNewStreamKeyUnambiguous(t *testing.T) {
	keys := []StreamKey{
		NewStreamKey(1),
		NewStreamKey(1, ""),
		NewStreamKey(1, "", ""),
		NewStreamKey(1, "ab", "c"),
		NewStreamKey(1, "a", "bc"),
		NewStreamKey(1, "abc"),
		NewStreamKey(2, "abc"),
		NewStreamKey(1, "a\x00", "bc"),
	}
	for i := range keys {
		for j := i + 1; j < len(keys); j++ {
			if keys[i] == keys[j] {
				t.Errorf("keys %d and %d collide", i, j)
			}
		}
	}
	if NewStreamKey(7, "x", "y") != NewStreamKey(7, "x", "y") {
		t.Errorf("the same labels give different keys")
	}
}

// TestBlockMatchesWorkers: Block(b) is the generator the workers reseed to,
// so its Uint64 stream is the workers' stream.
func TestBlockMatchesWorkers(t *testing.T) {
	key := NewStreamKey(3, "block")
	for _, b := range []uint64{0, 1, 1 << 40} {
		r := key.Block(b)
		var w blockRNG
		w.reset(key, b)
		for i := range 300 { // more than one ChaCha8 buffer
			if got, want := w.src.Uint64(), r.Uint64(); got != want {
				t.Fatalf("block %d draw %d: worker %d, Block %d", b, i, got, want)
			}
		}
	}
	if key.Block(0).Uint64() == key.Block(1).Uint64() {
		t.Errorf("blocks 0 and 1 start alike")
	}
}

// TestBelow: below(n) stays in [0, n) and is uniform: for n = 3, 7, 10 and
// 2⁶³ + 1 (where rejection is frequent, nearly half the draws) the counts
// over k cells pass a chi-square test at the 1e-6 level (fixed stream, so
// the test is deterministic).
func TestBelow(t *testing.T) {
	var r blockRNG
	r.reset(NewStreamKey(5, "below"), 0)
	if r.below(1) != 0 {
		t.Errorf("below(1) != 0")
	}
	for _, n := range []uint64{3, 7, 10, 1<<63 + 1} {
		cells := uint64(10)
		if n < cells {
			cells = n
		}
		counts := make([]float64, cells)
		const draws = 60000
		for range draws {
			v := r.below(n)
			if v >= n {
				t.Fatalf("below(%d) = %d", n, v)
			}
			// cell of v: for n = 2⁶³+1 the top bits, else v itself
			c := v
			if n > cells {
				c = uint64(float64(v) / float64(n) * float64(cells))
			}
			counts[c]++
		}
		var chi2 float64
		e := float64(draws) / float64(cells)
		for _, o := range counts {
			chi2 += (o - e) * (o - e) / e
		}
		if crit := chiSquareCritical(float64(cells - 1)); chi2 > crit {
			t.Errorf("below(%d): chi-square %.1f over %d cells exceeds %.1f", n, chi2, cells, crit)
		}
	}
}

// TestShuffleUniform: all 24 orders of 4 items appear about equally often
// (chi-square test with 23 df at the 1e-6 level).
func TestShuffleUniform(t *testing.T) {
	var r blockRNG
	r.reset(NewStreamKey(6, "shuffle"), 0)
	counts := map[[4]int32]float64{}
	const draws = 48000
	for range draws {
		c := []int32{0, 1, 2, 3}
		r.shuffle(c)
		counts[[4]int32(c)]++
	}
	if len(counts) != 24 {
		t.Fatalf("%d distinct orders, want 24", len(counts))
	}
	var chi2 float64
	e := float64(draws) / 24
	for _, o := range counts {
		chi2 += (o - e) * (o - e) / e
	}
	if crit := chiSquareCritical(23); chi2 > crit {
		t.Errorf("chi-square %.1f exceeds %.1f", chi2, crit)
	}
}

// chiSquareCritical returns the upper 1e-6 quantile of the chi-square
// distribution with df degrees of freedom (gonum). R 4.2.2's
// qchisq(1 - 1e-6, c(2, 6, 9, 23)) gives 27.63102 38.25834 44.81094 70.54956;
// TestChiSquareCritical checks the gonum values against these.
func chiSquareCritical(df float64) float64 {
	return distuv.ChiSquared{K: df}.Quantile(1 - 1e-6)
}

func TestChiSquareCritical(t *testing.T) {
	for df, want := range map[float64]float64{2: 27.63102, 6: 38.25834, 9: 44.81094, 23: 70.54956} {
		if got := chiSquareCritical(df); math.Abs(got-want) > 1e-5 {
			t.Errorf("df %v: %.6f, R gives %.5f", df, got, want)
		}
	}
}

// TestRunBlocks: every block runs once whatever the worker count; the last
// progress report is the total.
func TestRunBlocks(t *testing.T) {
	for _, workers := range []int{0, 1, 3, 50} {
		seen := make([]atomic.Int32, 37)
		var last atomic.Int64
		err := runBlocks(context.Background(), 37, workers, func(b int) int { return b + 1 }, 37*38/2,
			func(done, total int) {
				for {
					old := last.Load()
					if int64(done) <= old || last.CompareAndSwap(old, int64(done)) {
						break
					}
				}
			},
			func(w, b int) { seen[b].Add(1) })
		if err != nil {
			t.Fatal(err)
		}
		for b := range seen {
			if seen[b].Load() != 1 {
				t.Errorf("workers %d: block %d ran %d times", workers, b, seen[b].Load())
			}
		}
		if last.Load() != 37*38/2 {
			t.Errorf("workers %d: last progress %d", workers, last.Load())
		}
	}
	// One worker, cancelled in block 0: blocks 1 and 2 are skipped.
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var ran atomic.Int32
	err := runBlocks(ctx, 3, 1, func(int) int { return 1 }, 3, nil, func(w, b int) {
		ran.Add(1)
		cancel()
	})
	if !errors.Is(err, context.Canceled) || ran.Load() != 1 {
		t.Errorf("err = %v after %d blocks, want context.Canceled after 1", err, ran.Load())
	}
	// Cancelled after the last block: nothing was skipped, no error.
	ctx, cancel = context.WithCancel(context.Background())
	err = runBlocks(ctx, 3, 1, func(int) int { return 1 }, 3, nil, func(w, b int) {
		if b == 2 {
			cancel()
		}
	})
	if err != nil {
		t.Errorf("cancelled after the last block: err = %v", err)
	}
}

// TestStreamsIndependentOfScheduling: a stream's draws, gathered by blocks
// run on many workers in any order, equal the draws of one worker.
func TestStreamsIndependentOfScheduling(t *testing.T) {
	key := NewStreamKey(11, "schedule")
	one := func(workers int) []uint64 {
		out := make([]uint64, 40*5)
		runBlocks(context.Background(), 40, workers, func(int) int { return 5 }, 200, nil, func(w, b int) {
			var r blockRNG
			r.reset(key, uint64(b))
			for j := range 5 {
				out[b*5+j] = r.below(math.MaxUint32)
			}
		})
		return out
	}
	want := one(1)
	for _, w := range []int{2, 4, 7} {
		if got := one(w); !slices.Equal(got, want) {
			t.Errorf("%d workers: draws differ", w)
		}
	}
}

// TestBatchDigits checks the batched draw against math/big: the digits
// batchDigits writes are those of ⌊u·P/2⁶⁴⌋ in the mixed radix of the
// ranges, its result is u·P mod 2⁶⁴, and batchThreshold is 2⁶⁴ mod P;
// for every bit length the batch size keeps P below 2^batchBits.
func TestBatchDigits(t *testing.T) {
	two64 := new(big.Int).Lsh(big.NewInt(1), 64)
	for b := 1; b <= 32; b++ {
		largest := new(big.Int).Exp(big.NewInt(1<<b-1), big.NewInt(int64(batchSize[b])), nil)
		if largest.BitLen() > batchBits {
			t.Errorf("%d-bit ranges: (2^%d − 1)^%d has %d bits", b, b, batchSize[b], largest.BitLen())
		}
	}
	rng := rand.New(rand.NewPCG(7, 8))
	ms := []uint64{2, 3, 4, 10, 63, 64, 65, 511, 512, 1000, 1 << 16, 1<<20 + 3, 1<<28 - 1, 1<<31 - 1}
	for _, m := range ms {
		k := min(int(m)-1, int(batchSize[bits.Len64(m)]))
		p := big.NewInt(1)
		for d := range k {
			p.Mul(p, new(big.Int).SetUint64(m-uint64(d)))
		}
		if got, want := batchThreshold(m, k), new(big.Int).Mod(two64, p).Uint64(); got != want {
			t.Errorf("batchThreshold(%d, %d) = %d, want %d", m, k, got, want)
		}
		us := []uint64{0, 1, math.MaxUint64, 1 << 63}
		for range 200 {
			us = append(us, rng.Uint64())
		}
		dst := make([]int32, k)
		for _, u := range us {
			lo := batchDigits(u, m, dst)
			prod := new(big.Int).Mul(new(big.Int).SetUint64(u), p)
			q, r := new(big.Int).QuoRem(prod, two64, new(big.Int))
			x := new(big.Int)
			for d := k - 1; d >= 0; d-- { // dst[k−1] is the most significant digit, radix m
				radix := m - uint64(k-1-d)
				if uint64(dst[d]) >= radix {
					t.Fatalf("m %d, u %d: digit %d = %d ≥ %d", m, u, d, dst[d], radix)
				}
				x.Mul(x, new(big.Int).SetUint64(radix)).Add(x, big.NewInt(int64(dst[d])))
			}
			if x.Cmp(q) != 0 || lo != r.Uint64() {
				t.Fatalf("m %d, k %d, u %d: digits give %v, lo %d; want %v, %v", m, k, u, x, lo, q, r)
			}
		}
	}
}

// TestSwapIndices: every partner js[i] lies in [0, i] and js[0] is left
// alone; the shuffles the partners make are uniform: all orders of n = 4
// and n = 6 items (one word per shuffle) and, at n = 70 (several words of
// different batch sizes per shuffle), the final positions of the first and
// the last item pass chi-square tests at the 1e-6 level (fixed stream).
func TestSwapIndices(t *testing.T) {
	var r blockRNG
	r.reset(NewStreamKey(9, "swap indices"), 0)
	js := make([]int32, 2000)
	for range 50 {
		js[0] = -7
		r.swapIndices(js)
		for i, j := range js[1:] {
			if j < 0 || int(j) > i+1 {
				t.Fatalf("js[%d] = %d", i+1, j)
			}
		}
		if js[0] != -7 {
			t.Fatalf("js[0] changed")
		}
	}
	chi2 := func(counts map[int]float64, cells int, draws float64) float64 {
		var c float64
		e := draws / float64(cells)
		for k := range cells {
			o := counts[k]
			c += (o - e) * (o - e) / e
		}
		return c
	}
	for _, n := range []int{4, 6} {
		orders := 1
		for k := 2; k <= n; k++ {
			orders *= k
		}
		draws := 200 * orders
		counts := map[int]float64{}
		v := make([]int32, n)
		js := make([]int32, n)
		for range draws {
			for i := range v {
				v[i] = int32(i)
			}
			r.swapIndices(js)
			applySwaps(v, js)
			code := 0 // the order's index in the factorial number system
			for i := range v {
				code = code*(n-i) + int(v[i])
				for k := i + 1; k < n; k++ {
					if v[k] > v[i] {
						v[k]--
					}
				}
			}
			counts[code]++
		}
		if len(counts) != orders {
			t.Fatalf("n = %d: %d distinct orders, want %d", n, len(counts), orders)
		}
		if c, crit := chi2(counts, orders, float64(draws)), chiSquareCritical(float64(orders-1)); c > crit {
			t.Errorf("n = %d: chi-square %.1f over %d orders exceeds %.1f", n, c, orders, crit)
		}
	}
	const n, draws = 70, 70000
	first, last := map[int]float64{}, map[int]float64{}
	v := make([]int32, n)
	js = js[:n]
	for range draws {
		for i := range v {
			v[i] = int32(i)
		}
		r.swapIndices(js)
		applySwaps(v, js)
		for pos, item := range v {
			switch item {
			case 0:
				first[pos]++
			case n - 1:
				last[pos]++
			}
		}
	}
	crit := chiSquareCritical(n - 1)
	for name, counts := range map[string]map[int]float64{"first": first, "last": last} {
		if c := chi2(counts, n, draws); c > crit {
			t.Errorf("n = %d: position of the %s item: chi-square %.1f exceeds %.1f", n, name, c, crit)
		}
	}
}
