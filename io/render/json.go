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
func encodeJSON(w *bufio.Writer, t *Table) error {
	rows := t.Len()
	if rows == 0 {
		w.WriteString("[]\n")
		return nil
	}
	keys := make([]string, len(t.Columns))
	for c, name := range t.Columns {
		keys[c] = jsonString(name)
	}
	w.WriteString("[\n")
	err := t.each(func(r int, row []Cell) error {
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
		if r < rows-1 {
			w.WriteString(",")
		}
		w.WriteString("\n")
		return nil
	})
	if err != nil {
		return err
	}
	w.WriteString("]\n")
	return nil
}

// writeJSONCell writes the JSON value of one cell at object-member depth.
func writeJSONCell(w *bufio.Writer, c Cell) {
	switch c.kind {
	case KindText:
		if c.null() {
			w.WriteString("null")
			return
		}
		writeJSONString(w, c.text)
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
			writeJSONString(w, s)
			if i < len(c.items)-1 {
				w.WriteString(",")
			}
			w.WriteString("\n")
		}
		w.WriteString("    ]")
	case KindReport:
		if c.null() {
			w.WriteString("null")
			return
		}
		w.WriteString(jsonString(c.report.plainText()))
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
		var buf [32]byte
		w.Write(appendJSONNumber(buf[:0], f))
	}
}

// writeJSONString writes jsonString(s) without making the string.
func writeJSONString(w *bufio.Writer, s string) {
	if plainJSON(s) {
		w.WriteByte('"')
		w.WriteString(s)
		w.WriteByte('"')
		return
	}
	w.WriteString(encodedJSONString(s))
}

// jsonString returns s as a JSON string literal. Unlike json.Marshal it
// leaves <, > and & unescaped, since the output is a data file, not HTML;
// invalid UTF-8 becomes U+FFFD.
func jsonString(s string) string {
	if plainJSON(s) {
		return `"` + s + `"`
	}
	return encodedJSONString(s)
}

// plainJSON says whether s is printable ASCII without a quote or a
// backslash, which JSON writes as it is between quotes. Large tables are
// almost all such strings, and the encoder costs ~20× the scan.
func plainJSON(s string) bool {
	for i := 0; i < len(s); i++ {
		if c := s[i]; c < 0x20 || c >= 0x7f || c == '"' || c == '\\' {
			return false
		}
	}
	return true
}

// encodedJSONString is jsonString through encoding/json, for any string.
func encodedJSONString(s string) string {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(s); err != nil {
		panic("render: encode string: " + err.Error()) // a string always encodes
	}
	return string(bytes.TrimSuffix(buf.Bytes(), []byte("\n")))
}
