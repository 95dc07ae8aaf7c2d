package engine

import (
	"bytes"
	"image/png"
	"math"
	"slices"
	"strings"
	"testing"

	"concordat/io/render"
)

// A small data set with two groups: x rises with y in group a and falls in
// group b; z is noise.
const presentData = "g,x,y,z,o\n" +
	"a,1,2,5,low\na,2,1,3,mid\na,3,4,9,low\na,4,3,1,high\na,5,6,2,mid\na,6,5,8,high\n" +
	"b,1,6,4,high\nb,2,5,6,high\nb,3,4,2,mid\nb,4,3,7,mid\nb,5,2,5,low\nb,6,1,3,low\n"

const presentRecipe = `
title = "Invented present test"
dataset "d" {
  path = "d.csv"
  column "x" { label = "Ex (units)" }
  column "o" {
    levels = ["low", "mid", "high"]
    label  = "Oh"
  }
}
pairing "m" {
  dataset = "d"
  columns = ["x", "y", "z"]
  by      = "g"
}
test "t" {
  pairing  = "m"
  measures = ["spearman", "kendall_b"]
  adjust   = "holm"
}
`

func TestMatrixLayout(t *testing.T) {
	p := plan(t, presentRecipe+`
table "mat" {
  tests  = ["t"]
  path   = "m.md"
  layout = "matrix"
  style  = "apa"
  show   = ["n"]
  marks  = true
}
`, map[string]string{"d.csv": presentData})
	comp := mustCompute(t, p)
	tables := matrixTables(p.Tables[0], "T", comp.Results)
	// One matrix per measure and group: 2 measures × (all, a, b).
	if len(tables) != 6 {
		t.Fatalf("%d matrices, want 6", len(tables))
	}
	m := tables[0]
	if !strings.Contains(m.Title, "Spearman's rho") || !strings.Contains(m.Title, "All rows") {
		t.Errorf("title %q", m.Title)
	}
	if want := []string{"Variable", "", "1", "2", "3"}; !slices.Equal(m.Columns, want) {
		t.Errorf("columns %q, want %q", m.Columns, want)
	}
	// Three variables, each with an estimate row and an n row.
	if len(m.Rows) != 6 {
		t.Fatalf("%d rows, want 6", len(m.Rows))
	}
	var md bytes.Buffer
	if err := render.Write(&md, &render.Document{Tables: []*render.Table{m}}, render.Markdown, render.Style{Numbers: render.APA, Digits: 2}); err != nil {
		t.Fatal(err)
	}
	out := md.String()
	// The lower triangle: row 2 has the x–y estimate under column 1 and
	// the dash on the diagonal; the upper triangle is empty.
	lines := strings.Split(out, "\n")
	var row2 string
	for _, l := range lines {
		if strings.HasPrefix(l, "| 2. y") {
			row2 = l
		}
	}
	cells := strings.Split(row2, "|")
	if len(cells) < 7 || strings.TrimSpace(cells[4]) != "—" || strings.TrimSpace(cells[5]) != "" || strings.TrimSpace(cells[3]) == "" {
		t.Errorf("row 2 is not lower-triangular: %q", row2)
	}
	if !strings.Contains(out, "1. Ex (units)") {
		t.Errorf("the label of x is not used:\n%s", out)
	}
	if !strings.Contains(out, `\*p < .05. \*\*p < .01. \*\*\*p < .001.`) || !strings.Contains(out, "adjusted by the Holm method") {
		t.Errorf("the marks are not explained under the table:\n%s", out)
	}
	// With n shown, no n note.
	if strings.Contains(out, "N = ") {
		t.Errorf("n is shown and noted:\n%s", out)
	}
}

func TestMarkOf(t *testing.T) {
	// APA Publication Manual (7th ed., 2020), §7.14: *p < .05. **p < .01.
	// ***p < .001.
	for p, want := range map[float64]string{0.2: "", 0.05: "", 0.0499: "*", 0.01: "*", 0.0099: "**", 0.001: "**", 0.00099: "***", math.NaN(): ""} {
		if got := markOf(p); got != want {
			t.Errorf("markOf(%v) = %q, want %q", p, got, want)
		}
	}
}

