package stats

import (
	"context"
	"crypto/sha256"
	"errors"
	"math"
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
