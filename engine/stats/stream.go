package stats

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"math/bits"
	"math/rand/v2"
	"sync"
	"sync/atomic"
)

// Random draws in this package never depend on scheduling. A StreamKey names
// one independent stream (one test, pair, group and purpose); the stream is
// cut into numbered blocks of a fixed number of draws, and block b always
// draws from its own generator, seeded from (key, b) alone. Workers take
// blocks in any order, and results combine by integer sums or by writing
// into fixed positions, so any worker count gives bit-identical results.
//
// The draws depend only on the ChaCha8 output stream (specified in C2SP
// chacha8rand, fixed by Go's math/rand/v2) and on this file's own integer
// reduction, not on the methods of rand.Rand, whose algorithms Go does not
// promise to keep.

// StreamKey identifies an independent random stream. It is a SHA-256 hash of
// the recipe seed and labels (test, x, y, group, purpose), so a stream never
// depends on the order in which work is scheduled.
type StreamKey [32]byte

// streamDomain separates stream keys from any other SHA-256 use.
const streamDomain = "concordat/stream/v1\x00"

// NewStreamKey returns the key of the stream named by seed and labels. The
// encoding is unambiguous: SHA-256 of a fixed domain tag, the seed as 8 bytes
// big-endian (two's complement), and each label as its byte length (8 bytes
// big-endian) followed by its bytes. So ("ab", "c") and ("a", "bc") name
// different streams, and so do ("a") and ("a", "").
func NewStreamKey(seed int64, labels ...string) StreamKey {
	h := sha256.New()
	h.Write([]byte(streamDomain))
	var buf [8]byte
	binary.BigEndian.PutUint64(buf[:], uint64(seed))
	h.Write(buf[:])
	for _, l := range labels {
		binary.BigEndian.PutUint64(buf[:], uint64(len(l)))
		h.Write(buf[:])
		h.Write([]byte(l))
	}
	var k StreamKey
	h.Sum(k[:0])
	return k
}

// Block returns the generator of block b of the stream: a rand.Rand over
// ChaCha8 seeded with SHA-256(key ‖ b), b as 8 bytes big-endian. The
// permutation tests and the bootstrap draw from exactly this source.
func (k StreamKey) Block(b uint64) *rand.Rand {
	return rand.New(rand.NewChaCha8(k.blockSeed(b)))
}

func (k StreamKey) blockSeed(b uint64) [32]byte {
	var in [40]byte
	copy(in[:], k[:])
	binary.BigEndian.PutUint64(in[32:], b)
	return sha256.Sum256(in[:])
}

// derive returns the key of a sub-stream of k named by label, for draws that
// serve another purpose than the main blocks (the jackknife groups).
func (k StreamKey) derive(label string) StreamKey {
	h := sha256.New()
	h.Write([]byte("concordat/substream/v1\x00"))
	h.Write(k[:])
	h.Write([]byte(label))
	var d StreamKey
	h.Sum(d[:0])
	return d
}

// blockRNG is a worker's generator, reseeded in place at each block so that
// the draws allocate nothing.
type blockRNG struct {
	src rand.ChaCha8
}

func (r *blockRNG) reset(k StreamKey, b uint64) {
	r.src.Seed(k.blockSeed(b))
}

// below returns a uniform integer in [0, n), n > 0, by Lemire's
// multiply-and-reject method, which is exactly uniform and needs a division
// only in the rare rejection case.
//
// Reference: D. Lemire (2019), Fast random integer generation in an
// interval, ACM Transactions on Modeling and Computer Simulation 29(1),
// article 3.
func (r *blockRNG) below(n uint64) uint64 {
	hi, lo := bits.Mul64(r.src.Uint64(), n)
	if lo < n {
		floor := -n % n // 2⁶⁴ mod n
		for lo < floor {
			hi, lo = bits.Mul64(r.src.Uint64(), n)
		}
	}
	return hi
}

// shuffle permutes c uniformly at random by the Fisher–Yates method in
// Durstenfeld's form: for i = n−1 down to 1, swap c[i] with c[j], j uniform
// in [0, i].
//
// Reference: R. Durstenfeld (1964), Algorithm 235: Random permutation,
// Communications of the ACM 7(7), 420.
func (r *blockRNG) shuffle(c []int32) {
	for i := len(c) - 1; i > 0; i-- {
		j := r.below(uint64(i) + 1)
		c[i], c[j] = c[j], c[i]
	}
}

// batchBits bounds the product P of the ranges drawn from one 64-bit word
// by swapIndices: P < 2^batchBits, so the rejection test needs a division
// with probability 2^(batchBits−64) = 1/256 per word. Larger budgets (up
// to 63) read ~15% fewer words but measured no faster.
const batchBits = 56

