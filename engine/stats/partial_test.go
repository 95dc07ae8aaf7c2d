package stats

import (
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestPartialAgainstR checks the partial correlation kernels against R 4.2.2
// on testdata/ref/partial_reference.csv (script
// testdata/ref/partial_reference.R): the correlation of lm() residuals for
// the estimates (Pearson, and ranks under average and min), Student's t on
// n − 2 − k df for the p-values, and the interval formulas. Cases: k = 1, 2,
// 3 at n = 10..200, continuous and tied, the smallest n = k + 3, the
// Wikipedia example, and an offset of 1e6. Tolerances as in TestAgainstR:
// estimates and intervals 1e-12 absolute (two accurate least-squares
// routes, R by Householder QR, we by Gram–Schmidt), p-values 1e-9 relative
// (different algorithms for the t tail).
func TestPartialAgainstR(t *testing.T) {
	cases := readRefFile(t, filepath.Join("..", "..", "testdata", "ref", "partial_reference.csv"))
	if len(cases) < 25 {
		t.Fatalf("reference file has %d cases, want at least 25", len(cases))
	}
	for _, name := range sortedNames(cases) {
		rc := cases[name]
		t.Run(name, func(t *testing.T) {
			x, y := rc["x"], rc["y"]
			n, k := int(rc["n"][0]), int(rc["k"][0])
			z := make([][]float64, k)
			for j := range z {
				z[j] = rc["z"+strconv.Itoa(j+1)]
			}
			one := func(q string) float64 { return rc[q][0] }
			for _, c := range []struct {
				what      string
				got, want float64
			}{
				{"PartialCorrelation", PartialCorrelation(x, y, z), one("partial_r")},
				{"PartialSpearman(average)", PartialSpearman(x, y, z, TieAverage), one("partial_rho_average")},
				{"PartialSpearman(min)", PartialSpearman(x, y, z, TieMin), one("partial_rho_min")},
			} {
				if !closeAbs(c.got, c.want, statTol) {
					t.Errorf("%s = %.17g, R gives %.17g", c.what, c.got, c.want)
				}
			}
			r, rho := one("partial_r"), one("partial_rho_average")
			for _, alt := range allAlts {
				want := one("partial_p_" + alt.String())
				if got := PartialT(r, n, k, alt); !closeRel(got, want, pRelTol) {
					t.Errorf("PartialT(%v) = %.17g, R gives %.17g", alt, got, want)
				}
				if got := PartialT(PartialCorrelation(x, y, z), n, k, alt); math.Abs(r) < 0.999 && !closeRel(got, want, pRelTol) {
					t.Errorf("PartialT(PartialCorrelation(x, y, z), %v) = %.17g, R gives %.17g", alt, got, want)
				}
				for _, level := range []float64{0.95, 0.8} {
					suffix := alt.String() + "_" + strconv.FormatFloat(level, 'g', -1, 64)
					for _, c := range []struct {
						what string
						f    func(float64, int, int, float64, Alternative) (float64, float64)
						est  float64
						want []float64
					}{
						{"PartialFisherInterval", PartialFisherInterval, r, rc["fisher_ci_"+suffix]},
						{"PartialBonettWrightInterval", PartialBonettWrightInterval, rho, rc["bonett_wright_ci_"+suffix]},
					} {
						lo, hi := c.f(c.est, n, k, level, alt)
						if !closeAbs(lo, c.want[0], statTol) || !closeAbs(hi, c.want[1], statTol) {
							t.Errorf("%s(%v, %v) = [%.17g, %.17g], formula in R gives [%.17g, %.17g]",
								c.what, level, alt, lo, hi, c.want[0], c.want[1])
						}
					}
				}
			}
		})
	}
}

// TestPartialWikipedia: the example of the English Wikipedia article
// "Partial correlation" (section "Example"), X = 2, 4, 15, 20;
// Y = 1, 2, 3, 4; Z = 0, 0, 1, 1, whose partial correlation of X and Y
// given Z is printed as 0.919145 (recalled from memory; R 4.2.2 gives
// 0.91914503001805803, case "wikipedia" of partial_reference.csv). The
// article prints 6 decimals: tolerance half a unit in the last place.
func TestPartialWikipedia(t *testing.T) {
	x, y, z := []float64{2, 4, 15, 20}, []float64{1, 2, 3, 4}, []float64{0, 0, 1, 1}
	if got := PartialCorrelation(x, y, [][]float64{z}); math.Abs(got-0.919145) > 5e-7 {
		t.Errorf("PartialCorrelation = %.7f, Wikipedia prints 0.919145", got)
	}
}

// withCorrelations returns three centred columns of length n whose sample
// correlation matrix is target (up to rounding): orthonormal columns from
// the QR factorisation of centred random data (gonum), times the upper
// Cholesky factor U of target = UᵀU (gonum).
func withCorrelations(t *testing.T, rng *rand.Rand, n int, target *mat.SymDense) [][]float64 {
	t.Helper()
	p := target.SymmetricDim()
	a := mat.NewDense(n, p, nil)
	for j := range p {
		col := make([]float64, n)
		for i := range col {
			col[i] = rng.NormFloat64()
		}
		m := mean(col)
		for i := range col {
			a.Set(i, j, col[i]-m)
		}
	}
	var qr mat.QR
	qr.Factorize(a)
	var q mat.Dense
	qr.QTo(&q)
	var ch mat.Cholesky
	if !ch.Factorize(target) {
		t.Fatalf("target correlation matrix is not positive definite")
	}
	var u mat.TriDense
	ch.UTo(&u)
	var d mat.Dense
	d.Mul(q.Slice(0, n, 0, p), &u)
	cols := make([][]float64, p)
	for j := range cols {
		cols[j] = mat.Col(nil, j, &d)
	}
	return cols
}

// TestPartialLowry reproduces the first-order partial correlations of
// R. Lowry, Concepts and Applications of Inferential Statistics (VassarStats,
// 1999–), chapter 3, subchapter 3a "Partial correlation", from the three
// correlation matrices printed there: (r_XY, r_XZ, r_YZ) = (.50, .50, .50)
// gives r_XY·Z = +.33; (r_CA, r_CV, r_AV) = (.49, .73, .59) gives
// r_CA·V = +.11; (r_XY, r_XZ, r_YZ) = (.20, .80, −.40) gives +.95 (the copy
// of the page we read had lost its minus signs; −.40 is the sign that gives
// the printed +.95). Data with exactly those correlations are built by
// withCorrelations, so this checks PartialCorrelation against the printed
// values (two decimals: tolerance 0.005) and against Yule's (1907)
// first-order formula evaluated on the Pearson correlations of the same
// data (1e-12: one exact identity, two accurate routes).
func TestPartialLowry(t *testing.T) {
	rng := rand.New(rand.NewPCG(1999, 3))
	for _, c := range []struct {
		rxy, rxz, ryz, want float64
	}{
		{0.50, 0.50, 0.50, 0.33},
		{0.49, 0.73, 0.59, 0.11},
		{0.20, 0.80, -0.40, 0.95},
	} {
		target := mat.NewSymDense(3, []float64{1, c.rxy, c.rxz, c.rxy, 1, c.ryz, c.rxz, c.ryz, 1})
		cols := withCorrelations(t, rng, 20, target)
		x, y, z := cols[0], cols[1], cols[2]
		if got := Pearson(x, z); math.Abs(got-c.rxz) > 1e-12 {
			t.Fatalf("construction: r_xz = %v, want %v", got, c.rxz)
		}
		got := PartialCorrelation(x, y, [][]float64{z})
		if math.Abs(got-c.want) > 0.005 {
			t.Errorf("r = (%v, %v, %v): partial = %.4f, Lowry prints %+.2f", c.rxy, c.rxz, c.ryz, got, c.want)
		}
		if yule := firstOrder(Pearson(x, y), Pearson(x, z), Pearson(y, z)); math.Abs(got-yule) > 1e-12 {
			t.Errorf("r = (%v, %v, %v): partial = %.17g, first-order formula %.17g", c.rxy, c.rxz, c.ryz, got, yule)
		}
	}
}

// firstOrder is Yule's (1907) first-order partial correlation formula.
func firstOrder(rxy, rxz, ryz float64) float64 {
	return (rxy - rxz*ryz) / math.Sqrt((1-rxz*rxz)*(1-ryz*ryz))
}

// inverseOracle returns the partial correlation of columns 0 and 1 given
// the rest from the inverse P of their correlation matrix (built with
// Pearson, inverted by gonum): −P₀₁ / √(P₀₀ P₁₁), the standard cofactor
// identity (H. Cramér 1946, Mathematical Methods of Statistics, Princeton,
// ch. 23; chapter from memory). An independent route to
// PartialCorrelation.
func inverseOracle(t *testing.T, cols [][]float64) float64 {
	t.Helper()
	p := len(cols)
	c := mat.NewDense(p, p, nil)
	for i := range p {
		for j := range p {
			c.Set(i, j, Pearson(cols[i], cols[j]))
		}
	}
	var inv mat.Dense
	if err := inv.Inverse(c); err != nil {
		t.Fatalf("inverting the correlation matrix: %v", err)
	}
	return -inv.At(0, 1) / math.Sqrt(inv.At(0, 0)*inv.At(1, 1))
}

// TestPartialOracles compares PartialCorrelation on random data (k = 0..4,
// n = 6..300, some columns tied) with Pearson for k = 0, the first-order
// formula for k = 1, and the inverse-correlation identity for every k.
// Tolerance 1e-10: the inverse of a random correlation matrix of at most 6
// columns has a condition number far below 1e4, so the oracle itself is
// good to ~1e-12.
func TestPartialOracles(t *testing.T) {
	rng := rand.New(rand.NewPCG(1924, 1907))
	for trial := range 300 {
		k := trial % 5
		n := k + 3 + rng.IntN(300)
		cols := make([][]float64, k+2)
		for j := range cols {
			cols[j] = make([]float64, n)
			for i := range cols[j] {
				v := rng.NormFloat64()
				if j > 0 {
					v += 0.5 * cols[j-1][i]
				}
				if trial%3 == 0 {
					v = math.Round(2 * v)
				}
				cols[j][i] = v
			}
		}
		x, y, z := cols[0], cols[1], cols[2:]
		got := PartialCorrelation(x, y, z)
		if math.IsNaN(got) {
			continue // a tied column can come out constant or collinear at small n
		}
		want := inverseOracle(t, cols)
		if !closeAbs(got, want, 1e-10) {
			t.Errorf("trial %d (n = %d, k = %d): %.17g, inverse correlation matrix gives %.17g", trial, n, k, got, want)
		}
		switch k {
		case 0:
			if want := Pearson(x, y); !closeAbs(got, want, 1e-14) {
				t.Errorf("trial %d: k = 0 gives %.17g, Pearson %.17g", trial, got, want)
			}
		case 1:
			if want := firstOrder(Pearson(x, y), Pearson(x, z[0]), Pearson(y, z[0])); !closeAbs(got, want, 1e-10) {
				t.Errorf("trial %d: %.17g, first-order formula %.17g", trial, got, want)
			}
		}
	}
}

// TestPartialInvariance: the partial correlation is unchanged by a positive
// affine change of any column, by the order of the controls, and by
// swapping x and y; it changes sign with x. These hold exactly in
// arithmetic, so the tolerance is rounding (1e-13), except where a column
// is shifted by 1e6: that rounds each input to a multiple of 2⁻³³ ≈ 1.2e-10
// (the spacing of doubles near 1e6), a perturbation of the column itself,
// so 1e-9 there. The scaling by 2^±600 is exact and must give the same bits.
func TestPartialInvariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(42, 43))
	n := 50
	col := func() []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = rng.NormFloat64()
		}
		return v
	}
	x, y, z1, z2 := col(), col(), col(), col()
	for i := range y {
		y[i] += 0.6*x[i] + 0.3*z1[i]
		x[i] += 0.4 * z2[i]
	}
	base := PartialCorrelation(x, y, [][]float64{z1, z2})
	affine := func(v []float64, a, b float64) []float64 {
		w := make([]float64, len(v))
		for i := range v {
			w[i] = a*v[i] + b
		}
		return w
	}
	for _, c := range []struct {
		what      string
		got, want float64
		tol       float64
	}{
		{"controls swapped", PartialCorrelation(x, y, [][]float64{z2, z1}), base, 1e-13},
		{"x and y swapped", PartialCorrelation(y, x, [][]float64{z1, z2}), base, 1e-13},
		{"x negated", PartialCorrelation(affine(x, -1, 0), y, [][]float64{z1, z2}), -base, 1e-13},
		{"x scaled by 3, shifted by 7", PartialCorrelation(affine(x, 3, 7), y, [][]float64{z1, z2}), base, 1e-13},
		{"control scaled by −7, shifted by 42", PartialCorrelation(x, y, [][]float64{affine(z1, -7, 42), z2}), base, 1e-13},
		{"x and a control shifted by 1e6", PartialCorrelation(affine(x, 1, 1e6), y, [][]float64{affine(z1, 1, 1e6), z2}), base, 1e-9},
	} {
		if math.Abs(c.got-c.want) > c.tol {
			t.Errorf("%s: %.17g, want %.17g", c.what, c.got, c.want)
		}
	}
	for _, s := range []float64{0x1p600, 0x1p-600} {
		if got := PartialCorrelation(affine(x, s, 0), affine(y, s, 0), [][]float64{affine(z1, s, 0), z2}); got != base {
			t.Errorf("scaled by %v: %.17g, want %.17g", s, got, base)
		}
	}
}

