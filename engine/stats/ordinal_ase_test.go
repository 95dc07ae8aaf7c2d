package stats

import (
	"cmp"
	"math"
	"math/big"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strconv"
	"testing"
)

// kendallFamily lists the measures OrdinalSE serves, in declaration order.
var kendallFamily = []Measure{KendallB, KendallA, KendallC, Gamma, SomersDYX, SomersDXY}

// obsRow is one observation's counts: C_i, D_i, t_i, u_i.
type obsRow struct{ c, d, t, u int64 }

// ordinalOracle is the test's second route to everything in ordinal_ase.go:
// it classifies every pair directly, in O(n²), to get C_i, D_i, t_i and u_i,
// and evaluates each published standard-error formula in its textbook,
// uncentred form (Σd_i² − (P − Q)²/n and so on) in exact rational
// arithmetic, so that only the final square root rounds. Test-only code.
type ordinalOracle struct {
	rows []obsRow
	est  map[Measure]float64
	se   map[Measure]float64
}

func newOrdinalOracle(x, y []float64) ordinalOracle {
	n := len(x)
	o := ordinalOracle{rows: make([]obsRow, n), est: map[Measure]float64{}, se: map[Measure]float64{}}
	for i := range n {
		r := &o.rows[i]
		for j := range n {
			dx, dy := x[i]-x[j], y[i]-y[j]
			if dx == 0 {
				r.t++ // i itself included
			}
			if dy == 0 {
				r.u++
			}
			switch {
			case dx == 0 || dy == 0:
			case (dx > 0) == (dy > 0):
				r.c++
			default:
				r.d++
			}
		}
	}
	for _, m := range kendallFamily {
		o.est[m], o.se[m] = math.NaN(), math.NaN()
	}
	if n < 2 {
		return o
	}
	bi := func(v int64) *big.Int { return big.NewInt(v) }
	mul := func(a ...*big.Int) *big.Int {
		p := bi(1)
		for _, f := range a {
			p.Mul(p, f)
		}
		return p
	}
	var P, Q, wr, wc, sumD2 int64
	for _, r := range o.rows {
		P += r.c
		Q += r.d
		wr += int64(n) - r.t
		wc += int64(n) - r.u
		sumD2 += (r.c - r.d) * (r.c - r.d)
	}
	S2, N := P-Q, int64(n)
	distinct := func(v []float64) int64 {
		seen := map[float64]bool{}
		for _, a := range v {
			seen[a] = true
		}
		return int64(len(seen))
	}
	m := min(distinct(x), distinct(y))
	// ratio returns num/den as float64, rounding once; sqrtRatio its root.
	ratio := func(num, den *big.Int) float64 {
		f, _ := new(big.Rat).SetFrac(num, den).Float64()
		return f
	}
	sqrtRatio := func(num, den *big.Int) float64 { return math.Sqrt(ratio(num, den)) }

	// n·Σd² − (P − Q)², the numerator of Σd² − (P − Q)²/n.
	ssd := new(big.Int).Sub(mul(bi(N), bi(sumD2)), mul(bi(S2), bi(S2)))

	// τ_a: ASE² = 4/(n(n−1))² · (Σd² − (P − Q)²/n)
	o.est[KendallA] = ratio(bi(S2), bi(N*(N-1)))
	o.se[KendallA] = sqrtRatio(mul(bi(4), ssd), mul(bi(N), bi(N*(N-1)), bi(N*(N-1))))
	// τ_c: ASE² = (2m/(n²(m−1)))² · (Σd² − (P − Q)²/n)
	if m >= 2 {
		o.est[KendallC] = ratio(bi(m*S2), bi(N*N*(m-1)))
		o.se[KendallC] = sqrtRatio(mul(bi(4*m*m), ssd), mul(bi(N), bi(N*N*(m-1)), bi(N*N*(m-1))))
	}
	// γ: ASE² = 16 Σ(Q·C_i − P·D_i)² / (P + Q)⁴
	if P+Q > 0 {
		sum := new(big.Int)
		for _, r := range o.rows {
			g := new(big.Int).Sub(mul(bi(Q), bi(r.c)), mul(bi(P), bi(r.d)))
			sum.Add(sum, mul(g, g))
		}
		o.est[Gamma] = ratio(bi(S2), bi(P+Q))
		o.se[Gamma] = sqrtRatio(mul(bi(16), sum), mul(bi(P+Q), bi(P+Q), bi(P+Q), bi(P+Q)))
	}
	// Somers' d: ASE² = 4 Σ(w·d_i − (P − Q)(n − t_i))² / w⁴, w = w_r or w_c
	somers := func(w int64, tie func(obsRow) int64) float64 {
		sum := new(big.Int)
		for _, r := range o.rows {
			a := new(big.Int).Sub(mul(bi(w), bi(r.c-r.d)), mul(bi(S2), bi(N-tie(r))))
			sum.Add(sum, mul(a, a))
		}
		return sqrtRatio(mul(bi(4), sum), mul(bi(w), bi(w), bi(w), bi(w)))
	}
	if wr > 0 {
		o.est[SomersDYX] = ratio(bi(S2), bi(wr))
		o.se[SomersDYX] = somers(wr, func(r obsRow) int64 { return r.t })
	}
	if wc > 0 {
		o.est[SomersDXY] = ratio(bi(S2), bi(wc))
		o.se[SomersDXY] = somers(wc, func(r obsRow) int64 { return r.u })
	}
	// τ_b: ASE = (1/w²)·√(Σ(2w·d_i + τ_b·v_i)² − n³τ_b²(w_r + w_c)²), with
	// v_i = t_i·w_c + u_i·w_r and w = √(w_r w_c). Multiplying through by w
	// (τ_b·w = P − Q) makes it rational:
	// ASE² = [Σ(2w_r w_c d_i + (P − Q)v_i)² − n³(P − Q)²(w_r + w_c)²] / (w_r w_c)³.
	if wr > 0 && wc > 0 {
		sum := new(big.Int)
		for _, r := range o.rows {
			v := new(big.Int).Add(mul(bi(r.t), bi(wc)), mul(bi(r.u), bi(wr)))
			a := new(big.Int).Add(mul(bi(2), bi(wr), bi(wc), bi(r.c-r.d)), mul(bi(S2), v))
			sum.Add(sum, mul(a, a))
		}
		sum.Sub(sum, mul(bi(N), bi(N), bi(N), bi(S2), bi(S2), bi(wr+wc), bi(wr+wc)))
		w3 := mul(bi(wr), bi(wc), bi(wr), bi(wc), bi(wr), bi(wc))
		o.est[KendallB] = float64(S2) / math.Sqrt(float64(wr)*float64(wc))
		o.se[KendallB] = sqrtRatio(sum, w3)
	}
	return o
}

