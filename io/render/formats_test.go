package render

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"golang.org/x/net/html"
)

// grouped is the orchard table laid out in blocks, one per orchard block,
// with a coefficient column marked as bounded, an APA report column and a
// label, in the shape the engine gives LaTeX and HTML.
func grouped() *Table {
	st := func(est, lo, hi, p float64, df int, sub bool) Cell {
		return Report(Statement{Symbol: "r", Sub: "s", DF: df, N: df + 2, Subsample: sub, Estimate: est, Digits: 2,
			Lo: lo, Hi: hi, Level: 0.95, P: p, Adjusted: math.NaN()})
	}
	return &Table{
		Title:   "Canopy shade (%) & fruit grade_2026 {invented} $data",
		Label:   "tab:shade",
		Columns: []string{"x", "y", "n", "rₛ", "95% CI", "p", "report"},
		Rows: [][]Cell{
			{Text("Canopy shade (%)"), Text("Fruit grade"), Int(116), Real(-0.5661).Bounded(), Interval(-0.686, -0.416).Bounded(), Prob(2.1e-11), st(-0.5661, -0.686, -0.416, 2.1e-11, 114, true)},
			{Text("Canopy shade (%)"), Text("Sugar <°Brix>"), Int(115), Real(0.0432).Bounded(), Interval(-0.141, 0.224).Bounded(), Prob(0.6462), st(0.0432, -0.141, 0.224, 0.6462, 113, true)},
			{Text("Tree age # | ~ ^ \\"), Text("Fruit grade"), Int(3), Real(math.NaN()).Bounded(), Interval(math.NaN(), math.NaN()), Prob(math.NaN()), st(math.NaN(), math.NaN(), math.NaN(), math.NaN(), 1, true)},
			{Text("Canopy shade (%)"), Text("Fruit grade"), Int(118), Real(-0.427).Bounded().Marked("***"), Interval(-0.569, -0.259).Bounded(), Prob(0.0031), st(-0.427, -0.569, -0.259, 0.0031, 116, true)},
		},
		Blocks: []Block{{Heading: "hill", Rows: 3}, {Heading: "north & river", Rows: 1}},
		Notes:  []string{"[1] 4 of 120 rows dropped: 1 missing shade_pct, 3 missing grade", "***p < .001 (two-sided)."},
	}
}

func TestGoldenFormats(t *testing.T) {
	plain := Style{Numbers: Plain, Digits: 3}
	apa := Style{Numbers: APA, Digits: 2}
	for _, tc := range []struct {
		doc    func() *Document
		format Format
		style  Style
		file   string
	}{
		{one(orchard), TSV, plain, "orchard.tsv"},
		{one(orchard), TSV, Style{Numbers: Plain, Digits: -1}, "orchard_shortest.tsv"},
		{one(orchard), LaTeX, plain, "orchard.tex"},
		{one(orchard), HTML, plain, "orchard.html"},
		{one(intervals), LaTeX, Style{Numbers: Plain, Digits: 2}, "intervals.tex"},
		{one(grouped), Markdown, apa, "grouped_apa.md"},
		{one(grouped), LaTeX, apa, "grouped_apa.tex"},
		{one(grouped), HTML, apa, "grouped_apa.html"},
		{one(grouped), TSV, apa, "grouped.tsv"},
		{two, Markdown, plain, "two.md"},
		{two, LaTeX, plain, "two.tex"},
		{two, HTML, plain, "two.html"},
	} {
		t.Run(tc.file, func(t *testing.T) {
			var buf bytes.Buffer
			if err := Write(&buf, tc.doc(), tc.format, tc.style); err != nil {
				t.Fatal(err)
			}
			checkGolden(t, filepath.Join("testdata", tc.file), buf.Bytes())
			var again bytes.Buffer
			if err := Write(&again, tc.doc(), tc.format, tc.style); err != nil {
				t.Fatal(err)
			}
			if !bytes.Equal(buf.Bytes(), again.Bytes()) {
				t.Error("two encodings of the same document differ")
			}
		})
	}
}

