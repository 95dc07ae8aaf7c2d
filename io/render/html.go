package render

import (
	"bufio"
	"encoding/base64"
	"html"
	"strconv"
	"strings"
)

// htmlNull is how HTML shows an undefined value: an em dash, read out by
// screen readers as "em dash" unless labelled; see htmlCell.
const htmlNull = "—"

// htmlMinus is the minus sign of numbers in HTML (U+2212), which is as wide
// as a plus sign and keeps columns of numbers aligned.
const htmlMinus = "−"

// htmlStyle is the page's only style sheet, inline so the page needs no other
// file. It keeps the booktabs look (rules above and below the head and at the
// foot, none between rows or columns), right-aligns numbers with figures of
// equal width, and prints well.
const htmlStyle = `body{font-family:Georgia,"Times New Roman",serif;color:#1a1a1a;background:#fff;line-height:1.45;max-width:75rem;margin:2rem auto;padding:0 1rem}
h1{font-size:1.5rem;margin-bottom:1.5rem}
table{border-collapse:collapse;margin:1.5rem 0 .5rem;font-variant-numeric:tabular-nums lining-nums;border-bottom:2px solid #1a1a1a}
caption{caption-side:top;text-align:left;font-weight:bold;padding-bottom:.5rem}
thead th{border-top:2px solid #1a1a1a;border-bottom:1px solid #1a1a1a;font-weight:normal;font-style:italic}
th,td{padding:.2rem .7rem;text-align:left;vertical-align:top}
.num{text-align:right;white-space:nowrap}
tbody th[scope=rowgroup]{font-style:italic;font-weight:normal;padding-top:.8rem}
tbody th[scope=row]{font-weight:normal}
.notes{font-size:.9rem;max-width:60rem;margin-bottom:2rem}
.notes p{margin:.2rem 0}
figure{margin:2rem 0}
figure img{max-width:100%;height:auto}
figcaption{font-size:.95rem;margin-top:.5rem}
footer{border-top:1px solid #777;margin-top:3rem;padding-top:.5rem;font-size:.9rem}
@media print{body{max-width:none;margin:0}}
`

// encodeHTML writes d as one standalone HTML5 page: a heading, each table as
// a semantic table (caption, thead with column headers scoped to their
// columns, one tbody per block with its heading as a row-group header) with
// its notes in a paragraph block that the table points at with
// aria-describedby, the figures as <figure> elements whose images are
// embedded as data: URLs with their text alternative, and the footer.
// Nothing is loaded from elsewhere: no scripts, fonts or style sheets.
func encodeHTML(w *bufio.Writer, d *Document, s Style) {
	title := d.Title
	if title == "" {
		title = d.Tables[0].Title
	}
	if title == "" {
		title = "Results"
	}
	w.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	w.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	w.WriteString("<meta name=\"generator\" content=\"concordat\">\n")
	w.WriteString("<title>" + html.EscapeString(title) + "</title>\n")
	w.WriteString("<style>\n" + htmlStyle + "</style>\n</head>\n<body>\n<main>\n")
	w.WriteString("<h1>" + html.EscapeString(title) + "</h1>\n")
	ids := map[string]int{}
	for i, t := range d.Tables {
		id := htmlID(t.Label)
		if id == "" {
			id = "table-" + strconv.Itoa(i+1)
		}
		if k := ids[id]; k > 0 {
			ids[id]++
			id += "-" + strconv.Itoa(k+1)
		} else {
			ids[id] = 1
		}
		encodeHTMLTable(w, t, s, id)
	}
	for i, f := range d.Figures {
		w.WriteString("<figure id=\"figure-" + strconv.Itoa(i+1) + "\">\n")
		w.WriteString("<img src=\"data:" + f.Type + ";base64,")
		w.WriteString(base64.StdEncoding.EncodeToString(f.Data))
		w.WriteString("\" alt=\"" + html.EscapeString(f.Alt) + "\">\n")
		if f.Caption != "" {
			w.WriteString("<figcaption>" + html.EscapeString(f.Caption) + "</figcaption>\n")
		}
		w.WriteString("</figure>\n")
	}
	w.WriteString("</main>\n")
	if len(d.Footer) > 0 {
		w.WriteString("<footer>\n")
		for _, p := range d.Footer {
			w.WriteString("<p>" + html.EscapeString(p) + "</p>\n")
		}
		w.WriteString("</footer>\n")
	}
	w.WriteString("</body>\n</html>\n")
}