// tiedSample draws n heavily tied observations (fixed-seed rng); kind picks
// the shape of the relation, as in TestCountPairsOracle.
func tiedSample(rng *rand.Rand, n, kind int) (x, y []float64) {
	kx, ky := 1+rng.IntN(8), 1+rng.IntN(8)
	x, y = make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(rng.IntN(kx))
		y[i] = float64(rng.IntN(ky))
		switch kind % 5 {
		case 1: // continuous y: no ties in y
			y[i] = rng.NormFloat64()
		case 2: // y follows x, with noise
			y[i] = x[i] + float64(rng.IntN(3))
		case 3: // y against x
			y[i] = -x[i] + float64(rng.IntN(2))
		case 4: // both continuous: no ties at all
			x[i], y[i] = rng.NormFloat64(), rng.NormFloat64()+x[i]
		}
	}
	return x, y
}

// seClose compares a standard error with the oracle's: 1e-12 relative (the
// oracle rounds once, the O(n log n) version sums n float64 squares), and
// for an exact 0 an absolute 1e-13 (the centred sums leave rounding residue
// of order 1e-16 per term).
func seClose(got, want float64) bool {
	if want == 0 {
		return math.Abs(got) <= 1e-13
	}
	return closeRel(got, want, 1e-12)
}

// TestOrdinalCountsOracle compares the per-observation counts of
// ordinalCounts with the O(n²) oracle, as multisets (ordinalCounts keeps
// them in sorted order), on many random heavily tied samples (fixed seed).
// They are integers, so the comparison is exact.
func TestOrdinalCountsOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261203, 3))
	for trial := range 1500 {
		n := rng.IntN(121)
		x, y := tiedSample(rng, n, trial)
		oc := ordinalCounts(x, y)
		got := make([]obsRow, n)
		for i := range got {
			got[i] = obsRow{int64(oc.conc[i]), int64(oc.disc[i]), int64(oc.tx[i]), int64(oc.ty[i])}
		}
		want := newOrdinalOracle(x, y).rows
		byRow := func(a, b obsRow) int {
			return cmp.Or(cmp.Compare(a.c, b.c), cmp.Compare(a.d, b.d), cmp.Compare(a.t, b.t), cmp.Compare(a.u, b.u))
		}
		slices.SortFunc(got, byRow)
		slices.SortFunc(want, byRow)
		if !slices.Equal(got, want) {
			t.Fatalf("trial %d (n = %d): counts differ\n got %v\nwant %v\nx = %v\ny = %v", trial, n, got, want, x, y)
		}
		pc := CountPairs(x, y)
		if oc.sumC != 2*pc.Concordant || oc.sumD != 2*pc.Discordant ||
			oc.distX != pc.TiesX.Distinct || oc.distY != pc.TiesY.Distinct {
			t.Fatalf("trial %d: totals P = %d, Q = %d, distinct %d, %d disagree with CountPairs %+v",
				trial, oc.sumC, oc.sumD, oc.distX, oc.distY, pc)
		}
	}
}

