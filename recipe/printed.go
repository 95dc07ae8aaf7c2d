package recipe

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// This file reads numbers as a paper printed them ("−.12", "< .001",
// "p = .03", "ns", ".42**", "1.2 × 10⁻⁵") and says which recomputed values
// they stand for. A printed value keeps its precision: "0.42" stands for
// every value that rounds to 0.42, not for 0.42 itself.

// PrintedKind says what a printed value claims about the value it reports.
// The zero value is invalid.
type PrintedKind int

const (
	_ PrintedKind = iota
	// PrintedRounded is a number rounded to its last printed digit:
	// "0.42", ".42", "−.12", "p = .03", "1.2e-5", "1.2 × 10⁻⁵".
	PrintedRounded
	// PrintedBelow is an upper bound: "< .001", "p < .05", "≤ .05".
	PrintedBelow
	// PrintedAbove is a lower bound: "> .05", "p ≥ .10".
	PrintedAbove
	// PrintedNotSignificant is "ns" or "n.s.": p at or above the block's
	// threshold (its star legend's largest, else .05).
	PrintedNotSignificant
	// PrintedMarks is a p-value written as significance marks alone
	// ("**"), read through the block's star legend.
	PrintedMarks
)

// Printed is one value as a table printed it.
type Printed struct {
	Text string // as written in the recipe
	Kind PrintedKind

	// A PrintedRounded value (and the bound of PrintedBelow and
	// PrintedAbove) is Digits × 10^Exp, negative when Negative: "−.120"
	// is Digits 120, Exp −3, Negative. A printed zero keeps its sign
	// ("−.00" stands for a small negative value).
	Digits   uint64
	Exp      int
	Negative bool

	// Inclusive marks a bound written with ≤ or ≥ (or <=, >=).
	Inclusive bool

	// Marks are significance marks: those after an estimate (".42**"), or
	// the whole of a p-value written as marks ("**"). "" for none.
	Marks string
}

// PrintedError is a printed value that cannot be read. Offset is the byte
// offset in the text where the problem is, so a diagnostic can point at it.
type PrintedError struct {
	Offset int
	Msg    string
}

func (e *PrintedError) Error() string { return e.Msg }

// What a printed value reports: its parsing differs (a p-value has no sign
// but may be a bound or "ns"; an estimate may carry marks).
type printedRole int

const (
	_ printedRole = iota
	roleEstimate
	rolePValue
)

// ParseEstimate reads a printed coefficient: an optional sign (hyphen-minus,
// the minus sign U+2212, the en dash U+2013 that typesetting often puts in
// its place, or +), a decimal number with or without its leading zero
// (".42", "0.42"), or one in exponent form ("1.2e-3", "1.2 × 10⁻³"), and
// optional significance marks (".42**", "−.31†"), which the block's star
// legend reads. Spaces (including no-break and thin spaces) around the
// parts are ignored. The result's Kind is PrintedRounded.
//
// A leading zero is dropped before a quantity that cannot exceed 1, such as
// a correlation, and kept otherwise (APA Publication Manual, 7th ed., 2020,
// §6.36; from memory): both forms are read the same.
func ParseEstimate(s string) (Printed, error) { return parsePrinted(s, roleEstimate) }

// ParsePValue reads a printed p-value: a number ("= .03", "p = .031",
// ".031", "0.031", "3e-4", "3 × 10⁻⁴"), a bound ("< .001", "p<.05",
// "≤ .05", "> .05"), "ns" / "n.s." (not significant), or significance marks
// alone ("**"). A p-value has no sign. APA style reports p to two or three
// decimals and p < .001 below that (APA Publication Manual, 7th ed., 2020,
// §6.36; from memory).
func ParsePValue(s string) (Printed, error) { return parsePrinted(s, rolePValue) }

// printedScanner walks the text of a printed value.
type printedScanner struct {
	s   string
	pos int
}

func (sc *printedScanner) peek() (rune, int) {
	if sc.pos >= len(sc.s) {
		return 0, 0
	}
	return utf8.DecodeRuneInString(sc.s[sc.pos:])
}

func (sc *printedScanner) done() bool { return sc.pos >= len(sc.s) }

