package dataset

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"
	"testing"
)

// orchardLines returns an invented harvest file with n data rows whose grade
// is "fancy", with cells replaced by the edits (row → "block,shade,grade").
func orchardLines(n int, edits map[int]string) string {
	var b strings.Builder
	b.WriteString("orchard_block,shade_pct,grade\n")
	for r := 1; r <= n; r++ {
		if e, ok := edits[r]; ok {
			b.WriteString(e + "\n")
			continue
		}
		fmt.Fprintf(&b, "north,%d,fancy\n", r)
	}
	return b.String()
}

var orchardSpec = []ColumnSpec{
	{Name: "orchard_block", Kind: Label},
	{Name: "shade_pct", Kind: Numeric},
	{Name: "grade", Kind: Ordinal, Levels: grades},
}

func TestCellErrors(t *testing.T) {
	cases := []struct {
		name    string
		edits   map[int]string
		missing []string
		want    string // the message after "PATH: "
		hint    bool   // the error carries a hint
	}{
		{
			name:  "level typo",
			edits: map[int]string{17: "north,3,fancyy"},
			want:  `row 17 (line 18), column "grade": value "fancyy" is not one of the declared levels "cull", "standard", "fancy", "extra fancy"`,
		},
		{
			name:  "level in the wrong case",
			edits: map[int]string{2: "north,3,Fancy"},
			want:  `row 2 (line 3), column "grade": value "Fancy" is not one of the declared levels "cull", "standard", "fancy", "extra fancy" (hint: did you mean "fancy"? levels must match exactly, including case and spaces)`,
			hint:  true,
		},
		{
			name:  "not a number",
			edits: map[int]string{5: "north,lots,fancy"},
			want:  `row 5 (line 6), column "shade_pct": value "lots" is not a number`,
		},
		{
			name:  "decimal comma",
			edits: map[int]string{3: `north,"3,5",fancy`},
			want:  `row 3 (line 4), column "shade_pct": value "3,5" is not a number (hint: it looks like a decimal comma (or a thousands separator); write numbers with "." as the decimal point and no grouping, e.g. 3.5)`,
			hint:  true,
		},
		{
			name:  "beyond float64",
			edits: map[int]string{1: "north,1e400,fancy"},
			want:  `row 1 (line 2), column "shade_pct": value "1e400" is outside the range of a 64-bit float (about ±1.8e308)`,
		},
		{
			name:  "empty numeric not declared missing",
			edits: map[int]string{4: "north,,fancy"},
			want:  `row 4 (line 5), column "shade_pct": value "" is empty (hint: if empty cells mean "no value", add "" to the dataset's missing tokens)`,
			hint:  true,
		},
		{
			name:    "missing token must match exactly",
			edits:   map[int]string{4: "north, NA,fancy"},
			missing: []string{"NA"},
			want:    `row 4 (line 5), column "shade_pct": value " NA" is not a number`,
		},
		{
			name:  "first bad row wins over an earlier column",
			edits: map[int]string{6: "north,3,fancyy", 7: "north,x,fancy"},
			want:  `row 6 (line 7), column "grade": value "fancyy" is not one of the declared levels "cull", "standard", "fancy", "extra fancy"`,
		},
		{
			name:  "same row: the first requested column wins",
			edits: map[int]string{6: "north,x,fancyy"},
			want:  `row 6 (line 7), column "shade_pct": value "x" is not a number`,
		},
		{
			name:  "ragged row, too many fields",
			edits: map[int]string{9: "north,3,5,fancy"},
			want:  `row 9 (line 10): has 4 fields but the header has 3 (hint: a field holding a comma must be quoted)`,
			hint:  true,
		},
		{
			name:  "ragged row, too few fields",
			edits: map[int]string{2: "north,3"},
			want:  `row 2 (line 3): has 2 fields but the header has 3`,
		},
		{
			name:  "ragged first row",
			edits: map[int]string{1: "north"},
			want:  `row 1 (line 2): has 1 field but the header has 3`,
		},
		{
			name:  "stray quote",
			edits: map[int]string{3: `north,3,fan"cy`},
			want:  `row 3 (line 4): has a stray quote (line 4, column 12) (hint: a field that holds a quote must be quoted as a whole, with the inner quote doubled: "say ""hi""")`,
			hint:  true,
		},
		{
			name:  "unclosed quote",
			edits: map[int]string{20: `north,3,"fancy`},
			want:  `row 20 (line 21): has a quoted field that is badly closed or never closed (line 21, column 16) (hint: a quoted field ends with a quote followed by the separator or the end of the line)`,
			hint:  true,
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			p := writeTemp(t, "orchard.csv", orchardLines(20, c.edits))
			_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Missing: c.missing, Columns: orchardSpec})
			var ce *CellError
			if !errors.As(err, &ce) {
				t.Fatalf("err = %v (%T), want a *CellError", err, err)
			}
			if got := strings.TrimPrefix(err.Error(), p+": "); got != c.want {
				t.Errorf("message\n got %s\nwant %s", got, c.want)
			}
			if ce.Path != p || (ce.Hint != "") != c.hint {
				t.Errorf("Path %q, Hint %q", ce.Path, ce.Hint)
			}
		})
	}
}

