package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/xml"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
	"github.com/rogpeppe/go-internal/testscript"
	"golang.org/x/net/html"
)

// cmdParquetCSV reads a Parquet file back through Arrow and prints it as CSV
// to stdout, with a first line of "name:type" headers, so that a script can
// compare a binary output with a readable want file: "parquetcsv FILE".
// Floats are printed in full (shortest round-trip), nulls as "null".
func cmdParquetCSV(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: parquetcsv FILE")
	}
	data, err := os.ReadFile(ts.MkAbs(args[0]))
	if err != nil {
		ts.Fatalf("%v", err)
	}
	pf, err := file.NewParquetReader(bytes.NewReader(data))
	if err != nil {
		ts.Fatalf("%s: %v", args[0], err)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		ts.Fatalf("%s: %v", args[0], err)
	}
	tbl, err := fr.ReadTable(context.Background())
	if err != nil {
		ts.Fatalf("%s: %v", args[0], err)
	}
	defer tbl.Release()
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	var head []string
	for _, f := range tbl.Schema().Fields() {
		head = append(head, f.Name+":"+f.Type.String())
	}
	w.Write(head)
	tr := array.NewTableReader(tbl, -1)
	defer tr.Release()
	for tr.Next() {
		rec := tr.RecordBatch()
		for i := 0; i < int(rec.NumRows()); i++ {
			row := make([]string, rec.NumCols())
			for c := range row {
				row[c] = arrowValue(rec.Column(c), i)
			}
			w.Write(row)
		}
	}
	w.Flush()
	ts.Stdout().Write(buf.Bytes())
}

func arrowValue(a arrow.Array, i int) string {
	if a.IsNull(i) {
		return "null"
	}
	return a.ValueStr(i)
}

// cmdHTMLPage parses an HTML report with an HTML5 parser and checks what it
// promises: a language, a title, tables with captions and column headers,
// figures embedded with text alternatives, nothing loaded from elsewhere,
// and the cautions in the footer: "htmlpage FILE".
func cmdHTMLPage(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: htmlpage FILE")
	}
	data, err := os.ReadFile(ts.MkAbs(args[0]))
	if err != nil {
		ts.Fatalf("%v", err)
	}
	root, err := html.Parse(bytes.NewReader(data))
	if err != nil {
		ts.Fatalf("%s: %v", args[0], err)
	}
	els := map[string][]*html.Node{}
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			els[n.Data] = append(els[n.Data], n)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(root)
	attr := func(n *html.Node, k string) string {
		for _, a := range n.Attr {
			if a.Key == k {
				return a.Val
			}
		}
		return ""
	}
	if attr(els["html"][0], "lang") == "" || len(els["title"]) != 1 {
		ts.Fatalf("%s: no lang or title", args[0])
	}
	if len(els["table"]) == 0 || len(els["caption"]) != len(els["table"]) || len(els["thead"]) != len(els["table"]) {
		ts.Fatalf("%s: %d tables, %d captions, %d heads", args[0], len(els["table"]), len(els["caption"]), len(els["thead"]))
	}
	for _, tag := range []string{"script", "link", "iframe"} {
		if len(els[tag]) > 0 {
			ts.Fatalf("%s: has <%s>", args[0], tag)
		}
	}
	for _, img := range els["img"] {
		if !strings.HasPrefix(attr(img, "src"), "data:image/") || attr(img, "alt") == "" {
			ts.Fatalf("%s: an image is not inline or has no alt text", args[0])
		}
	}
	if len(els["footer"]) != 1 || !bytes.Contains(data, []byte("Correlation is not causation")) || !bytes.Contains(data, []byte("do not replace")) {
		ts.Fatalf("%s: no footer with the cautions", args[0])
	}
	ts.Logf("%s: %d tables, %d figures", args[0], len(els["table"]), len(els["figure"]))
}

// cmdImage checks that a figure is a well-formed SVG (an <svg> root with a
// width and height) or a PNG that decodes: "image FILE".
func cmdImage(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: image FILE")
	}
	data, err := os.ReadFile(ts.MkAbs(args[0]))
	if err != nil {
		ts.Fatalf("%v", err)
	}
	switch filepath.Ext(args[0]) {
	case ".png":
		img, err := png.Decode(bytes.NewReader(data))
		if err != nil {
			ts.Fatalf("%s: %v", args[0], err)
		}
		ts.Logf("%s: %v", args[0], img.Bounds())
	case ".svg":
		var root struct {
			XMLName xml.Name
			Width   string `xml:"width,attr"`
			Height  string `xml:"height,attr"`
		}
		if err := xml.Unmarshal(data, &root); err != nil || root.XMLName.Local != "svg" || root.Width == "" || root.Height == "" {
			ts.Fatalf("%s: not an svg image (%v)", args[0], err)
		}
	default:
		ts.Fatalf("%s: not a figure", args[0])
	}
}

// cmdLaTeX compiles LaTeX table files with pdflatex, inside a minimal
// document that loads booktabs, when pdflatex is installed (CI installs it;
// see .ci/run); otherwise it only logs that it could not: "latex FILE...".
func cmdLaTeX(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) == 0 {
		ts.Fatalf("usage: latex FILE...")
	}
	pdflatex, err := exec.LookPath("pdflatex")
	if err != nil {
		ts.Logf("pdflatex not found: %s checked structurally only", strings.Join(args, ", "))
		return
	}
	var doc strings.Builder
	doc.WriteString("\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage[a4paper,landscape,margin=1cm]{geometry}\n\\begin{document}\n")
	for _, a := range args {
		doc.WriteString("\\input{" + filepath.ToSlash(ts.MkAbs(a)) + "}\n\\clearpage\n")
	}
	doc.WriteString("\\end{document}\n")
	dir := ts.MkAbs("latex-build")
	if err := os.MkdirAll(dir, 0o755); err != nil {
		ts.Fatalf("%v", err)
	}
	if err := os.WriteFile(filepath.Join(dir, "doc.tex"), []byte(doc.String()), 0o644); err != nil {
		ts.Fatalf("%v", err)
	}
	cmd := exec.Command(pdflatex, "-interaction=nonstopmode", "-halt-on-error", "doc.tex")
	cmd.Dir = dir
	if out, err := cmd.CombinedOutput(); err != nil {
		ts.Fatalf("pdflatex failed: %v\n%s", err, out)
	}
	log, _ := os.ReadFile(filepath.Join(dir, "doc.log"))
	if bytes.Contains(log, []byte("Missing character")) {
		ts.Fatalf("pdflatex could not set some characters:\n%s", log)
	}
	os.RemoveAll(dir)
}
