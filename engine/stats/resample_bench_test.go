package stats

import (
	"context"
	"math/rand/v2"
	"slices"
	"testing"
)

// Resampling benchmarks, one worker, so that figures compare as ratios with
// the baselines in this file:
//
//	go test -run '^$' -bench 'Permutation|Shuffle|Bootstrap|Exact' -benchmem ./engine/stats/
//
// BenchmarkShuffleDotBaseline is the least a Monte Carlo Spearman test can
// do: 10 000 Fisher–Yates shuffles of 1000 values (math/rand/v2's PCG and
// Shuffle) each followed by a dot product. BenchmarkShuffleSortBaseline
// replaces the dot product by a sort, the O(n log n) floor for Kendall's S.
// BenchmarkBootstrapBaseline is a plain loop over 2000 resamples (PCG
// draws, the same statistic as BenchmarkBootstrapPercentile), without
// blocks, streams or quantiles.

const (
	benchPermN     = 1000
	benchPermDraws = 10_000
	benchBootN     = 1000
	benchResamples = 2000
)

func benchPermutation(b *testing.B, m Measure) {
	x, y := benchData(benchPermN)
	spec := PermutationSpec{Measures: []Measure{m}, Rule: TieAverage, Alt: TwoSided, Draws: benchPermDraws,
		Key: NewStreamKey(1, "bench"), Workers: 1}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := PermutationTest(context.Background(), x, y, spec); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkPermutationSpearman(b *testing.B) { benchPermutation(b, Spearman) }
func BenchmarkPermutationKendallB(b *testing.B) { benchPermutation(b, KendallB) }
func BenchmarkPermutationPearson(b *testing.B)  { benchPermutation(b, PearsonR) }
func BenchmarkPermutationGamma(b *testing.B)    { benchPermutation(b, Gamma) }

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
