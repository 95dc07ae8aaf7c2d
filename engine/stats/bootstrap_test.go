package stats

import (
	"context"
	"encoding/csv"
	"errors"
	"flag"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"
)

// The comparison with R's package boot feeds R the replicates drawn here,
// since the generators differ. TestWriteBootstrapReplicates writes them
// (only when asked):
//
//	go test ./engine/stats/ -run TestWriteBootstrapReplicates -args -write
//	Rscript testdata/ref/bootstrap_reference.R
//
// and TestBootstrapAgainstR reads both committed files.
var writeReplicates = flag.Bool("write", false, "rewrite testdata/ref/bootstrap_replicates.csv")

var (
	replicatesPath   = filepath.Join("..", "..", "testdata", "ref", "bootstrap_replicates.csv")
	bootReferencePth = filepath.Join("..", "..", "testdata", "ref", "bootstrap_reference.csv")
)

// pairedStatistic returns a NewStatistic computing the named measure on the
// rows idx of (x, y), with per-worker gather buffers. Test-only code.
func pairedStatistic(name string, x, y []float64) NewStatistic {
	var f func(a, b []float64) float64
	switch name {
	case "pearson":
		f = Pearson
	case "spearman":
		f = func(a, b []float64) float64 { return SpearmanRho(a, b, TieAverage) }
	case "kendall_a":
		f = func(a, b []float64) float64 { return CountPairs(a, b).TauA() }
	case "kendall_b":
		f = KendallTauB
	default:
		panic("pairedStatistic: unknown " + name)
	}
	return func() func([]int) float64 {
		a, b := make([]float64, len(x)), make([]float64, len(y))
		return func(idx []int) float64 {
			a, b := a[:len(idx)], b[:len(idx)]
			for j, i := range idx {
				a[j], b[j] = x[i], y[i]
			}
			return f(a, b)
		}
	}
}

// bootCase is one case of the comparison with R.
type bootCase struct {
	name      string
	statistic string
	x, y      []float64
	groups    int // jackknife deletions; n for delete-one
}

const bootCaseResamples = 1999

func (c bootCase) key() StreamKey { return NewStreamKey(20261202, "bootstrap-reference", c.name) }

// bootCases returns the seeded samples of the comparison: continuous data
// (no replicate equals the estimate, so boot.ci must agree exactly), ordinal
// data with ties, τ_a on n = 12 (many replicates equal the estimate: the
// half-tie rule matters), n = 10 with three y levels (some resamples are
// constant in y: dropped), and a grouped jackknife (12 groups of 5 rows).
func bootCases() []bootCase {
	rng := rand.New(rand.NewPCG(20261202, 77))
	var cases []bootCase
	x, y := make([]float64, 30), make([]float64, 30)
	for i := range x {
		x[i] = 10 + 2*rng.NormFloat64()
		y[i] = 0.6*x[i] + rng.NormFloat64()*math.Exp(0.3*rng.NormFloat64())
	}
	cases = append(cases, bootCase{"pearson_n30", "pearson", x, y, 30})

	x, y = make([]float64, 40), make([]float64, 40)
	for i := range x {
		x[i] = float64(1 + rng.IntN(5))
		y[i] = math.Min(7, math.Max(1, x[i]+float64(rng.IntN(5))-2))
	}
	cases = append(cases, bootCase{"spearman_ties_n40", "spearman", x, y, 40})

	x, y = make([]float64, 12), make([]float64, 12)
	for i := range x {
		x[i] = float64(rng.IntN(6))
		y[i] = float64(rng.IntN(4)) + float64(x[i])/3
	}
	cases = append(cases, bootCase{"kendall_a_n12", "kendall_a", x, y, 12})

	cases = append(cases, bootCase{"spearman_nan_n10", "spearman",
		[]float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, []float64{1, 1, 1, 1, 1, 1, 2, 1, 3, 2}, 10})

	x, y = make([]float64, 60), make([]float64, 60)
	for i := range x {
		x[i] = rng.ExpFloat64()
		y[i] = x[i]*x[i] + 2*rng.ExpFloat64()
	}
	cases = append(cases, bootCase{"spearman_grouped_n60", "spearman", x, y, 12})
	return cases
}