func TestMissingColumnError(t *testing.T) {
	p := "testdata/orchard_harvest.csv"
	for _, c := range []struct {
		col, suggest string
	}{
		{"shade_pc", "shade_pct"},
		{"Grade", "grade"},
		{"tree age", "tree_age"},
		{"rainfall_mm", ""},
		{"x", ""},
	} {
		_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "grade", Kind: Label}, {Name: c.col, Kind: Numeric}}})
		var me *MissingColumnError
		if !errors.As(err, &me) {
			t.Fatalf("%s: err = %v, want a *MissingColumnError", c.col, err)
		}
		if me.Column != c.col || me.Suggest != c.suggest || me.Path != p || len(me.Have) != 7 {
			t.Errorf("%s: %+v, want suggestion %q", c.col, me, c.suggest)
		}
	}
	_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "shade_pc", Kind: Numeric}}})
	want := p + `: no column "shade_pc"; did you mean "shade_pct"? (the file has "tree_id", "orchard_block", "shade_pct", "tree_age", "sugar_brix", "grade", "notes")`
	if err == nil || err.Error() != want {
		t.Errorf("message\n got %v\nwant %s", err, want)
	}
	_, err = Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "rainfall_mm", Kind: Numeric}}})
	if err == nil || strings.Contains(err.Error(), "did you mean") {
		t.Errorf("no close name: %v", err)
	}
}

func TestDuplicateHeaderName(t *testing.T) {
	p := writeTemp(t, "dup.csv", "plot,yield,yield,note\nA,1,2,x\n")
	_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "note", Kind: Label}, {Name: "yield", Kind: Numeric}}})
	var ce *ColumnError
	if !errors.As(err, &ce) || ce.Path != p || ce.Column != "yield" {
		t.Fatalf("err = %v, want a *ColumnError for column yield", err)
	}
	want := p + `: column "yield" appears more than once in the header (fields 2 and 3) (hint: give each column of the file its own name)`
	if err.Error() != want {
		t.Errorf("message\n got %v\nwant %s", err, want)
	}
	// Header reports every name, the repeated one included.
	if h, err := Header(p, CSV); err != nil || !slices.Equal(h, []string{"plot", "yield", "yield", "note"}) {
		t.Errorf("Header = %q, %v", h, err)
	}
	// A duplicated column that is not requested does no harm.
	tab := mustRead(t, Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "note", Kind: Label}}})
	if !slices.Equal(tab.Columns[0].Labels, []string{"x"}) {
		t.Errorf("note = %q", tab.Columns[0].Labels)
	}
}

func TestEmptyFile(t *testing.T) {
	for _, content := range []string{"", "\xef\xbb\xbf", "\n\n"} {
		p := writeTemp(t, "empty.csv", content)
		_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "a", Kind: Numeric}}})
		if err == nil || !strings.Contains(err.Error(), "the file is empty") {
			t.Errorf("%q: err = %v, want one saying the file is empty", content, err)
		}
	}
}

