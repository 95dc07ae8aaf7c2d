package dataset

import (
	"fmt"
	"strconv"
	"strings"
)

// CellError reports a cell, or a whole row, of a data file that cannot be
// read.
type CellError struct {
	Path string
	// Row is the 1-based data row; the header is not counted.
	Row int
	// Line is the file line where the row starts (CSV and TSV; quoted line
	// breaks counted), or 0 when unknown or not applicable (Parquet).
	Line int
	// Column is the column's name, or "" when the whole row is at fault
	// (a row with the wrong number of fields, or broken quoting).
	Column string
	Value  string // the cell as written
	Reason string // what is wrong, e.g. "is not a number"
	Hint   string // how to fix it, or ""
}

// Error returns a one-line message naming the file, row, line, column and
// value, followed by the hint when there is one, e.g.
//
//	data/orchard.csv: row 17 (line 18), column "grade": value "fancyy" is not one of the declared levels "cull", "standard", "fancy", "extra fancy"
func (e *CellError) Error() string {
	var b strings.Builder
	b.WriteString(e.Path)
	b.WriteString(": row ")
	b.WriteString(strconv.Itoa(e.Row))
	if e.Line > 0 {
		fmt.Fprintf(&b, " (line %d)", e.Line)
	}
	if e.Column != "" {
		fmt.Fprintf(&b, ", column %q: value %q %s", e.Column, e.Value, e.Reason)
	} else {
		b.WriteString(": ")
		b.WriteString(e.Reason)
	}
	if e.Hint != "" {
		b.WriteString(" (hint: ")
		b.WriteString(e.Hint)
		b.WriteString(")")
	}
	return b.String()
}

// MissingColumnError reports a requested column that the file lacks.
type MissingColumnError struct {
	Path   string
	Column string
	// Have lists the file's columns in file order.
	Have []string
	// Suggest is the file's column closest to Column by edit distance, or ""
	// when none is close.
	Suggest string
}

func (e *MissingColumnError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s: no column %q", e.Path, e.Column)
	if e.Suggest != "" {
		fmt.Fprintf(&b, "; did you mean %q?", e.Suggest)
	}
	q := make([]string, len(e.Have))
	for i, h := range e.Have {
		q[i] = strconv.Quote(h)
	}
	fmt.Fprintf(&b, " (the file has %s)", strings.Join(q, ", "))
	return b.String()
}

// ColumnError is a problem with a whole requested column (not one cell):
// its type in the file, or its name appearing twice in the header.
type ColumnError struct {
	Path   string
	Column string
	// Reason says what is wrong, following the column's name, e.g. "has
	// type bool, which cannot be read as numbers".
	Reason string
	Hint   string // how to fix it, or ""
}

// Error returns a one-line message naming the file and the column, followed
// by the hint when there is one, e.g.
//
//	data/plots.parquet: column "netted" has type bool, which cannot be read as numbers (hint: store it as integers 0 and 1, or as text)
func (e *ColumnError) Error() string {
	s := fmt.Sprintf("%s: column %q %s", e.Path, e.Column, e.Reason)
	if e.Hint != "" {
		s += " (hint: " + e.Hint + ")"
	}
	return s
}

// findColumns maps each requested name to its index in have. It returns a
// *MissingColumnError for the first name that is absent, and a
// *ColumnError for a requested name that the header holds more than once.
func findColumns(path string, have []string, want []ColumnSpec) ([]int, error) {
	first := make(map[string]int, len(have))
	for i, h := range have {
		if _, ok := first[h]; !ok {
			first[h] = i
		}
	}
	idx := make([]int, len(want))
	for k, c := range want {
		i, ok := first[c.Name]
		if !ok {
			return nil, &MissingColumnError{Path: path, Column: c.Name, Have: have, Suggest: suggest(c.Name, have)}
		}
		for j := i + 1; j < len(have); j++ {
			if have[j] == c.Name {
				return nil, &ColumnError{
					Path: path, Column: c.Name,
					Reason: fmt.Sprintf("appears more than once in the header (fields %d and %d)", i+1, j+1),
					Hint:   "give each column of the file its own name",
				}
			}
		}
		idx[k] = i
	}
	return idx, nil
}

// suggest returns the candidate closest to name by edit distance, when the
// distance is at most a third of the name's length (and at least 1 edit is
// allowed, at most 3); a candidate equal but for case always qualifies.
// Ties go to the earlier candidate. It returns "" when none is close.
func suggest(name string, candidates []string) string {
	limit := min(max(len([]rune(name))/3, 1), 3)
	best, bestD := "", limit+1
	for _, c := range candidates {
		if strings.EqualFold(c, name) {
			return c
		}
		if d := editDistance(name, c); d < bestD {
			best, bestD = c, d
		}
	}
	return best
}

// editDistance returns the Levenshtein distance between a and b, counted in
// runes: the fewest insertions, deletions and substitutions that turn a
// into b.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}