func one(table func() *Table) func() *Document {
	return func() *Document { return &Document{Tables: []*Table{table()}} }
}

// two is a document of two tables with a figure and a footer, as a
// per-group HTML report has.
func two() *Document {
	a, b := orchard(), intervals()
	a.Label, b.Label = "tab:same", "tab:same"
	return &Document{
		Title:   "Two tables <and> a figure",
		Tables:  []*Table{a, b},
		Figures: []Figure{{Caption: "A 1×1 pixel", Alt: "A single white pixel", Type: "image/png", Data: []byte("\x89PNG-not-really")}},
		Footer:  []string{"Correlation is not causation.", "Tables support, & do not replace, the analysis plan."},
	}
}

func checkGolden(t *testing.T, golden string, got []byte) {
	t.Helper()
	if *update {
		if err := os.WriteFile(golden, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("output differs from golden file %s:\ngot:\n%s\nwant:\n%s", golden, got, want)
	}
}

func TestTSV(t *testing.T) {
	tab := &Table{
		Columns: []string{"name\twith tab", "n", "ci", "w"},
		Rows: [][]Cell{
			{Text("two\nlines\r\nand\ttab"), Int(4), Interval(-0.25, 0.5), List([]string{"a", "b\tc"})},
			{Text("plain, with comma \"quoted\""), Int(-1), Interval(math.NaN(), 1), List(nil)},
		},
	}
	out := encode(t, tab, TSV, 2)
	want := "name with tab\tn\tci\tw\n" +
		"two lines and tab\t4\t[-0.25, 0.50]\ta; b c\n" +
		"plain, with comma \"quoted\"\t-1\t\t\n"
	if out != want {
		t.Errorf("got:\n%q\nwant:\n%q", out, want)
	}
	// Every line has as many fields as the header: no quoting needed.
	r := csv.NewReader(strings.NewReader(out))
	r.Comma, r.LazyQuotes = '\t', true
	recs, err := r.ReadAll()
	if err != nil || len(recs) != 3 {
		t.Fatalf("read back: %v, %d records", err, len(recs))
	}
}

// TestHTMLStructure parses the pages with an HTML5 parser and checks what a
// screen reader and a browser rely on.
func TestHTMLStructure(t *testing.T) {
	for name, doc := range map[string]*Document{"grouped": one(grouped)(), "two": two()} {
		var buf bytes.Buffer
		if err := Write(&buf, doc, HTML, Style{Numbers: APA, Digits: 2}); err != nil {
			t.Fatal(err)
		}
		root, err := html.Parse(bytes.NewReader(buf.Bytes()))
		if err != nil {
			t.Fatalf("%s: parse: %v", name, err)
		}
		h := root.FirstChild
		if h.Type != html.DoctypeNode || h.Data != "html" {
			t.Errorf("%s: no <!DOCTYPE html>", name)
		}
		htmlEl := find(root, "html")[0]
		if attr(htmlEl, "lang") != "en" {
			t.Errorf("%s: html lang = %q", name, attr(htmlEl, "lang"))
		}
		if len(find(root, "title")) != 1 || len(find(root, "main")) != 1 || len(find(root, "h1")) != 1 {
			t.Errorf("%s: want one title, main and h1", name)
		}
		// No external assets: nothing is loaded from a URL.
		for _, tag := range []string{"script", "link", "iframe", "object"} {
			if len(find(root, tag)) > 0 {
				t.Errorf("%s: has <%s>", name, tag)
			}
		}
		for _, img := range find(root, "img") {
			if !strings.HasPrefix(attr(img, "src"), "data:image/") {
				t.Errorf("%s: img src %q is not inline", name, attr(img, "src"))
			}
			if attr(img, "alt") == "" {
				t.Errorf("%s: img without alt text", name)
			}
		}
		ids := map[string]bool{}
		for _, tab := range find(root, "table") {
			id := attr(tab, "id")
			if id == "" || ids[id] {
				t.Errorf("%s: table id %q missing or repeated", name, id)
			}
			ids[id] = true
			if len(find(tab, "caption")) != 1 || len(find(tab, "thead")) != 1 || len(find(tab, "tbody")) == 0 {
				t.Errorf("%s: table %s lacks caption, thead or tbody", name, id)
			}
			cols := 0
			for _, th := range find(find(tab, "thead")[0], "th") {
				if attr(th, "scope") != "col" {
					t.Errorf("%s: header cell without scope=col", name)
				}
				cols++
			}
			for _, tr := range find(tab, "tr")[1:] {
				cells := 0
				for c := tr.FirstChild; c != nil; c = c.NextSibling {
					if c.Type != html.ElementNode {
						continue
					}
					cells++
					if span := attr(c, "colspan"); span != "" {
						// A block heading: one cell across the table.
						if span != itoa(int64(cols)) || attr(c, "scope") != "rowgroup" {
							t.Errorf("%s: block heading spans %s of %d columns", name, span, cols)
						}
						cells = cols
					}
				}
				if cells != cols {
					t.Errorf("%s: a row has %d cells for %d columns", name, cells, cols)
				}
			}
			if d := attr(tab, "aria-describedby"); d != "" && findID(root, d) == nil {
				t.Errorf("%s: aria-describedby %q points at nothing", name, d)
			}
		}
		if name == "grouped" {
			groups := 0
			for _, th := range find(root, "th") {
				if attr(th, "scope") == "rowgroup" {
					groups++
				}
			}
			if groups != 2 || len(find(root, "tbody")) != 2 {
				t.Errorf("grouped: %d row-group headers, %d tbody; want 2 and 2", groups, len(find(root, "tbody")))
			}
			text := textOf(root)
			for _, want := range []string{"−.57", "[−.69, −.42]", "< .001", ".003", "Canopy shade (%) & fruit grade_2026 {invented} $data", "Sugar <°Brix>"} {
				if !strings.Contains(text, want) {
					t.Errorf("grouped: page text lacks %q", want)
				}
			}
			// The report: italic r with a subscript s.
			if subs := find(root, "sub"); len(subs) == 0 || textOf(subs[0]) != "s" {
				t.Errorf("grouped: report has no <sub>s</sub>")
			}
		}
		if name == "two" {
			footers := find(root, "footer")
			if len(footers) != 1 || !strings.Contains(textOf(footers[0]), "Correlation is not causation.") {
				t.Errorf("two: footer missing or without the caution")
			}
			if len(find(root, "figure")) != 1 || len(find(root, "figcaption")) != 1 {
				t.Errorf("two: figure missing")
			}
		}
	}
}

func find(n *html.Node, tag string) []*html.Node {
	var out []*html.Node
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode && n.Data == tag {
			out = append(out, n)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return out
}

func findID(n *html.Node, id string) *html.Node {
	if n.Type == html.ElementNode && attr(n, "id") == id {
		return n
	}
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		if f := findID(c, id); f != nil {
			return f
		}
	}
	return nil
}

func attr(n *html.Node, key string) string {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val
		}
	}
	return ""
}

