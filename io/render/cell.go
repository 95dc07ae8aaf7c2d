package render

import "math"

// Kind says what a Cell holds. The zero Kind is invalid, so a Cell that was
// never set (the zero Cell) is caught by Encode instead of printing as empty.
type Kind int

// The kinds of cell. They are named KindText and so on because Text, Int,
// Real, Prob, List and Interval are the constructors. New kinds are added at
// the end, before kindEnd.
const (
	_            Kind = iota
	KindText          // a string, printed as is (escaped as the format needs)
	KindInt           // a signed integer, such as a count
	KindReal          // a real number; NaN means undefined
	KindProb          // a probability such as a p-value; NaN means undefined
	KindList          // a list of strings, such as warnings
	KindInterval      // a pair of reals [lo, hi]; a NaN bound means undefined
	KindReport        // a statistical statement such as rₛ(48) = .42, p = .003
	kindEnd           // one past the last valid kind
)

// String returns the lowercase name of k, or "Kind(n)" for an invalid kind.
func (k Kind) String() string {
	switch k {
	case KindText:
		return "text"
	case KindInt:
		return "int"
	case KindReal:
		return "real"
	case KindProb:
		return "prob"
	case KindList:
		return "list"
	case KindInterval:
		return "interval"
	case KindReport:
		return "report"
	}
	return "Kind(" + itoa(int64(k)) + ")"
}

// valid reports whether k is one of the kinds above.
func (k Kind) valid() bool { return k > 0 && k < kindEnd }

// numeric reports whether cells of kind k are numbers (or pairs of numbers),
// which Markdown right-aligns.
func (k Kind) numeric() bool {
	return k == KindInt || k == KindReal || k == KindProb || k == KindInterval
}

// A Cell is one typed value of a table. Build it with Text, Int, Real, Prob,
// List or Interval; the zero Cell is invalid.
type Cell struct {
	kind  Kind
	text  string
	i     int64
	f     float64 // Real, Prob; the lower bound of an Interval
	hi    float64 // the upper bound of an Interval
	items []string
	none  bool // a Text cell with no value (NoText)
	// bounded marks a Real or Interval whose size cannot exceed 1, such as
	// a correlation: the APA style writes it without a leading zero.
	bounded bool
	// mark is appended to a Real's number, such as significance stars.
	mark string
	// filler marks a Text cell that stands in for a number (a matrix's
	// diagonal dash, an empty upper triangle): it does not stop a column
	// from being aligned as numbers.
	filler bool
	report *Statement
}

// Text returns a text cell holding s.
func Text(s string) Cell { return Cell{kind: KindText, text: s} }

// NoText returns a text cell that holds no value, such as the method of a
// p-value that was not computed: "—" in Markdown, an empty field in CSV and
// null in JSON.
func NoText() Cell { return Cell{kind: KindText, none: true} }

// Filler returns a text cell holding s that stands where a number could be,
// such as the dash on a correlation matrix's diagonal or an empty cell above
// it. It prints as s in every format (an empty CSV field for ""), and unlike
// Text it leaves a column of numbers aligned as numbers.
func Filler(s string) Cell { return Cell{kind: KindText, text: s, filler: true} }

// Int returns an integer cell holding i.
func Int(i int64) Cell { return Cell{kind: KindInt, i: i} }

// Real returns a real-number cell holding f. NaN means the value is
// undefined (for example a correlation with a constant column); it prints as
// "—" in Markdown, an empty field in CSV and null in JSON.
func Real(f float64) Cell { return Cell{kind: KindReal, f: f} }

// Prob returns a cell holding a probability such as a p-value. It prints
// like Real, except in Markdown, where p-values keep at least three decimals
// so that p < 0.001 stays visible (digits above 3 are honoured), and a value
// too small for those decimals is shown as a bound: with 3 digits, 0.00004
// prints as "< 0.001". (With digits < 0, the shortest exact form, no bound is
// needed or shown.) CSV and JSON print p exactly as they print a Real.
func Prob(p float64) Cell { return Cell{kind: KindProb, f: p} }

// List returns a cell holding a list of strings, such as the warnings of one
// result. The slice is copied. Markdown and CSV join the items with "; ";
// JSON writes an array (an empty or nil list is []).
func List(items []string) Cell {
	return Cell{kind: KindList, items: append([]string(nil), items...)}
}

// Interval returns a cell holding the interval [lo, hi], such as a
// confidence interval. Markdown and CSV write it as "[lo, hi]" with each
// bound formatted as a Real (so never "-0.000"); JSON writes a two-element
// array of numbers. It is undefined when either bound is NaN, and then
// prints as "—" in Markdown, an empty field in CSV and null in JSON. The
// bounds are stored as given; Interval does not check that lo <= hi.
func Interval(lo, hi float64) Cell { return Cell{kind: KindInterval, f: lo, hi: hi} }

// Bounded returns c marked as a quantity whose size cannot exceed 1, such as
// a correlation coefficient or its interval. The Plain style ignores the
// mark; the APA style then drops the leading zero (".42", "[−.65, −.49]"), as
// the APA Publication Manual (7th ed., 2020, §6.36) asks for quantities that
// cannot be greater than 1. It applies to Real and Interval cells and leaves
// other cells as they are. (Prob cells are always bounded.)
func (c Cell) Bounded() Cell {
	if c.kind == KindReal || c.kind == KindInterval {
		c.bounded = true
	}
	return c
}

// Marked returns a Real cell with mark written right after its number, such
// as the asterisks that flag significance in a correlation matrix; the mark
// is not written when the number is undefined. Other cells are returned as
// they are.
func (c Cell) Marked(mark string) Cell {
	if c.kind == KindReal {
		c.mark = mark
	}
	return c
}

// Report returns a cell holding a statistical statement, written in the
// APA style whatever the table's style, since its form is the manual's.
func Report(s Statement) Cell { return Cell{kind: KindReport, report: &s} }

// Kind returns what c holds.
func (c Cell) Kind() Kind { return c.kind }

// null reports whether c is an undefined number (NaN), an interval with an
// undefined bound, or a text cell without a value.
func (c Cell) null() bool {
	switch c.kind {
	case KindText:
		return c.none
	case KindReal, KindProb:
		return math.IsNaN(c.f)
	case KindInterval:
		return math.IsNaN(c.f) || math.IsNaN(c.hi)
	case KindReport:
		return math.IsNaN(c.report.Estimate)
	}
	return false
}
