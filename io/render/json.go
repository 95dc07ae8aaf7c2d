package render

import (
	"bufio"
	"bytes"
	"encoding/json"
	"math"
)

// encodeJSON writes t as a JSON array with one object per row, whose keys
// are the columns in column order. It writes the text itself rather than
// through a map so the key order is fixed, and lays it out as
// json.MarshalIndent would with a two-space indent, ending in a newline.
//
// Numbers are the shortest text that reads back exactly (so encoding/json
// recovers every float64 bit for bit, except that -0 is written as 0). An
// undefined number (NaN) is null, and so is an infinity, which JSON cannot
// represent: a table holding ±Inf loses that value in JSON. An interval is
// an array of its two bounds, or null when either bound is NaN (an infinite
// bound alone is null inside the array). A list is an array of strings, []
// when empty. Title and Notes are not written.
func encodeJSON(w *bufio.Writer, t *Table) {
	if len(t.Rows) == 0 {
		w.WriteString("[]\n")
		return
	}
	keys := make([]string, len(t.Columns))
	for c, name := range t.Columns {
		keys[c] = jsonString(name)
	}
	w.WriteString("[\n")
	for r, row := range t.Rows {
		if len(row) == 0 {
			w.WriteString("  {}")
		} else {
			w.WriteString("  {\n")
			for c, cell := range row {
				w.WriteString("    ")
				w.WriteString(keys[c])
				w.WriteString(": ")
				writeJSONCell(w, cell)
				if c < len(row)-1 {
					w.WriteString(",")
				}
				w.WriteString("\n")
			}
			w.WriteString("  }")
		}
		if r < len(t.Rows)-1 {
			w.WriteString(",")
		}
		w.WriteString("\n")
	}
	w.WriteString("]\n")
}

// writeJSONCell writes the JSON value of one cell at object-member depth.
func writeJSONCell(w *bufio.Writer, c Cell) {
	switch c.kind {
	case KindText:
		if c.null() {
			w.WriteString("null")
			return
		}
		w.WriteString(jsonString(c.text))
	case KindInt:
		w.WriteString(itoa(c.i))
	case KindReal, KindProb:
		writeJSONReal(w, c.f)
	case KindInterval:
		if c.null() {
			w.WriteString("null")
			return
		}
		w.WriteString("[\n      ")
		writeJSONReal(w, c.f)
		w.WriteString(",\n      ")
		writeJSONReal(w, c.hi)
		w.WriteString("\n    ]")
	case KindList:
		if len(c.items) == 0 {
			w.WriteString("[]")
			return
		}
		w.WriteString("[\n")
		for i, s := range c.items {
			w.WriteString("      ")
			w.WriteString(jsonString(s))
			if i < len(c.items)-1 {
				w.WriteString(",")
			}
			w.WriteString("\n")
		}
		w.WriteString("    ]")
	default:
		panic("render: cell of invalid kind " + c.kind.String()) // Encode checked the table
	}
}

// writeJSONReal writes f as a JSON number, or null when f is NaN or
// infinite.
func writeJSONReal(w *bufio.Writer, f float64) {
	if math.IsNaN(f) || math.IsInf(f, 0) {
		w.WriteString("null")
	} else {
		w.WriteString(jsonNumber(f))
	}
}

// jsonString returns s as a JSON string literal. Unlike json.Marshal it
// leaves <, > and & unescaped, since the output is a data file, not HTML;
// invalid UTF-8 becomes U+FFFD.
func jsonString(s string) string {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(s); err != nil {
		panic("render: encode string: " + err.Error()) // a string always encodes
	}
	return string(bytes.TrimSuffix(buf.Bytes(), []byte("\n")))
}