func textOf(n *html.Node) string {
	var b strings.Builder
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return b.String()
}

// TestLaTeXStructure checks what every LaTeX table must have, and compiles
// the tables with pdflatex when it is installed (CI installs it; see
// .ci/run), inside a minimal document that loads booktabs.
func TestLaTeXStructure(t *testing.T) {
	docs := map[string]*Document{"orchard": one(orchard)(), "grouped": one(grouped)(), "two": two(), "intervals": one(intervals)()}
	var all bytes.Buffer
	for name, doc := range docs {
		var buf bytes.Buffer
		if err := Write(&buf, doc, LaTeX, Style{Numbers: APA, Digits: 2}); err != nil {
			t.Fatal(err)
		}
		out := buf.String()
		for _, env := range []string{"table", "tabular"} {
			if b, e := strings.Count(out, `\begin{`+env+`}`), strings.Count(out, `\end{`+env+`}`); b != len(doc.Tables) || e != b {
				t.Errorf("%s: %d \\begin{%s} and %d \\end for %d tables", name, b, env, e, len(doc.Tables))
			}
		}
		for _, rule := range []string{`\toprule`, `\midrule`, `\bottomrule`} {
			if strings.Count(out, rule) != len(doc.Tables) {
				t.Errorf("%s: %s appears %d times", name, rule, strings.Count(out, rule))
			}
		}
		if strings.Contains(out, `\hline`) || strings.Contains(out, "|}") || strings.Contains(out, `\num`) {
			t.Errorf("%s: vertical rules, \\hline or \\num", name)
		}
		// Braces balance outside escapes, and every $ is paired.
		if depth := braceDepth(out); depth != 0 {
			t.Errorf("%s: braces unbalanced by %d", name, depth)
		}
		if strings.Count(strings.ReplaceAll(out, `\$`, ""), "$")%2 != 0 {
			t.Errorf("%s: odd number of $", name)
		}
		// Each row has as many cells as the tabular has columns.
		for _, line := range strings.Split(out, "\n") {
			if !strings.HasSuffix(line, `\\`) || strings.HasPrefix(line, `\multicolumn`) {
				continue
			}
			amps := strings.Count(strings.ReplaceAll(line, `\&`, ""), "&")
			if cols := len(docs[name].Tables[0].Columns); name != "two" && amps != cols-1 {
				t.Errorf("%s: row %q has %d cells for %d columns", name, line, amps+1, cols)
			}
		}
		all.WriteString(out)
		all.WriteString("\n\\clearpage\n")
	}
	pdflatex, err := exec.LookPath("pdflatex")
	if err != nil {
		t.Log("pdflatex not found: LaTeX checked structurally only")
		return
	}
	dir := t.TempDir()
	doc := "\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage[a4paper,landscape,margin=1cm]{geometry}\n\\begin{document}\n" + all.String() + "\\end{document}\n"
	if err := os.WriteFile(filepath.Join(dir, "tables.tex"), []byte(doc), 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(pdflatex, "-interaction=nonstopmode", "-halt-on-error", "tables.tex")
	cmd.Dir = dir
	out, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("pdflatex failed: %v\n%s", err, tail(out, 3000))
	}
	log, _ := os.ReadFile(filepath.Join(dir, "tables.log"))
	for _, bad := range []string{"Missing character", "Undefined control sequence", "LaTeX Warning: Reference"} {
		if bytes.Contains(log, []byte(bad)) {
			t.Errorf("pdflatex log has %q:\n%s", bad, tail(log, 3000))
		}
	}
}

