package render

import (
	"bufio"
	"encoding/csv"
)

// encodeCSV writes t as CSV: a header row of column names, then one record
// per row. Fields are quoted as RFC 4180 describes (by encoding/csv) and
// records end in LF, which every CSV reader we target accepts and which
// keeps the files diff-friendly in git. An undefined number or interval is
// an empty field; an interval is "[lo, hi]" (quoted, since it holds a comma);
// a list is joined with "; ". Title and Notes are not written.
func encodeCSV(w *bufio.Writer, t *Table, digits int) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(t.Columns); err != nil {
		return err
	}
	record := make([]string, len(t.Columns))
	err := t.each(func(_ int, row []Cell) error {
		for c, cell := range row {
			record[c] = csvCell(cell, digits)
		}
		return cw.Write(record)
	})
	if err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// csvCell returns the text of one cell in CSV, before quoting.
func csvCell(c Cell, digits int) string {
	switch c.kind {
	case KindText:
		return c.text
	case KindInt:
		return itoa(c.i)
	case KindReal, KindProb:
		if c.null() {
			return ""
		}
		return fixed(c.f, digits)
	case KindInterval:
		if c.null() {
			return ""
		}
		return intervalText(c, digits)
	case KindList:
		return joinList(c.items)
	case KindReport:
		if c.null() {
			return ""
		}
		return c.report.plainText()
	}
	panic("render: cell of invalid kind " + c.kind.String()) // Encode checked the table
}
