package stats

import (
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"
)

// referencePath is the committed output of testdata/ref/make_reference.R,
// computed with R 4.2.2; the tests need no R.
var referencePath = filepath.Join("..", "..", "testdata", "ref", "stats_reference.csv")

// refCase holds one case of the reference file: quantity → values. R's NA
// (and NaN) is read as NaN.
type refCase map[string][]float64

func loadReference(t *testing.T) map[string]refCase { return readRefFile(t, referencePath) }

// readRefFile reads a reference file in the layout of stats_reference.csv
// (case,quantity,value; a value is a space-separated vector, NA read as
// NaN) into case → quantity → values. Every R script under testdata/ref
// that writes this layout is read through it.
func readRefFile(t *testing.T, path string) map[string]refCase {
	t.Helper()
	recs := readCSV(t, path)
	cases := map[string]refCase{}
	for i, rec := range recs[1:] {
		if len(rec) != 3 {
			t.Fatalf("%s line %d: %d fields, want 3", path, i+2, len(rec))
		}
		var vals []float64
		for _, s := range strings.Fields(rec[2]) {
			v := math.NaN()
			if s != "NA" {
				var err error
				if v, err = strconv.ParseFloat(s, 64); err != nil {
					t.Fatalf("%s line %d: %v", path, i+2, err)
				}
			}
			vals = append(vals, v)
		}
		if cases[rec[0]] == nil {
			cases[rec[0]] = refCase{}
		}
		cases[rec[0]][rec[1]] = vals
	}
	return cases
}

// sortedNames returns the case names in a fixed order, for stable subtests.
func sortedNames(cases map[string]refCase) []string {
	names := make([]string, 0, len(cases))
	for name := range cases {
		names = append(names, name)
	}
	sort.Strings(names)
	return names
}

// closeAbs reports whether got is within tol of want, NaN matching NaN.
func closeAbs(got, want, tol float64) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	if got == want { // also ±Inf
		return true
	}
	return math.Abs(got-want) <= tol
}

// closeRel reports whether got is within a relative tol of want, NaN
// matching NaN; want = 0 demands got = 0.
func closeRel(got, want, tol float64) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	return math.Abs(got-want) <= tol*math.Abs(want)
}

var (
	allRules = []TieRule{TieAverage, TieMin, TieMax, TieDense, TieFirst}
	allAlts  = []Alternative{TwoSided, Greater, Less}
)

// Tolerances for the comparison with R: statistics agree to 1e-12 absolute,
// asymptotic p-values to 1e-9 relative (different but accurate algorithms
// for the t and normal tails).
const (
	statTol = 1e-12
	pRelTol = 1e-9
)

// TestAgainstR checks every kernel against values computed with R 4.2.2 by
// testdata/ref/make_reference.R (file testdata/ref/stats_reference.csv):
// rank(ties.method = "average"/"min"/"max"/"first"), dense ranks as
// match(x, sort(unique(x))), cor(), cor(method = "spearman"/"kendall"),
// cor.test(...) p-values (Spearman exact = FALSE; Kendall exact = FALSE,
// continuity = FALSE) and Pearson's conf.int. The Bonett–Wright and Fieller
// intervals are not in base R: the script computes them from their formulas,
// so those rows check our arithmetic, not the published method.
func TestAgainstR(t *testing.T) {
	cases := loadReference(t)
	if len(cases) < 20 {
		t.Fatalf("reference file has %d cases, want at least 20", len(cases))
	}
	for _, name := range sortedNames(cases) {
		rc := cases[name]
		t.Run(name, func(t *testing.T) {
			x := rc["x"]
			testRanksAgainstR(t, "x", x, rc)
			if y, ok := rc["y"]; ok {
				testRanksAgainstR(t, "y", y, rc)
				testMeasuresAgainstR(t, x, y, rc)
			}
		})
	}
}

