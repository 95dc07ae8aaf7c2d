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
}

// Text returns a text cell holding s.
func Text(s string) Cell { return Cell{kind: KindText, text: s} }

// NoText returns a text cell that holds no value, such as the method of a
// p-value that was not computed: "—" in Markdown, an empty field in CSV and
// null in JSON.
func NoText() Cell { return Cell{kind: KindText, none: true} }

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
	}
	return false
}
