package engine

import (
	"fmt"
	"math"
	"slices"
	"strconv"

	"concordat/engine/stats"
	"concordat/io/render"
	"concordat/recipe"
)

// This file lays results out as the tables a recipe asks for: the columns,
// the long or matrix layout, the groups as a column, blocks or tables, the
// labels of the variables, and the APA report. It computes nothing but
// layout; render writes the cells in each format.

// cautions are said once in every HTML report's footer (DESIGN.md, Cautions).
var cautions = []string{
	"Correlation is not causation: an association, however small its p-value, does not show that one variable affects the other; and a p-value is not an effect size.",
	"These tables support, and do not replace, the study's analysis plan and a statistician's review.",
}

// tableDocument lays out one table block's results (in recipe order) as the
// document its format writes. figs holds the rendered figures by name.
func tableDocument(plan *recipe.Plan, tb *recipe.Table, rows []Result, figs map[string]renderedFigure) *render.Document {
	title := plan.Title
	if tb.Caption != "" {
		title = tb.Caption
	}
	doc := &render.Document{Title: title}
	switch {
	case !tb.Format.Readable():
		t := recordTable(tb, rows)
		t.Title = title
		doc.Tables = []*render.Table{t}
		return doc
	case tb.Layout == recipe.LayoutMatrix:
		doc.Tables = matrixTables(tb, title, rows)
	case tb.Groups == recipe.GroupTables:
		for _, g := range groupOrder(rows) {
			var sub []Result
			for _, r := range rows {
				if r.Group == g {
					sub = append(sub, r)
				}
			}
			t := longTable(tb, title+" — "+groupHeading(tb, sub[0]), sub)
			doc.Tables = append(doc.Tables, t)
		}
	default:
		doc.Tables = []*render.Table{longTable(tb, title, rows)}
	}
	for _, t := range doc.Tables {
		t.Label = tb.Label
	}
	if len(doc.Tables) == 0 { // no results: an empty long table says so
		doc.Tables = []*render.Table{longTable(tb, title, nil)}
	}
	if tb.Format == recipe.HTML {
		for _, f := range tb.Figures {
			rf := figs[f.Name]
			doc.Figures = append(doc.Figures, render.Figure{Caption: rf.caption, Alt: rf.alt, Type: rf.format.MediaType(), Data: rf.data})
		}
		doc.Footer = cautions
	}
	return doc
}

// tableColumn is one column of a long table: its header and its cell for a
// result. note is set for the "notes" column, which numbers warnings.
type tableColumn struct {
	key    string
	header string
	cell   func(r *Result) render.Cell
}

// recordTable is a file of result records (csv, tsv, json, parquet): the
// contract's keys as columns, every digit, names rather than labels; or
// the columns the table lists.
func recordTable(tb *recipe.Table, rows []Result) *render.Table {
	keys := tb.Columns
	if keys == nil {
		keys = recordColumns
	}
	t := &render.Table{}
	var cols []tableColumn
	for _, k := range keys {
		cols = append(cols, recordColumn(tb, k, rows, false))
	}
	for _, c := range cols {
		t.Columns = append(t.Columns, c.header)
		t.Kinds = append(t.Kinds, columnKind(c.key))
	}
	// The cells are made row by row as the file is written: a matrix of
	// 10⁵ or more results would otherwise hold ~1.7 kB of cells per row.
	t.NumRows = len(rows)
	t.RowFunc = func(i int, dst []render.Cell) []render.Cell {
		for _, c := range cols {
			dst = append(dst, c.cell(&rows[i]))
		}
		return dst
	}
	return t
}

// columnKind is the cell kind of a column key, for typed formats.
func columnKind(key string) render.Kind {
	switch key {
	case "n", "n_dropped":
		return render.KindInt
	case "estimate", "ci_low", "ci_high", "ci_level", "ties_x", "ties_y":
		return render.KindReal
	case "p_value", "p_adjusted":
		return render.KindProb
	case "ci":
		return render.KindInterval
	case "warnings", "controls":
		return render.KindList
	case "report":
		return render.KindReport
	}
	return render.KindText
}

