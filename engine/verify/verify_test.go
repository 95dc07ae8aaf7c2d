package verify

import (
	"bytes"
	"encoding/json"
	"slices"
	"strings"
	"testing"

	"concordat/io/render"
)

// table is a small result table with awkward text: a pipe, a comma, quotes.
func table() *render.Table {
	return &render.Table{
		Title:   "Shade | yield",
		Columns: []string{"test", "x", "y", "group", "measure", "n", "estimate", "warnings"},
		Rows: [][]render.Cell{
			{render.Text("t"), render.Text("shade"), render.Text("yield"), render.Text("all"), render.Text("spearman"),
				render.Int(8), render.Real(-0.9285714285714286), render.List([]string{`a | b, "c"`})},
			{render.Text("t"), render.Text("shade"), render.Text("yield"), render.Text("north"), render.Text("spearman"),
				render.Int(4), render.Real(0.4), render.List(nil)},
		},
		Notes: []string{"[1] a note"},
	}
}

func encode(t *testing.T, tb *render.Table, f render.Format, digits int) []byte {
	t.Helper()
	var buf bytes.Buffer
	if err := render.Encode(&buf, tb, f, digits); err != nil {
		t.Fatal(err)
	}
	return buf.Bytes()
}

// Each format reads back as the cells it was written from.
func TestReadGrid(t *testing.T) {
	for _, c := range []struct {
		format string
		f      render.Format
		digits int
		want   []string // the cells of row 1
	}{
		{"markdown", render.Markdown, 3, []string{"t", "shade", "yield", "all", "spearman", "8", "-0.929", `a | b, "c"`}},
		{"csv", render.CSV, -1, []string{"t", "shade", "yield", "all", "spearman", "8", "-0.9285714285714286", `a | b, "c"`}},
		{"json", render.JSON, -1, []string{"t", "shade", "yield", "all", "spearman", "8", "-0.9285714285714286", `["a | b, \"c\""]`}},
	} {
		t.Run(c.format, func(t *testing.T) {
			g, err := readGrid(encode(t, table(), c.f, c.digits), c.format)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(g.columns, table().Columns) {
				t.Errorf("columns %q", g.columns)
			}
			if len(g.rows) != 2 {
				t.Fatalf("%d rows, want 2", len(g.rows))
			}
			if !slices.Equal(g.rows[0].cells, c.want) {
				t.Errorf("row 1 = %q, want %q", g.rows[0].cells, c.want)
			}
		})
	}
}

// A changed cell is named by its row (test, pair, group, measure), its
// column, both values and its line; a row that moved is no difference.
func TestDiffTableNamesTheCell(t *testing.T) {
	old := table()
	new := table()
	new.Rows[1][6] = render.Real(0.35)
	for _, c := range []struct {
		format string
		f      render.Format
		digits int
		want   string
	}{
		{"markdown", render.Markdown, 3, "test t, pair shade ~ yield, group north, measure spearman: estimate recorded 0.400, now 0.350 (line 6)"},
		{"csv", render.CSV, -1, "test t, pair shade ~ yield, group north, measure spearman: estimate recorded 0.4, now 0.35 (line 3)"},
		{"json", render.JSON, -1, "test t, pair shade ~ yield, group north, measure spearman: estimate recorded 0.4, now 0.35 (line 14)"},
	} {
		got := diffTable(encode(t, old, c.f, c.digits), encode(t, new, c.f, c.digits), c.format, everything, recordedNow)
		if !slices.Equal(got, []string{c.want}) {
			t.Errorf("%s: %q, want %q", c.format, got, c.want)
		}
	}

	swapped := table()
	swapped.Rows[0], swapped.Rows[1] = swapped.Rows[1], swapped.Rows[0]
	if got := diffTable(encode(t, old, render.CSV, -1), encode(t, swapped, render.CSV, -1), "csv", everything, recordedNow); len(got) != 0 {
		t.Errorf("reordered rows: %q", got)
	}
	noted := table()
	noted.Notes[0] = "[1] another note"
	got := diffTable(encode(t, old, render.Markdown, 3), encode(t, noted, render.Markdown, 3), "markdown", everything, recordedNow)
	if !slices.Equal(got, []string{"line 8: recorded - [1] a note, now - [1] another note"}) {
		t.Errorf("notes: %q", got)
	}
	if got := diffTable(encode(t, old, render.Markdown, 3), encode(t, noted, render.Markdown, 3), "markdown", oneTest("t"), recordedNow); len(got) != 0 {
		t.Errorf("one test's rows: %q", got)
	}
}

// A file that no longer reads as a table is compared line by line, and a
// long list of differences is cut with a count.
func TestDiffTableFallsBack(t *testing.T) {
	got := diffTable([]byte("a\nb\n"), []byte("a\nc\n"), "markdown", everything, recordedNow)
	if !slices.Equal(got, []string{"line 2: recorded b, now c"}) {
		t.Errorf("%q", got)
	}
	var old, new strings.Builder
	for i := range 30 {
		old.WriteString("x\n")
		new.WriteString(strings.Repeat("y", i+1) + "\n")
	}
	got = diffTable([]byte(old.String()), []byte(new.String()), "latex", everything, recordedNow)
	if len(got) != maxCells+1 || got[maxCells] != "… and 10 more differences" {
		t.Errorf("%d lines, last %q", len(got), got[len(got)-1])
	}
}

func TestDiffSettings(t *testing.T) {
	old := json.RawMessage(`{"seed":1,"tests":[{"name":"a","permutations":5000},{"name":"b","measures":["spearman"]}],"tables":[]}`)
	new := json.RawMessage(`{"seed":2,"tests":[{"name":"z","permutations":1},{"name":"a","permutations":6000},{"name":"b","measures":["spearman","pearson"]}],"tables":[],"params":[]}`)
	got := diffSettings(old, new, recordedNow)
	want := []string{
		"params: only now, []",
		"seed: recorded 1, now 2",
		`tests["a"].permutations: recorded 5000, now 6000`,
		`tests["b"].measures: recorded ["spearman"], now ["spearman","pearson"]`,
		`tests["z"]: only now`,
	}
	if !slices.Equal(got, want) {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
	if got := diffSettings(old, old, recordedNow); len(got) != 0 {
		t.Errorf("equal settings: %q", got)
	}
}

// FuzzReadGrid: the table readers never panic, and a table that reads
// shows no difference from itself.
func FuzzReadGrid(f *testing.F) {
	for i, fm := range []struct {
		f      render.Format
		digits int
	}{{render.Markdown, 3}, {render.CSV, -1}, {render.JSON, -1}} {
		var buf bytes.Buffer
		if err := render.Encode(&buf, table(), fm.f, fm.digits); err != nil {
			f.Fatal(err)
		}
		f.Add(buf.Bytes(), uint8(i)) // the index into formats below
	}
	f.Add([]byte("| a |\n| - |\n| \\| |"), uint8(0))
	f.Add([]byte(`[{"a": [1, {"b": null}]}]`), uint8(2))
	formats := []string{"markdown", "csv", "json"}
	f.Fuzz(func(t *testing.T, data []byte, which uint8) {
		format := formats[int(which)%len(formats)]
		if _, err := readGrid(data, format); err != nil {
			return
		}
		if d := diffTable(data, data, format, everything, recordedNow); len(d) != 0 {
			t.Errorf("a table differs from itself: %q", d)
		}
	})
}