func formatValues(v []float64) string {
	s := make([]string, len(v))
	for i, a := range v {
		if math.IsNaN(a) {
			s[i] = "NA"
		} else {
			s[i] = strconv.FormatFloat(a, 'g', 17, 64)
		}
	}
	return strings.Join(s, " ")
}

func parseValues(t *testing.T, s string) []float64 {
	t.Helper()
	var out []float64
	for _, f := range strings.Fields(s) {
		v := math.NaN()
		if f != "NA" {
			var err error
			if v, err = strconv.ParseFloat(f, 64); err != nil {
				t.Fatalf("parse %q: %v", f, err)
			}
		}
		out = append(out, v)
	}
	return out
}

// readCaseFile reads a case,quantity,value file into case → quantity →
// value text.
func readCaseFile(t *testing.T, path string) map[string]map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("read %s: %v", path, err)
	}
	out := map[string]map[string]string{}
	for _, r := range recs[1:] {
		if out[r[0]] == nil {
			out[r[0]] = map[string]string{}
		}
		out[r[0]][r[1]] = r[2]
	}
	return out
}

// caseReplicates draws the case's replicates and jackknife values.
func caseReplicates(t *testing.T, c bootCase, workers int) (t0 float64, reps, jack []float64) {
	t.Helper()
	n := len(c.x)
	stat := pairedStatistic(c.statistic, c.x, c.y)
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	t0 = stat()(all)
	reps, err := bootstrapReplicates(context.Background(), n, stat, bootCaseResamples, c.key(), workers, nil)
	if err != nil {
		t.Fatal(err)
	}
	jack, err = jackknife(context.Background(), n, stat, c.groups, c.key(), workers, nil)
	if err != nil {
		t.Fatal(err)
	}
	return t0, reps, jack
}

// TestWriteBootstrapReplicates writes testdata/ref/bootstrap_replicates.csv
// when run with -args -write; otherwise it is skipped.
func TestWriteBootstrapReplicates(t *testing.T) {
	if !*writeReplicates {
		t.Skip("run with -args -write to rewrite " + replicatesPath)
	}
	var rows [][]string
	rows = append(rows, []string{"case", "quantity", "value"})
	for _, c := range bootCases() {
		t0, reps, jack := caseReplicates(t, c, 1)
		add := func(q, v string) { rows = append(rows, []string{c.name, q, v}) }
		add("statistic", c.statistic)
		add("x", formatValues(c.x))
		add("y", formatValues(c.y))
		add("t0", formatValues([]float64{t0}))
		add("t", formatValues(reps))
		add("jack_go", formatValues(jack))
		if c.groups != len(c.x) {
			g := jackknifeGroupsOf(len(c.x), c.groups, c.key())
			gf := make([]float64, len(g))
			for i, v := range g {
				gf[i] = float64(v)
			}
			add("groups", formatValues(gf))
		}
	}
	f, err := os.Create(replicatesPath)
	if err != nil {
		t.Fatal(err)
	}
	w := csv.NewWriter(f)
	if err := w.WriteAll(rows); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
}

