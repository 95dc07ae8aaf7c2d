package render

import (
	"bufio"
	"fmt"
	"io"
	"slices"
	"strings"
)

// A Table is a titled grid of typed cells. Every row has one cell per
// column. Title, Notes, Label and Blocks are printed by formats that have a
// place for them (Markdown, LaTeX, HTML) and left out by those that do not
// (CSV, TSV, JSON, Parquet).
type Table struct {
	Title   string   // a caption; optional
	Columns []string // column names, which are also the JSON keys and Parquet field names
	Rows    [][]Cell
	Notes   []string // footnotes, printed under the table

	// Label is a key for cross-references: LaTeX's \label and the id of an
	// HTML table. Optional.
	Label string
	// Kinds, when not nil, gives the kind of every column (one per
	// column), and each cell must be of its column's kind or a Text cell
	// without a value (NoText). Parquet needs it to type its columns when
	// the table has no rows; without it Parquet takes each column's kind
	// from the first row.
	Kinds []Kind
	// Blocks, when not nil, splits the rows into consecutive blocks, each
	// under a heading (such as one block per group); their Rows must add
	// up to len(Rows). Markdown, LaTeX and HTML print the headings; the
	// other formats ignore Blocks.
	Blocks []Block
	// RowHeader says that the first column names its row (as a matrix's
	// variable column does): HTML marks those cells as row headers.
	RowHeader bool

	// RowFunc, when not nil, supplies the rows in place of Rows: row i
	// (0 ≤ i < NumRows), built in dst (the same slice, reused from call
	// to call; the encoders keep none of its cells), so that a file of a
	// million result records is written without holding every cell at
	// once. The readable formats (Markdown, LaTeX, HTML) make the rows
	// first; the record formats take them one at a time.
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

// each calls f with every row in order, checking each as checkRow does;
// the row is valid only during the call. It stops at the first bad row or
// the first error of f.
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

// materialized returns t with its rows in Rows (t itself when it has no
// RowFunc).
func (t *Table) materialized() (*Table, error) {
	if t.RowFunc == nil {
		return t, nil
	}
	m := *t
	m.RowFunc, m.NumRows, m.Rows = nil, 0, make([][]Cell, 0, t.NumRows)
	err := t.each(func(_ int, row []Cell) error {
		m.Rows = append(m.Rows, slices.Clone(row))
		return nil
	})
	return &m, err
}

// A Block is a run of consecutive rows of a Table under one heading.
type Block struct {
	Heading string
	Rows    int // how many rows, from where the previous block ended
}

// Format is an output format. The zero Format is invalid.
type Format int

// The output formats. New ones are added at the end, each with a case in
// String, ParseFormat and Write.
const (
	_         Format = iota
	Markdown         // a GitHub-flavoured pipe table
	CSV              // comma-separated values (RFC 4180 quoting)
	JSON             // an array of objects keyed by column name
	TSV              // tab-separated values (IANA text/tab-separated-values: no quoting)
	LaTeX            // a booktabs table environment, for \input into a manuscript
	HTML             // a standalone, accessible HTML page
	Parquet          // Apache Parquet with typed columns, through Arrow
	formatEnd        // one past the last valid format
)

// formats lists the valid formats in declaration order.
func formats() []Format {
	var out []Format
	for f := Markdown; f < formatEnd; f++ {
		out = append(out, f)
	}
	return out
}

// Binary reports whether f's output is not text (Parquet).
func (f Format) Binary() bool { return f == Parquet }

// String returns the name of f as a recipe writes it ("markdown", "csv",
// "json", "tsv", "latex", "html", "parquet"), or "Format(n)" for an invalid
// format.
func (f Format) String() string {
	switch f {
	case Markdown:
		return "markdown"
	case CSV:
		return "csv"
	case JSON:
		return "json"
	case TSV:
		return "tsv"
	case LaTeX:
		return "latex"
	case HTML:
		return "html"
	case Parquet:
		return "parquet"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}

// ParseFormat returns the Format whose String is name.
func ParseFormat(name string) (Format, error) {
	var known []string
	for _, f := range formats() {
		if f.String() == name {
			return f, nil
		}
		known = append(known, f.String())
	}
	return 0, fmt.Errorf("parse format %q: unknown format (known: %s)", name, strings.Join(known, ", "))
}

// Encode writes t to w in format f with plain numbers: it is Write of a
// Document holding t alone, in the Plain style with the given digits.
//
// digits is the number of decimals for Real, Prob and Interval cells in
// Markdown, CSV, TSV, LaTeX and HTML; a negative digits means the shortest
// text that reads back exactly (strconv's 'g' format with precision -1).
// Markdown, LaTeX and HTML show Prob cells with at least three decimals
// (see Prob). JSON and Parquet always keep every digit and ignore digits.
//
// Encode checks the table first and writes nothing when a row has the wrong
// number of cells or a cell is the zero Cell. A table with a RowFunc is
// checked row by row as it is written, so such an error may come after
// part of it was written.
func Encode(w io.Writer, t *Table, f Format, digits int) error {
	return Write(w, &Document{Tables: []*Table{t}}, f, Style{Numbers: Plain, Digits: digits})
}

// Write writes d to w in format f, numbers styled by s.
//
// Markdown and LaTeX write the tables one after another (LaTeX as table
// environments for \input); HTML writes one standalone page with d's title,
// tables, figures and footer. CSV, TSV, JSON and Parquet hold one table of
// records, so d must hold exactly one table there and its figures and
// footer are not written. Write checks everything first and writes nothing
// when d is malformed (a row of the wrong width, a zero Cell, blocks that do
// not cover the rows, a cell that does not match its column's kind).
func Write(w io.Writer, d *Document, f Format, s Style) error {
	if err := d.check(f); err != nil {
		return fmt.Errorf("encode %s: %w", f, err)
	}
	if err := s.check(); err != nil {
		return fmt.Errorf("encode %s: %w", f, err)
	}
	if f == Markdown || f == LaTeX || f == HTML {
		// Readable tables are short and laid out whole (widths, blocks).
		tables := make([]*Table, len(d.Tables))
		for i, t := range d.Tables {
			m, err := t.materialized()
			if err != nil {
				return fmt.Errorf("encode %s: %w", f, err)
			}
			tables[i] = m
		}
		copied := *d
		copied.Tables = tables
		d = &copied
	}
	bw := bufio.NewWriter(w)
	switch f {
	case Markdown:
		for i, t := range d.Tables {
			if i > 0 {
				bw.WriteString("\n")
			}
			encodeMarkdown(bw, t, s)
		}
	case CSV:
		if err := encodeCSV(bw, d.Tables[0], s.Digits); err != nil {
			return fmt.Errorf("encode csv: %w", err)
		}
	case TSV:
		if err := encodeTSV(bw, d.Tables[0], s.Digits); err != nil {
			return fmt.Errorf("encode tsv: %w", err)
		}
	case JSON:
		if err := encodeJSON(bw, d.Tables[0]); err != nil {
			return fmt.Errorf("encode json: %w", err)
		}
	case LaTeX:
		for i, t := range d.Tables {
			if i > 0 {
				bw.WriteString("\n")
			}
			encodeLaTeX(bw, t, s)
		}
	case HTML:
		encodeHTML(bw, d, s)
	case Parquet:
		if err := encodeParquet(bw, d.Tables[0]); err != nil {
			return fmt.Errorf("encode parquet: %w", err)
		}
	default:
		return fmt.Errorf("encode: invalid format %s", f)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("encode %s: %w", f, err)
	}
	return nil
}

// A Document is what one output file holds: one or more tables, and for
// HTML a page title, figures and a footer.
type Document struct {
	Title   string   // the HTML page's title and heading; other formats ignore it
	Tables  []*Table // at least one
	Figures []Figure // HTML only: embedded inline after the tables
	Footer  []string // HTML only: paragraphs in the page's footer, such as cautions
}

// A Figure is an image that an HTML page embeds inline (as a data: URL, so
// the page needs no other file).
type Figure struct {
	Caption string // shown under the image
	Alt     string // the text alternative, for readers who cannot see it
	Type    string // media type: "image/svg+xml" or "image/png"
	Data    []byte // the image file's bytes
}

// check reports what would make d impossible to write in format f.
func (d *Document) check(f Format) error {
	if d == nil {
		return fmt.Errorf("nil document")
	}
	if len(d.Tables) == 0 {
		return fmt.Errorf("no table")
	}
	if len(d.Tables) > 1 && f != Markdown && f != LaTeX && f != HTML {
		return fmt.Errorf("%d tables: %s holds one table", len(d.Tables), f)
	}
	for _, t := range d.Tables {
		if err := t.check(); err != nil {
			return err
		}
	}
	for i, fig := range d.Figures {
		if fig.Type != "image/svg+xml" && fig.Type != "image/png" {
			return fmt.Errorf("figure %d: media type %q is neither image/svg+xml nor image/png", i+1, fig.Type)
		}
	}
	return nil
}

// check reports the first row of the wrong width or invalid cell.
func (t *Table) check() error {
	if t == nil {
		return fmt.Errorf("nil table")
	}
	if t.Kinds != nil {
		if len(t.Kinds) != len(t.Columns) {
			return fmt.Errorf("table %q: %d kinds for %d columns", t.Title, len(t.Kinds), len(t.Columns))
		}
		for c, k := range t.Kinds {
			if !k.valid() {
				return fmt.Errorf("table %q: column %q of invalid kind %s", t.Title, t.Columns[c], k)
			}
		}
	}
	if t.Blocks != nil {
		sum := 0
		for _, b := range t.Blocks {
			if b.Rows < 0 {
				return fmt.Errorf("table %q: block %q has %d rows", t.Title, b.Heading, b.Rows)
			}
			sum += b.Rows
		}
		if sum != t.Len() {
			return fmt.Errorf("table %q: blocks cover %d rows of %d", t.Title, sum, t.Len())
		}
	}
	if t.RowFunc != nil {
		return nil // checked row by row as it is written
	}
	for r, row := range t.Rows {
		if err := t.checkRow(r, row); err != nil {
			return err
		}
	}
	return nil
}

// checkRow reports a row of the wrong width, with an invalid cell, or with
// a cell not of its column's kind.
func (t *Table) checkRow(r int, row []Cell) error {
	if len(row) != len(t.Columns) {
		return fmt.Errorf("table %q: row %d has %d cells for %d columns", t.Title, r+1, len(row), len(t.Columns))
	}
	for c, cell := range row {
		if !cell.kind.valid() {
			return fmt.Errorf("table %q: row %d, column %q: cell of invalid kind %s", t.Title, r+1, t.Columns[c], cell.kind)
		}
		if t.Kinds != nil && cell.kind != t.Kinds[c] && !(cell.kind == KindText && cell.none) {
			return fmt.Errorf("table %q: row %d, column %q: %s cell in a %s column", t.Title, r+1, t.Columns[c], cell.kind, t.Kinds[c])
		}
	}
	return nil
}

// blockStarts maps the index of each block's first row to its heading
// (nil without blocks). An empty block has no row, so its heading is not
// printed.
func (t *Table) blockStarts() map[int]string {
	if t.Blocks == nil {
		return nil
	}
	m := map[int]string{}
	r := 0
	for _, b := range t.Blocks {
		if b.Rows > 0 {
			m[r] = b.Heading
		}
		r += b.Rows
	}
	return m
}

// joinList joins the items of a list cell for formats that hold one string
// per cell.
func joinList(items []string) string { return strings.Join(items, "; ") }
