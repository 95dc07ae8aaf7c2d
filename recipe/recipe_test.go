package recipe

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/hashicorp/hcl/v2"

	"concordat/engine/filter"
	"concordat/engine/stats"
)

var update = flag.Bool("update", false, "rewrite testdata/*.golden from the current output")

// load loads a recipe from testdata and fails the test on any error.
func load(t *testing.T, name string) *Plan {
	t.Helper()
	p, diags := Load(filepath.Join("testdata", name))
	for _, d := range diags {
		if d.Severity == hcl.DiagError {
			t.Errorf("%s: %s: %s", d.Subject, d.Summary, d.Detail)
		}
	}
	if p == nil {
		t.Fatalf("Load(%s) returned no plan", name)
	}
	return p
}

func TestLoadOrchard(t *testing.T) {
	p := load(t, "orchard.hcl")

	if p.Path != "testdata/orchard.hcl" || p.Dir != "testdata" || p.Name != "orchard" {
		t.Errorf("Path, Dir, Name = %q, %q, %q", p.Path, p.Dir, p.Name)
	}
	if p.LedgerPath() != filepath.Join("testdata", "orchard.ledger.jsonl") {
		t.Errorf("LedgerPath() = %q", p.LedgerPath())
	}
	src, _ := os.ReadFile("testdata/orchard.hcl")
	if !bytes.Equal(p.Source, src) || p.Files["testdata/orchard.hcl"] == nil {
		t.Errorf("Source or Files not kept")
	}
	if p.Title != "Canopy shade and fruit grade, 2026 harvest" || p.Seed != 20261202 {
		t.Errorf("Title, Seed = %q, %d", p.Title, p.Seed)
	}

	if len(p.Datasets) != 1 {
		t.Fatalf("%d datasets", len(p.Datasets))
	}
	ds := p.Datasets[0]
	if ds.Name != "harvest" || ds.PathAsWritten != "data/orchard_harvest.csv" ||
		ds.Path != filepath.Join("testdata", "data", "orchard_harvest.csv") || ds.Format != DataCSV {
		t.Errorf("dataset = %+v", ds)
	}
	if ds.SHA256 != "9f2c1a0b3d4e5f60718293a4b5c6d7e8f90a1b2c3d4e5f60718293a4b5c6d7e8" {
		t.Errorf("SHA256 = %q, want it in lowercase", ds.SHA256)
	}
	wantMissing := []string{"", "NA", "-"}
	if !reflect.DeepEqual(ds.Missing, wantMissing) {
		t.Errorf("Missing = %q", ds.Missing)
	}
	wantLevels := map[string][]string{"grade": {"cull", "standard", "fancy", "extra fancy"}}
	if !reflect.DeepEqual(ds.Levels, wantLevels) {
		t.Errorf("Levels = %q", ds.Levels)
	}
	if len(ds.Columns) != 1 || ds.Columns[0].LevelsRange.Start.Line != 11 || ds.Columns[0].LevelsRange.Start.Column != 14 {
		t.Errorf("Columns = %+v", ds.Columns)
	}

	pr := p.Pairings[0]
	if pr.Dataset != ds || pr.Missing != Pairwise || pr.By != "orchard_block" {
		t.Errorf("pairing = %+v", pr)
	}
	wantPairs := []Pair{
		{"shade_pct", "grade"}, {"shade_pct", "sugar_brix"},
		{"tree_age", "grade"}, {"tree_age", "sugar_brix"},
	}
	if !reflect.DeepEqual(pr.Pairs, wantPairs) {
		t.Errorf("Pairs = %v, want %v", pr.Pairs, wantPairs)
	}
	// Where each column was named, for the engine's "unknown column" errors.
	for name, want := range map[string][2]int{
		"shade_pct": {17, 14}, "tree_age": {17, 27}, "grade": {18, 14}, "sugar_brix": {18, 23}, "orchard_block": {20, 13},
	} {
		r, ok := pr.ColumnRanges[name]
		if !ok || r.Start.Line != want[0] || r.Start.Column != want[1] {
			t.Errorf("ColumnRanges[%q] = %v, want line %d column %d", name, r, want[0], want[1])
		}
	}

	ties := p.Ties[0]
	if ties.Name != "midrank" || ties.Rule != stats.TieAverage || ties.MaxShare != 0.25 || ties.Builtin {
		t.Errorf("ties = %+v", ties)
	}
	ts := p.Tests[0]
	if ts.Pairing != pr || ts.Ties != ties || ts.Alternative != stats.TwoSided || ts.PValue != PAuto ||
		ts.Permutations != 20000 || ts.Adjust != stats.AdjustNone {
		t.Errorf("test = %+v", ts)
	}
	if !reflect.DeepEqual(ts.Measures, []stats.Measure{stats.Spearman, stats.KendallB}) {
		t.Errorf("Measures = %v", ts.Measures)
	}
	if ts.Interval.Level != 0.9 || ts.Interval.Method != IntervalFisher {
		t.Errorf("Interval = %+v", ts.Interval)
	}
	tb := p.Tables[0]
	if tb.Name != "table_2" || len(tb.Tests) != 1 || tb.Tests[0] != ts || tb.Format != Markdown ||
		tb.Path != filepath.Join("testdata", "out", "table_2.md") || tb.Digits != 4 {
		t.Errorf("table = %+v", tb)
	}
}