// TestOrdinalSEOracle compares every standard error with the published
// formula evaluated exactly by the oracle, and every PairCounts estimate
// with the oracle's, on random heavily tied samples (fixed seed), including
// n = 0, 1, 2 and constant columns. NaN must match NaN.
func TestOrdinalSEOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(4242, 17))
	for trial := range 1500 {
		n := rng.IntN(121)
		if trial < 30 {
			n = trial % 4 // the tiny cases, often
		}
		x, y := tiedSample(rng, n, trial)
		want := newOrdinalOracle(x, y)
		got := OrdinalSEs(x, y)
		pc := CountPairs(x, y)
		for _, m := range kendallFamily {
			if g, w := got[m], want.se[m]; !seClose(g, w) {
				t.Fatalf("trial %d (n = %d): SE of %v = %.17g, oracle %.17g\nx = %v\ny = %v", trial, n, m, g, w, x, y)
			}
			if g := OrdinalSE(x, y, m); g != got[m] && !(math.IsNaN(g) && math.IsNaN(got[m])) {
				t.Fatalf("trial %d: OrdinalSE(%v) = %v, OrdinalSEs gives %v", trial, m, g, got[m])
			}
			if g, w := pc.Estimate(m), clamp1(want.est[m]); !closeAbs(g, w, 1e-15) {
				t.Fatalf("trial %d (n = %d): %v = %.17g, oracle %.17g", trial, n, m, g, w)
			}
		}
	}
}

// TestOrdinalSELong runs the oracle at sizes where the Fenwick tree and the
// sorts work on many groups (fixed seed).
func TestOrdinalSELong(t *testing.T) {
	rng := rand.New(rand.NewPCG(99, 1))
	for _, n := range []int{500, 1500} {
		for kind := range 5 {
			x, y := tiedSample(rng, n, kind)
			if kind == 0 { // many groups: 40 × 30 categories
				for i := range x {
					x[i] = float64(rng.IntN(40))
					y[i] = float64(rng.IntN(30)) + x[i]/4
				}
			}
			want := newOrdinalOracle(x, y)
			got := OrdinalSEs(x, y)
			for _, m := range kendallFamily {
				if !seClose(got[m], want.se[m]) {
					t.Errorf("n = %d, kind %d: SE of %v = %.17g, oracle %.17g", n, kind, m, got[m], want.se[m])
				}
			}
		}
	}
}

// jobSatisfaction is the 4 × 4 table of income (rows: < 15, 15–25, 25–40,
// > 40 thousand dollars) by job satisfaction (columns: very dissatisfied,
// a little dissatisfied, moderately satisfied, very satisfied) for black
// males in the 1996 General Social Survey, as printed in A. Agresti (2002),
// Categorical Data Analysis, 2nd ed. (Wiley), Table 2.8 (from memory; the
// same counts appear in the JobSat data of R's vcdExtra and in Aalborg
// University's ASTA course notes, 2019, lecture K-3).
var jobSatisfaction = [][]int{
	{1, 3, 10, 6},
	{2, 3, 10, 7},
	{1, 6, 14, 12},
	{0, 1, 9, 11},
}