// recordColumn returns the column for key. readable selects the readable
// headers and cells (labels, a level as "95%", a blank adjusted p where
// none was asked for); otherwise the header is the key and the cell the
// record's value.
func recordColumn(tb *recipe.Table, key string, rows []Result, readable bool) tableColumn {
	c := tableColumn{key: key, header: key}
	label := func(r *Result, name string) string {
		if readable {
			if t := testOf(tb, r.Test); t != nil {
				return t.Pairing.Dataset.LabelOf(name)
			}
		}
		return name
	}
	switch key {
	case "test":
		c.cell = func(r *Result) render.Cell { return render.Text(r.Test) }
	case "x":
		c.cell = func(r *Result) render.Cell { return render.Text(label(r, r.X)) }
	case "y":
		c.cell = func(r *Result) render.Cell { return render.Text(label(r, r.Y)) }
	case "group":
		c.cell = func(r *Result) render.Cell { return render.Text(r.Group) }
	case "measure":
		c.cell = func(r *Result) render.Cell { return render.Text(r.Measure) }
	case "controls":
		c.cell = func(r *Result) render.Cell {
			if !readable {
				return render.List(r.Controls)
			}
			ls := make([]string, len(r.Controls))
			for i, n := range r.Controls {
				ls[i] = label(r, n)
			}
			return render.List(ls)
		}
	case "n":
		c.cell = func(r *Result) render.Cell { return render.Int(int64(r.N)) }
	case "n_dropped":
		c.cell = func(r *Result) render.Cell { return render.Int(int64(r.NDropped)) }
	case "estimate":
		c.cell = func(r *Result) render.Cell { return render.Real(r.Estimate).Bounded() }
	case "ci":
		c.cell = func(r *Result) render.Cell { return render.Interval(r.CILow, r.CIHigh).Bounded() }
		if readable {
			if level, same := commonLevel(rows); same {
				c.header = render.Percent(level) + "% CI"
			} else {
				c.header = "CI"
			}
		}
	case "ci_low":
		c.cell = func(r *Result) render.Cell { return render.Real(r.CILow).Bounded() }
	case "ci_high":
		c.cell = func(r *Result) render.Cell { return render.Real(r.CIHigh).Bounded() }
	case "ci_level":
		c.cell = func(r *Result) render.Cell { return render.Real(r.CILevel) }
		if readable {
			c.header = "level"
			c.cell = func(r *Result) render.Cell {
				if math.IsNaN(r.CILevel) {
					return render.NoText()
				}
				return render.Text(render.Percent(r.CILevel) + "%")
			}
		}
	case "ci_method":
		c.cell = func(r *Result) render.Cell { return optText(r.CIMethod) }
	case "alternative":
		c.cell = func(r *Result) render.Cell { return render.Text(r.Alternative) }
	case "p_value":
		c.cell = func(r *Result) render.Cell { return render.Prob(r.PValue) }
	case "p_method":
		c.cell = func(r *Result) render.Cell { return optText(r.PMethod) }
	case "p_adjusted":
		c.cell = func(r *Result) render.Cell { return render.Prob(r.PAdjusted) }
		if readable {
			c.header = adjustedHeader(rows)
			c.cell = func(r *Result) render.Cell {
				if r.AdjustMethod == stats.AdjustNone.String() {
					return render.Filler("")
				}
				return render.Prob(r.PAdjusted)
			}
		}
	case "adjust_method":
		c.cell = func(r *Result) render.Cell { return render.Text(r.AdjustMethod) }
	case "ties_x":
		c.cell = func(r *Result) render.Cell { return render.Real(r.TiesX).Bounded() }
	case "ties_y":
		c.cell = func(r *Result) render.Cell { return render.Real(r.TiesY).Bounded() }
	case "warnings":
		c.cell = func(r *Result) render.Cell { return render.List(r.Warnings) }
	case "report":
		c.cell = func(r *Result) render.Cell { return render.Report(statementOf(tb, *r)) }
	case "notes": // filled in by longTable, which numbers the notes
	default:
		panic("engine: table column without a layout: " + key) // the recipe checked the word
	}
	if readable {
		if h, ok := readableHeaders[key]; ok {
			c.header = h
		}
	}
	return c
}