func TestLoadDefaults(t *testing.T) {
	p := load(t, "sensors.hcl")
	if p.Seed != 1 || p.Title != "" {
		t.Errorf("Seed, Title = %d, %q; want the defaults", p.Seed, p.Title)
	}
	ds := p.Datasets[0]
	if ds.Path != "/srv/field/stations.parquet" || ds.Format != DataParquet || ds.SHA256 != "" {
		t.Errorf("dataset = %+v", ds)
	}
	if !reflect.DeepEqual(ds.Missing, []string{"", "NA"}) {
		t.Errorf("Missing = %q, want the default", ds.Missing)
	}
	pr := p.Pairings[0]
	wantPairs := []Pair{
		{"soil_moisture", "air_temp"}, {"soil_moisture", "wind"}, {"soil_moisture", "leaf_wetness"},
		{"air_temp", "wind"}, {"air_temp", "leaf_wetness"}, {"wind", "leaf_wetness"},
	}
	if !reflect.DeepEqual(pr.Pairs, wantPairs) || pr.Missing != Listwise || pr.By != "" {
		t.Errorf("pairing = %+v", pr)
	}
	ts := p.Tests[0]
	if ts.Ties == nil || !ts.Ties.Builtin || ts.Ties.Name != "average" || ts.Ties.Rule != stats.TieAverage || ts.Ties.MaxShare != 0.3 {
		t.Errorf("Ties = %+v, want the built-in default", ts.Ties)
	}
	if ts.Alternative != stats.TwoSided || ts.PValue != PAuto || ts.Permutations != 10000 || ts.Adjust != stats.AdjustNone ||
		ts.Interval == nil || ts.Interval.Level != 0.95 || ts.Interval.Method != IntervalFisher {
		t.Errorf("test = %+v, interval %+v", ts, ts.Interval)
	}
	if !reflect.DeepEqual(ts.Measures, []stats.Measure{stats.Spearman, stats.KendallB, stats.PearsonR}) {
		t.Errorf("Measures = %v", ts.Measures)
	}
	if p.Tables[0].Format != CSV || p.Tables[1].Format != JSON || p.Tables[0].Digits != 3 {
		t.Errorf("tables = %+v, %+v", p.Tables[0], p.Tables[1])
	}

	p = load(t, "school.hcl")
	ds = p.Datasets[0]
	if ds.Format != DataTSV || len(ds.Missing) != 0 || len(ds.Columns) != 2 || ds.Columns[1].Name != "year" {
		t.Errorf("dataset = %+v", ds)
	}
	one, plain := p.Tests[0], p.Tests[1]
	if one.Ties.Name != "dense" || one.Ties.Rule != stats.TieDense || one.Ties.MaxShare != 0.3 ||
		one.Alternative != stats.Greater || one.PValue != PAsymptotic {
		t.Errorf("test one_sided = %+v, ties %+v", one, one.Ties)
	}
	if !plain.Ties.Builtin || !reflect.DeepEqual(plain.Measures, []stats.Measure{stats.Spearman}) {
		t.Errorf("test plain = %+v", plain)
	}
	if pr := p.Pairings[0]; pr.Missing != Pairwise || len(pr.Pairs) != 2 {
		t.Errorf("pairing = %+v", pr)
	}
}