// expandTable turns a contingency table into observations: row index as x,
// column index as y, each cell repeated by its count.
func expandTable(tab [][]int) (x, y []float64) {
	for i, row := range tab {
		for j, count := range row {
			for range count {
				x = append(x, float64(i))
				y = append(y, float64(j))
			}
		}
	}
	return x, y
}

// TestOrdinalJobSatisfaction checks the worked example of Agresti (2002),
// Categorical Data Analysis, 2nd ed., Table 2.8 and the text on ordinal
// association that uses it (from memory, section numbers not checked): for the income × job satisfaction table, C = 1331 concordant and
// D = 849 discordant pairs, γ = 482/2180 = 0.221 with ASE 0.117. The book
// prints 3 decimals, so the tolerance is half a unit in the last place. The
// values are confirmed by the O(n²) oracle (TestOrdinalSEOracle) and by R
// from the table-form formulas (TestOrdinalAgainstR, case job_satisfaction).
func TestOrdinalJobSatisfaction(t *testing.T) {
	x, y := expandTable(jobSatisfaction)
	c := CountPairs(x, y)
	if c.N != 96 || c.Concordant != 1331 || c.Discordant != 849 {
		t.Fatalf("n = %d, C = %d, D = %d; want 96, 1331, 849 (Agresti 2002)", c.N, c.Concordant, c.Discordant)
	}
	if got := c.Gamma(); math.Abs(got-0.221) > 5e-4 {
		t.Errorf("gamma = %.6f, want 0.221 (Agresti 2002)", got)
	}
	if got := c.Gamma(); math.Abs(got-482.0/2180) > 1e-15 {
		t.Errorf("gamma = %.17g, want 482/2180 exactly", got)
	}
	if got := OrdinalSE(x, y, Gamma); math.Abs(got-0.117) > 5e-4 {
		t.Errorf("ASE(gamma) = %.6f, want 0.117 (Agresti 2002)", got)
	}
	// τ_c by hand from Stuart's formula: m = 4, S = 482, n = 96:
	// 2·4·482/(96²·3) = 3856/27648.
	if got := c.TauC(); math.Abs(got-3856.0/27648) > 1e-15 {
		t.Errorf("tau-c = %.17g, want 3856/27648", got)
	}
	// Somers' d by hand: pairs untied on x = C(96,2) − Σ C(row total, 2)
	// = 4560 − (190 + 231 + 528 + 210) = 3401; on y = 4560 − (6 + 78 + 903
	// + 666) = 2943.
	if got := c.SomersDYX(); math.Abs(got-482.0/3401) > 1e-15 {
		t.Errorf("d_yx = %.17g, want 482/3401", got)
	}
	if got := c.SomersDXY(); math.Abs(got-482.0/2943) > 1e-15 {
		t.Errorf("d_xy = %.17g, want 482/2943", got)
	}
}

// The reference file written by testdata/ref/ordinal_reference.R (R 4.2.2,
// Hmisc; see its header).
var ordinalReferencePath = filepath.Join("..", "..", "testdata", "ref", "ordinal_reference.csv")

// loadOrdinalReference reads the case,quantity,value file (readRefFile).
func loadOrdinalReference(t *testing.T) map[string]refCase {
	return readRefFile(t, ordinalReferencePath)
}

