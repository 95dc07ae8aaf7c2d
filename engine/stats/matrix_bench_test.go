//go:build unix

package stats

import (
	"context"
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"syscall"
	"testing"
	"time"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
)

// Correlation-matrix benchmarks at the two shapes of issue 4 (100 000 rows
// × 200 columns and 20 000 × 1000), on normal data rounded to two decimals
// (heavy ties), with GOMAXPROCS workers:
//
//	go test -run '^$' -bench 'Matrix|Gram|RankColumns' -benchtime 1x -count 5 ./engine/stats/
//
// BenchmarkGram compares the Gram kernels on the same standardised columns:
// ours (gramUpper), gonum's blas64.Syrk both ways round (Trans on the n×k
// row-major matrix; NoTrans on the k×n matrix whose rows are the columns)
// and blas64.Gemm (AᵀA, full). BenchmarkMatrixPairwise is the baseline of
// k(k−1)/2 calls of Pearson at a size where that is bearable.
//
// Besides ns/op (wall time), each reports cpu-ns/op, the CPU time of the
// whole process (getrusage) per call, because this machine is shared: when
// other work competes for the cores the wall time says little, and the CPU
// time divided by the cores used is the better estimate of the wall time on
// an idle machine. (Hence the unix build tag.)

type matrixShape struct{ n, k int }

func (s matrixShape) String() string { return strconv.Itoa(s.n) + "x" + strconv.Itoa(s.k) }

var matrixShapes = []matrixShape{{100_000, 200}, {20_000, 1000}}

var matrixBenchCache = map[matrixShape][][]float64{}

// matrixBenchData returns k columns of n standard normal values rounded to
// two decimals, the same for every call with the same shape.
func matrixBenchData(s matrixShape) [][]float64 {
	if cols, ok := matrixBenchCache[s]; ok {
		return cols
	}
	rng := rand.New(rand.NewPCG(7, uint64(s.n)*1_000_003+uint64(s.k)))
	cols := make([][]float64, s.k)
	for j := range cols {
		c := make([]float64, s.n)
		for i := range c {
			c[i] = math.Round(rng.NormFloat64()*100) / 100
		}
		cols[j] = c
	}
	matrixBenchCache[s] = cols
	return cols
}

// standardised returns the columns as unit columns, and their values
// z = (x − x̄)·scale laid out column after column (k×n, row j is column j).
func standardised(cols [][]float64) ([]unitColumn, []float64) {
	n := len(cols[0])
	units := make([]unitColumn, len(cols))
	z := make([]float64, len(cols)*n)
	for j, c := range cols {
		u := newUnitColumn(c)
		units[j] = u
		for i, v := range u.x {
			z[j*n+i] = (v - u.mean) * u.scale
		}
	}
	return units, z
}

// cpuTime is the user and system CPU time of this process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// loopCPU runs f in b.Loop and reports the CPU time per call as cpu-ns/op.
func loopCPU(b *testing.B, f func()) {
	b.ReportAllocs()
	t0 := cpuTime()
	n := 0
	for b.Loop() {
		f()
		n++
	}
	b.ReportMetric(float64(cpuTime()-t0)/float64(n), "cpu-ns/op")
}

func BenchmarkSpearmanMatrix(b *testing.B) {
	for _, s := range matrixShapes {
		cols := matrixBenchData(s)
		b.Run(s.String(), func(b *testing.B) {
			loopCPU(b, func() {
				if _, err := SpearmanMatrix(context.Background(), cols, TieAverage, runtime.GOMAXPROCS(0)); err != nil {
					b.Fatal(err)
				}
			})
		})
	}
}

// BenchmarkRankColumns is the ranking part of SpearmanMatrix alone.
func BenchmarkRankColumns(b *testing.B) {
	for _, s := range matrixShapes {
		cols := matrixBenchData(s)
		b.Run(s.String(), func(b *testing.B) {
			ranks := make([][]float64, len(cols))
			loopCPU(b, func() {
				_ = runBlocks(context.Background(), len(cols), runtime.GOMAXPROCS(0), unitSize, len(cols), nil, func(_, j int) {
					ranks[j] = Rank(cols[j], TieAverage)
				})
			})
		})
	}
}

func BenchmarkCorrelationMatrix(b *testing.B) {
	for _, s := range matrixShapes {
		cols := matrixBenchData(s)
		b.Run(s.String(), func(b *testing.B) {
			loopCPU(b, func() {
				if _, err := CorrelationMatrix(context.Background(), cols, runtime.GOMAXPROCS(0)); err != nil {
					b.Fatal(err)
				}
			})
		})
	}
}

