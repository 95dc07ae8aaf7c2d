package render

import (
	"math"
	"strconv"
	"strings"
)

// A Statement is one result as a sentence fragment in the form of the APA
// Publication Manual (7th ed., 2020, §6.43, Statistics in text): the
// statistic's symbol, its degrees of freedom (or sample size) in
// parentheses, its value, the confidence interval and the p-value, as in
//
//	rₛ(48) = .42, 95% CI [.16, .62], p = .003
//
// Numbers follow §6.36: no leading zero for the coefficient, its bounds and
// p, which cannot exceed 1; p to three decimals, and "p < .001" below that.
// A statistic without degrees of freedom (Kendall's τ and its relatives,
// tested with S against its exact or normal null) gives its sample size in
// the parentheses instead, as the manual does for χ² ("χ²(4, N = 90)"):
// τ_b(N = 351) = −.38. The sample size is N for a whole sample and n for a
// subsample such as one group (§6.44, Table 6.5).
type Statement struct {
	Symbol    string  // the statistic: "r", "τ", "γ", "d"; italic where the format can
	Sub       string  // its subscript: "s" (Spearman), "b" (tau-b), "yx"; "" for none
	DF        int     // degrees of freedom; negative when the statistic has none
	N         int     // sample size, written when DF < 0
	Subsample bool    // n (a subsample, such as one group) rather than N
	Estimate  float64 // NaN makes the whole statement undefined
	Digits    int     // decimals of the estimate and its interval; APA's own is 2
	Lo, Hi    float64 // the confidence interval; NaN when there is none
	Level     float64 // its level, such as 0.95
	P         float64 // the p-value; NaN when there is none
	// Adjusted is the p-value after a multiplicity adjustment named by
	// Method ("Holm"); NaN or Method "" when there is none.
	Adjusted float64
	Method   string
	// OneSided adds ", one-sided" after the p-value, which is then the
	// p-value of a directional test.
	OneSided bool
}

// piece is one run of a statement: a symbol (italic), a subscript, or text.
type piece struct {
	kind pieceKind
	s    string
}

type pieceKind int

const (
	pieceText   pieceKind = iota
	pieceNumber           // a number or interval; its "-" is a minus sign
	pieceSymbol
	pieceSub
)

// pieces lays the statement out; numbers carry ASCII "-" as their minus
// sign, which each format replaces with its own.
func (st *Statement) pieces() []piece {
	apa := Style{Numbers: APA, Digits: st.Digits}
	var out []piece
	text := func(s string) { out = append(out, piece{pieceText, s}) }
	number := func(s string) { out = append(out, piece{pieceNumber, s}) }
	out = append(out, piece{pieceSymbol, st.Symbol})
	if st.Sub != "" {
		out = append(out, piece{pieceSub, st.Sub})
	}
	if st.DF >= 0 {
		text("(" + strconv.Itoa(st.DF) + ") = ")
	} else {
		text("(")
		if st.Subsample {
			out = append(out, piece{pieceSymbol, "n"})
		} else {
			out = append(out, piece{pieceSymbol, "N"})
		}
		text(" = " + strconv.Itoa(st.N) + ") = ")
	}
	number(apa.realText(Real(st.Estimate).Bounded()))
	if !math.IsNaN(st.Lo) && !math.IsNaN(st.Hi) {
		text(", " + Percent(st.Level) + "% CI ")
		number(apa.intervalText(Interval(st.Lo, st.Hi).Bounded()))
	}
	pv := func(p float64) {
		out = append(out, piece{pieceSymbol, "p"})
		t := apa.probText(p)
		if rest, ok := strings.CutPrefix(t, "< "); ok {
			text(" < ")
			number(rest)
		} else {
			text(" = ")
			number(t)
		}
	}
	if !math.IsNaN(st.P) {
		text(", ")
		pv(st.P)
		if st.OneSided {
			text(", one-sided")
		}
	}
	if !math.IsNaN(st.Adjusted) && st.Method != "" {
		text("; " + st.Method + "-adjusted ")
		pv(st.Adjusted)
	}
	return out
}

// unicodeSub holds the letters that Unicode has subscript forms of, for
// plain-text statements.
var unicodeSub = map[rune]rune{
	'a': 'ₐ', 'e': 'ₑ', 'h': 'ₕ', 'i': 'ᵢ', 'j': 'ⱼ', 'k': 'ₖ', 'l': 'ₗ', 'm': 'ₘ',
	'n': 'ₙ', 'o': 'ₒ', 'p': 'ₚ', 'r': 'ᵣ', 's': 'ₛ', 't': 'ₜ', 'u': 'ᵤ', 'v': 'ᵥ', 'x': 'ₓ',
}

// textMinus is the minus sign of a statement in plain text: U+2212, as
// typeset prose has it.
const textMinus = "−"

// String returns the statement as plain Unicode text, as the text formats
// (Markdown, CSV, TSV, JSON, Parquet) write it: "rₛ(48) = .42, p = .003".
func (st Statement) String() string { return st.plainText() }

// plainText writes the statement as plain Unicode text: a subscript in
// Unicode subscript letters when every letter has one ("rₛ"), else after an
// underscore ("τ_b"); minus signs as U+2212.
func (st *Statement) plainText() string {
	var b strings.Builder
	for _, p := range st.pieces() {
		switch p.kind {
		case pieceSub:
			b.WriteString(subscript(p.s))
		case pieceNumber:
			b.WriteString(strings.ReplaceAll(p.s, "-", textMinus))
		default:
			b.WriteString(p.s)
		}
	}
	return b.String()
}

// subscript writes s in Unicode subscript letters, or as "_s" when one of
// its letters has no subscript form.
func subscript(s string) string {
	var b strings.Builder
	for _, r := range s {
		sr, ok := unicodeSub[r]
		if !ok {
			return "_" + s
		}
		b.WriteRune(sr)
	}
	return b.String()
}