// TestOrdinalAgainstR checks estimates and standard errors against
// testdata/ref/ordinal_reference.csv, written by ordinal_reference.R with
// R 4.2.2 and Hmisc:
//
//   - est_<measure>: base R, counting all pairs by brute force (a check of
//     our counting only), and cor(method = "kendall") for τ_b;
//   - ase_<measure>: base R, the published table-form formulas (cell counts
//     n_ij, A_ij, D_ij of table(x, y)): a second implementation of the same
//     formulas in different notation, not an independent method;
//   - hmisc_dxy_*, hmisc_sd_*: Hmisc 4.8.0 rcorr.cens(x, y) and
//     rcorr.cens(y, x), an independent program. Found by testing (see the
//     script's header): rcorr.cens(a, b) reports Dxy = (n_c − n_d) / (pairs
//     untied on b), Somers' d with a dependent, so rcorr.cens(x, y) is d_xy;
//     its S.D. is the same delta-method ASE1.
//
// Tolerances: estimates 1e-12 absolute (statTol); standard errors 1e-12
// relative, both the table-form ones and Hmisc's S.D. (they agree to within
// 4e-15 on these cases; R evaluates the uncentred sums, whose cancellation
// could cost a few more digits on other data).
func TestOrdinalAgainstR(t *testing.T) {
	cases := loadOrdinalReference(t)
	if len(cases) < 6 {
		t.Fatalf("reference file has %d cases, want at least 6", len(cases))
	}
	for _, name := range sortedNames(cases) {
		rc := cases[name]
		t.Run(name, func(t *testing.T) {
			x, y := rc["x"], rc["y"]
			one := func(q string) float64 {
				v, ok := rc[q]
				if !ok || len(v) != 1 {
					t.Fatalf("quantity %q missing or not scalar", q)
				}
				return v[0]
			}
			if int(one("n")) != len(x) || len(x) != len(y) {
				t.Fatalf("n = %v but %d x and %d y values", one("n"), len(x), len(y))
			}
			c := CountPairs(x, y)
			se := OrdinalSEs(x, y)
			for _, m := range kendallFamily {
				if got, want := c.Estimate(m), one("est_"+m.String()); !closeAbs(got, want, statTol) {
					t.Errorf("%v = %.17g, R %.17g", m, got, want)
				}
				if got, want := se[m], one("ase_"+m.String()); !closeRel(got, want, 1e-12) {
					t.Errorf("ASE of %v = %.17g, R (table formula) %.17g", m, got, want)
				}
			}
			if got, want := c.TauB(), one("cor_kendall"); !closeAbs(got, want, statTol) {
				t.Errorf("tau-b = %.17g, cor(method = \"kendall\") %.17g", got, want)
			}
			// Hmisc's Dxy is computed in double precision from counts:
			// agreement to 1e-12 absolute.
			if got, want := c.SomersDXY(), one("hmisc_dxy_xy"); !closeAbs(got, want, statTol) {
				t.Errorf("d_xy = %.17g, Hmisc rcorr.cens(x, y) Dxy %.17g", got, want)
			}
			if got, want := c.SomersDYX(), one("hmisc_dxy_yx"); !closeAbs(got, want, statTol) {
				t.Errorf("d_yx = %.17g, Hmisc rcorr.cens(y, x) Dxy %.17g", got, want)
			}
			if got, want := se[SomersDXY], one("hmisc_sd_xy"); !closeRel(got, want, 1e-12) {
				t.Errorf("ASE of d_xy = %.17g, Hmisc rcorr.cens(x, y) S.D. %.17g", got, want)
			}
			if got, want := se[SomersDYX], one("hmisc_sd_yx"); !closeRel(got, want, 1e-12) {
				t.Errorf("ASE of d_yx = %.17g, Hmisc rcorr.cens(y, x) S.D. %.17g", got, want)
			}
		})
	}
}

// TestOrdinalSEBootstrap checks that the asymptotic standard errors describe
// the sampling variation they claim to: for n = 400 tied observations, each
// agrees with the standard deviation of its estimate over 2000 bootstrap
// resamples (fixed seed) within 10%. The bootstrap standard deviation itself
// has a Monte Carlo error of about 1/√(2·2000) ≈ 1.6%; the ratios seen are
// 1.008–1.011.
func TestOrdinalSEBootstrap(t *testing.T) {
	const n, reps = 400, 2000
	rng := rand.New(rand.NewPCG(2026, 400))
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = float64(rng.IntN(5))
		y[i] = math.Floor(x[i]/2 + 1.5*rng.NormFloat64()) // about 8 levels
	}
	se := OrdinalSEs(x, y)
	sum, sum2 := make([]float64, len(kendallFamily)), make([]float64, len(kendallFamily))
	bx, by := make([]float64, n), make([]float64, n)
	for range reps {
		for i := range bx {
			k := rng.IntN(n)
			bx[i], by[i] = x[k], y[k]
		}
		c := CountPairs(bx, by)
		for j, m := range kendallFamily {
			v := c.Estimate(m)
			sum[j] += v
			sum2[j] += v * v
		}
	}
	for j, m := range kendallFamily {
		mean := sum[j] / reps
		sd := math.Sqrt((sum2[j] - reps*mean*mean) / (reps - 1))
		if r := se[m] / sd; r < 0.9 || r > 1.1 {
			t.Errorf("%v: ASE %.5f, bootstrap SD %.5f (ratio %.3f)", m, se[m], sd, r)
		}
	}
}