// batchSize[b] is the number of ranges of b bits drawn from one word,
// ⌊batchBits/b⌋, so that their product stays below 2^batchBits (a table
// lookup rather than a division per word).
var batchSize = func() (t [65]uint8) {
	for b := 1; b <= 64; b++ {
		t[b] = uint8(max(1, batchBits/b))
	}
	return t
}()

// swapIndices fills js[i], for i = len(js)−1 down to 1, with independent
// uniform integers in [0, i]: the swap partners of a Fisher–Yates shuffle of
// len(js) items (js[0] is left as it is). It is the shuffle of shuffle, but
// draws several partners from each 64-bit output of the generator, by the
// batched form of Lemire's method: with ranges b₁ = i+1, b₂ = i, …, b_k and
// P = b₁⋯b_k < 2^batchBits (k as large as that allows), one word u gives the
// digits of ⌊u·P/2⁶⁴⌋ in the mixed radix (b₁, …, b_k) as the k partners
// (see batchDigits), and the word is drawn again when u·P mod 2⁶⁴ falls below
// 2⁶⁴ mod P, which makes ⌊u·P/2⁶⁴⌋, hence the k partners, exactly uniform.
// At n = 1000 it reads about 180 words per shuffle instead of 999: drawing
// the partners (BenchmarkSwapIndices) takes ~0.3 of the time of shuffle
// (BenchmarkShuffleIndices), and with the swaps applied the shuffle is
// ~2.5× faster. It consumes the stream differently from shuffle, which the
// bootstrap's jackknife groups keep using. It does not allocate.
//
// Reference: N. Brackett-Rozinsky and D. Lemire (2024), Batched ranged
// random integer generation, Software: Practice and Experience,
// doi:10.1002/spe.3369 (arXiv:2408.06213); D. Lemire (2019), op. cit.
// (below).
func (r *blockRNG) swapIndices(js []int32) {
	i := len(js) - 1
	for i > 0 {
		m := uint64(i) + 1
		k := min(i, int(batchSize[bits.Len64(m)]))
		dst := js[i+1-k : i+1]
		for {
			lo := batchDigits(r.src.Uint64(), m, dst)
			// 2⁶⁴ mod P < P < 2^batchBits: the exact threshold is needed
			// only below 2^batchBits.
			if lo >= 1<<batchBits || lo >= batchThreshold(m, k) {
				break
			}
		}
		i -= k
	}
}

// batchThreshold returns 2⁶⁴ mod P for P = m(m−1)⋯(m−k+1) < 2⁶⁴.
func batchThreshold(m uint64, k int) uint64 {
	p := m
	for t := 1; t < k; t++ {
		p *= m - uint64(t)
	}
	return -p % p
}

// batchDigits writes the mixed-radix digits of ⌊u·P/2⁶⁴⌋, P = m(m−1)⋯(m−k+1)
// with k = len(dst), into dst from the end: dst[k−1] ∈ [0, m), dst[k−2] ∈
// [0, m−1), …, dst[0] ∈ [0, m−k+1), and returns u·P mod 2⁶⁴. Each step
// multiplies the low word of the previous product by the next range: by
// induction u·b₁⋯b_t = (x₁b₂⋯b_t + … + x_t)·2⁶⁴ + lo_t. P must be < 2⁶⁴.
func batchDigits(u, m uint64, dst []int32) uint64 {
	lo := u
	for t := len(dst) - 1; t >= 0; t-- {
		var hi uint64
		hi, lo = bits.Mul64(lo, m)
		dst[t] = int32(hi)
		m--
	}
	return lo
}

// runBlocks calls work(worker, block) once for every block in [0, blocks),
// on min(workers, blocks) goroutines (at least one) that take the next
// block from a shared counter. Before working on a block a worker checks
// ctx; runBlocks returns ctx.Err() when any block was skipped because ctx
// ended.
// After each block, progress (when not nil) receives the cumulative size of
// the finished blocks, size(b) being the size of block b; calls come from the
// workers and may arrive out of order.
func runBlocks(ctx context.Context, blocks, workers int, size func(b int) int, total int,
	progress func(done, total int), work func(worker, block int)) error {
	workers = max(1, min(workers, blocks))
	var next, done atomic.Int64
	var cancelled atomic.Bool
	run := func(w int) {
		for {
			b := int(next.Add(1) - 1)
			if b >= blocks {
				return
			}
			if ctx.Err() != nil {
				cancelled.Store(true)
				return
			}
			work(w, b)
			d := done.Add(int64(size(b)))
			if progress != nil {
				progress(int(d), total)
			}
		}
	}
	if workers == 1 {
		run(0)
	} else {
		var wg sync.WaitGroup
		for w := range workers {
			wg.Go(func() { run(w) })
		}
		wg.Wait()
	}
	if cancelled.Load() {
		return ctx.Err()
	}
	return nil
}
