package engine

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"concordat/engine/ledger"
	"concordat/io/render"
	"concordat/recipe"
)

// plan writes src as a recipe in a temporary folder (with any extra files)
// and loads it.
func plan(t testing.TB, src string, files map[string]string) *recipe.Plan {
	t.Helper()
	dir := t.TempDir()
	for name, body := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	path := filepath.Join(dir, "recipe.hcl")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	p, diags := recipe.Load(path)
	if diags.HasErrors() {
		t.Fatalf("recipe: %v", diags)
	}
	return p
}

// mustCompute computes p with default options and fails the test on error.
func mustCompute(t *testing.T, p *recipe.Plan) *Computation {
	t.Helper()
	comp, err := Compute(context.Background(), p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return comp
}

func abs(t *testing.T, rel string) string {
	t.Helper()
	a, err := filepath.Abs(rel)
	if err != nil {
		t.Fatal(err)
	}
	return filepath.ToSlash(a)
}

// TestPipelineMatchesR runs the whole engine (recipe → Arrow CSV reader →
// pairwise deletion → ordinal levels → groups → measures) on an invented
// sensor table with missing cells and ordinal labels, and compares every
// number with R.
//
// Reference: computed with R 4.2.2 (cor, cor.test; Bonett–Wright and Fieller
// intervals by formula), script testdata/ref/make_reference.R, values in
// testdata/ref/pipeline_expected.csv.
func TestPipelineMatchesR(t *testing.T) {
	checkPipeline(t, abs(t, "../testdata/ref/pipeline_data.csv"))
}

// TestPipelineMatchesRFromParquet: the same table written as Parquet (typed
// columns, nulls for the missing cells, the ordinal labels as strings) gives
// the same numbers through Arrow's Parquet reader.
func TestPipelineMatchesRFromParquet(t *testing.T) {
	checkPipeline(t, writePipelineParquet(t))
}

func checkPipeline(t *testing.T, data string) {
	t.Helper()
	src := fmt.Sprintf(`
dataset "sensors" {
  path    = %q
  missing = ["", "NA"]
  column "alarm_level" { levels = ["low", "medium", "high", "severe"] }
}
pairing "temp_alarm" {
  dataset = "sensors"
  x       = ["temp_c"]
  y       = ["alarm_level"]
  by      = "station"
}
pairing "humidity_alarm" {
  dataset = "sensors"
  x       = ["humidity"]
  y       = ["alarm_level"]
  by      = "station"
}
pairing "temp_humidity" {
  dataset = "sensors"
  x       = ["temp_c"]
  y       = ["humidity"]
  by      = "station"
}
pairing "load_temp" {
  dataset = "sensors"
  x       = ["load_rank"]
  y       = ["temp_c"]
  by      = "station"
}
test "a" {
  pairing  = "temp_alarm"
  measures = ["spearman", "kendall_b", "pearson"]
  p_value  = "asymptotic" # R's reference p-values are t and normal
}
test "b" {
  pairing  = "humidity_alarm"
  measures = ["spearman", "kendall_b", "pearson"]
  p_value  = "asymptotic" # R's reference p-values are t and normal
}
test "c" {
  pairing  = "temp_humidity"
  measures = ["spearman", "kendall_b", "pearson"]
  p_value  = "asymptotic" # R's reference p-values are t and normal
}
test "d" {
  pairing  = "load_temp"
  measures = ["spearman", "kendall_b", "pearson"]
  p_value  = "asymptotic" # R's reference p-values are t and normal
}
table "all" {
  tests = ["a", "b", "c", "d"]
  path  = "out/all.json"
}
`, data)
	p := plan(t, src, nil)
	comp := mustCompute(t, p)
	got := map[string]Result{}
	for _, r := range comp.Results {
		got[r.X+"|"+r.Y+"|"+r.Group+"|"+r.Measure] = r
	}

	f, err := os.Open("../testdata/ref/pipeline_expected.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows)-1 != len(comp.Results) {
		t.Errorf("engine produced %d results, reference has %d", len(comp.Results), len(rows)-1)
	}
	num := func(s string) float64 {
		if s == "NA" {
			return math.NaN()
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	for _, row := range rows[1:] {
		key := strings.Join(row[:4], "|")
		r, ok := got[key]
		if !ok {
			t.Errorf("%s: no result", key)
			continue
		}
		if n, _ := strconv.Atoi(row[4]); r.N != n {
			t.Errorf("%s: n = %d, R has %d", key, r.N, n)
		}
		for _, c := range []struct {
			name     string
			got, ref float64
			rel      bool
		}{
			{"estimate", r.Estimate, num(row[5]), false},
			{"p_value", r.PValue, num(row[6]), true},
			{"ci_low", r.CILow, num(row[7]), false},
			{"ci_high", r.CIHigh, num(row[8]), false},
		} {
			if !close(c.got, c.ref, c.rel) {
				t.Errorf("%s: %s = %.17g, R has %.17g", key, c.name, c.got, c.ref)
			}
		}
	}
}

// close applies the reference tolerances: statistics within 1e-12 absolute,
// asymptotic p-values within 1e-9 relative.
func close(got, want float64, relative bool) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	if relative {
		return math.Abs(got-want) <= 1e-9*math.Abs(want)
	}
	return math.Abs(got-want) <= 1e-12
}

// TestUndefinedResultsAreNullWithReason: a constant column after deletion
// and too few pairs give NaN (null) estimates, p-values and intervals, with a
// warning that says why; never 0.
func TestUndefinedResultsAreNullWithReason(t *testing.T) {
	p := plan(t, `
dataset "beds" { path = "beds.csv" }
pairing "p" {
  dataset = "beds"
  x = ["moisture"]
  y = ["growth", "flat"]
  by = "bed"
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b", "pearson"]
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`, map[string]string{"beds.csv": "bed,moisture,growth,flat\n" +
		"a,1,2,7\na,2,1,7\na,3,4,7\na,4,3,7\na,5,6,7\nb,1,1,7\nb,2,NA,7\n"})
	comp := mustCompute(t, p)
	for _, r := range comp.Results {
		undefined := r.Y == "flat" || r.Group == "b"
		if !undefined {
			if math.IsNaN(r.Estimate) {
				t.Errorf("%s/%s/%s: estimate undefined: %v", r.Y, r.Group, r.Measure, r.Warnings)
			}
			continue
		}
		if !math.IsNaN(r.Estimate) || !math.IsNaN(r.PValue) || !math.IsNaN(r.CILow) || !math.IsNaN(r.CIHigh) {
			t.Errorf("%s/%s/%s: want undefined, got estimate %v p %v ci [%v, %v]", r.Y, r.Group, r.Measure, r.Estimate, r.PValue, r.CILow, r.CIHigh)
		}
		want := "constant"
		if r.Group == "b" {
			want = "too few pairs"
		}
		if !strings.Contains(strings.Join(r.Warnings, "\n"), want) {
			t.Errorf("%s/%s/%s: warnings %q lack %q", r.Y, r.Group, r.Measure, r.Warnings, want)
		}
	}
}

// TestListwiseDropsRowsMissingAnyColumn: pairwise deletion keeps every
// complete pair; listwise deletion drops a row from every pair when any
// column of the pairing is missing in it. Expected counts by hand from the
// data below.
func TestListwiseDropsRowsMissingAnyColumn(t *testing.T) {
	data := "a,b,c\n1,2,3\n2,NA,1\n3,1,NA\n4,4,4\n5,5,6\n6,7,5\n"
	for _, tc := range []struct {
		rule string
		want map[string]int // pair → n
	}{
		{"pairwise", map[string]int{"a|b": 5, "a|c": 5, "b|c": 4}},
		{"listwise", map[string]int{"a|b": 4, "a|c": 4, "b|c": 4}},
	} {
		p := plan(t, fmt.Sprintf(`
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  columns = ["a", "b", "c"]
  missing = %q
}
test "t" { pairing = "p" }
table "o" {
  tests = ["t"]
  path  = "o.csv"
}
`, tc.rule), map[string]string{"d.csv": data})
		comp := mustCompute(t, p)
		for _, r := range comp.Results {
			if want := tc.want[r.X+"|"+r.Y]; r.N != want || r.NDropped != 6-want {
				t.Errorf("%s %s|%s: n = %d dropped = %d, want %d and %d", tc.rule, r.X, r.Y, r.N, r.NDropped, want, 6-want)
			}
		}
	}
}

// TestResultsIndependentOfJobs: the demo recipes give byte-identical result
// encodings and step hashes with 1 and 4 workers.
func TestResultsIndependentOfJobs(t *testing.T) {
	for _, name := range []string{"orchard", "school_survey"} {
		p, diags := recipe.Load(filepath.Join("..", "recipes", name+".hcl"))
		if diags.HasErrors() {
			t.Fatal(diags)
		}
		var enc [2][]byte
		var steps [2]string
		for i, jobs := range []int{1, 4} {
			comp, err := Compute(context.Background(), p, Options{Jobs: jobs})
			if err != nil {
				t.Fatal(err)
			}
			var buf bytes.Buffer
			if err := render.Encode(&buf, fullTable("", comp.Results), render.JSON, -1); err != nil {
				t.Fatal(err)
			}
			enc[i] = buf.Bytes()
			steps[i] = fmt.Sprint(comp.steps)
		}
		if !bytes.Equal(enc[0], enc[1]) || steps[0] != steps[1] {
			t.Errorf("%s: results differ between 1 and 4 workers", name)
		}
	}
}

// writePipelineParquet converts testdata/ref/pipeline_data.csv to Parquet:
// numbers as float64 (load_rank as int64), "" and "NA" as nulls.
func writePipelineParquet(t *testing.T) string {
	t.Helper()
	f, err := os.Open("../testdata/ref/pipeline_data.csv")
	if err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "station", Type: arrow.BinaryTypes.String},
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "humidity", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "noise_db", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "alarm_level", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "load_rank", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	missing := func(s string) bool { return s == "" || s == "NA" }
	for _, row := range rows[1:] {
		b.Field(0).(*array.StringBuilder).Append(row[0])
		for i := 1; i <= 3; i++ {
			fb := b.Field(i).(*array.Float64Builder)
			if missing(row[i]) {
				fb.AppendNull()
				continue
			}
			v, err := strconv.ParseFloat(row[i], 64)
			if err != nil {
				t.Fatal(err)
			}
			fb.Append(v)
		}
		if sb := b.Field(4).(*array.StringBuilder); missing(row[4]) {
			sb.AppendNull()
		} else {
			sb.Append(row[4])
		}
		ib := b.Field(5).(*array.Int64Builder)
		if missing(row[5]) {
			ib.AppendNull()
		} else {
			v, err := strconv.ParseInt(row[5], 10, 64)
			if err != nil {
				t.Fatal(err)
			}
			ib.Append(v)
		}
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.RecordBatch{rec})
	defer tbl.Release()
	path := filepath.Join(t.TempDir(), "pipeline.parquet")
	out, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	// WriteTable closes the file itself.
	if err := pqarrow.WriteTable(tbl, out, 16, nil, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	return filepath.ToSlash(path)
}

// TestInfiniteValuesAreExtremes: ±Inf cells rank as the most extreme values
// (so rho is defined), while Pearson's r is undefined with a warning. With
// the infinities in place of the largest and smallest x, the ranks are those
// of x = 1..5 and rho = 1 by hand.
func TestInfiniteValuesAreExtremes(t *testing.T) {
	p := plan(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b", "pearson"]
}
table "o" {
  tests = ["t"]
  path  = "o.csv"
}
`, map[string]string{"d.csv": "x,y\n-Inf,1\n2,2\n3,3\n4,4\nInf,5\n"})
	comp := mustCompute(t, p)
	for _, r := range comp.Results {
		switch r.Measure {
		case "spearman", "kendall_b":
			if r.Estimate != 1 {
				t.Errorf("%s = %v, want 1", r.Measure, r.Estimate)
			}
		case "pearson":
			if !math.IsNaN(r.Estimate) || !strings.Contains(strings.Join(r.Warnings, " "), "infinite") {
				t.Errorf("pearson = %v with warnings %q, want undefined with a warning", r.Estimate, r.Warnings)
			}
		}
	}
}

// TestRowsWithoutGroupCountInAllOnly: a row whose `by` label is missing is
// analysed in "all" but in no group, and the "all" results say so.
func TestRowsWithoutGroupCountInAllOnly(t *testing.T) {
	p := plan(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x  = ["x"]
  y  = ["y"]
  by = "site"
}
test "t" { pairing = "p" }
table "o" {
  tests = ["t"]
  path  = "o.csv"
}
`, map[string]string{"d.csv": "site,x,y\nA,1,2\nA,2,1\nA,3,3\nB,1,1\nB,2,3\nB,3,2\nNA,4,4\n"})
	comp := mustCompute(t, p)
	want := map[string]int{"all": 7, "A": 3, "B": 3}
	if len(comp.Results) != len(want) {
		t.Fatalf("got %d results, want %d", len(comp.Results), len(want))
	}
	for _, r := range comp.Results {
		if r.N != want[r.Group] {
			t.Errorf("group %s: n = %d, want %d", r.Group, r.N, want[r.Group])
		}
		noted := strings.Contains(strings.Join(r.Warnings, " "), `1 row has no site value`)
		if noted != (r.Group == "all") {
			t.Errorf("group %s: warnings %q", r.Group, r.Warnings)
		}
	}
}

// TestMarkdownStatesEachLevelWhenTheyDiffer: one table over tests with 95%
// and 90% intervals must not label every interval "95% CI".
func TestMarkdownStatesEachLevelWhenTheyDiffer(t *testing.T) {
	p := plan(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "wide" { pairing = "p" }
test "narrow" {
  pairing = "p"
  interval {
    level = 0.9
  }
}
table "o" {
  tests = ["wide", "narrow"]
  path  = "o.md"
}
`, map[string]string{"d.csv": "x,y\n1,2\n2,1\n3,4\n4,3\n5,6\n6,5\n"})
	comp := mustCompute(t, p)
	md := string(comp.tables[0].data)
	for _, want := range []string{"| level", " 95% ", " 90% "} {
		if !strings.Contains(md, want) {
			t.Errorf("markdown lacks %q:\n%s", want, md)
		}
	}
	if strings.Contains(md, "95% CI") {
		t.Errorf("markdown claims one level for all rows:\n%s", md)
	}
}

// TestMarkdownShowsOneSidedAlternative: a one-sided p-value and its
// half-open interval are labelled as such in the readable table.
func TestMarkdownShowsOneSidedAlternative(t *testing.T) {
	p := plan(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing     = "p"
  alternative = "greater"
}
table "o" {
  tests = ["t"]
  path  = "o.md"
}
`, map[string]string{"d.csv": "x,y\n1,2\n2,1\n3,4\n4,3\n5,6\n6,5\n"})
	comp := mustCompute(t, p)
	md := string(comp.tables[0].data)
	if !strings.Contains(md, "| alternative") || !strings.Contains(md, "greater") || !strings.Contains(md, "1.000]") {
		t.Errorf("markdown does not show the one-sided test:\n%s", md)
	}
}

// TestFailedAppendRestoresTables: when the ledger append fails after the
// tables moved into place, the earlier tables come back byte for byte, no
// temporary or backup file is left, and the ledger keeps its one record.
func TestFailedAppendRestoresTables(t *testing.T) {
	p := plan(t, `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" { pairing = "p" }
table "md" {
  tests = ["t"]
  path  = "out/t.md"
}
table "json" {
  tests = ["t"]
  path  = "out/t.json"
}
`, map[string]string{"d.csv": "x,y\n1,2\n2,1\n3,4\n4,3\n5,6\n6,5\n"})
	if _, err := Run(context.Background(), p, Options{}); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(p.Dir, "out")
	before := map[string][]byte{}
	for _, name := range []string{"t.md", "t.json"} {
		b, err := os.ReadFile(filepath.Join(out, name))
		if err != nil {
			t.Fatal(err)
		}
		before[name] = b
	}
	ledgerBefore, err := os.ReadFile(p.LedgerPath())
	if err != nil {
		t.Fatal(err)
	}

	// New data would change both tables; then the append fails.
	if err := os.WriteFile(filepath.Join(p.Dir, "d.csv"), []byte("x,y\n1,1\n2,2\n3,3\n4,5\n5,4\n6,6\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	defer func(f func(*ledger.Locked, ledger.Record) (ledger.Record, error)) { appendRecord = f }(appendRecord)
	appendRecord = func(*ledger.Locked, ledger.Record) (ledger.Record, error) {
		return ledger.Record{}, errors.New("disk full (simulated)")
	}
	if _, err := Run(context.Background(), p, Options{}); err == nil || !strings.Contains(err.Error(), "simulated") {
		t.Fatalf("run error = %v, want the simulated append failure", err)
	}
	for name, want := range before {
		got, err := os.ReadFile(filepath.Join(out, name))
		if err != nil || !bytes.Equal(got, want) {
			t.Errorf("%s changed after a failed append (err %v)", name, err)
		}
	}
	entries, _ := os.ReadDir(out)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("left behind: %s", e.Name())
		}
	}
	if got, _ := os.ReadFile(p.LedgerPath()); !bytes.Equal(got, ledgerBefore) {
		t.Error("ledger changed after a failed append")
	}
}

// TestCheckFindsParquetTypeMismatch: check (which reads no data) already
// reports a Parquet text column requested as numbers, at the recipe line
// that names it, with the hint to declare levels.
func TestCheckFindsParquetTypeMismatch(t *testing.T) {
	p := plan(t, fmt.Sprintf(`
dataset "sensors" { path = %q }
pairing "p" {
  dataset = "sensors"
  x = ["temp_c"]
  y = ["alarm_level"]
}
test "t" { pairing = "p" }
table "o" {
  tests = ["t"]
  path  = "o.csv"
}
`, writePipelineParquet(t)), nil)
	diags := Check(p)
	if len(diags) != 1 {
		t.Fatalf("got %d diagnostics, want 1: %v", len(diags), diags)
	}
	d := diags[0]
	if d.Summary != "Column cannot be read" || d.Subject == nil || d.Subject.Start.Line != 6 ||
		!strings.Contains(d.Detail, `column "alarm_level" holds text`) || !strings.Contains(d.Detail, "declare its levels") {
		t.Errorf("diagnostic = %s at %v: %s", d.Summary, d.Subject, d.Detail)
	}
}
