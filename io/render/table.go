package render

import (
	"bufio"
	"fmt"
	"io"
	"strings"
)

// A Table is a titled grid of typed cells. Every row has one cell per
// column. Title and Notes are printed by formats that have a place for them
// (Markdown) and left out by those that do not (CSV, JSON).
type Table struct {
	Title   string   // a caption; optional
	Columns []string // column names, which are also the JSON keys
	Rows    [][]Cell
	Notes   []string // footnotes, printed under the table

	// RowFunc, when not nil, supplies the rows in place of Rows: row i
	// (0 ≤ i < NumRows), built in dst (the same slice, reused from call
	// to call; the encoders keep none of its cells), so that a table of a
	// million results is written without holding every cell at once.
	RowFunc func(i int, dst []Cell) []Cell
	NumRows int
}

// Len returns the number of rows.
func (t *Table) Len() int {
	if t.RowFunc != nil {
		return t.NumRows
	}
	return len(t.Rows)
}

// each calls f with every row in order, checking each as check does; the
// row is valid only during the call. It stops at the first bad row or the
// first error of f.
func (t *Table) each(f func(r int, row []Cell) error) error {
	var dst []Cell
	for r := range t.Len() {
		var row []Cell
		if t.RowFunc != nil {
			dst = t.RowFunc(r, dst[:0])
			row = dst
		} else {
			row = t.Rows[r]
		}
		if err := t.checkRow(r, row); err != nil {
			return err
		}
		if err := f(r, row); err != nil {
			return err
		}
	}
	return nil
}

// Format is an output format. The zero Format is invalid.
type Format int

// The output formats. New ones (TSV, LaTeX, HTML, Parquet) are added at the
// end, each with a case in String, ParseFormat and Encode.
const (
	_        Format = iota
	Markdown        // a GitHub-flavoured pipe table
	CSV             // comma-separated values (RFC 4180 quoting)
	JSON            // an array of objects keyed by column name
)

// String returns the name of f as a recipe writes it ("markdown", "csv",
// "json"), or "Format(n)" for an invalid format.
func (f Format) String() string {
	switch f {
	case Markdown:
		return "markdown"
	case CSV:
		return "csv"
	case JSON:
		return "json"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}

// ParseFormat returns the Format whose String is name.
func ParseFormat(name string) (Format, error) {
	for _, f := range []Format{Markdown, CSV, JSON} {
		if f.String() == name {
			return f, nil
		}
	}
	return 0, fmt.Errorf("parse format %q: unknown format (known: markdown, csv, json)", name)
}

// Encode writes t to w in format f.
//
// digits is the number of decimals for Real, Prob and Interval cells in
// Markdown and CSV; a negative digits means the shortest text that reads
// back exactly (strconv's 'g' format with precision -1). Markdown shows Prob
// cells with at least three decimals (see Prob). JSON always writes the
// shortest exact numbers and ignores digits.
//
// Encode checks the table first and writes nothing when a row has the wrong
// number of cells or a cell is the zero Cell. A table with a RowFunc is
// checked row by row as it is written, so such an error may come after
// part of it was written.
func Encode(w io.Writer, t *Table, f Format, digits int) error {
	if err := t.check(); err != nil {
		return fmt.Errorf("encode %s: %w", f, err)
	}
	bw := bufio.NewWriter(w)
	switch f {
	case Markdown:
		if err := encodeMarkdown(bw, t, digits); err != nil {
			return fmt.Errorf("encode markdown: %w", err)
		}
	case CSV:
		if err := encodeCSV(bw, t, digits); err != nil {
			return fmt.Errorf("encode csv: %w", err)
		}
	case JSON:
		if err := encodeJSON(bw, t); err != nil {
			return fmt.Errorf("encode json: %w", err)
		}
	default:
		return fmt.Errorf("encode: invalid format %s", f)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("encode %s: %w", f, err)
	}
	return nil
}

// check reports the first row of the wrong width or invalid cell. A
// RowFunc table is checked row by row as it is written instead.
func (t *Table) check() error {
	if t == nil {
		return fmt.Errorf("nil table")
	}
	if t.RowFunc != nil {
		return nil
	}
	for r, row := range t.Rows {
		if err := t.checkRow(r, row); err != nil {
			return err
		}
	}
	return nil
}

// checkRow reports a row of the wrong width or with an invalid cell.
func (t *Table) checkRow(r int, row []Cell) error {
	if len(row) != len(t.Columns) {
		return fmt.Errorf("table %q: row %d has %d cells for %d columns", t.Title, r+1, len(row), len(t.Columns))
	}
	for c, cell := range row {
		if !cell.kind.valid() {
			return fmt.Errorf("table %q: row %d, column %q: cell of invalid kind %s", t.Title, r+1, t.Columns[c], cell.kind)
		}
	}
	return nil
}

// joinList joins the items of a list cell for formats that hold one string
// per cell.
func joinList(items []string) string { return strings.Join(items, "; ") }
