package verify

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"
)

// A grid is a table file read back as text cells, so that two versions of
// one table can be compared cell by cell and a difference named by its row
// and column rather than by a byte offset.
type grid struct {
	columns []string
	rows    []gridRow
	// extra holds the lines outside the table: a Markdown table's title and
	// notes. Blank lines are left out.
	extra []gridLine
}

type gridRow struct {
	line  int // 1-based line of the file where the row starts; 0 when not known
	cells []string
}

type gridLine struct {
	line int
	text string
}

// readGrid reads a table that concordat wrote in format ("markdown", "csv"
// or "json"). A format it does not know, or a file that does not parse as
// its format (it was edited beyond recognition), is an error; the caller
// then compares the files line by line.
func readGrid(data []byte, format string) (*grid, error) {
	switch format {
	case "markdown":
		return readMarkdownGrid(data)
	case "csv":
		return readCSVGrid(data)
	case "json":
		return readJSONGrid(data)
	}
	return nil, fmt.Errorf("no cell reader for %s tables", format)
}

// readMarkdownGrid reads a pipe table: the first line that starts with "|"
// and is followed by a rule line (only |, -, : and spaces) is the header,
// and the lines that start with "|" after the rule are rows. Cells are split
// at unescaped pipes, "\|" is read as "|", and cells are trimmed.
func readMarkdownGrid(data []byte) (*grid, error) {
	lines := strings.Split(string(data), "\n")
	g := &grid{}
	header := -1
	for i := 0; i+1 < len(lines); i++ {
		if strings.HasPrefix(lines[i], "|") && isRule(lines[i+1]) {
			header = i
			break
		}
	}
	if header < 0 {
		return nil, errors.New("no pipe table found")
	}
	g.columns = splitPipes(lines[header])
	end := header + 2
	for ; end < len(lines) && strings.HasPrefix(lines[end], "|"); end++ {
		g.rows = append(g.rows, gridRow{line: end + 1, cells: splitPipes(lines[end])})
	}
	for i, l := range lines {
		if (i < header || i >= end) && strings.TrimSpace(l) != "" {
			g.extra = append(g.extra, gridLine{line: i + 1, text: l})
		}
	}
	return g, nil
}

// isRule reports whether l is the rule under a pipe table's header.
func isRule(l string) bool {
	if !strings.HasPrefix(l, "|") || !strings.Contains(l, "-") {
		return false
	}
	return strings.Trim(l, "|-: ") == ""
}

// splitPipes splits one row of a pipe table into trimmed cells.
func splitPipes(l string) []string {
	l = strings.TrimSpace(l)
	l = strings.TrimPrefix(l, "|")
	if strings.HasSuffix(l, "|") && !strings.HasSuffix(l, `\|`) {
		l = l[:len(l)-1]
	}
	var cells []string
	var cur strings.Builder
	for i := 0; i < len(l); i++ {
		switch {
		case l[i] == '\\' && i+1 < len(l) && l[i+1] == '|':
			cur.WriteByte('|')
			i++
		case l[i] == '|':
			cells = append(cells, strings.TrimSpace(cur.String()))
			cur.Reset()
		default:
			cur.WriteByte(l[i])
		}
	}
	return append(cells, strings.TrimSpace(cur.String()))
}

// readCSVGrid reads CSV with a header row; rows may have any number of
// fields.
func readCSVGrid(data []byte) (*grid, error) {
	r := csv.NewReader(bytes.NewReader(data))
	r.FieldsPerRecord = -1
	g := &grid{}
	for first := true; ; first = false {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		if first {
			g.columns = rec
			continue
		}
		line, _ := r.FieldPos(0)
		g.rows = append(g.rows, gridRow{line: line, cells: rec})
	}
	if g.columns == nil {
		return nil, errors.New("no header row")
	}
	return g, nil
}

// readJSONGrid reads an array of flat objects. The columns are the keys in
// the order first met; a cell is a string's text, or else the value's
// compact JSON text (null, numbers as written, arrays), and a key that a row
// lacks is the cell "(absent)".
func readJSONGrid(data []byte) (*grid, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	if err := expectDelim(dec, '['); err != nil {
		return nil, err
	}
	g := &grid{}
	index := map[string]int{}
	var objects []map[string]string
	var lines []int
	for dec.More() {
		off := int(dec.InputOffset())
		for off < len(data) && strings.IndexByte(" \t\r\n,", data[off]) >= 0 {
			off++
		}
		lines = append(lines, 1+bytes.Count(data[:off], []byte("\n")))
		if err := expectDelim(dec, '{'); err != nil {
			return nil, err
		}
		obj := map[string]string{}
		for dec.More() {
			tok, err := dec.Token()
			if err != nil {
				return nil, err
			}
			key, ok := tok.(string)
			if !ok {
				return nil, fmt.Errorf("object key is %v", tok)
			}
			var raw json.RawMessage
			if err := dec.Decode(&raw); err != nil {
				return nil, err
			}
			var buf bytes.Buffer
			if err := json.Compact(&buf, raw); err != nil {
				return nil, err
			}
			if _, ok := index[key]; !ok {
				index[key] = len(g.columns)
				g.columns = append(g.columns, key)
			}
			cell := buf.String()
			var text string
			if json.Unmarshal(buf.Bytes(), &text) == nil {
				cell = text
			}
			obj[key] = cell
		}
		if err := expectDelim(dec, '}'); err != nil {
			return nil, err
		}
		objects = append(objects, obj)
	}
	if err := expectDelim(dec, ']'); err != nil {
		return nil, err
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, errors.New("text after the array")
	}
	for i, obj := range objects {
		cells := make([]string, len(g.columns))
		for c, name := range g.columns {
			v, ok := obj[name]
			if !ok {
				v = "(absent)"
			}
			cells[c] = v
		}
		g.rows = append(g.rows, gridRow{line: lines[i], cells: cells})
	}
	return g, nil
}

func expectDelim(dec *json.Decoder, want json.Delim) error {
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if d, ok := tok.(json.Delim); !ok || d != want {
		return fmt.Errorf("want %v, found %v", want, tok)
	}
	return nil
}
