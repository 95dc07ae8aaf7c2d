package stats

import (
	"context"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/gonum"
)

// gemv is gonum's own BLAS, named rather than reached through blas64, which
// a program may point at another implementation with a different
// summation order.
var gemv gonum.Implementation

// Correlation matrices: all k(k−1)/2 correlations among k columns of one
// table, as a pairing over `columns = [...]` asks for. Each column is
// centred and scaled to unit length once, z_j = (x_j − x̄_j)/‖x_j − x̄_j‖,
// and the matrix is the Gram matrix C = ZᵀZ of those columns, of which
// only the upper triangle is computed (a symmetric rank-n update).
//
// The Gram kernel blocks for the cache. The rows are cut into blocks of
// gramRows; each block of every column is standardised into a buffer
// (column j at a stride of gramRows, 4 KiB a column); the upper triangle
// is cut into tiles of gramCols × gramCols columns, which the workers take
// from a shared counter; a block is finished before the next is
// standardised. Within a tile, one call of gonum's Dgemv per column i adds
// Z_J·z_i to row i of the tile, Z_J being the tile's other columns as the
// rows of a matrix: its SSE2 kernel takes four of them against each load
// of z_i. A tile's blocks (2 × 32 × 4 KiB) stay in the 1 MiB L2 cache.
//
// Measured on the 2-core test machine with BenchmarkGram (-count 5, the
// least CPU time per call, as the machine was shared and wall times were
// 2–4× the CPU time): at 20 000 rows × 1000 columns this kernel needs
// 1.38 s of CPU; one floats.Dot per element in the same blocking 1.57× as
// much (its two accumulators are latency-bound); gonum's blas64.Syrk 4.5×
// (6.2 s: it is serial and takes one full-length dot product per element,
// from memory) or 6.5× given the n×k layout; blas64.Gemm (AᵀA) 5.3×. At
// 100 000 × 200 the ratios are 1.42×, 3.6×, 5.3× and 5.7× (0.28 s). A
// register-blocked 3×4 kernel in plain Go ran at 0.4× the speed of
// floats.Dot in the same run: the compiler neither vectorises it nor keeps
// its accumulators in registers.
//
// Reference for the blocking: K. Goto and R. A. van de Geijn (2008),
// Anatomy of high-performance matrix multiplication, ACM Transactions on
// Mathematical Software 34(3), article 12.
//
// Determinism: each element is summed as ((d₀ + d₁) + d₂) + … over the row
// blocks in order, d_b being its dot product over block b, whichever
// worker computes which tile. Dgemv (GemvN on amd64) sums each row of its
// matrix in the same order whether it takes the row in a group of four,
// two or one, as long as the length is even, so an odd last row is added
// apart; the matrix therefore depends neither on the worker count nor on
// which other columns are in it. On other architectures gonum's kernel is
// Go code with another summation order, so the last bits can differ
// between amd64 and, say, arm64, as Pearson's do where the compiler fuses
// multiply-adds.
const (
	gramRows = 512
	gramCols = 32
)

