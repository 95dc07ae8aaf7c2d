package stats

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"testing"
)

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatalf("open %s: %v", path, err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("read %s: %v", path, err)
	}
	return recs
}

// TestPipelineReference recomputes testdata/ref/pipeline_expected.csv (R
// 4.2.2, testdata/ref/make_reference.R) from testdata/ref/pipeline_data.csv
// with this package's kernels: pairwise deletion of "" and "NA", alarm_level
// mapped to 1..4 by its level order, two-sided tests, 95% intervals. It
// keeps the engine's end-to-end reference consistent with the kernels.
func TestPipelineReference(t *testing.T) {
	dir := filepath.Join("..", "..", "testdata", "ref")
	data := readCSV(t, filepath.Join(dir, "pipeline_data.csv"))
	header := data[0]
	levels := []string{"low", "medium", "high", "severe"}
	column := func(name, group string) []float64 {
		j := slices.Index(header, name)
		if j < 0 {
			t.Fatalf("pipeline_data.csv has no column %q", name)
		}
		var out []float64
		for _, rec := range data[1:] {
			if group != "all" && rec[0] != group {
				continue
			}
			v := math.NaN()
			switch s := rec[j]; {
			case s == "" || s == "NA":
			case name == "alarm_level":
				k := slices.Index(levels, s)
				if k < 0 {
					t.Fatalf("unknown alarm level %q", s)
				}
				v = float64(k + 1)
			default:
				var err error
				if v, err = strconv.ParseFloat(s, 64); err != nil {
					t.Fatalf("pipeline_data.csv: %v", err)
				}
			}
			out = append(out, v)
		}
		return out
	}
	expected := readCSV(t, filepath.Join(dir, "pipeline_expected.csv"))
	if len(expected) != 1+4*3*3 {
		t.Fatalf("pipeline_expected.csv has %d rows, want 37", len(expected))
	}
	for _, rec := range expected[1:] {
		xa, ya := column(rec[0], rec[2]), column(rec[1], rec[2])
		var x, y []float64
		for i := range xa {
			if !math.IsNaN(xa[i]) && !math.IsNaN(ya[i]) {
				x, y = append(x, xa[i]), append(y, ya[i])
			}
		}
		n := len(x)
		if strconv.Itoa(n) != rec[4] {
			t.Errorf("%v: n = %d, R has %s", rec[:4], n, rec[4])
			continue
		}
		var est, p, lo, hi float64
		switch rec[3] {
		case "pearson":
			est = Pearson(x, y)
			p = CorrelationT(est, n, TwoSided)
			lo, hi = FisherInterval(est, n, 0.95, TwoSided)
		case "spearman":
			est = SpearmanRho(x, y, TieAverage)
			p = CorrelationT(est, n, TwoSided)
			lo, hi = BonettWrightInterval(est, n, 0.95, TwoSided)
		case "kendall_b":
			c := CountPairs(x, y)
			est = c.TauB()
			p = KendallNormal(c, TwoSided)
			lo, hi = FiellerInterval(est, n, 0.95, TwoSided)
		default:
			t.Fatalf("unknown measure %q", rec[3])
		}
		want := make([]float64, 4)
		for k := range want {
			want[k] = math.NaN()
			if s := rec[5+k]; s != "NA" {
				want[k], _ = strconv.ParseFloat(s, 64)
			}
		}
		if !closeAbs(est, want[0], statTol) || !closeRel(p, want[1], pRelTol) ||
			!closeAbs(lo, want[2], statTol) || !closeAbs(hi, want[3], statTol) {
			t.Errorf("%v: got %.17g %.17g [%.17g, %.17g], R has %v", rec[:4], est, p, lo, hi, rec[5:])
		}
	}
}