// TestBootstrapAgainstR compares the interval ends with R 4.2.2 and package
// boot 1.3-28.1, computed by testdata/ref/bootstrap_reference.R from the
// committed replicates (testdata/ref/bootstrap_reference.csv):
//
//   - the replicates and the jackknife values are first regenerated here and
//     must equal the committed ones (the draws are reproducible);
//   - R's own jackknife (the statistic recomputed by cor() without each row
//     or group) must match ours within 1e-12 (different summation orders);
//   - percentile and BCa ends for levels 0.95 and 0.8 and all three
//     alternatives, computed in R with boot's normal-scale interpolation
//     (boot:::norm.inter) and the half-tie bias correction, must match within
//     1e-10 (R's and gonum's Φ and Φ⁻¹ differ by ~1e-15; the interpolation
//     weights carry that into the ends);
//   - two-sided, boot.ci(type = "perc") must match too, and boot.ci(type =
//     "bca") where no replicate equals the estimate; in kendall_a_n12, where
//     87 do, boot's count without ties must differ from ours, showing the
//     case tests the rule.
func TestBootstrapAgainstR(t *testing.T) {
	reps := readCaseFile(t, replicatesPath)
	ref := readCaseFile(t, bootReferencePth)
	for _, c := range bootCases() {
		t.Run(c.name, func(t *testing.T) {
			committed, r := reps[c.name], ref[c.name]
			if committed == nil || r == nil {
				t.Fatalf("case missing from the reference files")
			}
			t0, tt, jack := caseReplicates(t, c, 3)
			if want := parseValues(t, committed["t0"]); t0 != want[0] {
				t.Errorf("t0 = %.17g, committed %.17g", t0, want[0])
			}
			if want := parseValues(t, committed["t"]); !slices.EqualFunc(tt, want, sameFloat) {
				t.Fatalf("replicates differ from the committed ones: the random streams changed")
			}
			rjack := parseValues(t, r["jack"])
			if len(rjack) != len(jack) {
				t.Fatalf("%d jackknife values, R has %d", len(jack), len(rjack))
			}
			for i := range jack {
				if !closeAbs(jack[i], rjack[i], 1e-12) {
					t.Errorf("jackknife value %d = %.17g, R gives %.17g", i, jack[i], rjack[i])
				}
			}
			ties := parseValues(t, r["ties_at_estimate"])[0]
			if c.name == "kendall_a_n12" && ties == 0 {
				t.Errorf("no replicate equals the estimate; the case should exercise ties")
			}
			for _, level := range []float64{0.95, 0.8} {
				lv := strconv.FormatFloat(level, 'g', -1, 64)
				for _, alt := range allAlts {
					for _, bca := range []bool{false, true} {
						method := "perc"
						if bca {
							method = "bca"
						}
						lo, hi, err := bootstrapEnds(t0, tt, jack, level, alt, bca)
						if err != nil {
							t.Fatalf("%s %v %v: %v", method, alt, level, err)
						}
						want := parseValues(t, r[method+"_"+alt.String()+"_"+lv])
						if !closeAbs(lo, want[0], 1e-10) || !closeAbs(hi, want[1], 1e-10) {
							t.Errorf("%s %v %v: [%.17g, %.17g], R gives [%.17g, %.17g]", method, alt, level, lo, hi, want[0], want[1])
						}
						if alt != TwoSided {
							continue
						}
						boot := parseValues(t, r["boot_"+method+"_two-sided_"+lv])
						agree := closeAbs(lo, boot[0], 1e-10) && closeAbs(hi, boot[1], 1e-10)
						switch {
						case (!bca || ties == 0) && !agree:
							t.Errorf("%s %v: [%.17g, %.17g], boot.ci gives [%.17g, %.17g]", method, level, lo, hi, boot[0], boot[1])
						case bca && c.name == "kendall_a_n12" && agree:
							t.Errorf("bca %v: %v replicates equal the estimate, yet boot.ci (no half ties) agrees", level, ties)
						}
					}
				}
			}
		})
	}
}

func sameFloat(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }

// TestBootstrapIntervalPublic: BootstrapInterval gives exactly the ends of
// bootstrapEnds on the replicates and jackknife it draws (so the comparison
// with R covers the public function), for every worker count.
func TestBootstrapIntervalPublic(t *testing.T) {
	for _, c := range bootCases() {
		if c.groups != len(c.x) {
			continue // BootstrapInterval groups only beyond 2000 rows
		}
		t0, tt, jack := caseReplicates(t, c, 1)
		for _, bca := range []bool{false, true} {
			wantLo, wantHi, _ := bootstrapEnds(t0, tt, jack, 0.9, TwoSided, bca)
			for _, w := range []int{1, 4} {
				lo, hi, err := BootstrapInterval(context.Background(), len(c.x), pairedStatistic(c.statistic, c.x, c.y),
					BootstrapSpec{Resamples: bootCaseResamples, Level: 0.9, Alt: TwoSided, BCa: bca, Key: c.key(), Workers: w})
				if err != nil {
					t.Fatal(err)
				}
				if lo != wantLo || hi != wantHi {
					t.Errorf("%s bca=%v workers=%d: [%v, %v], want [%v, %v]", c.name, bca, w, lo, hi, wantLo, wantHi)
				}
			}
		}
	}
}