// TestPartialUndefined checks every documented NaN.
func TestPartialUndefined(t *testing.T) {
	x := []float64{1, 3, 2, 5, 4, 7, 6, 8}
	y := []float64{2, 1, 4, 3, 6, 5, 8, 9}
	z := []float64{1, 1, 2, 3, 5, 8, 13, 21}
	w := []float64{3, 1, 4, 1, 5, 9, 2, 6}
	twice := make([]float64, len(z)) // 2z + 1: collinear with z and 1
	lin := make([]float64, len(z))   // x as an exact function of z and w
	for i := range z {
		twice[i] = 2*z[i] + 1
		lin[i] = 0.5*z[i] - 2*w[i] + 3
	}
	withInf := append([]float64{math.Inf(1)}, x[1:]...)
	for _, c := range []struct {
		what string
		x, y []float64
		z    [][]float64
	}{
		{"n = k + 2", x[:4], y[:4], [][]float64{z[:4], w[:4]}},
		{"n = 2, k = 0", x[:2], y[:2], nil},
		{"constant control", x, y, [][]float64{{4, 4, 4, 4, 4, 4, 4, 4}}},
		{"collinear controls", x, y, [][]float64{z, twice}},
		{"x a linear function of the controls", lin, y, [][]float64{z, w}},
		{"y a linear function of the controls", x, lin, [][]float64{w, z}},
		{"constant x", []float64{1, 1, 1, 1, 1, 1, 1, 1}, y, [][]float64{z}},
		{"x = control", z, y, [][]float64{z}},
		{"infinite x", withInf, y, [][]float64{z}},
		{"NaN in a control", x, y, [][]float64{append([]float64{math.NaN()}, z[1:]...)}},
	} {
		if got := PartialCorrelation(c.x, c.y, c.z); !math.IsNaN(got) {
			t.Errorf("%s: PartialCorrelation = %v, want NaN", c.what, got)
		}
	}
	// n = k + 3 is the smallest defined case (n − 2 − k = 1): the residuals
	// live in a plane, where their correlation is the cosine of an angle.
	// At n = k + 2 they live on a line and would always correlate ±1.
	if got := PartialCorrelation(x[:4], y[:4], [][]float64{z[:4]}); math.IsNaN(got) {
		t.Errorf("n = k + 3: PartialCorrelation = NaN, want a number")
	}
	if got := PartialSpearman(x, y, [][]float64{z, twice}, TieAverage); !math.IsNaN(got) {
		t.Errorf("PartialSpearman with collinear controls = %v, want NaN", got)
	}
}