// TestGolden checks Describe and Settings against reviewed files; run
// `go test ./recipe -update` to rewrite them after a deliberate change.
func TestGolden(t *testing.T) {
	for _, name := range []string{"orchard", "sensors", "school", "present"} {
		t.Run(name, func(t *testing.T) {
			p := load(t, name+".hcl")
			var desc bytes.Buffer
			if err := p.Describe(&desc); err != nil {
				t.Fatal(err)
			}
			settings, err := json.MarshalIndent(p.Settings(), "", "  ")
			if err != nil {
				t.Fatal(err)
			}
			golden(t, name+".describe.golden", desc.Bytes())
			golden(t, name+".settings.golden", append(settings, '\n'))

			// The description is a recipe: read from the same folder it
			// resolves to the same settings.
			again, diags := Parse(desc.Bytes(), p.Path)
			if diags.HasErrors() {
				t.Fatalf("Describe output does not parse: %v", diags)
			}
			settings2, _ := json.MarshalIndent(again.Settings(), "", "  ")
			if !bytes.Equal(settings, settings2) {
				t.Errorf("Describe output resolves to other settings:\n%s", settings2)
			}
		})
	}
}

func golden(t *testing.T, name string, got []byte) {
	t.Helper()
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run with -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the output; got:\n%s", path, got)
	}
}

// wantDiag is one expected diagnostic: where its subject starts and text
// that its summary and detail must contain.
type wantDiag struct {
	line, col int
	summary   string
	detail    string
}