// TestBootstrapContainsEstimate: on typical samples every interval
// contains the estimate, lies in [−1, 1], and one-sided intervals keep
// their fixed end.
func TestBootstrapContainsEstimate(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := range 4 {
		n := 25 + 15*trial
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64()
			y[i] = float64(trial-2)/3*x[i] + rng.NormFloat64()
			if trial%2 == 1 {
				x[i], y[i] = math.Round(x[i]*2), math.Round(y[i])
			}
		}
		for _, name := range []string{"spearman", "kendall_b", "pearson"} {
			stat := pairedStatistic(name, x, y)
			all := make([]int, n)
			for i := range all {
				all[i] = i
			}
			est := stat()(all)
			for _, alt := range allAlts {
				for _, bca := range []bool{false, true} {
					lo, hi, err := BootstrapInterval(context.Background(), n, stat, BootstrapSpec{
						Resamples: 499, Level: 0.95, Alt: alt, BCa: bca, Key: NewStreamKey(int64(trial), name), Workers: 2})
					if err != nil {
						t.Fatal(err)
					}
					if !(lo <= est && est <= hi && lo >= -1 && hi <= 1) {
						t.Errorf("trial %d %s %v bca=%v: [%v, %v] misses the estimate %v", trial, name, alt, bca, lo, hi, est)
					}
					if (alt == Greater && hi != 1) || (alt == Less && lo != -1) {
						t.Errorf("%v: [%v, %v] lost its fixed end", alt, lo, hi)
					}
				}
			}
		}
	}
}

// TestBootstrapGroupedJackknife: beyond 2000 rows the BCa interval uses
// 500 jackknife groups, and stays identical across worker counts.
func TestBootstrapGroupedJackknife(t *testing.T) {
	n := 2500
	x, y := benchData(n)
	stat := pairedStatistic("pearson", x, y)
	var calls atomic.Int64
	var ends [][2]float64
	for _, w := range []int{1, 3} {
		calls.Store(0)
		spec := BootstrapSpec{Resamples: 200, Level: 0.95, Alt: TwoSided, BCa: true, Key: NewStreamKey(9), Workers: w,
			Progress: func(done, total int) {
				if total != 200+jackknifeGroups {
					t.Errorf("progress total %d, want %d", total, 200+jackknifeGroups)
				}
				calls.Add(1)
			}}
		lo, hi, err := BootstrapInterval(context.Background(), n, stat, spec)
		if err != nil {
			t.Fatal(err)
		}
		ends = append(ends, [2]float64{lo, hi})
		if want := int64(4 + jackknifeGroups/jackknifeBlock + 1); calls.Load() != want {
			t.Errorf("%d progress calls, want %d (blocks of resamples and of deletions)", calls.Load(), want)
		}
	}
	if ends[0] != ends[1] {
		t.Errorf("1 worker %v, 3 workers %v", ends[0], ends[1])
	}
	g := jackknifeGroupsOf(n, jackknifeGroups, NewStreamKey(9))
	sizes := make([]int, jackknifeGroups)
	for _, v := range g {
		sizes[v]++
	}
	if slices.Min(sizes) != n/jackknifeGroups || slices.Max(sizes) != n/jackknifeGroups {
		t.Errorf("group sizes from %d to %d, want %d", slices.Min(sizes), slices.Max(sizes), n/jackknifeGroups)
	}
}

