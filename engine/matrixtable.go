package engine

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"concordat/engine/stats"
	"concordat/io/render"
	"concordat/recipe"
)

// matrixDash is the diagonal of a correlation matrix: an em dash, as in the
// sample correlation table of the APA Publication Manual (7th ed., 2020,
// §7.21).
const matrixDash = "—"

// Significance thresholds of matrix marks, one to three asterisks, as the
// APA Publication Manual (7th ed., 2020, §7.14, probability notes) writes
// them: "*p < .05. **p < .01. ***p < .001."
var markLevels = []struct {
	p    float64
	mark string
}{{0.001, "***"}, {0.01, "**"}, {0.05, "*"}}

// matrixTables lays each test's results out as correlation matrices, one
// per measure and group (in that order within a test). A pairing of columns
// gives a lower triangle with numbered variables (the estimate of the pair
// in row i, column j < i; a dash on the diagonal; the upper triangle
// empty); a pairing of x and y lists gives a full grid, x down and y across.
// With show, each variable's row is followed by rows of p-values and of n.
func matrixTables(tb *recipe.Table, title string, rows []Result) []*render.Table {
	var out []*render.Table
	for _, t := range tb.Tests {
		index := map[string]Result{}
		var groups []string
		for _, r := range rows {
			if r.Test != t.Name {
				continue
			}
			index[r.X+"\x00"+r.Y+"\x00"+r.Group+"\x00"+r.Measure] = r
			if !slices.Contains(groups, r.Group) {
				groups = append(groups, r.Group)
			}
		}
		for _, m := range t.Measures {
			for _, g := range groups {
				out = append(out, matrixTable(tb, t, title, m.String(), g, index))
			}
		}
	}
	return out
}

func matrixTable(tb *recipe.Table, t *recipe.Test, title, measure, group string, index map[string]Result) *render.Table {
	p := t.Pairing
	ds := p.Dataset
	triangle := len(p.Columns) > 0
	rowVars, colVars := p.Columns, p.Columns
	if !triangle {
		rowVars, colVars = p.X, p.Y
	}
	lookup := func(a, b string) (Result, bool) {
		if r, ok := index[a+"\x00"+b+"\x00"+group+"\x00"+measure]; ok {
			return r, true
		}
		r, ok := index[b+"\x00"+a+"\x00"+group+"\x00"+measure]
		return r, ok
	}
	sym, sub := symbolOf(measure)
	symbol := sym
	if sub != "" {
		symbol += "_" + sub
		if sub == "s" {
			symbol = sym + "ₛ"
		}
	}
	adjusted := t.Adjust != stats.AdjustNone
	pOf := func(r Result) float64 {
		if adjusted {
			return r.PAdjusted
		}
		return r.PValue
	}

	m := &render.Table{RowHeader: true}
	m.Title = title + ": " + measureNames[measure]
	if group != "all" || p.By != "" {
		m.Title += " — " + groupHeading(tb, Result{Test: t.Name, Group: group})
	}
	m.Columns = []string{"Variable"}
	if len(tb.Show) > 0 {
		m.Columns = append(m.Columns, "")
	}
	for j, v := range colVars {
		if triangle {
			m.Columns = append(m.Columns, strconv.Itoa(j+1))
		} else {
			m.Columns = append(m.Columns, ds.LabelOf(v))
		}
	}

	var ns []int
	warned, cells := 0, 0
	for i, rv := range rowVars {
		name := ds.LabelOf(rv)
		if triangle {
			name = strconv.Itoa(i+1) + ". " + name
		}
		lines := append([]string{"estimate"}, tb.Show...)
		for li, line := range lines {
			row := []render.Cell{render.Text(name)}
			if li > 0 {
				row[0] = render.Text("")
			}
			if len(tb.Show) > 0 {
				switch line {
				case "estimate":
					row = append(row, render.Text(symbol))
				default:
					row = append(row, render.Text(line))
				}
			}
			for j, cv := range colVars {
				switch {
				case triangle && j == i:
					if line == "estimate" {
						row = append(row, render.Filler(matrixDash))
					} else {
						row = append(row, render.Filler(""))
					}
					continue
				case triangle && j > i:
					row = append(row, render.Filler(""))
					continue
				}
				r, ok := lookup(rv, cv)
				if !ok {
					row = append(row, render.NoText())
					continue
				}
				switch line {
				case "estimate":
					cell := render.Real(r.Estimate).Bounded()
					if tb.Marks && !math.IsNaN(r.Estimate) {
						cell = cell.Marked(markOf(pOf(r)))
					}
					row = append(row, cell)
					ns = append(ns, r.N)
					cells++
					if len(r.Warnings) > 0 {
						warned++
					}
				case "p":
					row = append(row, render.Prob(pOf(r)))
				case "n":
					row = append(row, render.Int(int64(r.N)))
				}
			}
			m.Rows = append(m.Rows, row)
		}
	}

	// Notes: the sample size when it is not shown, the marks, the p-values
	// used, and how many coefficients carry warnings.
	var notes []string
	if !slices.Contains(tb.Show, "n") && len(ns) > 0 {
		lo, hi := slices.Min(ns), slices.Max(ns)
		nSym := "N"
		if group != "all" {
			nSym = "n"
		}
		if lo == hi {
			notes = append(notes, fmt.Sprintf("%s = %d.", nSym, lo))
		} else {
			notes = append(notes, fmt.Sprintf("%s = %d to %d (%s deletion).", nSym, lo, hi, p.Missing))
		}
	}
	side := "two-sided"
	if t.Alternative != stats.TwoSided {
		side = "one-sided (" + t.Alternative.String() + ")"
	}
	pWord := "p-values are " + side
	if adjusted {
		pWord += ", adjusted by the " + adjustNames[t.Adjust.String()] + " method over the test's results of each measure"
	}
	if tb.Marks {
		var marks []string
		for i := len(markLevels) - 1; i >= 0; i-- {
			l := markLevels[i]
			marks = append(marks, fmt.Sprintf("%sp < %s.", l.mark, strings.TrimPrefix(strconv.FormatFloat(l.p, 'f', -1, 64), "0")))
		}
		notes = append(notes, strings.Join(marks, " ")+" "+pWord+".")
	} else if slices.Contains(tb.Show, "p") {
		notes = append(notes, pWord+".")
	}
	if warned > 0 {
		notes = append(notes, fmt.Sprintf("%d of %d coefficients carry warnings (such as ties, dropped rows or small n); a long table lists them.", warned, cells))
	}
	m.Notes = notes
	return m
}

// markOf returns the significance mark of p: "***", "**", "*" or "".
func markOf(p float64) string {
	if math.IsNaN(p) {
		return ""
	}
	for _, l := range markLevels {
		if p < l.p {
			return l.mark
		}
	}
	return ""
}