func TestDiagnostics(t *testing.T) {
	const head = `dataset "harvest" {
  path = "data/h.csv"
}
pairing "p" {
  dataset = "harvest"
  x = ["a"]
  y = ["b"]
}
`
	// Lines of the recipe under test start at 9 when it follows head.
	tests := []struct {
		name string
		src  string
		want []wantDiag
	}{
		{"syntax", `title = "x`, []wantDiag{{1, 11, "Unterminated template string", "No closing marker"}}},
		{"unknown top-level block", `datset "x" {}`,
			[]wantDiag{{1, 1, "Unsupported block type", `Did you mean "dataset"?`}}},
		{"unknown top-level argument", `titel = "x"`,
			[]wantDiag{{1, 1, "Unsupported argument", `Did you mean "title"? Known arguments: "title", "seed".`}}},
		{"unknown argument without suggestion", `dataset "d" {
  path = "d.csv"
  compression = "gzip"
}`, []wantDiag{{3, 3, "Unsupported argument", `not expected in a dataset block. Known arguments: "path", "format", "sha256", "missing", "where".`}}},
		{"block written as argument", head + `test "t" {
  pairing = "p"
  interval = { level = 0.9 }
}`, []wantDiag{{11, 3, "Unsupported argument", `"interval" is a block, not an argument`}}},
		{"argument written as block", `dataset "d" {
  path { }
}`, []wantDiag{{2, 3, "Unsupported block type", `"path" is an argument, not a block`},
			{1, 1, "Missing required argument", `"path" is required in a dataset block`}}},
		{"missing label", `dataset {
  path = "d.csv"
}`, []wantDiag{{1, 1, "Missing name for dataset", `dataset "name"`}}},
		{"extra label", `ties "a" "b" {}`, []wantDiag{{1, 10, "Extra name for ties", ""}}},
		{"missing required", `dataset "d" {}
pairing "p" {
  x = ["a"]
  y = ["b"]
}
test "t" {}
table "tb" {}`, []wantDiag{
			{1, 1, "Missing required argument", `"path"`},
			{2, 1, "Missing required argument", `"dataset"`},
			{6, 1, "Missing required argument", `"pairing"`},
			{7, 1, "Missing required argument", `"tests"`},
			{7, 1, "Missing required argument", `"path"`},
		}},
		{"duplicate label", `dataset "d" {
  path = "a.csv"
}
dataset "d" {
  path = "b.csv"
}`, []wantDiag{{4, 9, "Duplicate dataset name", `already defined at <test>.hcl:1:1`}}},
		{"unknown reference", head + `test "t" {
  pairing = "pp"
  ties    = "midrank"
}`, []wantDiag{
			{10, 13, "Unknown pairing", `No pairing named "pp" is defined. Did you mean "p"? Defined pairings: "p".`},
			{11, 13, "Unknown ties block", `No ties block named "midrank" is defined; the recipe has no ties blocks.`},
		}},
		{"unknown dataset with suggestion", `dataset "harvest" {
  path = "h.csv"
}
dataset "weather" {
  path = "w.csv"
}
pairing "p" {
  dataset = "harvst"
  columns = ["a", "b"]
}`, []wantDiag{{8, 13, "Unknown dataset", `Did you mean "harvest"? Defined datasets: "harvest", "weather".`}}},
		{"unquoted reference", head + `test "t" {
  pairing = p
}`, []wantDiag{{10, 13, "Unquoted name", `pairing = "p"`}}},
		{"path is a number", `dataset "d" {
  path = 3
}`, []wantDiag{{2, 10, "Wrong value type", "path must be a string, not a number."}}},
		{"list is a string", head + `test "t" {
  pairing  = "p"
  measures = "spearman"
}`, []wantDiag{{11, 14, "Wrong value type", `Write a one-entry list as measures = ["spearman"].`}}},
		{"list entry not a string", `dataset "d" {
  path    = "d.csv"
  missing = ["", 0]
}`, []wantDiag{{3, 18, "Wrong value type", "entry 2 is a number"}}},
		{"unknown tie rule", `ties "midrank" {
  rank = "avrage"
}`, []wantDiag{{2, 10, "Unknown tie rule",
			`The tie rule "avrage" is not known. Did you mean "average"? Known rules: "average", "min", "max", "dense", "first".`}}},
		{"unknown alternative", head + `test "t" {
  pairing     = "p"
  alternative = "two_sided"
}`, []wantDiag{{11, 17, "Unknown alternative", `Did you mean "two-sided"?`}}},
		{"unknown p-value method", head + `test "t" {
  pairing = "p"
  p_value = "asymptotc"
}`, []wantDiag{{11, 13, "Unknown p-value method", `Did you mean "asymptotic"? Known methods: "auto", "exact", "asymptotic", "permutation".`}}},
		{"measures", head + `test "t" {
  pairing  = "p"
  measures = ["spearman", "kendal_b", "spearman", "gamma"]
}`, []wantDiag{
			{11, 27, "Unknown measure", `Did you mean "kendall_b"?`},
			{11, 39, "Duplicate measure", `listed twice in measures (first at <test>.hcl:11:15)`},
		}},
		{"somers both ways and one way", head + `test "t" {
  pairing  = "p"
  measures = ["somers_d", "somers_d_xy"]
}`, []wantDiag{
			{11, 27, "Duplicate measure", `"somers_d" at <test>.hcl:11:15 gives both somers_d_yx (y dependent) and somers_d_xy`},
		}},
		{"controls", head + `test "t" {
  pairing  = "p"
  measures = ["spearman", "gamma"]
  p_value  = "permutation"
  controls = ["age", "b", ""]
}`, []wantDiag{
			{13, 22, "Control is also paired", `"b" is paired in pairing "p" (at <test>.hcl:7:8)`},
			{13, 27, "Empty column name", "controls must not be empty"},
			{11, 14, "Measure has no partial form", `"gamma" has no partial form with an agreed test. Move it to`},
			{12, 14, "P-value method unavailable with controls", `p_value = "permutation" has no form for partial correlations`},
		}},
		{"empty controls", head + `test "t" {
  pairing  = "p"
  controls = []
}`, []wantDiag{{11, 14, "Empty list", "controls must name at least one column"}}},
		{"empty measures", head + `test "t" {
  pairing  = "p"
  measures = []
}`, []wantDiag{{11, 14, "Empty list", ""}}},
		{"interval", head + `test "t" {
  pairing = "p"
  interval {
    level     = 1
    method    = "bcaa"
    resamples = 10
  }
  interval {}
}`, []wantDiag{
			{12, 17, "Value out of range", "level must be between 0 and 1, exclusive (for example 0.95); got 1."},
			{13, 17, "Unknown interval method", `Did you mean "bca"? Known methods: "fisher", "bootstrap", "bca".`},
			{14, 17, "Value out of range", "resamples must be"},
			{16, 3, "Duplicate interval block", "the first is at <test>.hcl:11:3"},
		}},
		{"adjust", head + `test "t" {
  pairing = "p"
  adjust  = "holmes"
}`, []wantDiag{{11, 13, "Unknown adjustment", `Did you mean "holm"? Known adjustments: "none", "bonferroni", "holm", "hochberg", "hommel", "bh", "by".`}}},
		{"missing rule", `dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  columns = ["a", "b"]
  missing = "casewise"
}`, []wantDiag{{7, 13, "Unknown missing-value rule", `Known rules: "pairwise", "listwise".`}}},
		{"dataset format", `dataset "a" {
  path   = "a.csv"
  format = "xlsx"
}
dataset "b" {
  path = "b.txt"
}`, []wantDiag{
			{3, 12, "Unknown dataset format", `Known formats: "csv", "tsv", "parquet".`},
			{6, 10, "Unknown dataset format", "cannot be told from its extension"},
		}},
		{"sha256", `dataset "d" {
  path   = "d.csv"
  sha256 = "abc"
}`, []wantDiag{{3, 12, "Invalid sha256 pin", `got "abc" (3 characters)`}}},
		{"pairing shape", `dataset "d" {
  path = "d.csv"
}
pairing "both" {
  dataset = "d"
  x       = ["a"]
  y       = ["b"]
  columns = ["a", "b"]
}
pairing "neither" {
  dataset = "d"
}
pairing "half" {
  dataset = "d"
  x       = ["a"]
}`, []wantDiag{
			{8, 3, "Conflicting arguments", "not both"},
			{10, 1, "Missing columns to pair", "either x and y"},
			{13, 1, "Missing required argument", "sets x but not y"},
		}},
		{"pairing columns", `dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  x       = ["a", "b", "a"]
  y       = []
  by      = "b"
}
pairing "q" {
  dataset = "d"
  columns = ["a"]
}
pairing "r" {
  dataset = "d"
  x       = ["a", "b"]
  y       = ["c", "b"]
}`, []wantDiag{
			{6, 24, "Duplicate column", `The column "a" is listed twice in x`},
			{7, 13, "Too few columns", "y must name at least one column."},
			{8, 13, "Grouping column is also paired", `by = "b" is also listed in x (at <test>.hcl:6:19)`},
			{12, 13, "Too few columns", "at least two columns"},
			{17, 19, "Column paired with itself", `Column "b" is in both x and y`},
		}},
		{"levels", `dataset "d" {
  path = "d.csv"
  column "grade" {
    levels = ["low", "high", "low"]
  }
  column "grade" {
    levels = []
  }
  column "size" {
    levels = []
  }
}`, []wantDiag{
			{4, 30, "Duplicate level", `The level "low" is listed twice in levels`},
			{6, 10, "Duplicate column block", "already has a column block at <test>.hcl:3:3"},
			{10, 14, "Empty list", `levels must list the labels of column "size"`},
		}},
		{"numbers", `seed = -1
ties "t" {
  max_share = 0
}
table "x" {
  tests  = []
  path   = "x.md"
  digits = 2.5
}
dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  columns = ["a", "b"]
}
test "u" {
  pairing      = "p"
  permutations = 0
}`, []wantDiag{
			{1, 8, "Value out of range", "seed must be a whole number from 0 to"},
			{3, 15, "Value out of range", "max_share must be greater than 0 and at most 1"},
			{6, 12, "Empty list", ""},
			{8, 12, "Value out of range", "digits must be a whole number from 0 to 15; got 2.5."},
			{19, 18, "Value out of range", "permutations must be a whole number from 1 to 1000000000; got 0."},
		}},
		{"table formats", head + `test "t" {
  pairing = "p"
}
table "a" {
  tests  = ["t"]
  path   = "out/a.tex"
}
table "b" {
  tests  = ["t", "tt", "t"]
  format = "html"
  path   = "out/b.html"
}
table "c" {
  tests  = ["t"]
  format = "markdwon"
  path   = "out/c"
}
table "d" {
  tests  = ["t"]
  path   = "out/d"
}`, []wantDiag{
			{17, 18, "Unknown test", `No test named "tt" is defined. Did you mean "t"?`},
			{17, 24, "Duplicate test", ""},
			{23, 12, "Unknown table format", `Did you mean "markdown"?`},
			{28, 12, "Unknown table format", "cannot be told from its extension"},
		}},
		{"table paths", head + `test "t" {
  pairing = "p"
}
table "a" {
  tests = ["t"]
  path  = "out/a.csv"
}
table "b" {
  tests = ["t"]
  path  = "./out/../out/a.csv"
}
table "c" {
  tests = ["t"]
  path  = "data/h.csv"
  format = "csv"
}
table "d" {
  tests = ["t"]
  path  = "<test>.ledger.jsonl"
  format = "json"
}
table "e" {
  tests = ["t"]
  path  = "<test>.ledger.jsonl.lock"
  format = "csv"
}`, []wantDiag{
			{18, 11, "Two tables write the same file", `which table "a" (at <test>.hcl:12:1) writes too`},
			{22, 11, "Table would overwrite an input", `dataset "harvest"`},
			{27, 11, "Table would overwrite the ledger", ""},
			{32, 11, "Table would overwrite the ledger's lock", "two runs"},
		}},
		{"where", `dataset "d" {
  path  = "d.csv"
  where = upper(site) == "B" || age >= 18 && age == "x" || grade > 2 || site < "C"
  column "grade" {
    levels = ["cull", "standard", "fancy"]
  }
}
dataset "e" {
  path  = "e.csv"
  where = weight
}
dataset "f" {
  path  = "f.csv"
  where = var.x > 1 || grade == "fancyy"
  column "grade" {
    levels = ["cull", "standard", "fancy"]
  }
}
title = age`, []wantDiag{
			{3, 11, "Function calls not allowed", "functions such as upper(…) are not available"},
			{3, 53, "Mismatched types in where", `age == "x" compares column "age" (numbers, as age >= 18 at recipe.hcl:3:33 says) with text`},
			{3, 60, "Mismatched types in where", `Column "grade" has levels, so it is compared with its labels, such as grade >= "standard", not with numbers.`},
			{3, 73, "Text cannot be ordered", `To order the labels of "site", declare them in a column block`},
			{10, 11, "Column is not a condition", `Column "weight" is not true or false by itself`},
			{14, 11, "Not a column name", `var.x has an attribute after the name "var"`},
			{14, 33, "Unknown level", `"fancyy" is not a level of column "grade". Did you mean "fancy"? Its levels, low to high: "cull", "standard", "fancy".`},
			{19, 9, "Unquoted name", `title = "age"`},
		}},
		{"variables and functions", `title = upper("x")
seed = var.seed`, []wantDiag{
			{1, 9, "Function calls not allowed", ""},
			{2, 8, "Variables not allowed", ""},
		}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			src := strings.ReplaceAll(tc.src, "<test>", "recipe")
			plan, diags := Parse([]byte(src), "recipe.hcl")
			if plan != nil {
				t.Errorf("got a plan despite errors")
			}
			checkDiags(t, diags, tc.want)
		})
	}
}