func TestPartialPanics(t *testing.T) {
	x, y := []float64{1, 2, 3, 4, 5}, []float64{2, 1, 4, 3, 5}
	mustPanic(t, "x, y lengths", func() { PartialCorrelation(x, y[:4], nil) })
	mustPanic(t, "control length", func() { PartialCorrelation(x, y, [][]float64{{1, 2, 3}}) })
	mustPanic(t, "Spearman control length", func() { PartialSpearman(x, y, [][]float64{{1, 2, 3}}, TieAverage) })
	mustPanic(t, "Spearman NaN", func() { PartialSpearman(x, y, [][]float64{{1, 2, math.NaN(), 4, 5}}, TieAverage) })
	mustPanic(t, "Spearman rule", func() { PartialSpearman(x, y, nil, 0) })
	mustPanic(t, "PartialT k < 0", func() { PartialT(0.5, 10, -1, TwoSided) })
	mustPanic(t, "PartialT alternative", func() { PartialT(0.5, 10, 1, 0) })
	mustPanic(t, "PartialT alternative, undefined", func() { PartialT(0.5, 2, 1, 0) })
	mustPanic(t, "Fisher k < 0", func() { PartialFisherInterval(0.5, 10, -1, 0.95, TwoSided) })
	mustPanic(t, "Fisher level", func() { PartialFisherInterval(0.5, 10, 1, 1, TwoSided) })
	mustPanic(t, "Fisher level, undefined", func() { PartialFisherInterval(0.5, 3, 1, 0, TwoSided) })
	mustPanic(t, "Bonett-Wright alternative", func() { PartialBonettWrightInterval(0.5, 10, 1, 0.95, 0) })
}

