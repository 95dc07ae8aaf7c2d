package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// matrixTol is the agreement asked of every element with the pairwise
// kernels: both centre the columns the same way, and what is left is the
// rounding of two different summation orders, ~1e-15 at these sizes.
const matrixTol = 1e-12

// matrixColumns returns k columns of length n with heavy ties, mixing
// kinds: few levels, rounded normals, continuous values, constants, large
// offsets (10⁶ plus noise in the fifth decimal), near-copies and exact
// copies or negations of an earlier column.
func matrixColumns(rng *rand.Rand, n, k int) [][]float64 {
	cols := make([][]float64, k)
	for j := range cols {
		c := make([]float64, n)
		kind := rng.IntN(8)
		if j == 0 {
			kind = 1
		}
		for i := range c {
			switch kind {
			case 0:
				c[i] = float64(rng.IntN(3))
			case 1:
				c[i] = math.Round(rng.NormFloat64()*10) / 10
			case 2:
				c[i] = rng.NormFloat64()
			case 3:
				c[i] = 7.5
			case 4:
				c[i] = 1e6 + math.Round(rng.NormFloat64()*100)/1e5
			case 5:
				c[i] = cols[j-1][i] + math.Round(rng.NormFloat64()*4)/10
			case 6:
				c[i] = cols[j-1][i]
			case 7:
				c[i] = -cols[0][i]
			}
		}
		cols[j] = c
	}
	return cols
}

var matrixSizes = []struct{ n, k int }{
	{3, 1}, {3, 7}, {4, 12}, {5, 70}, {17, 33}, {100, 70}, {1023, 40},
	{1024, 33}, {1025, 65}, {2500, 70}, {5000, 70},
}

// checkAgainst checks that the k×k matrix got is symmetric, compares each
// element above the diagonal with want(i, j) (NaN must match NaN) and the
// diagonal with exactly 1, or NaN where want(i, i) says the column is
// undefined.
func checkAgainst(t *testing.T, what string, got []float64, k int, want func(i, j int) float64) (worst float64) {
	t.Helper()
	if len(got) != k*k {
		t.Fatalf("%s: %d elements, want %d", what, len(got), k*k)
	}
	bad := 0
	for i := range k {
		for j := i; j < k; j++ {
			g := got[i*k+j]
			if g != got[j*k+i] && !(math.IsNaN(g) && math.IsNaN(got[j*k+i])) {
				t.Fatalf("%s: [%d,%d] = %v but [%d,%d] = %v", what, i, j, g, j, i, got[j*k+i])
			}
			var w float64
			if i == j {
				// The diagonal is 1 where the column is defined; a column is
				// defined when it correlates with itself.
				w = want(i, i)
				if !math.IsNaN(w) {
					w = 1
				}
				if !(g == w || math.IsNaN(g) && math.IsNaN(w)) {
					t.Errorf("%s: diagonal [%d] = %v, want %v", what, i, g, w)
				}
				continue
			}
			w = want(i, j)
			if d := math.Abs(g - w); d > worst {
				worst = d
			}
			if math.IsNaN(g) != math.IsNaN(w) || math.Abs(g-w) > matrixTol {
				if bad++; bad <= 5 {
					t.Errorf("%s: [%d,%d] = %.17g, want %.17g", what, i, j, g, w)
				}
			}
		}
	}
	return worst
}

func TestCorrelationMatrixAgainstPearson(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 4))
	var worst float64
	for _, s := range matrixSizes {
		cols := matrixColumns(rng, s.n, s.k)
		got, err := CorrelationMatrix(context.Background(), cols, 3)
		if err != nil {
			t.Fatal(err)
		}
		worst = max(worst, checkAgainst(t, fmt.Sprintf("n=%d k=%d", s.n, s.k), got, s.k, func(i, j int) float64 {
			return Pearson(cols[i], cols[j])
		}))
	}
	t.Logf("largest difference from Pearson: %.3g", worst)
}

func TestSpearmanMatrixAgainstSpearmanRho(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 5))
	for _, rule := range []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst} {
		for _, s := range matrixSizes {
			if rule != TieAverage && s.n > 1100 {
				continue // the largest sizes with the default rule only, to keep the test quick
			}
			cols := matrixColumns(rng, s.n, s.k)
			got, err := SpearmanMatrix(context.Background(), cols, rule, 2)
			if err != nil {
				t.Fatal(err)
			}
			what := fmt.Sprintf("rule %v n=%d k=%d", rule, s.n, s.k)
			if s.n*s.k*s.k <= 100*70*70 {
				checkAgainst(t, what, got, s.k, func(i, j int) float64 {
					return SpearmanRho(cols[i], cols[j], rule)
				})
				continue
			}
			// SpearmanRho is Pearson of the two Rank vectors; ranking each
			// column once keeps the larger cases quick.
			ranks := make([][]float64, len(cols))
			for j, c := range cols {
				ranks[j] = Rank(c, rule)
			}
			checkAgainst(t, what, got, s.k, func(i, j int) float64 {
				return Pearson(ranks[i], ranks[j])
			})
		}
	}
}

func sameBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// The worker count must not move a bit: every element is summed in the
// same order whoever computes it.
func TestMatrixIgnoresWorkers(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 6))
	for _, s := range []struct{ n, k int }{{5000, 70}, {3001, 97}, {40, 5}} {
		cols := matrixColumns(rng, s.n, s.k)
		ref, err := CorrelationMatrix(context.Background(), cols, 1)
		if err != nil {
			t.Fatal(err)
		}
		sref, err := SpearmanMatrix(context.Background(), cols, TieAverage, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{-1, 0, 2, 3, 8} {
			got, err := CorrelationMatrix(context.Background(), cols, w)
			if err != nil {
				t.Fatal(err)
			}
			if !sameBits(got, ref) {
				t.Errorf("n=%d k=%d: CorrelationMatrix with %d workers differs from 1 worker", s.n, s.k, w)
			}
			got, err = SpearmanMatrix(context.Background(), cols, TieAverage, w)
			if err != nil {
				t.Fatal(err)
			}
			if !sameBits(got, sref) {
				t.Errorf("n=%d k=%d: SpearmanMatrix with %d workers differs from 1 worker", s.n, s.k, w)
			}
		}
	}
}

// An element depends only on its two columns: the 2×2 matrix of columns i
// and j holds the same bits as element [i,j] of the whole matrix.
func TestMatrixElementIgnoresOtherColumns(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 7))
	for _, n := range []int{3100, 3101, 7} { // an even and an odd last block
		cols := matrixColumns(rng, n, 45)
		k := len(cols)
		full, err := CorrelationMatrix(context.Background(), cols, 2)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range [][2]int{{0, 1}, {3, 44}, {31, 32}, {10, 40}, {44, 2}, {5, 38}, {33, 34}} {
			i, j := p[0], p[1]
			sub := [][]float64{cols[i], cols[j]}
			if i%3 == 0 { // a third column before them
				sub = [][]float64{cols[(i+7)%k], cols[i], cols[j]}
			}
			part, err := CorrelationMatrix(context.Background(), sub, 1)
			if err != nil {
				t.Fatal(err)
			}
			s := len(sub)
			if got, want := part[(s-2)*s+s-1], full[i*k+j]; math.Float64bits(got) != math.Float64bits(want) {
				t.Errorf("n=%d [%d,%d]: %.17g in the full matrix, %.17g in %d columns", n, i, j, want, got, s)
			}
		}
	}
}

// Copies correlate exactly 1 and negations exactly −1, as with Pearson.
func TestMatrixExactUnits(t *testing.T) {
	rng := rand.New(rand.NewPCG(2026, 8))
	x := make([]float64, 2000)
	for i := range x {
		x[i] = 1e6 + math.Round(rng.NormFloat64()*1000)/1000
	}
	neg := make([]float64, len(x))
	for i, v := range x {
		neg[i] = -v
	}
	got, err := CorrelationMatrix(context.Background(), [][]float64{x, neg, x}, 1)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{1, -1, 1, -1, 1, -1, 1, -1, 1}
	if !sameBits(got, want) {
		t.Errorf("got %v, want %v", got, want)
	}
}

func TestMatrixEdges(t *testing.T) {
	nan := math.NaN()
	ctx := context.Background()
	got, err := CorrelationMatrix(ctx, nil, 1)
	if err != nil || len(got) != 0 {
		t.Errorf("no columns: %v, %v", got, err)
	}
	got, err = SpearmanMatrix(ctx, [][]float64{}, TieAverage, 1)
	if err != nil || len(got) != 0 {
		t.Errorf("no columns (Spearman): %v, %v", got, err)
	}
	for _, n := range []int{0, 1} {
		cols := [][]float64{make([]float64, n), make([]float64, n)}
		got, err := CorrelationMatrix(ctx, cols, 2)
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range got {
			if !math.IsNaN(v) {
				t.Errorf("n=%d: %v, want all NaN", n, got)
				break
			}
		}
	}
	// A single column: its diagonal, 1 or NaN.
	got, _ = CorrelationMatrix(ctx, [][]float64{{1, 2, 2}}, 1)
	if !sameBits(got, []float64{1}) {
		t.Errorf("one column: %v", got)
	}
	// Constant, infinite and NaN columns are undefined; the others are not
	// disturbed.
	x := []float64{1, 2, 3, 4, 5, 6}
	y := []float64{2, 1, 4, 3, 6, 5}
	cols := [][]float64{x, {3, 3, 3, 3, 3, 3}, y, {1, 2, math.Inf(1), 4, 5, 6}, {1, nan, 3, 4, 5, 6}}
	got, err = CorrelationMatrix(ctx, cols, 2)
	if err != nil {
		t.Fatal(err)
	}
	checkAgainst(t, "undefined columns", got, len(cols), func(i, j int) float64 { return Pearson(cols[i], cols[j]) })
	if r := got[0*5+2]; r != Pearson(x, y) && math.Abs(r-Pearson(x, y)) > 1e-15 {
		t.Errorf("r(x, y) = %v, want %v", r, Pearson(x, y))
	}
	// Magnitudes whose squares overflow or underflow.
	var ext [][]float64
	// Those from 0x1p-499 on take the prescaled path of newUnitColumn (a
	// sum of squares below 2⁻⁹⁶⁰), the last one after a large offset.
	for _, sc := range []float64{1, 1e160, 1e-161, 1e300, 1e-300, 0x1p-1070, 0x1p-499, 0x1p-490} {
		c := make([]float64, len(y))
		for i := range y {
			c[i] = y[i] * sc
		}
		ext = append(ext, c)
	}
	off := make([]float64, len(y))
	for i := range y {
		off[i] = (1e6 + y[i]) * 1e-150
	}
	ext = append(ext, x, off)
	for _, c := range ext[len(ext)-4:] {
		if u := newUnitColumn(c); u.scale == 0 || math.IsInf(u.scale, 0) {
			t.Errorf("%g…: scale %v", c[0], u.scale)
		}
	}
	got, err = CorrelationMatrix(ctx, ext, 2)
	if err != nil {
		t.Fatal(err)
	}
	checkAgainst(t, "extreme magnitudes", got, len(ext), func(i, j int) float64 { return Pearson(ext[i], ext[j]) })
}