func TestSpecErrors(t *testing.T) {
	p := "testdata/orchard_harvest.csv"
	for _, c := range []struct {
		cols []ColumnSpec
		want string
	}{
		{[]ColumnSpec{{Name: "grade"}}, `column "grade": invalid kind 0`},
		{[]ColumnSpec{{Name: "grade", Kind: Ordinal}}, `column "grade": an ordinal column needs its levels`},
		{[]ColumnSpec{{Name: "grade", Kind: Ordinal, Levels: []string{"cull", "fancy", "cull"}}}, `column "grade": level "cull" is listed twice`},
		{[]ColumnSpec{{Name: "shade_pct", Kind: Numeric, Levels: []string{"low"}}}, `column "shade_pct": levels are given but the column is numeric, not ordinal`},
		{[]ColumnSpec{{Name: "grade", Kind: Label}, {Name: "grade", Kind: Label}}, `column "grade" is requested twice as label`},
		{[]ColumnSpec{{Name: "shade_pct", Kind: Numeric}, {Name: "grade", Kind: Label}, {Name: "shade_pct", Kind: Numeric}}, `column "shade_pct" is requested twice as numeric`},
		{[]ColumnSpec{{Name: "grade", Kind: Ordinal, Levels: grades}, {Name: "grade", Kind: Ordinal, Levels: grades[:2]}}, `column "grade" is requested twice as ordinal`},
		{[]ColumnSpec{{Name: "grade", Kind: Numeric}, {Name: "grade", Kind: Label}, {Name: "grade", Kind: Ordinal, Levels: grades}}, `column "grade" is requested both as numeric and as ordinal`},
		{[]ColumnSpec{{Name: "grade", Kind: Ordinal, Levels: grades}, {Name: "grade", Kind: Numeric}}, `column "grade" is requested both as numeric and as ordinal`},
	} {
		_, err := Read(context.Background(), Spec{Path: p, Format: CSV, Columns: c.cols})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("err = %v, want it to contain %q", err, c.want)
		}
	}
	if _, err := Read(context.Background(), Spec{Path: p}); err == nil || !strings.Contains(err.Error(), "invalid format 0") {
		t.Errorf("format 0: err = %v", err)
	}
	if _, err := Read(context.Background(), Spec{Path: "testdata/none.csv", Format: CSV}); err == nil {
		t.Error("a missing file: no error")
	}
}

func TestSuggest(t *testing.T) {
	have := []string{"shade_pct", "tree_age", "sugar_brix", "grade"}
	for _, c := range []struct{ name, want string }{
		{"shade_pct", "shade_pct"},
		{"shade-pct", "shade_pct"},
		{"SUGAR_BRIX", "sugar_brix"},
		{"grad", "grade"},
		{"gr", ""}, // 3 edits from "grade", too far for a 2-letter name
		{"rainfall", ""},
	} {
		if got := suggest(c.name, have); got != c.want {
			t.Errorf("suggest(%q) = %q, want %q", c.name, got, c.want)
		}
	}
	// Distances worked out by hand.
	for _, c := range []struct {
		a, b string
		d    int
	}{
		{"", "", 0}, {"", "abc", 3}, {"kitten", "sitting", 3}, {"grade", "grades", 1}, {"größe", "grosse", 3},
	} {
		if got := editDistance(c.a, c.b); got != c.d {
			t.Errorf("editDistance(%q, %q) = %d, want %d", c.a, c.b, got, c.d)
		}
	}
}

func TestFormat(t *testing.T) {
	for _, f := range []Format{CSV, TSV, Parquet} {
		if got, err := ParseFormat(f.String()); err != nil || got != f {
			t.Errorf("ParseFormat(%q) = %v, %v", f.String(), got, err)
		}
		if got, err := ParseFormat(strings.ToUpper(f.String())); err != nil || got != f {
			t.Errorf("ParseFormat(%q) = %v, %v", strings.ToUpper(f.String()), got, err)
		}
	}
	// File extensions are the recipe package's business, not words here.
	if _, err := ParseFormat("parq"); err == nil {
		t.Error(`ParseFormat("parq"): no error`)
	}
	if _, err := ParseFormat("xlsx"); err == nil || !strings.Contains(err.Error(), `"xlsx"`) {
		t.Errorf("ParseFormat(xlsx): err = %v", err)
	}
	if Format(0).String() != "Format(0)" || Kind(0).String() != "Kind(0)" {
		t.Error("zero values should print as invalid")
	}
	if Numeric.String() != "numeric" || Ordinal.String() != "ordinal" || Label.String() != "label" {
		t.Error("kind words")
	}
}