// readableHeaders are the headers of readable tables that differ from the
// record's keys.
var readableHeaders = map[string]string{
	"n_dropped": "n dropped", "ci_low": "CI low", "ci_high": "CI high", "ci_method": "CI method",
	"p_value": "p", "p_method": "p method", "adjust_method": "adjustment", "ties_x": "ties x", "ties_y": "ties y",
}

// defaultReadable is the readable table's columns when the recipe lists
// none: what a reader of a paper needs. The interval's level heads its
// column when all rows share it, else it gets a column of its own; the
// alternative gets a column when any row is one-sided, so a one-sided
// p-value never passes for a two-sided one; controls and the adjusted
// p-value appear when some row has them.
func defaultReadable(tb *recipe.Table, rows []Result) []string {
	_, sameLevel := commonLevel(rows)
	oneSided := slices.ContainsFunc(rows, func(r Result) bool { return r.Alternative != stats.TwoSided.String() })
	adjusted := slices.ContainsFunc(rows, func(r Result) bool { return r.AdjustMethod != stats.AdjustNone.String() })
	partial := slices.ContainsFunc(rows, func(r Result) bool { return len(r.Controls) > 0 })

	cols := []string{"test", "x", "y"}
	if tb.Groups == recipe.GroupColumn {
		cols = append(cols, "group")
	}
	cols = append(cols, "measure")
	if partial {
		cols = append(cols, "controls")
	}
	cols = append(cols, "n", "estimate", "ci")
	if !sameLevel {
		cols = append(cols, "ci_level")
	}
	if oneSided {
		cols = append(cols, "alternative")
	}
	cols = append(cols, "p_value", "p_method")
	if adjusted {
		cols = append(cols, "p_adjusted")
	}
	return append(cols, "notes")
}

// longTable lays rows out one result per row. With groups as blocks the
// rows are reordered group by group (in the order groups first appear),
// each block under its heading.
func longTable(tb *recipe.Table, title string, rows []Result) *render.Table {
	if tb.Groups == recipe.GroupBlocks {
		var ordered []Result
		t := &render.Table{}
		for _, g := range groupOrder(rows) {
			n := 0
			for _, r := range rows {
				if r.Group == g {
					ordered = append(ordered, r)
					n++
				}
			}
			t.Blocks = append(t.Blocks, render.Block{Heading: groupHeading(tb, ordered[len(ordered)-1]), Rows: n})
		}
		lt := longRows(tb, title, ordered)
		lt.Blocks = t.Blocks
		return lt
	}
	return longRows(tb, title, rows)
}

func longRows(tb *recipe.Table, title string, rows []Result) *render.Table {
	keys := tb.Columns
	if keys == nil {
		keys = defaultReadable(tb, rows)
	}
	t := &render.Table{Title: title}
	var cols []tableColumn
	for _, k := range keys {
		c := recordColumn(tb, k, rows, true)
		cols = append(cols, c)
		t.Columns = append(t.Columns, c.header)
	}
	noteIndex := map[string]int{}
	for _, r := range rows {
		row := make([]render.Cell, len(cols))
		for i, c := range cols {
			if c.key != "notes" {
				row[i] = c.cell(&r)
				continue
			}
			var refs []string
			for _, w := range r.Warnings {
				k, ok := noteIndex[w]
				if !ok {
					t.Notes = append(t.Notes, w)
					k = len(t.Notes)
					noteIndex[w] = k
				}
				refs = append(refs, strconv.Itoa(k))
			}
			row[i] = render.List(refs)
		}
		t.Rows = append(t.Rows, row)
	}
	for i := range t.Notes {
		t.Notes[i] = fmt.Sprintf("[%d] %s", i+1, t.Notes[i])
	}
	return t
}

// groupOrder lists the groups of rows in the order they first appear.
func groupOrder(rows []Result) []string {
	var out []string
	for _, r := range rows {
		if !slices.Contains(out, r.Group) {
			out = append(out, r.Group)
		}
	}
	return out
}