// checkDiags asserts that every wanted diagnostic is present and that no
// error was reported that the test did not expect.
func checkDiags(t *testing.T, diags hcl.Diagnostics, want []wantDiag) {
	t.Helper()
	used := make([]bool, len(diags))
	for _, w := range want {
		detail := strings.ReplaceAll(w.detail, "<test>", "recipe")
		found := false
		for i, d := range diags {
			if !used[i] && d.Subject != nil && d.Subject.Start.Line == w.line && d.Subject.Start.Column == w.col &&
				d.Summary == w.summary && strings.Contains(d.Detail, detail) {
				used[i], found = true, true
				break
			}
		}
		if !found {
			t.Errorf("missing diagnostic %d:%d %q containing %q", w.line, w.col, w.summary, detail)
		}
	}
	for i, d := range diags {
		if d.Subject == nil {
			t.Errorf("diagnostic without a subject: %s: %s", d.Summary, d.Detail)
		}
		if !used[i] && d.Severity == hcl.DiagError {
			t.Errorf("unexpected diagnostic %s: %s: %s", d.Subject, d.Summary, d.Detail)
		}
	}
}

// TestOnePass checks that problems in different blocks are all reported,
// in the order of the file.
func TestOnePass(t *testing.T) {
	_, diags := Load("testdata/many_errors.hcl")
	checkDiags(t, diags, []wantDiag{
		{2, 9, "Wrong value type", "seed must be a number, not a string."},
		{5, 3, "Unsupported argument", `Did you mean "path"?`},
		{4, 1, "Missing required argument", `"path"`},
		{10, 13, "Unknown dataset", `Did you mean "orchard"?`},
		{11, 23, "Duplicate column", ""},
		{15, 10, "Unknown tie rule", `Did you mean "average"?`},
		{20, 17, "Unknown ties block", `Did you mean "midrank"?`},
		{21, 17, "Unknown alternative", `Did you mean "greater"?`},
		{25, 1, "Unsupported block type", `Did you mean "table"?`},
	})
	for i := 1; i < len(diags); i++ {
		if diags[i].Subject.Start.Byte < diags[i-1].Subject.Start.Byte {
			t.Errorf("diagnostics out of file order at %d: %v after %v", i, diags[i].Subject, diags[i-1].Subject)
		}
	}
}