// isBlank reports the spaces a typeset table may contain: ASCII spaces,
// no-break space U+00A0, thin space U+2009, narrow no-break space U+202F.
func isBlank(r rune) bool {
	return r == ' ' || r == '\t' || r == '\u00a0' || r == '\u2009' || r == '\u202f' || r == '\u2007'
}

func (sc *printedScanner) skipBlanks() {
	for {
		r, w := sc.peek()
		if w == 0 || !isBlank(r) {
			return
		}
		sc.pos += w
	}
}

func (sc *printedScanner) errorf(at int, format string, args ...any) error {
	return &PrintedError{Offset: at, Msg: fmt.Sprintf(format, args...)}
}

// isMinus reports the characters a printed minus may be.
func isMinus(r rune) bool { return r == '-' || r == '\u2212' || r == '\u2013' }

// isMark reports a significance mark: a symbol or punctuation that is not
// part of a number, a sign, a comparison or a bracket.
func isMark(r rune) bool {
	switch r {
	case '.', ',', '+', '<', '>', '=', '≤', '≥', '(', ')', '[', ']', '{', '}', '"', '\'', '\\', '\u00d7':
		return false
	}
	if isMinus(r) {
		return false
	}
	return unicode.IsPunct(r) || unicode.IsSymbol(r)
}

// superDigits are the superscript digits of an exponent such as 10⁻⁵.
var superDigits = map[rune]byte{
	'⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4', '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9',
}

// maxPrintedDigits bounds the digits of a printed number: no table prints
// more, and 18 digits fit a uint64.
const maxPrintedDigits = 18

func parsePrinted(s string, role printedRole) (Printed, error) {
	p := Printed{Text: s}
	sc := &printedScanner{s: s}
	sc.skipBlanks()
	if sc.done() {
		return p, sc.errorf(0, "the printed value is empty")
	}
	if !utf8.ValidString(s) {
		return p, sc.errorf(0, "the printed value is not valid UTF-8")
	}

	if role == rolePValue {
		// "ns", "n.s.", "NS", "N.S." (not significant).
		rest := strings.ToLower(strings.TrimFunc(s[sc.pos:], isBlank))
		if rest == "ns" || rest == "n.s." || rest == "n.s" {
			p.Kind = PrintedNotSignificant
			return p, nil
		}
		// Marks alone: "*", "**", "†".
		if r, _ := sc.peek(); isMark(r) {
			start := sc.pos
			for {
				r, w := sc.peek()
				if w == 0 || !isMark(r) {
					break
				}
				sc.pos += w
			}
			p.Marks = s[start:sc.pos]
			sc.skipBlanks()
			if !sc.done() {
				return p, sc.errorf(sc.pos, "unexpected %s after the significance marks %q", describeRune(sc), p.Marks)
			}
			p.Kind = PrintedMarks
			return p, nil
		}
		// An optional "p" (or "P"), then an optional comparison.
		if r, w := sc.peek(); r == 'p' || r == 'P' {
			sc.pos += w
			sc.skipBlanks()
			if r, _ := sc.peek(); !strings.ContainsRune("=<>≤≥", r) {
				return p, sc.errorf(sc.pos, "after p, write a comparison and a number, such as p = .03 or p < .001")
			}
		}
		p.Kind = PrintedRounded
		switch r, w := sc.peek(); r {
		case '=':
			sc.pos += w
		case '<', '>':
			p.Kind = PrintedBelow
			if r == '>' {
				p.Kind = PrintedAbove
			}
			sc.pos += w
			if r2, w2 := sc.peek(); r2 == '=' {
				p.Inclusive = true
				sc.pos += w2
			}
		case '≤':
			p.Kind, p.Inclusive = PrintedBelow, true
			sc.pos += w
		case '≥':
			p.Kind, p.Inclusive = PrintedAbove, true
			sc.pos += w
		}
		sc.skipBlanks()
	}

	// The sign (estimates only).
	signAt := sc.pos
	if r, w := sc.peek(); isMinus(r) || r == '+' {
		if role == rolePValue {
			return p, sc.errorf(signAt, "a p-value has no sign")
		}
		p.Negative = isMinus(r)
		sc.pos += w
		sc.skipBlanks()
	}

	if err := sc.number(&p); err != nil {
		return p, err
	}
	if role == roleEstimate {
		p.Kind = PrintedRounded
		sc.skipBlanks()
		start := sc.pos
		for {
			r, w := sc.peek()
			if w == 0 || !isMark(r) {
				break
			}
			sc.pos += w
		}
		p.Marks = s[start:sc.pos]
	}
	sc.skipBlanks()
	if !sc.done() {
		if r, _ := sc.peek(); r == ',' {
			return p, sc.errorf(sc.pos, "unexpected \",\": write the decimal point as \".\", and one value per attribute")
		}
		return p, sc.errorf(sc.pos, "unexpected %s after the number", describeRune(sc))
	}
	if role == rolePValue && p.value() > 1 {
		return p, sc.errorf(0, "a p-value cannot exceed 1; got %s", strings.TrimSpace(s))
	}
	return p, nil
}

