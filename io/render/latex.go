package render

import (
	"bufio"
	"strconv"
	"strings"
)

// latexNull is how LaTeX shows an undefined value: an em dash.
const latexNull = "---"

// encodeLaTeX writes t as a table environment for \input into a manuscript
// whose preamble loads booktabs (S. Fear, booktabs: publication quality
// tables in LaTeX, CTAN): the caption (t.Title) and label above a tabular
// ruled with \toprule, \midrule and \bottomrule and no vertical rules, then
// the notes under it, the first opening with an italic "Note." as the APA
// Publication Manual (7th ed., 2020, §7.14) writes table notes.
//
// Numbers are plain text with a math minus ($-$), so no package beyond
// booktabs is needed; numeric columns are right-aligned. Every text is
// escaped: the ten characters special to TeX, < > and | (which the default
// OT1 font encoding would print as other glyphs) and a few Unicode
// characters that pdfLaTeX cannot typeset by default (dashes, minus, Greek
// letters of the statistics trade, ≤ ≥ ± ×). Block headings span the whole
// row in italics, with \addlinespace between blocks.
func encodeLaTeX(w *bufio.Writer, t *Table, s Style) {
	n := len(t.Columns)
	w.WriteString("% Needs \\usepackage{booktabs} in the preamble.\n")
	w.WriteString("\\begin{table}[htbp]\n\\centering\n")
	if t.Title != "" {
		w.WriteString("\\caption{" + latexEscape(t.Title) + "}\n")
	}
	if l := latexLabel(t.Label); l != "" {
		w.WriteString("\\label{" + l + "}\n")
	}
	spec := make([]byte, n)
	for c := range spec {
		spec[c] = 'l'
		if numericColumn(t, c) {
			spec[c] = 'r'
		}
	}
	w.WriteString("\\begin{tabular}{" + string(spec) + "}\n\\toprule\n")
	head := make([]string, n)
	for c, name := range t.Columns {
		head[c] = latexEscape(name)
	}
	w.WriteString(strings.Join(head, " & ") + " \\\\\n\\midrule\n")
	starts := t.blockStarts()
	cells := make([]string, n)
	for r, row := range t.Rows {
		if h, ok := starts[r]; ok {
			if r > 0 {
				w.WriteString("\\addlinespace\n")
			}
			w.WriteString("\\multicolumn{" + strconv.Itoa(n) + "}{l}{\\textit{" + latexEscape(h) + "}} \\\\\n")
		}
		for c, cell := range row {
			cells[c] = latexCell(cell, s)
		}
		w.WriteString(strings.Join(cells, " & ") + " \\\\\n")
	}
	w.WriteString("\\bottomrule\n\\end{tabular}\n")
	if len(t.Notes) > 0 {
		w.WriteString("\\par\\smallskip\n{\\footnotesize\\raggedright\n")
		for i, note := range t.Notes {
			if i == 0 {
				w.WriteString("\\textit{Note.} ")
			}
			w.WriteString(latexEscape(note) + "\\par\n")
		}
		w.WriteString("}\n")
	}
	w.WriteString("\\end{table}\n")
}

// numericColumn reports whether every cell of column c is a number (and
// there is at least one row): such a column is right-aligned.
func numericColumn(t *Table, c int) bool {
	if len(t.Rows) == 0 {
		return false
	}
	for _, row := range t.Rows {
		if !row[c].kind.numeric() && !row[c].filler {
			return false
		}
	}
	return true
}

// latexCell returns the LaTeX text of one cell.
func latexCell(c Cell, s Style) string {
	if c.null() {
		return latexNull
	}
	switch c.kind {
	case KindText:
		return latexEscape(c.text)
	case KindInt:
		return latexNumber(itoa(c.i))
	case KindReal:
		mark := c.mark
		c.mark = ""
		if mark != "" {
			return latexNumber(s.realText(c)) + "$^{" + latexEscape(mark) + "}$"
		}
		return latexNumber(s.realText(c))
	case KindProb:
		return latexNumber(s.probText(c.f))
	case KindInterval:
		return latexNumber(s.intervalText(c))
	case KindList:
		items := make([]string, len(c.items))
		for i, it := range c.items {
			items[i] = latexEscape(it)
		}
		return joinList(items)
	case KindReport:
		return latexStatement(c.report)
	}
	panic("render: cell of invalid kind " + c.kind.String()) // Write checked the table
}