func TestWarnings(t *testing.T) {
	src := `dataset "d" {
  path = "d.csv"
  column "c" {
    levels = ["NA", "low", "high"]
  }
}
pairing "p" {
  dataset = "d"
  columns = ["a", "c"]
}
test "t" {
  pairing = "p"
  interval {
    resamples = 5000
  }
}
table "x" {
  tests  = ["t"]
  format = "csv"
  path   = "out/x.md"
}`
	plan, diags := Parse([]byte(src), "w.hcl")
	if plan == nil {
		t.Fatalf("warnings must not withhold the plan: %v", diags)
	}
	var got []string
	for _, d := range diags {
		if d.Severity != hcl.DiagWarning {
			t.Errorf("unexpected %v", d)
		}
		got = append(got, d.Summary)
	}
	want := []string{"Level is also a missing-value token", "Resamples unused", "Table format and file extension disagree"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("warnings = %q, want %q", got, want)
	}
	if plan.Tables[0].Format != CSV {
		t.Errorf("format = %v; format must win over the extension", plan.Tables[0].Format)
	}
}

func TestLoadMissingFile(t *testing.T) {
	plan, files, diags := LoadFiles("testdata/no_such_recipe.hcl")
	if plan != nil || files == nil || !diags.HasErrors() || diags[0].Subject == nil ||
		diags[0].Summary != "Cannot read recipe" {
		t.Errorf("LoadFiles of a missing file = %v, %v, %v", plan, files, diags)
	}
}