// TestBootstrapUndefined: the documented NaN and error cases.
func TestBootstrapUndefined(t *testing.T) {
	ctx := context.Background()
	spec := BootstrapSpec{Resamples: 200, Level: 0.9, Alt: TwoSided, BCa: true}
	constant := pairedStatistic("spearman", []float64{1, 1, 1, 1}, []float64{1, 2, 3, 4})
	if lo, hi, err := BootstrapInterval(ctx, 4, constant, spec); !math.IsNaN(lo) || !math.IsNaN(hi) || err != nil {
		t.Errorf("constant x: [%v, %v], %v; want NaN, NaN, nil", lo, hi, err)
	}
	one := pairedStatistic("pearson", []float64{1}, []float64{2})
	if lo, hi, err := BootstrapInterval(ctx, 1, one, spec); !math.IsNaN(lo) || !math.IsNaN(hi) || err != nil {
		t.Errorf("n = 1: [%v, %v], %v; want NaN, NaN, nil", lo, hi, err)
	}
	// A statistic undefined whenever row 0 is drawn first: 1 in n of the
	// resamples. n = 50 (2%) is tolerated, n = 10 (10%) is not.
	flaky := func(n int) NewStatistic {
		return func() func([]int) float64 {
			return func(idx []int) float64 {
				if len(idx) == n && idx[0] == 0 && !slices.IsSorted(idx) {
					return math.NaN()
				}
				return float64(idx[len(idx)/2]) / float64(n)
			}
		}
	}
	if _, _, err := BootstrapInterval(ctx, 50, flaky(50), spec); err != nil {
		t.Errorf("2%% undefined: %v", err)
	}
	if _, _, err := BootstrapInterval(ctx, 10, flaky(10), spec); !errors.Is(err, ErrBootstrapUndefined) {
		t.Errorf("10%% undefined: err = %v, want ErrBootstrapUndefined", err)
	}
	// Every replicate above the estimate: z₀ is infinite.
	if _, _, err := bootstrapEnds(0, []float64{1, 2, 3}, []float64{0, 1}, 0.9, TwoSided, true); !errors.Is(err, ErrBootstrapUndefined) {
		t.Errorf("z0 infinite: err = %v", err)
	}
	// A jackknife value undefined.
	if _, _, err := bootstrapEnds(2, []float64{1, 2, 3}, []float64{0, math.NaN()}, 0.9, TwoSided, true); !errors.Is(err, ErrBootstrapUndefined) {
		t.Errorf("jackknife NaN: err = %v", err)
	}
	// Every jackknife value equal: a = 0, and the perfect relation gives
	// the point interval.
	lo, hi, err := bootstrapEnds(1, []float64{1, 1, 1, 1}, []float64{1, 1, 1}, 0.9, TwoSided, true)
	if lo != 1 || hi != 1 || err != nil {
		t.Errorf("all equal: [%v, %v], %v; want [1, 1]", lo, hi, err)
	}
}

// TestNormalScaleQuantile checks the order-statistic rule at its branches
// on t = 1..9 (R = 9): (R+1)α integer gives t₍(R+1)α₎; k = 0 and k = R give
// the extremes; in between, the normal-scale interpolation at α = 0.25
// (k = 2, weight (Φ⁻¹(0.25) − Φ⁻¹(0.2))/(Φ⁻¹(0.3) − Φ⁻¹(0.2)) =
// (−0.6744898 + 0.8416212)/(−0.5244005 + 0.8416212) = 0.526860; the normal
// quantiles are from memory of the standard normal table, to 7 digits, and
// agree with R 4.2.2's qnorm(c(0.25, 0.2, 0.3)); tolerance 1e-6 for the
// 7-digit rounding).
func TestNormalScaleQuantile(t *testing.T) {
	s := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9}
	for _, c := range []struct{ alpha, want, tol float64 }{
		{0.5, 5, 0}, {0.3, 3, 0}, {0.05, 1, 0}, {0.95, 9, 0}, {0.999, 9, 0},
		{0.25, 2 + (0.8416212-0.6744898)/(0.8416212-0.5244005), 1e-6},
	} {
		if got := normalScaleQuantile(s, c.alpha); math.Abs(got-c.want) > c.tol {
			t.Errorf("α = %v: %.9g, want %.9g", c.alpha, got, c.want)
		}
	}
}

func TestBootstrapCancel(t *testing.T) {
	x, y := benchData(300)
	stat := pairedStatistic("spearman", x, y)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	spec := BootstrapSpec{Resamples: 1000, Level: 0.9, Alt: TwoSided, Workers: 2}
	if _, _, err := BootstrapInterval(ctx, 300, stat, spec); !errors.Is(err, context.Canceled) {
		t.Errorf("err = %v, want context.Canceled", err)
	}
	ctx, cancel = context.WithCancel(context.Background())
	spec.Progress = func(int, int) { cancel() }
	if _, _, err := BootstrapInterval(ctx, 300, stat, spec); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled during: err = %v, want context.Canceled", err)
	}
}

func TestBootstrapPanics(t *testing.T) {
	stat := pairedStatistic("pearson", []float64{1, 2, 3}, []float64{3, 1, 2})
	ctx := context.Background()
	mustPanic(t, "no resamples", func() { BootstrapInterval(ctx, 3, stat, BootstrapSpec{Level: 0.9, Alt: TwoSided}) })
	mustPanic(t, "level", func() { BootstrapInterval(ctx, 3, stat, BootstrapSpec{Resamples: 9, Level: 1, Alt: TwoSided}) })
	mustPanic(t, "alternative", func() { BootstrapInterval(ctx, 3, stat, BootstrapSpec{Resamples: 9, Level: 0.9}) })
}