// latexNumber writes a formatted number (or interval, or bound such as
// "< .001") with a math minus and math relations.
func latexNumber(t string) string {
	return latexNumberReplacer.Replace(t)
}

var latexNumberReplacer = strings.NewReplacer("-", "$-$", "<", "$<$", ">", "$>$")

// latexStatement writes a statement with its symbols in math italics:
// $r_{s}(48) = .42$ would also do, but keeping the numbers in text keeps
// them in the text font, as the rest of the table.
func latexStatement(st *Statement) string {
	var b strings.Builder
	ps := st.pieces()
	for i := 0; i < len(ps); i++ {
		p := ps[i]
		switch p.kind {
		case pieceSymbol:
			b.WriteString("$" + latexSymbol(p.s))
			if i+1 < len(ps) && ps[i+1].kind == pieceSub {
				b.WriteString("_{" + latexEscape(ps[i+1].s) + "}")
				i++
			}
			b.WriteString("$")
		case pieceSub: // a subscript without a symbol does not occur
			b.WriteString("$_{" + latexEscape(p.s) + "}$")
		case pieceNumber:
			b.WriteString(latexNumber(p.s))
		default:
			b.WriteString(latexEscape(p.s))
		}
	}
	return b.String()
}

// latexSymbol maps a statistic's symbol to math mode.
func latexSymbol(s string) string {
	if m, ok := latexGreek[s]; ok {
		return m
	}
	return latexEscape(s)
}

var latexGreek = map[string]string{"τ": `\tau`, "γ": `\gamma`, "ρ": `\rho`, "χ": `\chi`}

// latexReplacer escapes text for LaTeX's text mode.
var latexReplacer = strings.NewReplacer(
	`\`, `\textbackslash{}`,
	"{", `\{`, "}", `\}`, "$", `\$`, "&", `\&`, "%", `\%`, "#", `\#`, "_", `\_`,
	"~", `\textasciitilde{}`, "^", `\textasciicircum{}`,
	"<", `\textless{}`, ">", `\textgreater{}`, "|", `\textbar{}`,
	"—", "---", "–", "--", "−", "$-$", "…", `\ldots{}`,
	"≤", `$\leq$`, "≥", `$\geq$`, "±", `$\pm$`, "×", `$\times$`,
	"τ", `$\tau$`, "ρ", `$\rho$`, "γ", `$\gamma$`, "χ", `$\chi$`,
	"ₛ", `$_{s}$`, "ᵦ", `$_{\beta}$`, "²", `$^{2}$`, "°", `\textdegree{}`,
	// Printed values and formulas in reproduction reports: 10⁻⁵, Σd².
	"Σ", `$\Sigma$`, "⁻", `$^{-}$`, "⁰", `$^{0}$`, "¹", `$^{1}$`, "³", `$^{3}$`, "⁴", `$^{4}$`,
	"⁵", `$^{5}$`, "⁶", `$^{6}$`, "⁷", `$^{7}$`, "⁸", `$^{8}$`, "⁹", `$^{9}$`, "·", `$\cdot$`, "†", `\dag{}`, "‡", `\ddag{}`,
	"\r\n", " ", "\n", " ", "\r", " ",
)

// latexEscape makes s safe in LaTeX text mode.
func latexEscape(s string) string { return latexReplacer.Replace(s) }

// latexLabel keeps the characters of a cross-reference key that are safe
// inside \label{…}: letters, digits and : - _ . /
func latexLabel(s string) string {
	var b strings.Builder
	for _, r := range s {
		if r < 0x80 && (r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune(":-_./", r)) {
			b.WriteRune(r)
		}
	}
	return b.String()
}