// describeRune names the character at the scanner's position for a message.
func describeRune(sc *printedScanner) string {
	r, _ := sc.peek()
	if r == utf8.RuneError {
		return "a byte that is not UTF-8"
	}
	if unicode.IsPrint(r) {
		return strconv.Quote(string(r))
	}
	return fmt.Sprintf("the character U+%04X", r)
}

// number reads digits with an optional decimal point and an optional
// exponent ("e-5", "E+03", " × 10⁻⁵", "x10^-5") into p.Digits and p.Exp.
func (sc *printedScanner) number(p *Printed) error {
	start := sc.pos
	var digits []byte
	point := -1 // digits before the decimal point, when there is one
	for {
		r, w := sc.peek()
		switch {
		case r >= '0' && r <= '9':
			digits = append(digits, byte(r))
		case r == '.' && point < 0:
			point = len(digits)
		case r == '.':
			return sc.errorf(sc.pos, "a number has one decimal point")
		default:
			w = 0
		}
		if w == 0 {
			break
		}
		sc.pos += w
	}
	if len(digits) == 0 {
		if sc.done() {
			return sc.errorf(start, "a number is missing")
		}
		if r, _ := sc.peek(); r == ',' {
			return sc.errorf(sc.pos, "write the decimal point as \".\"")
		}
		return sc.errorf(sc.pos, "expected a number, found %s", describeRune(sc))
	}
	if point == len(digits) {
		return sc.errorf(sc.pos-1, "a decimal point needs digits after it")
	}
	exp := 0
	if point >= 0 {
		exp = -(len(digits) - point)
	}
	e, err := sc.exponent()
	if err != nil {
		return err
	}
	// Leading zeros carry no precision: "0.042" is 42 × 10⁻³.
	trimmed := strings.TrimLeft(string(digits), "0")
	if len(trimmed) > maxPrintedDigits {
		return sc.errorf(start, "a printed number has at most %d digits", maxPrintedDigits)
	}
	if trimmed == "" {
		trimmed = "0"
	}
	n, perr := strconv.ParseUint(trimmed, 10, 64)
	if perr != nil {
		return sc.errorf(start, "cannot read the number: %v", perr)
	}
	if exp+e < -330 || exp+e > 330 {
		return sc.errorf(start, "the exponent is out of range")
	}
	p.Digits, p.Exp = n, exp+e
	return nil
}

// exponent reads an optional exponent and returns its value.
func (sc *printedScanner) exponent() (int, error) {
	save := sc.pos
	r, w := sc.peek()
	if r == 'e' || r == 'E' {
		sc.pos += w
		return sc.exponentDigits(false)
	}
	// " × 10⁻⁵", "x 10^-5", "·10−5": a times sign, 10, then the power.
	sc.skipBlanks()
	r, w = sc.peek()
	if r != '\u00d7' && r != 'x' && r != 'X' && r != '\u00b7' && r != '\u22c5' {
		sc.pos = save
		return 0, nil
	}
	at := sc.pos
	sc.pos += w
	sc.skipBlanks()
	if !strings.HasPrefix(sc.s[sc.pos:], "10") {
		return 0, sc.errorf(at, "after %q, write a power of ten such as 10⁻⁵ or 10^-5", string(r))
	}
	sc.pos += 2
	if r, w := sc.peek(); r == '^' {
		sc.pos += w
		return sc.exponentDigits(false)
	}
	return sc.exponentDigits(true)
}

