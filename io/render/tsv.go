package render

import (
	"bufio"
	"strings"
)

// encodeTSV writes t as tab-separated values: a header line of column
// names, then one line per row, each ending in LF. The IANA media type
// text/tab-separated-values has no quoting, so a tab, CR or LF inside a
// field could not be told from a separator; each is written as a space.
// Cells are written as CSV writes them (see encodeCSV): undefined numbers
// are empty fields, lists are joined with "; ". Title and Notes are not
// written.
func encodeTSV(w *bufio.Writer, t *Table, digits int) error {
	line := make([]string, len(t.Columns))
	for c, name := range t.Columns {
		line[c] = tsvField(name)
	}
	w.WriteString(strings.Join(line, "\t"))
	w.WriteString("\n")
	return t.each(func(_ int, row []Cell) error {
		for c, cell := range row {
			line[c] = tsvField(csvCell(cell, digits))
		}
		w.WriteString(strings.Join(line, "\t"))
		w.WriteString("\n")
		return nil
	})
}

// tsvSpace replaces the characters a TSV field cannot hold.
var tsvSpace = strings.NewReplacer("\r\n", " ", "\t", " ", "\r", " ", "\n", " ")

func tsvField(s string) string {
	if !strings.ContainsAny(s, "\t\r\n") {
		return s
	}
	return tsvSpace.Replace(s)
}
