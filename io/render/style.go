package render

import (
	"fmt"
	"math"
	"strings"
)

// NumberStyle says how the human-readable formats (Markdown, LaTeX, HTML)
// write numbers. The zero value is invalid.
type NumberStyle int

const (
	_ NumberStyle = iota
	// Plain writes every number with its leading zero and the table's
	// digits ("0.420", "-0.057"); p-values keep at least three decimals and
	// a p-value too small for them is a bound ("< 0.001").
	Plain
	// APA follows the APA Publication Manual (7th ed., 2020): no leading
	// zero for quantities that cannot exceed 1 (Prob cells, and Real or
	// Interval cells marked Bounded), p-values to three decimals and
	// "< .001" below that (§6.36, Decimal fractions).
	APA
)

// String returns the recipe word for the style: "plain" or "apa".
func (n NumberStyle) String() string {
	switch n {
	case Plain:
		return "plain"
	case APA:
		return "apa"
	}
	return fmt.Sprintf("NumberStyle(%d)", int(n))
}

// Style is how numbers are written: the style and the decimals of Real and
// Interval cells (a negative Digits means the shortest text that reads back
// exactly). CSV and TSV use Digits but never the APA rules, since they are
// read by programs; JSON and Parquet keep every digit.
type Style struct {
	Numbers NumberStyle
	Digits  int
}

func (s Style) check() error {
	if s.Numbers != Plain && s.Numbers != APA {
		return fmt.Errorf("invalid number style %s", s.Numbers)
	}
	return nil
}

// apaProbDigits is how many decimals the APA style gives an exact p-value:
// "Report exact p values (e.g., p = .031) to two or three decimal places.
// However, report p values less than .001 as p < .001." (APA Publication
// Manual, 7th ed., 2020, §6.36.) Three decimals keep p = .003 exact, and
// one rule for every p keeps a column aligned.
const apaProbDigits = 3

// realText writes a Real cell that is not null, with its mark.
func (s Style) realText(c Cell) string {
	t := fixed(c.f, s.Digits)
	if s.Numbers == APA && c.bounded {
		t = dropLeadingZero(t)
	}
	return t + c.mark
}

// intervalText writes an Interval cell that is not null as "[lo, hi]".
func (s Style) intervalText(c Cell) string {
	lo, hi := fixed(c.f, s.Digits), fixed(c.hi, s.Digits)
	if s.Numbers == APA && c.bounded {
		lo, hi = dropLeadingZero(lo), dropLeadingZero(hi)
	}
	return "[" + lo + ", " + hi + "]"
}

// probText writes a p-value that is not NaN for a human reader. In the
// Plain style it keeps at least mdProbDigits decimals (more when Digits
// asks) and writes a value below the last decimal as a bound ("< 0.001");
// with Digits < 0 it writes the shortest exact form. In the APA style it
// writes three decimals without the leading zero, and "< .001" below .001.
func (s Style) probText(p float64) string {
	if s.Numbers == APA {
		if p >= 0 && p < 0.001 {
			return "< .001"
		}
		return dropLeadingZero(fixed(p, apaProbDigits))
	}
	if s.Digits < 0 {
		return fixed(p, s.Digits)
	}
	d := max(s.Digits, mdProbDigits)
	if bound := math.Pow10(-d); p >= 0 && p < bound {
		return "< " + fixed(bound, d)
	}
	return fixed(p, d)
}

// dropLeadingZero removes the zero before the decimal point of a formatted
// number smaller than 1 in size: "0.42" → ".42", "-0.05" → "-.05". Numbers
// without a fraction ("0", "1.00") are left as they are.
func dropLeadingZero(t string) string {
	switch {
	case strings.HasPrefix(t, "0."):
		return t[1:]
	case strings.HasPrefix(t, "-0."):
		return "-" + t[2:]
	}
	return t
}
