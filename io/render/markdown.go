package render

import (
	"bufio"
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
//
// A table with Blocks gets a row before each block holding the block's
// heading in bold in the first cell.
func encodeMarkdown(w *bufio.Writer, t *Table, s Style) {
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
		right[c] = len(t.Rows) > 0
	}
	var body [][]string
	starts := t.blockStarts()
	for r, row := range t.Rows {
		if h, ok := starts[r]; ok && n > 0 {
			head := make([]string, n)
			head[0] = "**" + mdEscape(h) + "**"
			width[0] = max(width[0], utf8.RuneCountInString(head[0]))
			body = append(body, head)
		}
		cells := make([]string, n)
		for c, cell := range row {
			text := mdCellStyled(cell, s)
			cells[c] = text
			width[c] = max(width[c], utf8.RuneCountInString(text))
			if !cell.kind.numeric() && !cell.filler {
				right[c] = false
			}
		}
		body = append(body, cells)
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
			// A note may hold significance marks ("*p < .05"), which
			// would start emphasis.
			w.WriteString(strings.ReplaceAll(mdEscapeText(note), "*", `\*`))
			w.WriteString("\n")
		}
	}
}

// mdCell returns the text of one cell in Markdown with plain numbers.
func mdCell(c Cell, digits int) string { return mdCellStyled(c, Style{Numbers: Plain, Digits: digits}) }

// mdCellStyled returns the text of one cell in Markdown.
func mdCellStyled(c Cell, s Style) string {
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
		// A mark such as "**" would start emphasis: escape it.
		return strings.ReplaceAll(s.realText(c), "*", `\*`)
	case KindProb:
		if c.null() {
			return mdNull
		}
		return s.probText(c.f)
	case KindInterval:
		if c.null() {
			return mdNull
		}
		return s.intervalText(c)
	case KindReport:
		if c.null() {
			return mdNull
		}
		return mdEscape(c.report.plainText())
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