func TestMatrixPanics(t *testing.T) {
	ctx := context.Background()
	mustPanic(t, "length mismatch", func() { CorrelationMatrix(ctx, [][]float64{{1, 2}, {1}}, 1) })
	mustPanic(t, "length mismatch (Spearman)", func() { SpearmanMatrix(ctx, [][]float64{{1, 2}, {1}}, TieAverage, 1) })
	mustPanic(t, "NaN (Spearman)", func() { SpearmanMatrix(ctx, [][]float64{{1, 2}, {1, math.NaN()}}, TieAverage, 2) })
	mustPanic(t, "unknown rule", func() { SpearmanMatrix(ctx, [][]float64{{1, 2}, {2, 1}}, TieRule(0), 2) })
}

func TestMatrixCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	cols := matrixColumns(rand.New(rand.NewPCG(1, 1)), 100, 4)
	if _, err := CorrelationMatrix(ctx, cols, 2); !errors.Is(err, context.Canceled) {
		t.Errorf("CorrelationMatrix: err = %v, want context.Canceled", err)
	}
	if _, err := SpearmanMatrix(ctx, cols, TieAverage, 2); !errors.Is(err, context.Canceled) {
		t.Errorf("SpearmanMatrix: err = %v, want context.Canceled", err)
	}
}

// Computed with R 4.2.2: m <- cbind(a, b, d); cor(m, method = "spearman")
// and cor(m) for the columns below (printed with options(digits = 17)).
func TestMatrixR(t *testing.T) {
	cols := [][]float64{
		{3, 1, 4, 1, 5, 9, 2, 6, 5, 3},
		{2, 7, 1, 8, 2, 8, 1, 8, 2, 8},
		{1, 1, 2, 3, 5, 8, 13, 21, 34, 55},
	}
	for _, c := range []struct {
		name   string
		f      func() ([]float64, error)
		ab, ad float64
		bd     float64
	}{
		{"spearman", func() ([]float64, error) { return SpearmanMatrix(context.Background(), cols, TieAverage, 2) },
			0.13471506281091267, 0.41105068038970666, 0.27415798661723545},
		{"pearson", func() ([]float64, error) { return CorrelationMatrix(context.Background(), cols, 2) },
			0.10492284287735879, 0.10440801290931262, 0.23810097694314866},
	} {
		got, err := c.f()
		if err != nil {
			t.Fatal(err)
		}
		want := []float64{1, c.ab, c.ad, c.ab, 1, c.bd, c.ad, c.bd, 1}
		for i := range want {
			if math.Abs(got[i]-want[i]) > 1e-15 {
				t.Errorf("%s [%d]: %.17g, want %.17g", c.name, i, got[i], want[i])
			}
		}
	}
}

func ExampleSpearmanMatrix() {
	dose := []float64{1, 2, 2, 3, 4, 5}
	grade := []float64{1, 1, 2, 2, 3, 3}
	weight := []float64{70, 64, 81, 59, 62, 66}
	rho, err := SpearmanMatrix(context.Background(), [][]float64{dose, grade, weight}, TieAverage, 2)
	if err != nil {
		panic(err)
	}
	for i := range 3 {
		fmt.Printf("%6.3f %6.3f %6.3f\n", rho[3*i], rho[3*i+1], rho[3*i+2])
	}
	// Output:
	//  1.000  0.910 -0.464
	//  0.910  1.000 -0.239
	// -0.464 -0.239  1.000
}
