package render

import (
	"bufio"
	"math"
	"strings"
	"unicode/utf8"
)

// mdNull is how Markdown shows an undefined number.
const mdNull = "—"

// mdProbDigits is the fewest decimals Markdown gives a p-value, so that
// p < 0.001, the smallest threshold tables commonly report, stays visible
// even in a table whose other numbers are rounded harder.
const mdProbDigits = 3

// encodeMarkdown writes t as a GitHub-flavoured pipe table: the title on a
// line of its own, a blank line, the table, and the notes as a bulleted list
// after another blank line. A column is right-aligned when every cell in it
// is a number (undefined numbers included) and there is at least one row;
// otherwise it is left-aligned. Cells are padded to the column's width,
// counted in runes, so the raw file reads as a table too (characters that
// take two terminal cells, such as CJK, will still look misaligned).
func encodeMarkdown(w *bufio.Writer, t *Table, digits int) error {
	if t.Title != "" {
		w.WriteString(mdEscape(t.Title))
		w.WriteString("\n\n")
	}

	n := len(t.Columns)
	header := make([]string, n)
	width := make([]int, n)
	right := make([]bool, n)
	for c, name := range t.Columns {
		header[c] = mdEscape(name)
		width[c] = max(3, utf8.RuneCountInString(header[c])) // "---" is the shortest rule
		right[c] = t.Len() > 0
	}
	body := make([][]string, t.Len())
	err := t.each(func(r int, row []Cell) error {
		body[r] = make([]string, n)
		for c, cell := range row {
			s := mdCell(cell, digits)
			body[r][c] = s
			width[c] = max(width[c], utf8.RuneCountInString(s))
			if !cell.kind.numeric() {
				right[c] = false
			}
		}
		return nil
	})
	if err != nil {
		return err
	}

	writeRow := func(cells []string) {
		w.WriteString("|")
		for c, s := range cells {
			pad := strings.Repeat(" ", width[c]-utf8.RuneCountInString(s))
			w.WriteString(" ")
			if right[c] {
				w.WriteString(pad)
				w.WriteString(s)
			} else {
				w.WriteString(s)
				w.WriteString(pad)
			}
			w.WriteString(" |")
		}
		w.WriteString("\n")
	}
	writeRow(header)
	rule := make([]string, n)
	for c := range rule {
		if right[c] {
			rule[c] = strings.Repeat("-", width[c]-1) + ":"
		} else {
			rule[c] = strings.Repeat("-", width[c])
		}
	}
	writeRow(rule)
	for _, cells := range body {
		writeRow(cells)
	}

	if len(t.Notes) > 0 {
		w.WriteString("\n")
		for _, note := range t.Notes {
			w.WriteString("- ")
			w.WriteString(mdEscapeText(note))
			w.WriteString("\n")
		}
	}
	return nil
}

// mdCell returns the text of one cell in Markdown.
func mdCell(c Cell, digits int) string {
	switch c.kind {
	case KindText:
		if c.null() {
			return mdNull
		}
		return mdEscape(c.text)
	case KindInt:
		return itoa(c.i)
	case KindReal:
		if c.null() {
			return mdNull
		}
		return fixed(c.f, digits)
	case KindProb:
		if c.null() {
			return mdNull
		}
		if digits < 0 {
			return fixed(c.f, digits)
		}
		d := max(digits, mdProbDigits)
		if bound := math.Pow10(-d); c.f >= 0 && c.f < bound {
			return "< " + fixed(bound, d)
		}
		return fixed(c.f, d)
	case KindInterval:
		if c.null() {
			return mdNull
		}
		return intervalText(c, digits)
	case KindList:
		items := make([]string, len(c.items))
		for i, s := range c.items {
			items[i] = mdEscape(s)
		}
		return joinList(items)
	}
	panic("render: cell of invalid kind " + c.kind.String()) // Encode checked the table
}

// mdEscape makes s safe inside a table cell: a pipe would end the cell, so
// it is escaped as \|, and a line break would end the row, so CR, LF and
// CRLF become a space.
func mdEscape(s string) string {
	return strings.ReplaceAll(mdEscapeText(s), "|", `\|`)
}

// mdEscapeText keeps s on one line (for the title and the notes, where a
// pipe is harmless).
func mdEscapeText(s string) string {
	if !strings.ContainsAny(s, "\r\n") {
		return s
	}
	s = strings.ReplaceAll(s, "\r\n", " ")
	return strings.NewReplacer("\r", " ", "\n", " ").Replace(s)
}