// exponentDigits reads a signed whole exponent, in superscript digits when
// super (a superscript minus ⁻ or plus ⁺ in front).
func (sc *printedScanner) exponentDigits(super bool) (int, error) {
	start := sc.pos
	neg := false
	r, w := sc.peek()
	switch {
	case super && r == '⁻', !super && isMinus(r):
		neg = true
		sc.pos += w
	case super && r == '⁺', !super && r == '+':
		sc.pos += w
	}
	var ds []byte
	for {
		r, w := sc.peek()
		if w == 0 {
			break
		}
		if super {
			d, ok := superDigits[r]
			if !ok {
				break
			}
			ds = append(ds, d)
		} else {
			if r < '0' || r > '9' {
				break
			}
			ds = append(ds, byte(r))
		}
		sc.pos += w
	}
	if len(ds) == 0 {
		if super {
			return 0, sc.errorf(start, "after 10, write the power in superscript digits (10⁻⁵) or as 10^-5")
		}
		return 0, sc.errorf(start, "an exponent needs digits")
	}
	if len(ds) > 3 {
		return 0, sc.errorf(start, "the exponent is out of range")
	}
	e, _ := strconv.Atoi(string(ds))
	if neg {
		e = -e
	}
	return e, nil
}

// rat returns Digits × 10^Exp with its sign, exactly.
func (p Printed) rat() *big.Rat {
	r := new(big.Rat).SetFrac(new(big.Int).SetUint64(p.Digits), big.NewInt(1))
	r.Mul(r, pow10(p.Exp))
	if p.Negative {
		r.Neg(r)
	}
	return r
}

// pow10 returns 10^e exactly.
func pow10(e int) *big.Rat {
	t := new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(abs(e))), nil)
	if e >= 0 {
		return new(big.Rat).SetInt(t)
	}
	return new(big.Rat).SetFrac(big.NewInt(1), t)
}

func abs(e int) int {
	if e < 0 {
		return -e
	}
	return e
}

// value returns the printed number (or bound) as a float64.
func (p Printed) value() float64 {
	f, _ := p.rat().Float64()
	return f
}

// Value returns the number a PrintedRounded value prints, or the bound of
// PrintedBelow and PrintedAbove, as the nearest float64; NaN for the other
// kinds.
func (p Printed) Value() float64 {
	switch p.Kind {
	case PrintedRounded, PrintedBelow, PrintedAbove:
		return p.value()
	}
	return math.NaN()
}

// Decimals returns how many decimals a PrintedRounded value shows when it
// is written without an exponent (Exp ≤ 0), else 0.
func (p Printed) Decimals() int { return max(0, -p.Exp) }

// roundingSlack widens a rounding interval by this fraction of half a unit
// in the last printed place, so that a recomputed value that is exactly
// half-way in exact arithmetic, but a few units in the last place of a
// float64 away from it, still counts as half-way.
const roundingSlack = 1e-9

// RoundingInterval returns the closed interval of values that round to a
// PrintedRounded value: the printed number ± half a unit in its last
// printed digit. "0.42" stands for [0.415, 0.425]: a value exactly half-way
// rounds to 0.42 under round-half-to-even ("banker's rounding", IEEE 754's
// default and ISO 80000-1 Annex B's first rule) at 0.425 and under
// round-half-up (away from zero, as school arithmetic and printf-style
// output of decimal inputs do) at 0.415, and a paper rarely says which it
// used, so both ends are accepted. A printed zero keeps its sign: "−.00" is
// [−0.005, 0] and ".00" is [−0.005, 0.005].
func (p Printed) RoundingInterval() (lo, hi float64) {
	l, h := p.roundingRats()
	lo, _ = l.Float64()
	hi, _ = h.Float64()
	return lo, hi
}

func (p Printed) roundingRats() (lo, hi *big.Rat) {
	half := new(big.Rat).Mul(pow10(p.Exp), big.NewRat(1, 2))
	v := p.rat()
	lo = new(big.Rat).Sub(v, half)
	hi = new(big.Rat).Add(v, half)
	if p.Digits == 0 && p.Negative {
		hi = new(big.Rat)
	}
	return lo, hi
}

// Rounds reports whether v rounds to the PrintedRounded value p: whether it
// lies in p's RoundingInterval, compared exactly (v as the binary number it
// is), widened by roundingSlack of half a unit. NaN never rounds to
// anything.
func (p Printed) Rounds(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	lo, hi := p.roundingRats()
	return within(v, lo, hi, p.Exp, false)
}

