package render

import "math"

// Kind says what a Cell holds. The zero Kind is invalid, so a Cell that was
// never set (the zero Cell) is caught by Encode instead of printing as empty.
type Kind int

// The kinds of cell. They are named KindText and so on because Text, Int,
// Real, Prob and List are the constructors.
const (
	_        Kind = iota
	KindText      // a string, printed as is (escaped as the format needs)
	KindInt       // a signed integer, such as a count
	KindReal      // a real number; NaN means undefined
	KindProb      // a probability such as a p-value; NaN means undefined
	KindList      // a list of strings, such as warnings
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
	}
	return "Kind(" + itoa(int64(k)) + ")"
}

// numeric reports whether cells of kind k are numbers, which Markdown
// right-aligns.
func (k Kind) numeric() bool {
	return k == KindInt || k == KindReal || k == KindProb
}

// A Cell is one typed value of a table. Build it with Text, Int, Real, Prob
// or List; the zero Cell is invalid.
type Cell struct {
	kind  Kind
	text  string
	i     int64
	f     float64
	items []string
}

// Text returns a text cell holding s.
func Text(s string) Cell { return Cell{kind: KindText, text: s} }

// Int returns an integer cell holding i.
func Int(i int64) Cell { return Cell{kind: KindInt, i: i} }

// Real returns a real-number cell holding f. NaN means the value is
// undefined (for example a correlation with a constant column); it prints as
// "—" in Markdown, an empty field in CSV and null in JSON.
func Real(f float64) Cell { return Cell{kind: KindReal, f: f} }

// Prob returns a cell holding a probability such as a p-value. It prints
// like Real, except that Markdown shows a value too small for the chosen
// number of decimals as a bound: with 3 digits, 0.00004 prints as "< 0.001".
// (With digits < 0, the shortest exact form, no bound is needed or shown.)
func Prob(p float64) Cell { return Cell{kind: KindProb, f: p} }

// List returns a cell holding a list of strings, such as the warnings of one
// result. The slice is copied. Markdown and CSV join the items with "; ";
// JSON writes an array (an empty or nil list is []).
func List(items []string) Cell {
	return Cell{kind: KindList, items: append([]string(nil), items...)}
}

// Kind returns what c holds.
func (c Cell) Kind() Kind { return c.kind }

// null reports whether c is an undefined number (NaN).
func (c Cell) null() bool {
	return (c.kind == KindReal || c.kind == KindProb) && math.IsNaN(c.f)
}
