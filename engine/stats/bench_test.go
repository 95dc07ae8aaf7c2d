package stats

import (
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"
)

// Benchmarks at n = 1e5 and 1e6 on continuous data (y correlated with x).
// BenchmarkSortBaseline is a plain slices.Sort of the same x, so the others
// can be quoted as multiples of one sort:
//
//	go test -run '^$' -bench . -benchmem ./engine/stats/

var benchSizes = []int{100_000, 1_000_000}

func benchData(n int) (x, y []float64) {
	rng := rand.New(rand.NewPCG(42, uint64(n)))
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = rng.NormFloat64()
		y[i] = 0.5*x[i] + rng.NormFloat64()
	}
	return x, y
}

func BenchmarkSortBaseline(b *testing.B) {
	for _, n := range benchSizes {
		x, _ := benchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			s := make([]float64, n)
			for b.Loop() {
				copy(s, x)
				slices.Sort(s)
			}
		})
	}
}

func BenchmarkRank(b *testing.B) {
	for _, n := range benchSizes {
		x, _ := benchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				Rank(x, TieAverage)
			}
		})
	}
}

func BenchmarkSpearman(b *testing.B) {
	for _, n := range benchSizes {
		x, y := benchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				SpearmanRho(x, y, TieAverage)
			}
		})
	}
}

func BenchmarkKendallTauB(b *testing.B) {
	for _, n := range benchSizes {
		x, y := benchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				KendallTauB(x, y)
			}
		})
	}
}

func BenchmarkPearson(b *testing.B) {
	for _, n := range benchSizes {
		x, y := benchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				Pearson(x, y)
			}
		})
	}
}
