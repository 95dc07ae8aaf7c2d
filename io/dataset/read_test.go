package dataset

import (
	"context"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

var inf = math.Inf(1)

// grades is the declared order of the orchard file's grade column.
var grades = []string{"cull", "standard", "fancy", "extra fancy"}

// sameFloats compares two columns exactly, treating NaN as equal to NaN.
func sameFloats(got, want []float64) bool {
	if len(got) != len(want) {
		return false
	}
	for i := range got {
		if got[i] != want[i] && !(math.IsNaN(got[i]) && math.IsNaN(want[i])) {
			return false
		}
	}
	return true
}

func mustRead(t *testing.T, spec Spec) *Table {
	t.Helper()
	tab, err := Read(context.Background(), spec)
	if err != nil {
		t.Fatalf("Read(%s): %v", spec.Path, err)
	}
	return tab
}

// writeTemp writes content to a file named name in a fresh folder.
func writeTemp(t testing.TB, name, content string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// The expected values below are those written into
// testdata/orchard_harvest.csv (an invented harvest).
func TestReadOrchardCSV(t *testing.T) {
	tab := mustRead(t, Spec{
		Path:    "testdata/orchard_harvest.csv",
		Format:  CSV,
		Missing: []string{"", "NA"},
		Columns: []ColumnSpec{
			{Name: "grade", Kind: Ordinal, Levels: grades},
			{Name: "shade_pct", Kind: Numeric},
			{Name: "orchard_block", Kind: Label},
			{Name: "tree_age", Kind: Numeric},
			{Name: "sugar_brix", Kind: Numeric},
			{Name: "notes", Kind: Label},
		},
	})
	if tab.Rows != 7 {
		t.Fatalf("Rows = %d, want 7", tab.Rows)
	}
	// Hash and size computed with coreutils: sha256sum and wc -c.
	if tab.SHA256 != "5028d3174cefed059121925039c9e88d71e7d3e72cc85efe5e993d863d80d1a9" || tab.Bytes != 361 {
		t.Errorf("SHA256, Bytes = %s, %d; want sha256sum's 5028d317…, 361", tab.SHA256, tab.Bytes)
	}
	names := make([]string, len(tab.Columns))
	for i, c := range tab.Columns {
		names[i] = c.Name
	}
	if want := []string{"grade", "shade_pct", "orchard_block", "tree_age", "sugar_brix", "notes"}; !slices.Equal(names, want) {
		t.Errorf("column order %q, want the spec's %q", names, want)
	}

	checks := []struct {
		col  string
		kind Kind
		want []float64
	}{
		// fancy, standard, extra fancy, cull, NA, fancy, standard
		{"grade", Ordinal, []float64{3, 2, 4, 1, nan, 3, 2}},
		// " 45.25 " is trimmed; Inf and -infinity are kept.
		{"shade_pct", Numeric, []float64{12.5, 30, nan, 45.25, inf, 0, -inf}},
		// "" is a declared missing token.
		{"tree_age", Numeric, []float64{7, 12, 5, 9, 15, nan, 3}},
		// "NA" is declared missing; "nan" is always missing.
		{"sugar_brix", Numeric, []float64{14.2, nan, 13.1, 11.8, 15.0, 12.4, nan}},
	}
	for _, c := range checks {
		col := tab.Column(c.col, c.kind)
		if !sameFloats(col.Values, c.want) {
			t.Errorf("%s = %v, want %v", c.col, col.Values, c.want)
		}
		if col.Labels != nil || col.Missing != nil {
			t.Errorf("%s: Labels or Missing set on a %s column", c.col, col.Kind)
		}
	}

	block := tab.Column("orchard_block", Label)
	if want := []string{"north", "north", "south", "south", "east", "east", ""}; !slices.Equal(block.Labels, want) {
		t.Errorf("orchard_block = %q, want %q", block.Labels, want)
	}
	if want := []bool{false, false, false, false, false, false, true}; !slices.Equal(block.Missing, want) {
		t.Errorf("orchard_block missing = %v, want %v", block.Missing, want)
	}
	if block.Values != nil {
		t.Errorf("orchard_block: Values set on a label column")
	}
	notes := tab.Column("notes", Label)
	wantNotes := []string{"", "pruned late, 2025", "windbreak side\nsecond line of the note", "", `said "best tree"`, "", "no shade cloth"}
	if !slices.Equal(notes.Labels, wantNotes) {
		t.Errorf("notes = %q, want %q", notes.Labels, wantNotes)
	}
}

// Values written into testdata/sensors.tsv (invented weather stations).
func TestReadSensorsTSV(t *testing.T) {
	tab := mustRead(t, Spec{
		Path:    "testdata/sensors.tsv",
		Format:  TSV,
		Missing: []string{"-"},
		Columns: []ColumnSpec{
			{Name: "station", Kind: Label},
			{Name: "humidity_pct", Kind: Numeric},
			{Name: "temp_c", Kind: Numeric},
			{Name: "sky", Kind: Ordinal, Levels: []string{"clear", "overcast"}},
		},
	})
	if tab.Rows != 4 {
		t.Fatalf("Rows = %d, want 4", tab.Rows)
	}
	if want := []string{"ridge", "valley", "creek", "mill, upper"}; !slices.Equal(tab.Columns[0].Labels, want) {
		t.Errorf("station = %q, want %q", tab.Columns[0].Labels, want)
	}
	if want := []float64{81, nan, 95.5, 77}; !sameFloats(tab.Columns[1].Values, want) {
		t.Errorf("humidity_pct = %v, want %v", tab.Columns[1].Values, want)
	}
	if want := []float64{-3.5, 10, 2.25, 0.125}; !sameFloats(tab.Columns[2].Values, want) {
		t.Errorf("temp_c = %v, want %v", tab.Columns[2].Values, want)
	}
	if want := []float64{1, 2, nan, 1}; !sameFloats(tab.Columns[3].Values, want) {
		t.Errorf("sky = %v, want %v", tab.Columns[3].Values, want)
	}
}

// testdata/school_survey.csv (an invented survey) starts with a UTF-8 byte
// order mark and ends its lines with CRLF.
func TestReadBOMAndCRLF(t *testing.T) {
	likert := []string{"strongly disagree", "disagree", "neutral", "agree", "strongly agree"}
	tab := mustRead(t, Spec{
		Path:   "testdata/school_survey.csv",
		Format: CSV,
		Columns: []ColumnSpec{
			{Name: "student", Kind: Label},
			{Name: "enjoyment", Kind: Ordinal, Levels: likert},
			{Name: "hours", Kind: Numeric},
		},
	})
	if want := []string{"s1", "s2", "s3", "s4"}; !slices.Equal(tab.Columns[0].Labels, want) {
		t.Errorf("student = %q, want %q (a BOM or CR left in a name or value?)", tab.Columns[0].Labels, want)
	}
	if want := []float64{4, 1, 3, 5}; !sameFloats(tab.Columns[1].Values, want) {
		t.Errorf("enjoyment = %v, want %v", tab.Columns[1].Values, want)
	}
	if want := []float64{3.5, 0, 1.25, 6}; !sameFloats(tab.Columns[2].Values, want) {
		t.Errorf("hours = %v, want %v", tab.Columns[2].Values, want)
	}
	// Hash computed with coreutils sha256sum: the BOM and CRs are hashed.
	if tab.SHA256 != "060a4038d5a4eeecaa9e2c29f4fbc7c81c82aea552ec0199529a7dbab6f1c436" || tab.Bytes != 122 {
		t.Errorf("SHA256, Bytes = %s, %d", tab.SHA256, tab.Bytes)
	}
	h, err := Header("testdata/school_survey.csv", CSV)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"student", "class", "enjoyment", "hours"}; !slices.Equal(h, want) {
		t.Errorf("Header = %q, want %q", h, want)
	}
}

func TestReadHeaderOnly(t *testing.T) {
	tab := mustRead(t, Spec{
		Path:    "testdata/header_only.csv",
		Format:  CSV,
		Columns: []ColumnSpec{{Name: "hours", Kind: Numeric}, {Name: "class", Kind: Label}},
	})
	if tab.Rows != 0 || len(tab.Columns) != 2 || len(tab.Columns[0].Values) != 0 || len(tab.Columns[1].Labels) != 0 {
		t.Errorf("header-only file: Rows %d, columns %+v; want 0 rows, 2 empty columns", tab.Rows, tab.Columns)
	}
}

func TestReadNoColumnsCountsRows(t *testing.T) {
	tab := mustRead(t, Spec{Path: "testdata/orchard_harvest.csv", Format: CSV})
	if tab.Rows != 7 || len(tab.Columns) != 0 {
		t.Errorf("Rows = %d, columns = %d; want 7, 0", tab.Rows, len(tab.Columns))
	}
}

// A column that is not requested is never parsed, so its bad cells do no
// harm.
func TestReadProjection(t *testing.T) {
	p := writeTemp(t, "plots.csv", "plot,yield_kg,comment\nA,1.5,not a number\nB,2.5,\"also, not\"\n")
	tab := mustRead(t, Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "yield_kg", Kind: Numeric}}})
	if want := []float64{1.5, 2.5}; !sameFloats(tab.Columns[0].Values, want) {
		t.Errorf("yield_kg = %v, want %v", tab.Columns[0].Values, want)
	}
	// Asking for the same column as numbers fails.
	_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "comment", Kind: Numeric}}})
	var ce *CellError
	if !errors.As(err, &ce) || ce.Row != 1 || ce.Column != "comment" {
		t.Errorf("numeric comment: err = %v, want a CellError at row 1", err)
	}
}