// CorrelationMatrix returns the k×k matrix of Pearson's r among the k
// columns cols (row-major, full and symmetric, exactly 1 on the diagonal),
// computed as described above in O(n·k²/2) multiply-adds for columns of
// length n, with O(k² + k·gramRows) extra memory, on up to workers
// goroutines (≤ 0 means 1).
//
// Each element agrees with Pearson(cols[i], cols[j]) to within rounding
// (at most 3e-14 in the tests, n ≤ 5000): the columns are centred exactly as
// Pearson centres them, by a corrected two-pass mean after the same exact
// power-of-two rescaling of extreme magnitudes, so a large offset costs no
// precision. The result does not depend on workers.
//
// A column that is constant, has fewer than two values, or holds ±Inf or
// NaN has NaN in its whole row and column, its diagonal included (Pearson
// returns NaN for every pair with it). The columns must be complete (the
// engine removes missing rows first) and of equal length; CorrelationMatrix
// panics otherwise. It returns ctx.Err() (and no matrix) when ctx ends
// first.
func CorrelationMatrix(ctx context.Context, cols [][]float64, workers int) ([]float64, error) {
	k := len(cols)
	out := make([]float64, k*k)
	if k == 0 {
		return out, nil
	}
	n := mustEqualLengths(cols)
	workers = max(1, workers)

	units := make([]unitColumn, k)
	err := runBlocks(ctx, k, workers, unitSize, k, nil, func(_, j int) {
		units[j] = newUnitColumn(cols[j])
	})
	if err != nil {
		return nil, err
	}
	// Undefined columns are left out of the Gram matrix.
	live := make([]int, 0, k)
	for j, u := range units {
		if u.scale != 0 {
			live = append(live, j)
		}
	}
	defined := make([]unitColumn, len(live))
	for a, j := range live {
		defined[a] = units[j]
	}
	g, err := gramUpper(ctx, defined, n, workers)
	if err != nil {
		return nil, err
	}

	for i := range out {
		out[i] = math.NaN()
	}
	m := len(live)
	for a, i := range live {
		out[i*k+i] = 1
		for b := a + 1; b < m; b++ {
			j := live[b]
			// C_aa and C_bb are 1 up to rounding; dividing by their root
			// makes two identical columns give exactly 1, as Pearson does.
			r := clamp1(g[a*m+b] / math.Sqrt(g[a*m+a]*g[b*m+b]))
			out[i*k+j], out[j*k+i] = r, r
		}
	}
	return out, nil
}

// SpearmanMatrix returns the k×k matrix of Spearman's ρ among the columns
// cols: each column is ranked once under rule (the columns in parallel on
// up to workers goroutines) and the result is CorrelationMatrix of the
// ranks, so each element agrees with SpearmanRho(cols[i], cols[j], rule)
// to within rounding and a constant column gives NaN in its row and
// column. Ranking costs O(k·n log n) and k·n extra values.
//
// It panics when the columns differ in length, when a column holds NaN, or
// when rule is unknown, as Rank does. It returns ctx.Err() (and no matrix)
// when ctx ends first.
func SpearmanMatrix(ctx context.Context, cols [][]float64, rule TieRule, workers int) ([]float64, error) {
	// Checked here, before the workers start: a panic inside one of them
	// could not reach the caller.
	switch rule {
	case TieAverage, TieMin, TieMax, TieDense, TieFirst:
	default:
		panic(fmt.Sprintf("stats: unknown tie rule %v", rule))
	}
	if len(cols) > 0 {
		mustEqualLengths(cols)
	}
	for j, c := range cols {
		for i, v := range c {
			if math.IsNaN(v) {
				panic(fmt.Sprintf("stats: SpearmanMatrix: NaN at index %d of column %d", i, j))
			}
		}
	}
	ranks := make([][]float64, len(cols))
	err := runBlocks(ctx, len(cols), max(1, workers), unitSize, len(cols), nil, func(_, j int) {
		ranks[j] = Rank(cols[j], rule)
	})
	if err != nil {
		return nil, err
	}
	return CorrelationMatrix(ctx, ranks, workers)
}

// unitColumn is a column standardised lazily: z = (x − mean)·scale has
// mean zero and unit Euclidean norm. scale is 0 for an undefined column.
type unitColumn struct {
	x           []float64 // the column, or a copy rescaled by a power of two (see rescaled)
	mean, scale float64
}