// TestPartialTAndIntervals: with k controls each kernel is its zero-control
// counterpart at n − k (Fisher 1924), and undefined below the smallest n.
// With n − 2 − k = 1 the t law is Cauchy, P(T > 1) = 1/4 exactly (as in
// TestCorrelationTKnown).
func TestPartialTAndIntervals(t *testing.T) {
	for _, alt := range allAlts {
		for k := range 4 {
			for n := k + 3; n < k+40; n += 5 {
				if got, want := PartialT(0.3, n, k, alt), CorrelationT(0.3, n-k, alt); got != want {
					t.Errorf("PartialT(0.3, %d, %d, %v) = %v, CorrelationT at n − k = %v", n, k, alt, got, want)
				}
				lo, hi := PartialFisherInterval(0.3, n+1, k, 0.9, alt)
				wlo, whi := FisherInterval(0.3, n+1-k, 0.9, alt)
				if lo != wlo || hi != whi {
					t.Errorf("PartialFisherInterval(n = %d, k = %d, %v) = [%v, %v], FisherInterval at n − k = [%v, %v]", n+1, k, alt, lo, hi, wlo, whi)
				}
				lo, hi = PartialBonettWrightInterval(0.3, n+1, k, 0.9, alt)
				wlo, whi = BonettWrightInterval(0.3, n+1-k, 0.9, alt)
				if lo != wlo || hi != whi {
					t.Errorf("PartialBonettWrightInterval(n = %d, k = %d, %v) = [%v, %v], BonettWrightInterval at n − k = [%v, %v]", n+1, k, alt, lo, hi, wlo, whi)
				}
			}
		}
	}
	if got := PartialT(1/math.Sqrt2, 5, 2, Greater); math.Abs(got-0.25) > 1e-15 {
		t.Errorf("PartialT(1/√2, 5, 2, greater) = %.17g, want 0.25", got)
	}
	for _, c := range []struct{ n, k int }{{4, 2}, {3, 1}, {2, 0}} {
		if p := PartialT(0.5, c.n, c.k, TwoSided); !math.IsNaN(p) {
			t.Errorf("PartialT(n = %d, k = %d) = %v, want NaN", c.n, c.k, p)
		}
		if lo, hi := PartialFisherInterval(0.5, c.n+1, c.k, 0.95, TwoSided); !math.IsNaN(lo) || !math.IsNaN(hi) {
			t.Errorf("PartialFisherInterval(n = %d, k = %d) = [%v, %v], want NaN", c.n+1, c.k, lo, hi)
		}
		if lo, hi := PartialBonettWrightInterval(0.5, c.n+1, c.k, 0.95, TwoSided); !math.IsNaN(lo) || !math.IsNaN(hi) {
			t.Errorf("PartialBonettWrightInterval(n = %d, k = %d) = [%v, %v], want NaN", c.n+1, c.k, lo, hi)
		}
	}
	if p := PartialT(math.NaN(), 20, 2, Less); !math.IsNaN(p) {
		t.Errorf("PartialT(NaN) = %v, want NaN", p)
	}
}

