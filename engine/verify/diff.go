package verify

import (
	"fmt"
	"strconv"
	"strings"
)

// keyColumns name a row of the result record (DESIGN.md): test, pair, group
// and measure. Every table format concordat writes has them.
var keyColumns = []string{"test", "x", "y", "group", "measure"}

// maxCells is how many differences of one table are listed before the rest
// are only counted.
const maxCells = 20

// labels name the two versions of a table that are compared, e.g.
// "recorded" and "now".
type labels struct{ old, new string }

// A rowFilter says which rows of a table to compare, by their test, and
// whether to compare the lines outside the table (title, notes) too.
type rowFilter struct {
	tests func(test string) bool // nil: every row
	extra bool
}

// oneTest compares the rows of test alone.
func oneTest(test string) rowFilter {
	return rowFilter{tests: func(t string) bool { return t == test }}
}

// everything compares every row and line.
var everything = rowFilter{extra: true}

// diffTable compares two versions of a table file and returns one line per
// difference, at most maxCells of them followed by a count of the rest.
// Rows are matched by their test, pair, group and measure, so a row that
// moved is not a difference; a changed cell is named by its row and column,
// with both values as the files write them. Files that cannot be read as
// tables are compared line by line.
func diffTable(old, new []byte, format string, f rowFilter, l labels) []string {
	og, oerr := readGrid(old, format)
	ng, nerr := readGrid(new, format)
	var out []string
	if oerr != nil || nerr != nil {
		out = diffLines(old, new, l)
	} else {
		out = diffGrids(og, ng, f, l)
	}
	if len(out) > maxCells {
		n := len(out) - maxCells
		out = append(out[:maxCells], fmt.Sprintf("… and %d more %s", n, plural(n, "difference", "differences")))
	}
	return out
}

// diffGrids compares two tables cell by cell.
func diffGrids(og, ng *grid, f rowFilter, l labels) []string {
	var out []string
	if strings.Join(og.columns, "\x00") != strings.Join(ng.columns, "\x00") {
		out = append(out, fmt.Sprintf("columns: %s %s, %s %s", l.old, strings.Join(og.columns, ", "), l.new, strings.Join(ng.columns, ", ")))
	}
	oi, ni := columnIndex(og.columns), columnIndex(ng.columns)
	keyOf := func(idx map[string]int, r gridRow, pos int) string {
		var parts []string
		for _, k := range keyColumns {
			if c, ok := idx[k]; ok && c < len(r.cells) {
				parts = append(parts, r.cells[c])
			}
		}
		if len(parts) == 0 {
			return "row " + strconv.Itoa(pos+1)
		}
		return strings.Join(parts, "\x00")
	}
	keep := func(idx map[string]int, r gridRow) bool {
		if f.tests == nil {
			return true
		}
		c, ok := idx["test"]
		return ok && c < len(r.cells) && f.tests(r.cells[c])
	}

	oldRows := map[string]gridRow{}
	var oldOrder []string
	for i, r := range og.rows {
		if !keep(oi, r) {
			continue
		}
		k := unique(oldRows, keyOf(oi, r, i))
		oldRows[k] = r
		oldOrder = append(oldOrder, k)
	}
	seen := map[string]bool{}
	newRows := map[string]gridRow{}
	for i, r := range ng.rows {
		if !keep(ni, r) {
			continue
		}
		k := unique(newRows, keyOf(ni, r, i))
		newRows[k] = r
		seen[k] = true
		o, ok := oldRows[k]
		if !ok {
			out = append(out, fmt.Sprintf("%s: only %s (line %d)", rowName(ni, r), l.new, r.line))
			continue
		}
		for _, col := range ng.columns {
			nc, oc := ni[col], -1
			if c, ok := oi[col]; ok {
				oc = c
			}
			if oc < 0 || oc >= len(o.cells) || nc >= len(r.cells) {
				continue // a column change is reported above
			}
			if o.cells[oc] != r.cells[nc] {
				out = append(out, fmt.Sprintf("%s: %s %s %s, %s %s (line %d)",
					rowName(ni, r), col, l.old, show(o.cells[oc]), l.new, show(r.cells[nc]), r.line))
			}
		}
	}
	for _, k := range oldOrder {
		if !seen[k] {
			r := oldRows[k]
			out = append(out, fmt.Sprintf("%s: only %s (line %d)", rowName(oi, r), l.old, r.line))
		}
	}
	if f.extra {
		out = append(out, diffExtra(og.extra, ng.extra, l)...)
	}
	return out
}

// diffExtra compares the lines outside two tables (title, notes) in order.
func diffExtra(old, new []gridLine, l labels) []string {
	var out []string
	for i := 0; i < max(len(old), len(new)); i++ {
		switch {
		case i >= len(old):
			out = append(out, fmt.Sprintf("line %d only %s: %s", new[i].line, l.new, show(new[i].text)))
		case i >= len(new):
			out = append(out, fmt.Sprintf("line %d only %s: %s", old[i].line, l.old, show(old[i].text)))
		case old[i].text != new[i].text:
			out = append(out, fmt.Sprintf("line %d: %s %s, %s %s", new[i].line, l.old, show(old[i].text), l.new, show(new[i].text)))
		}
	}
	return out
}

// diffLines compares two files line by line, for a file that is no longer
// a table.
func diffLines(old, new []byte, l labels) []string {
	ol := strings.Split(string(old), "\n")
	nl := strings.Split(string(new), "\n")
	var out []string
	for i := 0; i < max(len(ol), len(nl)); i++ {
		switch {
		case i >= len(ol):
			out = append(out, fmt.Sprintf("line %d only %s: %s", i+1, l.new, show(nl[i])))
		case i >= len(nl):
			out = append(out, fmt.Sprintf("line %d only %s: %s", i+1, l.old, show(ol[i])))
		case ol[i] != nl[i]:
			out = append(out, fmt.Sprintf("line %d: %s %s, %s %s", i+1, l.old, show(ol[i]), l.new, show(nl[i])))
		}
	}
	return out
}

// rowName names a result row by its test, pair, group and measure.
func rowName(idx map[string]int, r gridRow) string {
	cell := func(name string) string {
		if c, ok := idx[name]; ok && c < len(r.cells) {
			return r.cells[c]
		}
		return ""
	}
	if cell("test") == "" && cell("x") == "" {
		return fmt.Sprintf("row at line %d", r.line)
	}
	return fmt.Sprintf("test %s, pair %s ~ %s, group %s, measure %s",
		cell("test"), cell("x"), cell("y"), cell("group"), cell("measure"))
}

// show quotes a cell for a message when it is empty or has outer spaces,
// and shortens a long one.
func show(s string) string {
	const most = 300
	if r := []rune(s); len(r) > most {
		s = string(r[:most]) + "…"
	}
	if s == "" || strings.TrimSpace(s) != s {
		return strconv.Quote(s)
	}
	return s
}

func columnIndex(cols []string) map[string]int {
	idx := make(map[string]int, len(cols))
	for i, c := range cols {
		if _, dup := idx[c]; !dup {
			idx[c] = i
		}
	}
	return idx
}

// unique returns k, or k with a counter when m already has it (a table
// that repeats a row).
func unique[T any](m map[string]T, k string) string {
	if _, ok := m[k]; !ok {
		return k
	}
	for i := 2; ; i++ {
		if c := k + "\x00#" + strconv.Itoa(i); !mapHas(m, c) {
			return c
		}
	}
}

func mapHas[T any](m map[string]T, k string) bool { _, ok := m[k]; return ok }

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