// TestOrdinalEdgeCases: undefined measures are NaN in both the estimate and
// the standard error, and a perfect untied relation has standard error 0.
func TestOrdinalEdgeCases(t *testing.T) {
	for _, n := range []int{0, 1} {
		x, y := make([]float64, n), make([]float64, n)
		for _, m := range kendallFamily {
			if v := OrdinalSE(x, y, m); !math.IsNaN(v) {
				t.Errorf("n = %d: SE of %v = %v, want NaN", n, m, v)
			}
		}
	}
	// x constant: S = 0; τ_b, τ_c, γ and d_yx are undefined; τ_a = d_xy = 0
	// with standard error 0 (hand-derived: every d_i = 0 and S = 0).
	x, y := []float64{2, 2, 2, 2}, []float64{1, 2, 3, 3}
	c, se := CountPairs(x, y), OrdinalSEs(x, y)
	for _, m := range []Measure{KendallB, KendallC, Gamma, SomersDYX} {
		if !math.IsNaN(c.Estimate(m)) || !math.IsNaN(se[m]) {
			t.Errorf("constant x: %v = %v, SE %v; want NaN, NaN", m, c.Estimate(m), se[m])
		}
	}
	for _, m := range []Measure{KendallA, SomersDXY} {
		if c.Estimate(m) != 0 || se[m] != 0 {
			t.Errorf("constant x: %v = %v, SE %v; want 0, 0", m, c.Estimate(m), se[m])
		}
	}
	// Perfect untied relation: every d_i = n − 1, so all sums vanish.
	x, y = []float64{1, 2, 3, 4, 5}, []float64{10, 20, 30, 40, 50}
	c, se = CountPairs(x, y), OrdinalSEs(x, y)
	for _, m := range kendallFamily {
		if c.Estimate(m) != 1 || se[m] > 1e-15 {
			t.Errorf("perfect relation: %v = %v, SE %v; want 1, 0", m, c.Estimate(m), se[m])
		}
	}
	// τ_c of a 2 × 2 layout by hand: x = 0, 0, 1, 1 and y = 0, 1, 1, 1
	// give 2 concordant pairs (first with third and fourth) and no
	// discordant one, so S = 2, m = 2, n = 4: τ_c = 2·2·2/(16·1) = 0.5.
	x, y = []float64{0, 0, 1, 1}, []float64{0, 1, 1, 1}
	if got := CountPairs(x, y).TauC(); got != 0.5 {
		t.Errorf("tau-c of the 2 × 2 layout = %v, want 0.5 (hand-computed)", got)
	}
}

func TestOrdinalPanics(t *testing.T) {
	mustPanic(t, "Estimate(Spearman)", func() { CountPairs([]float64{1, 2}, []float64{1, 2}).Estimate(Spearman) })
	mustPanic(t, "Estimate(0)", func() { CountPairs(nil, nil).Estimate(0) })
	mustPanic(t, "OrdinalSE(PearsonR)", func() { OrdinalSE([]float64{1, 2}, []float64{1, 2}, PearsonR) })
	mustPanic(t, "OrdinalSE lengths", func() { OrdinalSE([]float64{1, 2}, []float64{1}, Gamma) })
	mustPanic(t, "OrdinalSEs NaN", func() { OrdinalSEs([]float64{1, math.NaN()}, []float64{1, 2}) })
	mustPanic(t, "WaldInterval level", func() { WaldInterval(0.1, 0.1, 1, TwoSided) })
	mustPanic(t, "WaldInterval alt", func() { WaldInterval(0.1, 0.1, 0.95, 0) })
	mustPanic(t, "WaldInterval se < 0", func() { WaldInterval(0.1, -0.1, 0.95, TwoSided) })
}