func TestFilesOnError(t *testing.T) {
	_, files, diags := LoadFiles("testdata/many_errors.hcl")
	if !diags.HasErrors() || files["testdata/many_errors.hcl"] == nil {
		t.Fatalf("files = %v", files)
	}
	var out bytes.Buffer
	wr := hcl.NewDiagnosticTextWriter(&out, files, 100, false)
	if err := wr.WriteDiagnostics(diags); err != nil {
		t.Fatal(err)
	}
	want := `on testdata/many_errors.hcl line 15, in ties "midrank":`
	if !strings.Contains(out.String(), want) || !strings.Contains(out.String(), `15:   rank = "avrage"`) {
		t.Errorf("printed diagnostics lack %q and the source line:\n%s", want, out.String())
	}
}

func TestSuggestion(t *testing.T) {
	for _, tc := range []struct {
		word string
		want string
	}{
		{"avrage", "average"},
		{"Average", "average"},
		{"dnese", "dense"},
		{"mn", "min"},
		{"zzzzzz", ""},
		{"", ""},
	} {
		if got := Suggest(tc.word, tieRules.words); got != tc.want {
			t.Errorf("Suggest(%q) = %q, want %q", tc.word, got, tc.want)
		}
	}
}

func TestQuote(t *testing.T) {
	for in, want := range map[string]string{
		`plain`:     `"plain"`,
		`a"b\c`:     `"a\"b\\c"`,
		"tab\there": `"tab\there"`,
		"${x}":      `"$${x}"`,
		"%{x}":      `"%%{x}"`,
		"$x":        `"$x"`,
		"\x01":      `"\u0001"`,
	} {
		if got := quote(in); got != want {
			t.Errorf("quote(%q) = %s, want %s", in, got, want)
		}
	}
}