func tail(b []byte, n int) []byte {
	if len(b) > n {
		return b[len(b)-n:]
	}
	return b
}

// braceDepth counts { minus } outside \{ and \}.
func braceDepth(s string) int {
	s = strings.NewReplacer(`\{`, "", `\}`, "").Replace(s)
	return strings.Count(s, "{") - strings.Count(s, "}")
}

func TestLaTeXEscape(t *testing.T) {
	for in, want := range map[string]string{
		`50% & $5 #1 a_b {x} ~ ^ \`: `50\% \& \$5 \#1 a\_b \{x\} \textasciitilde{} \textasciicircum{} \textbackslash{}`,
		"p < .05 | q > 1":           `p \textless{} .05 \textbar{} q \textgreater{} 1`,
		"τ—ρ − γ ≥ 1…":              `$\tau$---$\rho$ $-$ $\gamma$ $\geq$ 1\ldots{}`,
		"two\nlines":                "two lines",
	} {
		if got := latexEscape(in); got != want {
			t.Errorf("latexEscape(%q) = %q, want %q", in, got, want)
		}
	}
	if got := latexLabel(`tab:a b{c}_d-1.2/3`); got != `tab:abc_d-1.2/3` {
		t.Errorf("latexLabel = %q", got)
	}
	if got := latexCell(Real(-0.25).Bounded().Marked("**"), Style{Numbers: APA, Digits: 2}); got != `$-$.25$^{**}$` {
		t.Errorf("marked real = %q", got)
	}
}