func TestGroupBlocksAndTables(t *testing.T) {
	p := plan(t, presentRecipe+`
table "blocks" {
  tests   = ["t"]
  path    = "b.tex"
  groups  = "blocks"
  columns = ["x", "y", "measure", "estimate", "report"]
}
table "tables" {
  tests   = ["t"]
  path    = "t.html"
  groups  = "tables"
}
table "records" {
  tests = ["t"]
  path  = "r.tsv"
}
`, map[string]string{"d.csv": presentData})
	comp := mustCompute(t, p)
	doc := tableDocument(p, p.Tables[0], comp.Results, nil)
	if len(doc.Tables) != 1 {
		t.Fatalf("blocks: %d tables", len(doc.Tables))
	}
	bt := doc.Tables[0]
	var heads []string
	for _, b := range bt.Blocks {
		heads = append(heads, b.Heading)
		if b.Rows != 6 { // 3 pairs × 2 measures
			t.Errorf("block %q has %d rows", b.Heading, b.Rows)
		}
	}
	if want := []string{"All rows", "g: a", "g: b"}; !slices.Equal(heads, want) {
		t.Errorf("block headings %q, want %q", heads, want)
	}
	if slices.Contains(bt.Columns, "group") {
		t.Error("blocks keep a group column")
	}
	doc = tableDocument(p, p.Tables[1], comp.Results, nil)
	if len(doc.Tables) != 3 || !strings.HasSuffix(doc.Tables[2].Title, "— g: b") || len(doc.Footer) != 2 {
		t.Errorf("tables: %d tables, last titled %q, %d footer lines", len(doc.Tables), doc.Tables[len(doc.Tables)-1].Title, len(doc.Footer))
	}
	// The records keep names, not labels, and the contract's columns.
	rec := tableDocument(p, p.Tables[2], comp.Results, nil).Tables[0]
	var tsv bytes.Buffer
	if err := render.Write(&tsv, &render.Document{Tables: []*render.Table{rec}}, render.TSV, render.Style{Numbers: render.Plain, Digits: -1}); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(rec.Columns, recordColumns) || !strings.HasPrefix(strings.Split(tsv.String(), "\n")[1], "t\tx\ty\tall\tspearman") {
		t.Errorf("records: columns %q, first row %q", rec.Columns, strings.Split(tsv.String(), "\n")[1])
	}
}

func TestStatementOf(t *testing.T) {
	p := plan(t, presentRecipe+`
table "r" {
  tests = ["t"]
  path  = "r.md"
  style = "apa"
}
`, map[string]string{"d.csv": presentData})
	comp := mustCompute(t, p)
	for _, r := range comp.Results[:2] {
		st := statementOf(p.Tables[0], r)
		switch r.Measure {
		case "spearman":
			// df = n − 2 for rho (APA §6.43's r(df) form).
			if st.DF != r.N-2 || st.Symbol != "r" || st.Sub != "s" || st.Method != "Holm" {
				t.Errorf("spearman statement %+v", st)
			}
		case "kendall_b":
			if st.DF != -1 || st.N != r.N || st.Symbol != "τ" || st.Sub != "b" {
				t.Errorf("kendall statement %+v", st)
			}
		}
	}
}

// TestIsotonicSteps: the step line of a monotone fit, worked by hand. The
// pooled points (rank of x: mean rank of y) are 1: 2, 2: 1, 3: 3; the
// pool-adjacent-violators fit pools the first two at 1.5 (R. E. Barlow et
// al. (1972), Statistical Inference under Order Restrictions, ch. 1).
func TestIsotonicSteps(t *testing.T) {
	xs, fit := isotonicSteps([]float64{1, 2, 3}, []float64{2, 1, 3})
	wantX, wantF := []float64{1, 2, 3, 3}, []float64{1.5, 1.5, 1.5, 3}
	if !slices.Equal(xs, wantX) || !slices.Equal(fit, wantF) {
		t.Errorf("steps %v %v, want %v %v", xs, fit, wantX, wantF)
	}
	// A falling relation gets a non-increasing fit; tied x are pooled
	// with their weights: x rank 1.5 (twice, y 3 and 2) and 3 (y 1).
	xs, fit = isotonicSteps([]float64{1.5, 1.5, 3}, []float64{3, 2, 1})
	if !slices.Equal(xs, []float64{1.5, 3, 3}) || !slices.Equal(fit, []float64{2.5, 2.5, 1}) {
		t.Errorf("falling steps %v %v", xs, fit)
	}
}

func TestFiguresRender(t *testing.T) {
	p := plan(t, presentRecipe+`
figure "ranks" {
  test  = "t"
  kind  = "rank_scatter"
  group = "b"
  path  = "r.png"
}
figure "heat" {
  test    = "t"
  kind    = "heatmap"
  measure = "kendall_b"
  path    = "h.svg"
}
table "page" {
  tests   = ["t"]
  path    = "p.html"
  figures = ["heat", "ranks"]
}
`, map[string]string{"d.csv": presentData})
	comp := mustCompute(t, p)
	names := []string{}
	for _, o := range comp.tables {
		names = append(names, o.name+":"+o.format)
	}
	if want := []string{"page:html", "ranks:png", "heat:svg"}; !slices.Equal(names, want) {
		t.Fatalf("outputs %q, want %q", names, want)
	}
	if _, err := png.Decode(bytes.NewReader(comp.tables[1].data)); err != nil {
		t.Errorf("png: %v", err)
	}
	page := string(comp.tables[0].data)
	if strings.Count(page, "<img src=\"data:image/") != 2 || !strings.Contains(page, "Ranks of y against Ex (units) (g: b).") {
		t.Errorf("page does not embed both figures with their captions")
	}

	// A group the data lacks is a data diagnostic pointing at the figure.
	bad := plan(t, presentRecipe+`
figure "f" {
  test  = "t"
  kind  = "scatter"
  group = "c"
  path  = "f.svg"
}
`, map[string]string{"d.csv": presentData})
	_, err := Compute(t.Context(), bad, Options{})
	de, ok := err.(*DiagnosticsError)
	if !ok || !de.Data || !strings.Contains(de.Error(), `Its groups are: "all", "a", "b"`) {
		t.Errorf("unknown group: %v", err)
	}
}