// TestWaldInterval checks the interval arithmetic. z₀.₉₇₅ = 1.959963984540054
// and z₀.₉₅ = 1.6448536269514722 are R 4.2.2's qnorm(0.975), qnorm(0.95);
// 1e-15 absolute allows the last-bit difference of the quantile routines.
func TestWaldInterval(t *testing.T) {
	const z975, z95 = 1.959963984540054, 1.6448536269514722
	for _, tc := range []struct {
		est, se float64
		alt     Alternative
		lo, hi  float64
	}{
		{0.2, 0.1, TwoSided, 0.2 - z975*0.1, 0.2 + z975*0.1},
		{0.2, 0.1, Greater, 0.2 - z95*0.1, 1},
		{0.2, 0.1, Less, -1, 0.2 + z95*0.1},
		{0.9, 0.2, TwoSided, 0.9 - z975*0.2, 1},    // clamped above
		{-0.9, 0.2, TwoSided, -1, -0.9 + z975*0.2}, // clamped below
		{-0.9, 0.2, Less, -1, -0.9 + z95*0.2},
		{0.5, 0, TwoSided, 0.5, 0.5},
		{0.5, math.Inf(1), TwoSided, -1, 1},
		{math.NaN(), 0.1, TwoSided, math.NaN(), math.NaN()},
		{0.1, math.NaN(), Greater, math.NaN(), math.NaN()},
	} {
		lo, hi := WaldInterval(tc.est, tc.se, 0.95, tc.alt)
		if !closeAbs(lo, tc.lo, 1e-15) || !closeAbs(hi, tc.hi, 1e-15) {
			t.Errorf("WaldInterval(%v, %v, 0.95, %v) = [%.17g, %.17g], want [%.17g, %.17g]",
				tc.est, tc.se, tc.alt, lo, hi, tc.lo, tc.hi)
		}
	}
}

// TestMeasureWords: the words are the recipe contract; ParseMeasure inverts
// String, and Measures lists them in declaration order.
func TestMeasureWords(t *testing.T) {
	want := []string{"spearman", "kendall_b", "pearson", "kendall_a", "kendall_c", "gamma", "somers_d_yx", "somers_d_xy"}
	ms := Measures()
	if len(ms) != len(want) {
		t.Fatalf("Measures() = %v", ms)
	}
	for i, m := range ms {
		if int(m) != i+1 || m.String() != want[i] {
			t.Errorf("Measures()[%d] = %d %q, want %d %q", i, int(m), m.String(), i+1, want[i])
		}
		if got, ok := ParseMeasure(want[i]); !ok || got != m {
			t.Errorf("ParseMeasure(%q) = %v, %v", want[i], got, ok)
		}
	}
	for _, bad := range []string{"", "Gamma", "somers_d", "kendall", " gamma"} {
		if m, ok := ParseMeasure(bad); ok || m != 0 {
			t.Errorf("ParseMeasure(%q) = %v, %v; want 0, false", bad, m, ok)
		}
	}
	if got := Measure(0).String(); got != "Measure(0)" {
		t.Errorf("zero Measure prints %q", got)
	}
}

// Benchmarks at n = 1e5 on the continuous data of bench_test.go and on
// heavily tied data (10 × 10 categories). BenchmarkOrdinalCountPairs is the
// baseline (one CountPairs, which the estimates need anyway), so OrdinalSEs
// can be quoted as a multiple of it:
//
//	go test -run '^$' -bench 'Ordinal' -benchmem ./engine/stats/
func ordinalBenchData(tied bool) (x, y []float64) {
	x, y = benchData(100_000)
	if tied {
		for i := range x {
			x[i] = math.Floor(2*x[i] + 5)
			y[i] = math.Floor(2*y[i] + 5)
		}
	}
	return x, y
}

func BenchmarkOrdinalCountPairs(b *testing.B) {
	for _, tied := range []bool{false, true} {
		x, y := ordinalBenchData(tied)
		b.Run("n=100000/tied="+strconv.FormatBool(tied), func(b *testing.B) {
			for b.Loop() {
				CountPairs(x, y)
			}
		})
	}
}

func BenchmarkOrdinalSEs(b *testing.B) {
	for _, tied := range []bool{false, true} {
		x, y := ordinalBenchData(tied)
		b.Run("n=100000/tied="+strconv.FormatBool(tied), func(b *testing.B) {
			for b.Loop() {
				OrdinalSEs(x, y)
			}
		})
	}
}