// Files many blocks long, with the block size lowered, check that rows are
// counted across chunks and that the capacity guess is harmless.
func TestReadAcrossBatches(t *testing.T) {
	defer func(n int) { textBlock = n }(textBlock)
	textBlock = 16
	var b strings.Builder
	b.WriteString("x,g\n")
	for i := range 23 {
		b.WriteString(strings.Repeat(" ", i%3))
		b.WriteString(string(rune('0' + i%10)))
		b.WriteString(",\"g\n")
		b.WriteString(string(rune('a' + i%2)))
		b.WriteString("\"\n")
	}
	p := writeTemp(t, "long.csv", b.String())
	tab := mustRead(t, Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "x", Kind: Numeric}, {Name: "g", Kind: Label}}})
	if tab.Rows != 23 {
		t.Fatalf("Rows = %d, want 23", tab.Rows)
	}
	for i := range 23 {
		if tab.Columns[0].Values[i] != float64(i%10) || tab.Columns[1].Labels[i] != "g\n"+string(rune('a'+i%2)) {
			t.Fatalf("row %d: %v %q", i+1, tab.Columns[0].Values[i], tab.Columns[1].Labels[i])
		}
	}
	// A bad cell in the third batch is placed by row and by line (each row
	// takes two lines).
	bad := strings.Replace(b.String(), "\n  4,", "\n  4x,", 1) // row 15 only
	p = writeTemp(t, "bad.csv", bad)
	_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "g", Kind: Label}, {Name: "x", Kind: Numeric}}})
	var ce *CellError
	if !errors.As(err, &ce) || ce.Row != 15 || ce.Line != 30 || ce.Value != "  4x" {
		t.Errorf("err = %v, want row 15 (line 30), value \"  4x\"", err)
	}
}

func TestReadCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Read(ctx, Spec{Path: "testdata/orchard_harvest.csv", Format: CSV})
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err = %v, want context.Canceled", err)
	}
}

func TestHashFile(t *testing.T) {
	// Computed with coreutils sha256sum and wc -c.
	for _, c := range []struct {
		path string
		sum  string
		n    int64
	}{
		{"testdata/orchard_harvest.csv", "5028d3174cefed059121925039c9e88d71e7d3e72cc85efe5e993d863d80d1a9", 361},
		{"testdata/sensors.tsv", "3346e1f52c90def663723d584a707e62b433173a1ea28c0bc8fee164883e96e1", 121},
		{"testdata/header_only.csv", "b6e869dfc6d20dff6a296e696f380454878c0a60445b3cf74bd78fb9e83e5b5c", 30},
	} {
		sum, n, err := HashFile(c.path)
		if err != nil || sum != c.sum || n != c.n {
			t.Errorf("HashFile(%s) = %s, %d, %v; want %s, %d", c.path, sum, n, err, c.sum, c.n)
		}
	}
	if _, _, err := HashFile("testdata/no_such_file.csv"); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("missing file: err = %v, want os.ErrNotExist", err)
	}
}

func TestHeader(t *testing.T) {
	h, err := Header("testdata/sensors.tsv", TSV)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"station", "temp_c", "humidity_pct", "sky"}; !slices.Equal(h, want) {
		t.Errorf("Header = %q, want %q", h, want)
	}
	if _, err := Header(writeTemp(t, "empty.csv", ""), CSV); err == nil || !strings.Contains(err.Error(), "empty") {
		t.Errorf("empty file: err = %v, want one saying it is empty", err)
	}
	if _, err := Header("testdata/sensors.tsv", 0); err == nil {
		t.Error("format 0: no error")
	}
}