func testRanksAgainstR(t *testing.T, col string, v []float64, rc refCase) {
	t.Helper()
	for _, rule := range allRules {
		want := rc["rank_"+col+"_"+rule.String()]
		got := Rank(v, rule)
		if len(got) != len(want) {
			t.Fatalf("Rank(%s, %v): %d ranks, R has %d", col, rule, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] { // ranks are small exact numbers
				t.Errorf("Rank(%s, %v)[%d] = %v, R rank() gives %v", col, rule, i, got[i], want[i])
			}
		}
	}
	if got, want := TieShare(v), rc["tie_share_"+col][0]; !closeAbs(got, want, 1e-15) {
		t.Errorf("TieShare(%s) = %v, R gives %v", col, got, want)
	}
}

func testMeasuresAgainstR(t *testing.T, x, y []float64, rc refCase) {
	t.Helper()
	n := len(x)
	one := func(q string) float64 { return rc[q][0] }

	r, rho, tau := Pearson(x, y), SpearmanRho(x, y, TieAverage), KendallTauB(x, y)
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"Pearson", r, one("pearson_r")},
		{"SpearmanRho", rho, one("spearman_rho")},
		{"KendallTauB", tau, one("kendall_tau_b")},
	} {
		if !closeAbs(c.got, c.want, statTol) {
			t.Errorf("%s = %.17g, R gives %.17g", c.what, c.got, c.want)
		}
	}

	// The p-values and intervals are fed R's own estimates, so that a last
	// ulp in the estimate (R gives r = 1 − 2⁻⁵² where we give exactly 1 in
	// "perfect_positive") cannot move a p-value of 1e-62 to 0.
	counts := CountPairs(x, y)
	for _, alt := range allAlts {
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"CorrelationT(pearson)", CorrelationT(one("pearson_r"), n, alt), one("pearson_p_" + alt.String())},
			{"CorrelationT(spearman)", CorrelationT(one("spearman_rho"), n, alt), one("spearman_p_" + alt.String())},
			{"KendallNormal", KendallNormal(counts, alt), one("kendall_p_" + alt.String())},
		} {
			if !closeRel(c.got, c.want, pRelTol) {
				t.Errorf("%s(%v) = %.17g, R gives %.17g", c.what, alt, c.got, c.want)
			}
		}
		// The whole chain, from our own estimates, where the estimate is
		// not within rounding of ±1.
		if math.Abs(one("pearson_r")) < 0.999 {
			if got, want := CorrelationT(r, n, alt), one("pearson_p_"+alt.String()); !closeRel(got, want, pRelTol) {
				t.Errorf("CorrelationT(Pearson(x, y), %v) = %.17g, R gives %.17g", alt, got, want)
			}
		}
		if math.Abs(one("spearman_rho")) < 0.999 {
			if got, want := CorrelationT(rho, n, alt), one("spearman_p_"+alt.String()); !closeRel(got, want, pRelTol) {
				t.Errorf("CorrelationT(SpearmanRho(x, y), %v) = %.17g, R gives %.17g", alt, got, want)
			}
		}
		for _, level := range []float64{0.95, 0.8} {
			suffix := alt.String() + "_" + strconv.FormatFloat(level, 'g', -1, 64)
			for _, c := range []struct {
				what string
				f    func(float64, int, float64, Alternative) (float64, float64)
				est  float64
				want []float64
			}{
				{"FisherInterval", FisherInterval, one("pearson_r"), rc["fisher_ci_"+suffix]},
				{"BonettWrightInterval", BonettWrightInterval, one("spearman_rho"), rc["bonett_wright_ci_"+suffix]},
				{"FiellerInterval", FiellerInterval, one("kendall_tau_b"), rc["fieller_ci_"+suffix]},
			} {
				lo, hi := c.f(c.est, n, level, alt)
				want := c.want
				if math.IsNaN(c.est) {
					// R's cor.test keeps the fixed end (1 or −1) of a
					// one-sided interval around an NA estimate; we
					// return NaN for both ends, as documented.
					want = []float64{math.NaN(), math.NaN()}
				}
				if !closeAbs(lo, want[0], statTol) || !closeAbs(hi, want[1], statTol) {
					t.Errorf("%s(%v, %v) = [%.17g, %.17g], R gives [%.17g, %.17g]",
						c.what, level, alt, lo, hi, want[0], want[1])
				}
			}
		}
	}
}