// TestParquetRoundTrip writes the result-record-like table as Parquet and
// reads it back through Arrow, value by value, including the types.
func TestParquetRoundTrip(t *testing.T) {
	tab := orchard()
	tab.Columns = append(tab.Columns, "ci", "method", "report")
	tab.Kinds = []Kind{KindText, KindText, KindText, KindInt, KindReal, KindProb, KindList, KindInterval, KindText, KindReport}
	extra := [][]Cell{
		{Interval(-0.56, -0.39), Text("t"), Report(Statement{Symbol: "r", Sub: "s", DF: 46, Estimate: -0.4127538, Digits: 2, Lo: math.NaN(), Hi: math.NaN(), P: 0.0035121, Adjusted: math.NaN()})},
		{Interval(math.Inf(-1), 0.5), NoText(), Report(Statement{Symbol: "τ", Sub: "b", DF: -1, N: 48, Estimate: -0.30519, Digits: 2, Lo: math.NaN(), Hi: math.NaN(), P: 2.7e-7, Adjusted: math.NaN()})},
		{Interval(math.NaN(), 0.5), Text(""), Report(Statement{Symbol: "r", Sub: "s", DF: 45, Estimate: -0.0000004, Digits: 2, Lo: math.NaN(), Hi: math.NaN(), P: 0.99981, Adjusted: math.NaN()})},
		{Interval(0.1, 0.2), Text("exact"), Report(Statement{Symbol: "r", Sub: "s", DF: 1, Estimate: math.NaN(), Lo: math.NaN(), Hi: math.NaN(), P: math.NaN(), Adjusted: math.NaN()})},
	}
	for i := range tab.Rows {
		tab.Rows[i] = append(tab.Rows[i], extra[i]...)
	}
	var buf bytes.Buffer
	if err := Write(&buf, &Document{Tables: []*Table{tab}}, Parquet, Style{Numbers: Plain, Digits: 3}); err != nil {
		t.Fatal(err)
	}
	var again bytes.Buffer
	if err := Write(&again, &Document{Tables: []*Table{tab}}, Parquet, Style{Numbers: Plain, Digits: 3}); err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(buf.Bytes(), again.Bytes()) {
		t.Error("two Parquet encodings of the same table differ")
	}

	pf, err := file.NewParquetReader(bytes.NewReader(buf.Bytes()))
	if err != nil {
		t.Fatal(err)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	got, err := fr.ReadTable(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	defer got.Release()
	if got.NumRows() != int64(len(tab.Rows)) || got.NumCols() != int64(len(tab.Columns)) {
		t.Fatalf("read %d × %d, want %d × %d", got.NumRows(), got.NumCols(), len(tab.Rows), len(tab.Columns))
	}
	wantTypes := []arrow.Type{arrow.STRING, arrow.STRING, arrow.STRING, arrow.INT64, arrow.FLOAT64, arrow.FLOAT64, arrow.LIST, arrow.STRUCT, arrow.STRING, arrow.STRING}
	for c, f := range got.Schema().Fields() {
		if f.Name != tab.Columns[c] || f.Type.ID() != wantTypes[c] {
			t.Errorf("field %d = %s %s, want %s %s", c, f.Name, f.Type, tab.Columns[c], wantTypes[c])
		}
	}
	tr := array.NewTableReader(got, -1)
	defer tr.Release()
	row := 0
	for tr.Next() {
		rec := tr.RecordBatch()
		for i := 0; i < int(rec.NumRows()); i, row = i+1, row+1 {
			for c := range tab.Columns {
				checkParquetValue(t, row, tab.Columns[c], rec.Column(c), i, tab.Rows[row][c])
			}
		}
	}
	if row != len(tab.Rows) {
		t.Errorf("read %d rows", row)
	}
}

func checkParquetValue(t *testing.T, row int, name string, a arrow.Array, i int, want Cell) {
	t.Helper()
	if want.null() && want.kind != KindList && want.kind != KindInt {
		if !a.IsNull(i) {
			t.Errorf("row %d %s: got %v, want null", row, name, a.ValueStr(i))
		}
		return
	}
	if a.IsNull(i) {
		t.Errorf("row %d %s: got null, want a value", row, name)
		return
	}
	switch want.kind {
	case KindText:
		if g := a.(*array.String).Value(i); g != want.text {
			t.Errorf("row %d %s = %q, want %q", row, name, g, want.text)
		}
	case KindReport:
		if g := a.(*array.String).Value(i); g != want.report.plainText() {
			t.Errorf("row %d %s = %q, want %q", row, name, g, want.report.plainText())
		}
	case KindInt:
		if g := a.(*array.Int64).Value(i); g != want.i {
			t.Errorf("row %d %s = %d, want %d", row, name, g, want.i)
		}
	case KindReal, KindProb:
		if g := a.(*array.Float64).Value(i); g != want.f {
			t.Errorf("row %d %s = %v, want %v (bit for bit)", row, name, g, want.f)
		}
	case KindInterval:
		s := a.(*array.Struct)
		lo, hi := s.Field(0).(*array.Float64).Value(i), s.Field(1).(*array.Float64).Value(i)
		if lo != want.f || hi != want.hi {
			t.Errorf("row %d %s = [%v, %v], want [%v, %v]", row, name, lo, hi, want.f, want.hi)
		}
	case KindList:
		l := a.(*array.List)
		start, end := l.ValueOffsets(i)
		vals := l.ListValues().(*array.String)
		var g []string
		for k := start; k < end; k++ {
			g = append(g, vals.Value(int(k)))
		}
		if strings.Join(g, "\x00") != strings.Join(want.items, "\x00") || len(g) != len(want.items) {
			t.Errorf("row %d %s = %q, want %q", row, name, g, want.items)
		}
	}
}

func TestWriteErrors(t *testing.T) {
	for name, tc := range map[string]struct {
		doc *Document
		f   Format
		s   Style
	}{
		"two tables in csv":  {two(), CSV, Style{Numbers: Plain, Digits: 3}},
		"two tables in pq":   {two(), Parquet, Style{Numbers: Plain, Digits: 3}},
		"no table":           {&Document{}, HTML, Style{Numbers: Plain, Digits: 3}},
		"bad style":          {one(orchard)(), Markdown, Style{Digits: 3}},
		"bad blocks":         {&Document{Tables: []*Table{{Columns: []string{"a"}, Rows: [][]Cell{{Int(1)}}, Blocks: []Block{{"x", 2}}}}}, HTML, Style{Numbers: Plain}},
		"kind mismatch":      {&Document{Tables: []*Table{{Columns: []string{"a"}, Kinds: []Kind{KindInt}, Rows: [][]Cell{{Real(1)}}}}}, Parquet, Style{Numbers: Plain}},
		"bad figure type":    {&Document{Tables: []*Table{orchard()}, Figures: []Figure{{Type: "image/gif"}}}, HTML, Style{Numbers: Plain}},
		"kinds of bad count": {&Document{Tables: []*Table{{Columns: []string{"a"}, Kinds: []Kind{KindInt, KindInt}}}}, Parquet, Style{Numbers: Plain}},
	} {
		var buf bytes.Buffer
		if err := Write(&buf, tc.doc, tc.f, tc.s); err == nil {
			t.Errorf("%s: no error", name)
		}
		if buf.Len() != 0 {
			t.Errorf("%s: wrote %d bytes before failing", name, buf.Len())
		}
	}
	// A NoText cell is allowed in any typed column (a value not computed).
	ok := &Table{Columns: []string{"m"}, Kinds: []Kind{KindText}, Rows: [][]Cell{{NoText()}}}
	if err := Write(&bytes.Buffer{}, &Document{Tables: []*Table{ok}}, Parquet, Style{Numbers: Plain}); err != nil {
		t.Errorf("NoText in a text column: %v", err)
	}
}

func TestParseNewFormats(t *testing.T) {
	for _, f := range formats() {
		got, err := ParseFormat(f.String())
		if err != nil || got != f {
			t.Errorf("ParseFormat(%q) = %v, %v", f.String(), got, err)
		}
	}
	if !Parquet.Binary() || HTML.Binary() {
		t.Error("Binary")
	}
}