func BenchmarkGram(b *testing.B) {
	for _, s := range matrixShapes {
		units, z := standardised(matrixBenchData(s))
		n, k := s.n, s.k
		b.Run(s.String()+"/ours", func(b *testing.B) {
			loopCPU(b, func() {
				if _, err := gramUpper(context.Background(), units, n, runtime.GOMAXPROCS(0)); err != nil {
					b.Fatal(err)
				}
			})
		})
		b.Run(s.String()+"/dot", func(b *testing.B) {
			loopCPU(b, func() { gramDot(units, n, runtime.GOMAXPROCS(0)) })
		})
		b.Run(s.String()+"/syrk_notrans", func(b *testing.B) {
			// A is k×n: its rows are the columns, contiguous.
			a := blas64.General{Rows: k, Cols: n, Stride: n, Data: z}
			c := blas64.Symmetric{Uplo: blas.Upper, N: k, Stride: k, Data: make([]float64, k*k)}
			loopCPU(b, func() {
				blas64.Syrk(blas.NoTrans, 1, a, 0, c)
			})
		})
		rowMajor := make([]float64, n*k)
		for j := range k {
			for i := range n {
				rowMajor[i*k+j] = z[j*n+i]
			}
		}
		a := blas64.General{Rows: n, Cols: k, Stride: k, Data: rowMajor}
		b.Run(s.String()+"/syrk_trans", func(b *testing.B) {
			c := blas64.Symmetric{Uplo: blas.Upper, N: k, Stride: k, Data: make([]float64, k*k)}
			loopCPU(b, func() {
				blas64.Syrk(blas.Trans, 1, a, 0, c)
			})
		})
		b.Run(s.String()+"/gemm", func(b *testing.B) {
			c := blas64.General{Rows: k, Cols: k, Stride: k, Data: make([]float64, k*k)}
			loopCPU(b, func() {
				blas64.Gemm(blas.Trans, blas.NoTrans, 1, a, a, 0, c)
			})
		})
	}
}

// gramDot is gramUpper with floats.Dot for each element in place of
// Dgemv over a tile's rows, for the comparison in BenchmarkGram.
func gramDot(cols []unitColumn, n, workers int) []float64 {
	m := len(cols)
	g := make([]float64, m*m)
	nb := min(gramRows, n)
	buf := make([]float64, m*nb)
	tb := (m + gramCols - 1) / gramCols
	var tiles [][2]int
	for bi := range tb {
		for bj := bi; bj < tb; bj++ {
			tiles = append(tiles, [2]int{bi, bj})
		}
	}
	ctx := context.Background()
	for r0 := 0; r0 < n; r0 += nb {
		rows := min(nb, n-r0)
		_ = runBlocks(ctx, m, workers, unitSize, m, nil, func(_, c int) {
			u := cols[c]
			z := buf[c*nb : c*nb+rows]
			for t, v := range u.x[r0 : r0+rows] {
				z[t] = (v - u.mean) * u.scale
			}
		})
		_ = runBlocks(ctx, len(tiles), workers, unitSize, len(tiles), nil, func(_, t int) {
			i0, j0 := tiles[t][0]*gramCols, tiles[t][1]*gramCols
			i1, j1 := min(m, i0+gramCols), min(m, j0+gramCols)
			for i := i0; i < i1; i++ {
				zi := buf[i*nb : i*nb+rows]
				for j := max(i, j0); j < j1; j++ {
					g[i*m+j] += floats.Dot(zi, buf[j*nb:j*nb+rows])
				}
			}
		})
	}
	return g
}

// BenchmarkMatrixPairwise compares CorrelationMatrix with k(k−1)/2 calls of
// Pearson on 20 000 rows × 100 columns.
func BenchmarkMatrixPairwise(b *testing.B) {
	s := matrixShape{20_000, 100}
	cols := matrixBenchData(s)
	b.Run(s.String()+"/pairwise", func(b *testing.B) {
		loopCPU(b, func() {
			for i := range cols {
				for j := i + 1; j < len(cols); j++ {
					Pearson(cols[i], cols[j])
				}
			}
		})
	})
	b.Run(s.String()+"/matrix", func(b *testing.B) {
		loopCPU(b, func() {
			if _, err := CorrelationMatrix(context.Background(), cols, 1); err != nil {
				b.Fatal(err)
			}
		})
	})
}