// groupHeading names the group of r for a block heading or a table title:
// "orchard_block: hill" (the by column's label when it has one), or "All
// rows" for the whole sample.
func groupHeading(tb *recipe.Table, r Result) string {
	if r.Group == "all" {
		return "All rows"
	}
	t := testOf(tb, r.Test)
	if t == nil || t.Pairing.By == "" {
		return r.Group
	}
	return t.Pairing.Dataset.LabelOf(t.Pairing.By) + ": " + r.Group
}

// testOf finds the table's test named name.
func testOf(tb *recipe.Table, name string) *recipe.Test {
	for _, t := range tb.Tests {
		if t.Name == name {
			return t
		}
	}
	return nil
}

// symbolOf is the APA symbol of a measure and its subscript (APA
// Publication Manual, 7th ed., 2020, §6.44, Table 6.5: r for Pearson's
// correlation, rₛ for Spearman's; τ for Kendall's tau; Greek γ for Goodman
// and Kruskal's gamma; Somers' d with its direction as the subscript).
func symbolOf(measure string) (symbol, sub string) {
	switch measure {
	case "spearman":
		return "r", "s"
	case "pearson":
		return "r", ""
	case "kendall_a":
		return "τ", "a"
	case "kendall_b":
		return "τ", "b"
	case "kendall_c":
		return "τ", "c"
	case "gamma":
		return "γ", ""
	case "somers_d_yx":
		return "d", "yx"
	case "somers_d_xy":
		return "d", "xy"
	}
	return measure, ""
}

// measureNames are the measures as a caption or a legend names them.
var measureNames = map[string]string{
	"spearman": "Spearman's rho", "pearson": "Pearson's r", "kendall_a": "Kendall's tau-a",
	"kendall_b": "Kendall's tau-b", "kendall_c": "Stuart's tau-c", "gamma": "Goodman and Kruskal's gamma",
	"somers_d_yx": "Somers' d (y dependent)", "somers_d_xy": "Somers' d (x dependent)",
}

// adjustNames are the adjustments as a sentence names them.
var adjustNames = map[string]string{
	"bonferroni": "Bonferroni", "holm": "Holm", "hochberg": "Hochberg", "hommel": "Hommel",
	"bh": "Benjamini–Hochberg", "by": "Benjamini–Yekutieli",
}

// statementOf is r as an APA statement. Spearman's and Pearson's
// coefficients are tested with t on n − 2 degrees of freedom (n − 2 − k
// with k controls), which the statement gives; the Kendall family, gamma
// and Somers' d have no degrees of freedom (their tests use S), so the
// statement gives the sample size instead (see render.Statement).
func statementOf(tb *recipe.Table, r Result) render.Statement {
	sym, sub := symbolOf(r.Measure)
	st := render.Statement{
		Symbol: sym, Sub: sub, DF: -1, N: r.N, Subsample: r.Group != "all",
		Estimate: r.Estimate, Digits: 2, Lo: r.CILow, Hi: r.CIHigh, Level: r.CILevel,
		P: r.PValue, Adjusted: math.NaN(), OneSided: r.Alternative != stats.TwoSided.String(),
	}
	if tb.Style == recipe.StyleAPA {
		st.Digits = tb.Digits
	}
	if r.Measure == "spearman" || r.Measure == "pearson" {
		st.DF = r.N - 2 - len(r.Controls)
	}
	if name, ok := adjustNames[r.AdjustMethod]; ok {
		st.Adjusted, st.Method = r.PAdjusted, name
	}
	return st
}

// styleOf is how the table's numbers are written.
func styleOf(tb *recipe.Table) render.Style {
	s := render.Style{Numbers: render.Plain, Digits: tb.Digits}
	if tb.Style == recipe.StyleAPA {
		s.Numbers = render.APA
	}
	return s
}

// formatOf maps a table format to its renderer's.
func formatOf(f recipe.TableFormat) render.Format {
	switch f {
	case recipe.Markdown:
		return render.Markdown
	case recipe.CSV:
		return render.CSV
	case recipe.JSON:
		return render.JSON
	case recipe.TSV:
		return render.TSV
	case recipe.LaTeX:
		return render.LaTeX
	case recipe.HTML:
		return render.HTML
	case recipe.Parquet:
		return render.Parquet
	}
	panic(fmt.Sprintf("engine: table format %v has no renderer", f))
}