func encodeHTMLTable(w *bufio.Writer, t *Table, s Style, id string) {
	notesID := id + "-notes"
	w.WriteString("<table id=\"" + id + "\"")
	if len(t.Notes) > 0 {
		w.WriteString(" aria-describedby=\"" + notesID + "\"")
	}
	w.WriteString(">\n")
	if t.Title != "" {
		w.WriteString("<caption>" + html.EscapeString(t.Title) + "</caption>\n")
	}
	n := len(t.Columns)
	num := make([]bool, n)
	w.WriteString("<thead>\n<tr>")
	for c, name := range t.Columns {
		num[c] = numericColumn(t, c)
		w.WriteString("<th scope=\"col\"")
		if num[c] {
			w.WriteString(" class=\"num\"")
		}
		w.WriteString(">" + html.EscapeString(name) + "</th>")
	}
	w.WriteString("</tr>\n</thead>\n")
	starts := t.blockStarts()
	open := false
	for r, row := range t.Rows {
		if h, ok := starts[r]; ok {
			if open {
				w.WriteString("</tbody>\n")
			}
			w.WriteString("<tbody>\n<tr><th scope=\"rowgroup\" colspan=\"" + strconv.Itoa(n) + "\">" + html.EscapeString(h) + "</th></tr>\n")
			open = true
		} else if !open {
			w.WriteString("<tbody>\n")
			open = true
		}
		w.WriteString("<tr>")
		for c, cell := range row {
			tag := "td"
			attrs := ""
			if c == 0 && t.RowHeader {
				tag, attrs = "th", " scope=\"row\""
			}
			if num[c] {
				attrs += " class=\"num\""
			}
			w.WriteString("<" + tag + attrs + ">" + htmlCell(cell, s) + "</" + tag + ">")
		}
		w.WriteString("</tr>\n")
	}
	if !open {
		w.WriteString("<tbody>\n")
	}
	w.WriteString("</tbody>\n</table>\n")
	if len(t.Notes) > 0 {
		w.WriteString("<div class=\"notes\" id=\"" + notesID + "\">\n")
		for i, note := range t.Notes {
			w.WriteString("<p>")
			if i == 0 {
				w.WriteString("<i>Note.</i> ")
			}
			w.WriteString(html.EscapeString(note) + "</p>\n")
		}
		w.WriteString("</div>\n")
	}
}

// htmlCell returns the HTML of one cell's content, escaped. An undefined
// value is an em dash labelled "undefined" for screen readers.
func htmlCell(c Cell, s Style) string {
	if c.null() {
		return "<span aria-label=\"undefined\">" + htmlNull + "</span>"
	}
	switch c.kind {
	case KindText:
		return html.EscapeString(c.text)
	case KindInt:
		return htmlNumber(itoa(c.i))
	case KindReal:
		return htmlNumber(s.realText(c))
	case KindProb:
		return htmlNumber(s.probText(c.f))
	case KindInterval:
		return htmlNumber(s.intervalText(c))
	case KindList:
		return html.EscapeString(joinList(c.items))
	case KindReport:
		return htmlStatement(c.report)
	}
	panic("render: cell of invalid kind " + c.kind.String()) // Write checked the table
}

// htmlNumber escapes a formatted number and gives it a true minus sign.
func htmlNumber(t string) string {
	return html.EscapeString(strings.ReplaceAll(t, "-", htmlMinus))
}

// htmlStatement writes a statement with italic symbols and <sub>scripts.
func htmlStatement(st *Statement) string {
	var b strings.Builder
	for _, p := range st.pieces() {
		switch p.kind {
		case pieceSymbol:
			b.WriteString("<i>" + html.EscapeString(p.s) + "</i>")
		case pieceSub:
			b.WriteString("<sub>" + html.EscapeString(p.s) + "</sub>")
		case pieceNumber:
			b.WriteString(htmlNumber(p.s))
		default:
			b.WriteString(html.EscapeString(p.s))
		}
	}
	return b.String()
}

// htmlID keeps the characters of a label that make a plain id: ASCII
// letters, digits, - and _ (others become -).
func htmlID(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r < 0x80 && (r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '-' || r == '_'):
			b.WriteRune(r)
		default:
			b.WriteByte('-')
		}
	}
	return strings.Trim(b.String(), "-")
}
