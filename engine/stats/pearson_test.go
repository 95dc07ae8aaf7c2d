package stats

import (
	"bufio"
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

var publishedDir = filepath.Join("..", "..", "testdata", "published")

// readNorris returns the 36 (x, y) observations of the NIST StRD "Norris"
// data set: the lines after the "Data:" header that hold two numbers, the
// file listing y before x.
func readNorris(t *testing.T) (x, y []float64) {
	t.Helper()
	f, err := os.Open(filepath.Join(publishedDir, "Norris.dat"))
	if err != nil {
		t.Fatalf("open Norris data: %v", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	inData := false
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) == 3 && fields[0] == "Data:" && fields[1] == "y" {
			inData = true
			continue
		}
		if !inData || len(fields) != 2 {
			continue
		}
		yv, err1 := strconv.ParseFloat(fields[0], 64)
		xv, err2 := strconv.ParseFloat(fields[1], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("Norris.dat: bad data line %q", sc.Text())
		}
		x, y = append(x, xv), append(y, yv)
	}
	if err := sc.Err(); err != nil {
		t.Fatalf("read Norris data: %v", err)
	}
	if len(x) != 36 {
		t.Fatalf("Norris.dat: %d observations, want 36", len(x))
	}
	return x, y
}

// TestPearsonNorris: NIST Statistical Reference Datasets, linear regression,
// "Norris" (J. Norris, NIST, calibration of ozone monitors). Certified
// R² = 0.999993745883712 (15 digits); for a simple regression r = +√R² =
// 0.99999687293696671. The certified value is given to 15 digits, so r is
// known to ~3e-16; we ask for 1e-13.
func TestPearsonNorris(t *testing.T) {
	x, y := readNorris(t)
	const want = 0.99999687293696671
	if got := Pearson(x, y); math.Abs(got-want) > 1e-13 {
		t.Errorf("Pearson(Norris) = %.17g, want %.17g (NIST StRD certified)", got, want)
	}
	if got := math.Sqrt(0.999993745883712); math.Abs(got-want) > 1e-16 {
		t.Errorf("√R² = %.17g, want %.17g: the derived check value is wrong", got, want)
	}
}

// TestPearsonAnscombe: F. J. Anscombe (1973), Graphs in statistical
// analysis, The American Statistician 27(1), 17–21. The four sets share
// their summary statistics; r is quoted as 0.816 for all four (from memory of
// the paper's summary, which gives R² = 0.667). The four sets actually give
// r = 0.8162…0.8165 (set 4 rounds to 0.817), so the quoted value holds to
// 1e-3, not to half a unit in its last place; that is the tolerance. Each
// value is also checked to 1e-12 against R 4.2.2, cor(), in
// testdata/ref/stats_reference.csv. The data are
// datasets::anscombe written by testdata/ref/make_reference.R.
func TestPearsonAnscombe(t *testing.T) {
	f, err := os.Open(filepath.Join(publishedDir, "anscombe.csv"))
	if err != nil {
		t.Fatalf("open Anscombe data: %v", err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("read Anscombe data: %v", err)
	}
	cols := map[string][]float64{}
	for _, rec := range recs[1:] {
		for j, name := range recs[0] {
			v, err := strconv.ParseFloat(rec[j], 64)
			if err != nil {
				t.Fatalf("anscombe.csv: %v", err)
			}
			cols[name] = append(cols[name], v)
		}
	}
	ref := loadReference(t)
	for k := 1; k <= 4; k++ {
		x, y := cols["x"+strconv.Itoa(k)], cols["y"+strconv.Itoa(k)]
		if len(x) != 11 {
			t.Fatalf("set %d has %d observations, want 11", k, len(x))
		}
		got := Pearson(x, y)
		if math.Abs(got-0.816) > 1e-3 {
			t.Errorf("set %d: r = %.6f, want 0.816 ± 0.001 (Anscombe 1973)", k, got)
		}
		if want := ref["anscombe_"+strconv.Itoa(k)]["pearson_r"][0]; math.Abs(got-want) > 1e-12 {
			t.Errorf("set %d: r = %.17g, R 4.2.2 cor() gives %.17g", k, got, want)
		}
	}
}

// TestPearsonUndefined: r is undefined for fewer than 2 pairs, a constant
// column, or a non-finite value (by definition).
func TestPearsonUndefined(t *testing.T) {
	for _, tc := range []struct {
		name string
		x, y []float64
	}{
		{"empty", nil, nil},
		{"one", []float64{1}, []float64{1}},
		{"constant_x", []float64{0.1, 0.1, 0.1}, []float64{1, 2, 3}},
		{"constant_y", []float64{1, 2, 3}, []float64{0.3, 0.3, 0.3}},
		{"inf", []float64{1, 2, math.Inf(1)}, []float64{1, 2, 3}},
	} {
		if got := Pearson(tc.x, tc.y); !math.IsNaN(got) {
			t.Errorf("%s: Pearson = %v, want NaN", tc.name, got)
		}
	}
	mustPanic(t, "length mismatch", func() { Pearson([]float64{1, 2}, []float64{1}) })
}

// TestPearsonExtremes: a perfect linear relation gives ±1 to within the
// rounding of the centred sums (by definition r = ±1; 0.1-step data are not
// exact in binary, so a couple of ulps are allowed), identical or reversed
// integer ranks give exactly ±1 (so a perfectly monotone sample prints 1,
// not 0.9999999999999998), and a
// large offset does not disturb r (the same data shifted by 1e9 must give
// the same r to rounding).
func TestPearsonExtremes(t *testing.T) {
	x := []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7}
	y := make([]float64, len(x))
	shifted := make([]float64, len(x))
	for i, v := range x {
		y[i] = 3 - 2*v
		shifted[i] = v + 1e9
	}
	if got := Pearson(x, y); math.Abs(got+1) > 4e-16 {
		t.Errorf("Pearson(x, 3 − 2x) = %.17g, want −1 within 2 ulps", got)
	}
	for n := 3; n <= 200; n++ {
		up, down := make([]float64, n), make([]float64, n)
		for i := range up {
			up[i], down[i] = float64(i+1), float64(n-i)
		}
		if got := Pearson(up, up); got != 1 {
			t.Errorf("n = %d: Pearson(ranks, ranks) = %.17g, want exactly 1", n, got)
		}
		if got := Pearson(up, down); got != -1 {
			t.Errorf("n = %d: Pearson(ranks, reversed) = %.17g, want exactly −1", n, got)
		}
	}
	noisy := []float64{1, 3, 2, 5, 4, 7, 6}
	a, b := Pearson(x, noisy), Pearson(shifted, noisy)
	if math.Abs(a-b) > 1e-7 { // x + 1e9 keeps only ~7 digits of x
		t.Errorf("Pearson shifted by 1e9 = %.17g, unshifted %.17g", b, a)
	}
}

// TestSpearmanNoTies: without ties ρ equals 1 − 6Σd²/(n(n²−1))
// (Spearman 1904), used here only as a check. Ranks of x: 1..5; of y:
// 2 1 4 3 5, Σd² = 4, so ρ = 1 − 24/120 = 0.8 (hand-computed).
func TestSpearmanNoTies(t *testing.T) {
	x := []float64{1.5, 2.5, 3.5, 4.5, 5.5}
	y := []float64{20, 10, 40, 30, 50}
	if got := SpearmanRho(x, y, TieAverage); math.Abs(got-0.8) > 1e-15 {
		t.Errorf("SpearmanRho = %.17g, want 0.8", got)
	}
}

// TestPearsonExtremeMagnitudes: r is scale-free, so data near the ends of
// the float64 range give the r of the same data at ordinary scale (by
// definition of r; the scale factors are powers of ten, so the tolerance
// allows for their rounding).
func TestPearsonExtremeMagnitudes(t *testing.T) {
	x := []float64{1, 2, 3, 4, 5, 6}
	y := []float64{2, 1, 4, 3, 6, 5}
	want := Pearson(x, y)
	for _, sc := range [][2]float64{{1e160, 1e-161}, {1e160, 1e160}, {1e-161, 1e-161}, {1e300, 1}, {1e-300, 1e-300}} {
		xs, ys := make([]float64, len(x)), make([]float64, len(y))
		for i := range x {
			xs[i], ys[i] = x[i]*sc[0], y[i]*sc[1]
		}
		if got := Pearson(xs, ys); math.Abs(got-want) > 1e-14 {
			t.Errorf("scales %g, %g: r = %.17g, want %.17g", sc[0], sc[1], got, want)
		}
	}
}