// TestInferenceSettings checks that every inference word reaches the plan:
// somers_d expands to both directions, and controls keep their ranges so the
// engine can point at them.
func TestInferenceSettings(t *testing.T) {
	src := `dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  x = ["a"]
  y = ["b"]
}
test "ordinal" {
  pairing  = "p"
  measures = ["somers_d", "gamma", "kendall_a", "kendall_c"]
  p_value  = "exact"
  adjust   = "holm"
  interval {
    method    = "bca"
    resamples = 999
  }
}
test "partial" {
  pairing  = "p"
  measures = ["spearman", "pearson"]
  p_value  = "asymptotic"
  adjust   = "by"
  controls = ["age", "site"]
}`
	plan, diags := Parse([]byte(src), "i.hcl")
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	o, p := plan.Tests[0], plan.Tests[1]
	wantM := []stats.Measure{stats.SomersDYX, stats.SomersDXY, stats.Gamma, stats.KendallA, stats.KendallC}
	if !reflect.DeepEqual(o.Measures, wantM) {
		t.Errorf("measures = %v, want %v", o.Measures, wantM)
	}
	if o.PValue != PExact || o.Adjust != stats.Holm || o.Interval.Method != IntervalBCa || o.Interval.Resamples != 999 {
		t.Errorf("ordinal test = %+v, interval %+v", o, o.Interval)
	}
	if p.PValue != PAsymptotic || p.Adjust != stats.BY || !reflect.DeepEqual(p.Controls, []string{"age", "site"}) {
		t.Errorf("partial test = %+v", p)
	}
	if r := p.ControlRanges["site"]; r.Start.Line != 24 || r.Start.Column != 22 {
		t.Errorf("site range = %v, want line 24 col 22", r)
	}
	if p.Interval.Method != IntervalFisher || p.Interval.Resamples != defaultResamples {
		t.Errorf("default interval = %+v", p.Interval)
	}
}

// TestWhere checks that a dataset's where reaches the plan typed, with its
// text and the places it names each column, and that an absent or null
// where is nil.
func TestWhere(t *testing.T) {
	src := `dataset "d" {
  path  = "d.csv"
  where = (age >= 18 # adults
           && site != "B") || grade >= "fancy"
  column "grade" {
    levels = ["cull", "standard", "fancy"]
  }
}
dataset "e" {
  path  = "e.csv"
  where = null
}
dataset "f" {
  path = "f.csv"
}`
	plan, diags := Parse([]byte(src), "w.hcl")
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	w := plan.Datasets[0].Where
	if w == nil {
		t.Fatal("no Where")
	}
	if w.Text != `(age >= 18 && site != "B") || grade >= "fancy"` {
		t.Errorf("Text = %q", w.Text)
	}
	if w.Range.Start.Line != 3 || w.Range.Start.Column != 11 || w.Range.End.Line != 4 {
		t.Errorf("Range = %v", w.Range)
	}
	want := []struct {
		name      string
		kind      filter.Kind
		line, col int
	}{{"age", filter.Number, 3, 12}, {"site", filter.Text, 4, 15}, {"grade", filter.Ordinal, 4, 31}}
	if len(w.Columns) != len(want) {
		t.Fatalf("Columns = %+v", w.Columns)
	}
	for i, c := range w.Columns {
		if c.Name != want[i].name || c.Kind != want[i].kind || c.Range.Start.Line != want[i].line || c.Range.Start.Column != want[i].col {
			t.Errorf("column %d = %s %v at %v, want %+v", i, c.Name, c.Kind, c.Range, want[i])
		}
	}
	if !reflect.DeepEqual(w.Columns[2].Levels, []string{"cull", "standard", "fancy"}) {
		t.Errorf("grade levels = %q", w.Columns[2].Levels)
	}
	if plan.Datasets[1].Where != nil || plan.Datasets[2].Where != nil {
		t.Errorf("a null or absent where is not nil: %v, %v", plan.Datasets[1].Where, plan.Datasets[2].Where)
	}
	settings, _ := json.Marshal(plan.Settings())
	if !strings.Contains(string(settings), `"where":"(age \u003e= 18 \u0026\u0026 site != \"B\") || grade \u003e= \"fancy\""`) ||
		strings.Count(string(settings), `"where"`) != 1 {
		t.Errorf("settings = %s", settings)
	}
}