// newUnitColumn finds the mean and scale of x in four passes. The centring
// is Pearson's (rescaled, then mean), so the centred values are the same
// numbers Pearson multiplies.
func newUnitColumn(x []float64) unitColumn {
	if len(x) < 2 {
		return unitColumn{}
	}
	// One pass finds whether x is constant and whether rescaled has work to
	// do (its own scan, with math.Max, costs more than the rest of this
	// function).
	var top float64
	constant := true
	for _, v := range x {
		if a := math.Abs(v); a > top {
			top = a
		}
		if v != x[0] {
			constant = false
		}
	}
	if constant {
		return unitColumn{}
	}
	if top < 0x1p-500 || top > 0x1p500 {
		x = rescaled(x)
	}
	m := mean(x)
	if math.IsNaN(m) || math.IsInf(m, 0) {
		return unitColumn{} // a NaN or ±Inf among the values
	}
	var ss float64
	for _, v := range x {
		d := v - m
		ss += d * d
	}
	// Squares below 2⁻¹⁰²² lose at most 2⁻¹⁰⁷⁵ each to underflow, nothing
	// against a sum of 2⁻⁹⁶⁰ or more. Outside that range, or when the sum
	// overflows (n beyond ~2²¹ values near 2⁵⁰⁰), the centred values are
	// first brought to [0.5, 1) by a power of two.
	if ss >= 0x1p-960 && !math.IsInf(ss, 0) {
		return unitColumn{x: x, mean: m, scale: 1 / math.Sqrt(ss)}
	}
	var big float64
	for _, v := range x {
		if a := math.Abs(v - m); a > big {
			big = a
		}
	}
	if big == 0 || math.IsInf(big, 0) {
		return unitColumn{}
	}
	_, e := math.Frexp(big)
	p := math.Ldexp(1, -e)
	ss = 0
	for _, v := range x {
		d := (v - m) * p
		ss += d * d
	}
	return unitColumn{x: x, mean: m, scale: p / math.Sqrt(ss)}
}

// gramUpper returns the m×m Gram matrix of the standardised columns
// (row-major, only the upper triangle filled), blocked as described at
// the top of this file.
func gramUpper(ctx context.Context, cols []unitColumn, n, workers int) ([]float64, error) {
	m := len(cols)
	g := make([]float64, m*m)
	if m == 0 {
		return g, nil
	}
	nb := min(gramRows, n)
	buf := make([]float64, m*nb)
	tb := (m + gramCols - 1) / gramCols
	tiles := make([][2]int, 0, tb*(tb+1)/2)
	for bi := range tb {
		for bj := bi; bj < tb; bj++ {
			tiles = append(tiles, [2]int{bi, bj})
		}
	}
	// The current block: rows r0 … r0+rows−1. The dot products run over an
	// even number of rows: GemvN adds a lone last row at a point that
	// depends on where the element sits in the call, so an odd last row is
	// added apart, in plain Go.
	var r0, rows, even int
	standardise := func(_, c int) {
		u := cols[c]
		z := buf[c*nb : c*nb+rows]
		for t, v := range u.x[r0 : r0+rows] {
			z[t] = (v - u.mean) * u.scale
		}
	}
	tile := func(_, t int) {
		i0, j0 := tiles[t][0]*gramCols, tiles[t][1]*gramCols
		i1, j1 := min(m, i0+gramCols), min(m, j0+gramCols)
		for i := i0; i < i1; i++ {
			lo := max(i, j0)
			// g[i, lo:j1] += Z[lo:j1, block]·z_i, the columns of the tile as
			// the rows of a (j1−lo)×even matrix of stride nb.
			gemv.Dgemv(blas.NoTrans, j1-lo, even, 1, buf[lo*nb:], nb, buf[i*nb:i*nb+even], 1, 1, g[i*m+lo:i*m+j1], 1)
		}
		if even == rows {
			return
		}
		for i := i0; i < i1; i++ {
			zi := buf[i*nb+even]
			for j := max(i, j0); j < j1; j++ {
				g[i*m+j] += float64(zi * buf[j*nb+even]) // float64(): never fused
			}
		}
	}
	for r0 = 0; r0 < n; r0 += nb {
		rows = min(nb, n-r0)
		even = rows &^ 1
		if err := runBlocks(ctx, m, workers, unitSize, m, nil, standardise); err != nil {
			return nil, err
		}
		if err := runBlocks(ctx, len(tiles), workers, unitSize, len(tiles), nil, tile); err != nil {
			return nil, err
		}
	}
	return g, nil
}

func unitSize(int) int { return 1 }

// mustEqualLengths returns the common length of cols (len(cols) > 0) and
// panics when the columns differ: the engine builds them, so a mismatch is
// a bug.
func mustEqualLengths(cols [][]float64) int {
	n := len(cols[0])
	for j, c := range cols {
		if len(c) != n {
			panic(fmt.Sprintf("stats: column 0 has %d values and column %d has %d", n, j, len(c)))
		}
	}
	return n
}
