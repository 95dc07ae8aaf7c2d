package stats

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"
)

// Resampling benchmarks, so that figures compare as ratios with the
// baselines in this file:
//
//	go test -run '^$' -bench 'Permutation|Shuffle|SwapIndices|Bootstrap|Exact' -benchmem ./engine/stats/
//
// The permutation benchmarks run with one and with two workers
// (sub-benchmarks workers=1, workers=2); the baselines use one goroutine.
// BenchmarkShuffleDotBaseline is the least a Monte Carlo Spearman test can
// do: 10 000 Fisher–Yates shuffles of 1000 values (math/rand/v2's PCG and
// Shuffle) each followed by a dot product. BenchmarkShuffleSortBaseline
// replaces the dot product by a sort, the O(n log n) floor for Kendall's S.
// BenchmarkBootstrapBaseline is a plain loop over 2000 resamples (PCG
// draws, the same statistic as BenchmarkBootstrapPercentile), without
// blocks, streams or quantiles. BenchmarkSwapIndices and
// BenchmarkShuffleIndices compare the permutation tests' batched draws of
// swap partners with one 64-bit ChaCha8 word per partner (shuffle), over
// the same 10 000 × 1000 partners.

const (
	benchPermN     = 1000
	benchPermDraws = 10_000
	benchBootN     = 1000
	benchResamples = 2000
)

func benchPermutation(b *testing.B, m Measure, data func() (x, y []float64)) {
	x, y := data()
	for _, workers := range []int{1, 2} {
		b.Run("workers="+strconv.Itoa(workers), func(b *testing.B) {
			spec := PermutationSpec{Measures: []Measure{m}, Rule: TieAverage, Alt: TwoSided, Draws: benchPermDraws,
				Key: NewStreamKey(1, "bench"), Workers: workers}
			b.ReportAllocs()
			for b.Loop() {
				if _, err := PermutationTest(context.Background(), x, y, spec); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// benchTiedData returns benchData rounded to a grid: x with about 40
// distinct values, y with about 8.
func benchTiedData(n int) (x, y []float64) {
	x, y = benchData(n)
	for i := range x {
		x[i] = math.Round(x[i] * 8)
		y[i] = math.Round(y[i] * 2)
	}
	return x, y
}

func BenchmarkPermutationSpearman(b *testing.B) { benchPermutation(b, Spearman, untied) }
func BenchmarkPermutationPearson(b *testing.B)  { benchPermutation(b, PearsonR, untied) }
func BenchmarkPermutationKendallB(b *testing.B) { benchPermutation(b, KendallB, untied) }
func BenchmarkPermutationGamma(b *testing.B)    { benchPermutation(b, Gamma, untied) }

// The same with heavy ties in both columns.
func BenchmarkPermutationSpearmanTied(b *testing.B) { benchPermutation(b, Spearman, tied) }
func BenchmarkPermutationKendallBTied(b *testing.B) { benchPermutation(b, KendallB, tied) }

func untied() (x, y []float64) { return benchData(benchPermN) }
func tied() (x, y []float64)   { return benchTiedData(benchPermN) }

func BenchmarkSwapIndices(b *testing.B) {
	var r blockRNG
	r.reset(NewStreamKey(1, "bench"), 0)
	js := make([]int32, benchPermN)
	b.ReportAllocs()
	for b.Loop() {
		for range benchPermDraws {
			r.swapIndices(js)
		}
	}
	benchSink = float64(js[1])
}

func BenchmarkShuffleIndices(b *testing.B) {
	var r blockRNG
	r.reset(NewStreamKey(1, "bench"), 0)
	c := make([]int32, benchPermN)
	b.ReportAllocs()
	for b.Loop() {
		for range benchPermDraws {
			r.shuffle(c)
		}
	}
	benchSink = float64(c[1])
}

var benchSink float64

func BenchmarkShuffleDotBaseline(b *testing.B) {
	x, y := benchData(benchPermN)
	b.ReportAllocs()
	for b.Loop() {
		rng := rand.New(rand.NewPCG(1, 2))
		v := slices.Clone(y)
		var count int
		for range benchPermDraws {
			rng.Shuffle(len(v), func(i, j int) { v[i], v[j] = v[j], v[i] })
			var s float64
			for i := range x {
				s += x[i] * v[i]
			}
			if s > 0 {
				count++
			}
		}
		benchSink = float64(count)
	}
}

func BenchmarkShuffleSortBaseline(b *testing.B) {
	_, y := benchData(benchPermN)
	b.ReportAllocs()
	for b.Loop() {
		rng := rand.New(rand.NewPCG(1, 2))
		v := slices.Clone(y)
		s := make([]float64, len(v))
		for range benchPermDraws {
			rng.Shuffle(len(v), func(i, j int) { v[i], v[j] = v[j], v[i] })
			copy(s, v)
			slices.Sort(s)
		}
		benchSink = s[0]
	}
}

// BenchmarkExactPermutation enumerates MaxEnumeration = 10! arrangements
// (n = 10, no ties) for Spearman and Kendall's τ_b together.
func BenchmarkExactPermutation(b *testing.B) {
	x, y := benchData(10)
	spec := PermutationSpec{Measures: []Measure{Spearman, KendallB}, Rule: TieAverage, Alt: TwoSided, Workers: 1}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ExactPermutationTest(context.Background(), x, y, spec); err != nil {
			b.Fatal(err)
		}
	}
}

func benchBootstrap(b *testing.B, bca bool) {
	x, y := benchData(benchBootN)
	stat := pairedStatistic("spearman", x, y)
	spec := BootstrapSpec{Resamples: benchResamples, Level: 0.95, Alt: TwoSided, BCa: bca, Key: NewStreamKey(1, "bench"), Workers: 1}
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := BootstrapInterval(context.Background(), benchBootN, stat, spec); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBootstrapPercentile(b *testing.B) { benchBootstrap(b, false) }
func BenchmarkBootstrapBCa(b *testing.B)        { benchBootstrap(b, true) }

func BenchmarkBootstrapBaseline(b *testing.B) {
	x, y := benchData(benchBootN)
	f := pairedStatistic("spearman", x, y)()
	idx := make([]int, benchBootN)
	b.ReportAllocs()
	for b.Loop() {
		rng := rand.New(rand.NewPCG(3, 4))
		for range benchResamples {
			for i := range idx {
				idx[i] = rng.IntN(benchBootN)
			}
			benchSink = f(idx)
		}
	}
}