// Benchmarks at n = 1e5 with k = 2 controls. The baseline is SpearmanRho
// on the same x and y, so PartialSpearman can be quoted as a multiple of
// it (it ranks four columns instead of two); PartialCorrelation is quoted
// against Pearson:
//
//	go test -run '^$' -bench 'Partial' ./engine/stats/
func benchPartialData() (x, y []float64, z [][]float64) {
	const n = 100_000
	x, y = benchData(n)
	z1, z2 := benchData(n + 1)
	return x, y, [][]float64{z1[:n], z2[:n]}
}

func BenchmarkPartialBaselineSpearman(b *testing.B) {
	x, y, _ := benchPartialData()
	for b.Loop() {
		SpearmanRho(x, y, TieAverage)
	}
}

func BenchmarkPartialBaselinePearson(b *testing.B) {
	x, y, _ := benchPartialData()
	for b.Loop() {
		Pearson(x, y)
	}
}

func BenchmarkPartialSpearman(b *testing.B) {
	x, y, z := benchPartialData()
	for b.Loop() {
		PartialSpearman(x, y, z, TieAverage)
	}
}

func BenchmarkPartialCorrelation(b *testing.B) {
	x, y, z := benchPartialData()
	for _, k := range []int{0, 1, 2} {
		b.Run(fmt.Sprintf("k=%d", k), func(b *testing.B) {
			for b.Loop() {
				PartialCorrelation(x, y, z[:k])
			}
		})
	}
}