// within reports lo − s ≤ v ≤ hi + s exactly, with s = roundingSlack × half
// a unit of 10^exp (or two units in the last place of v, when that is
// more); openHigh makes the upper end open and narrows it
// instead (v < hi − roundingSlack × half a unit), so that a value that is the upper end in exact
// arithmetic, give or take its float64 rounding, stays out.
func within(v float64, lo, hi *big.Rat, exp int, openHigh bool) bool {
	narrow := new(big.Rat).Mul(pow10(exp), new(big.Rat).SetFloat64(roundingSlack/2))
	wide := narrow
	// A value printed with more digits than a float64 resolves is
	// compared at the float64's resolution: two units in its last place.
	if ulp := 2 * (math.Nextafter(math.Abs(v), math.Inf(1)) - math.Abs(v)); new(big.Rat).SetFloat64(ulp).Cmp(wide) > 0 {
		wide = new(big.Rat).SetFloat64(ulp)
	}
	x := new(big.Rat).SetFloat64(v)
	if x.Cmp(new(big.Rat).Sub(lo, wide)) < 0 {
		return false
	}
	if openHigh {
		return x.Cmp(new(big.Rat).Sub(hi, narrow)) < 0
	}
	return x.Cmp(new(big.Rat).Add(hi, wide)) <= 0
}

// Truncates reports whether v, cut off (not rounded) after p's last
// printed digit, gives the PrintedRounded value p: "0.42" by truncation
// stands for [0.42, 0.43), "−.42" for (−0.43, −0.42], ".00" for
// (−0.01, 0.01) and "−.00" for (−0.01, 0].
func (p Printed) Truncates(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return false
	}
	unit := pow10(p.Exp)
	a := new(big.Rat).Abs(p.rat())
	switch {
	case p.Digits == 0 && p.Negative: // (−u, 0], as −v ∈ [0, u)
		return within(-v, new(big.Rat), unit, p.Exp, true)
	case p.Digits == 0: // (−u, u), as |v| ∈ [0, u)
		return within(math.Abs(v), new(big.Rat), unit, p.Exp, true)
	case p.Negative: // (−(a+u), −a], as −v ∈ [a, a+u)
		return within(-v, a, new(big.Rat).Add(a, unit), p.Exp, true)
	}
	return within(v, a, new(big.Rat).Add(a, unit), p.Exp, true)
}

// HoldsFor reports whether a PrintedBelow or PrintedAbove bound holds for
// v: v < bound ("< .001"), v ≤ bound ("≤ .05"), v > bound, v ≥ bound. The
// bound is the float64 nearest the printed one, so a recomputed value equal
// to it in float64 counts as equal: "< .001" does not hold for 0.001, and
// "≤ .05" does hold for 0.05.
func (p Printed) HoldsFor(v float64) bool {
	if math.IsNaN(v) {
		return false
	}
	b := p.value()
	switch {
	case p.Kind == PrintedBelow && p.Inclusive:
		return v <= b
	case p.Kind == PrintedBelow:
		return v < b
	case p.Kind == PrintedAbove && p.Inclusive:
		return v >= b
	case p.Kind == PrintedAbove:
		return v > b
	}
	return false
}

// Canonical writes a PrintedRounded value or bound back as plain text with
// an ASCII minus and its printed precision ("-0.120", "< 0.001", "12e3"
// for 1.2 × 10⁴), for records and messages.
func (p Printed) Canonical() string {
	num := func() string {
		if p.Exp > 0 { // whole digits beyond the printed ones: keep the exponent
			sign := ""
			if p.Negative {
				sign = "-"
			}
			return sign + strconv.FormatUint(p.Digits, 10) + "e" + strconv.Itoa(p.Exp)
		}
		s := p.rat().FloatString(max(0, -p.Exp))
		if p.Negative && !strings.HasPrefix(s, "-") {
			s = "-" + s
		}
		return s
	}
	switch p.Kind {
	case PrintedRounded:
		return num()
	case PrintedBelow:
		if p.Inclusive {
			return "<= " + num()
		}
		return "< " + num()
	case PrintedAbove:
		if p.Inclusive {
			return ">= " + num()
		}
		return "> " + num()
	case PrintedNotSignificant:
		return "ns"
	case PrintedMarks:
		return p.Marks
	}
	return p.Text
}