// A column used both as a variable and as a grouping column is requested
// twice, with two kinds, and read both ways.
func TestReadColumnTwoKinds(t *testing.T) {
	p := writeTemp(t, "scores.csv", "year,score,grade\n2021,3.5,fancy\n2022,4,cull\nNA,2,fancy\n2021,1,NA\n")
	tab := mustRead(t, Spec{Path: p, Format: CSV, Missing: []string{"NA"}, Columns: []ColumnSpec{
		{Name: "year", Kind: Numeric},
		{Name: "score", Kind: Numeric},
		{Name: "year", Kind: Label},
		{Name: "grade", Kind: Label},
		{Name: "grade", Kind: Ordinal, Levels: grades},
	}})
	var got []string
	for _, c := range tab.Columns {
		got = append(got, c.Name+" "+c.Kind.String())
	}
	if want := []string{"year numeric", "score numeric", "year label", "grade label", "grade ordinal"}; !slices.Equal(got, want) {
		t.Errorf("columns %q, want the spec's order %q", got, want)
	}
	if y := tab.Column("year", Numeric); !sameFloats(y.Values, []float64{2021, 2022, nan, 2021}) || y.Labels != nil {
		t.Errorf("year as numbers = %v, labels %q", y.Values, y.Labels)
	}
	y := tab.Column("year", Label)
	if !slices.Equal(y.Labels, []string{"2021", "2022", "", "2021"}) || !slices.Equal(y.Missing, []bool{false, false, true, false}) || y.Values != nil {
		t.Errorf("year as labels = %q, missing %v, values %v", y.Labels, y.Missing, y.Values)
	}
	if g := tab.Column("grade", Ordinal); !sameFloats(g.Values, []float64{3, 1, 3, nan}) {
		t.Errorf("grade as ordinal = %v", g.Values)
	}
	if g := tab.Column("grade", Label); !slices.Equal(g.Labels, []string{"fancy", "cull", "fancy", ""}) {
		t.Errorf("grade as labels = %q", g.Labels)
	}
	if tab.Column("score", Label) != nil || tab.Column("grade", Numeric) != nil {
		t.Error("Column found a (name, kind) that was not requested")
	}

	// A bad number is reported although the column is also read as labels,
	// whichever comes first in the spec.
	p = writeTemp(t, "bad.csv", "year,score\n2021,3.5\n20x2,4\n")
	for _, cols := range [][]ColumnSpec{
		{{Name: "year", Kind: Label}, {Name: "year", Kind: Numeric}},
		{{Name: "year", Kind: Numeric}, {Name: "year", Kind: Label}},
	} {
		_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: cols})
		var ce *CellError
		if !errors.As(err, &ce) || ce.Row != 2 || ce.Line != 3 || ce.Column != "year" || ce.Value != "20x2" || ce.Reason != "is not a number" {
			t.Errorf("%s first: err = %v, want row 2 (line 3), column year, value 20x2", cols[0].Kind, err)
		}
	}
}
