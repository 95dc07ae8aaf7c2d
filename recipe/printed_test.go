package recipe

import (
	"math"
	"strings"
	"testing"
)

// The forms a table prints values in. Sources:
//   - APA Publication Manual, 7th ed. (2020), §6.36 (from memory): no zero
//     before the decimal point of a value that cannot exceed 1 (".42" for a
//     correlation or a p-value); exact p-values to two or three decimals;
//     p < .001 below that.
//   - The Unicode Standard (15.0), ch. 6 and the code chart of U+2212 MINUS
//     SIGN (from memory): typeset tables print "−" (U+2212), and often the
//     en dash "–" (U+2013) in its place; plain text has "-" (U+002D).
//   - Significance marks with a legend such as "*p < .05. **p < .01.
//     ***p < .001." (APA 7th ed., §7.14, table notes; from memory).
func TestParseEstimate(t *testing.T) {
	for _, c := range []struct {
		in     string
		digits uint64
		exp    int
		neg    bool
		marks  string
	}{
		{"0.42", 42, -2, false, ""},
		{".42", 42, -2, false, ""},        // APA: no leading zero
		{"−.12", 12, -2, true, ""},        // U+2212 minus sign
		{"-.12", 12, -2, true, ""},        // hyphen-minus
		{"–0.12", 12, -2, true, ""},       // en dash, as typesetting often prints it
		{"+.12", 12, -2, false, ""},       // an explicit plus
		{"− .120", 120, -3, true, ""},     // a space after the sign; the last zero is a printed digit
		{".42**", 42, -2, false, "**"},    // significance marks
		{"−.31 ***", 31, -2, true, "***"}, // marks after a space
		{".31†", 31, -2, false, "†"},      // a dagger, as some legends use for p < .10
		{"1", 1, 0, false, ""},            // a perfect association printed without decimals
		{"1.00", 100, -2, false, ""},
		{"0.042", 42, -3, false, ""}, // leading zeros carry no precision
		{"-.00", 0, -2, true, ""},    // a small negative value
		{"\u00a0.42\u2009", 42, -2, false, ""},
		{"4.2e-1", 42, -2, false, ""},
		{"4.2 × 10⁻¹", 42, -2, false, ""},
		{"4.2x10^-1", 42, -2, false, ""},
	} {
		p, err := ParseEstimate(c.in)
		if err != nil {
			t.Errorf("ParseEstimate(%q): %v", c.in, err)
			continue
		}
		if p.Kind != PrintedRounded || p.Digits != c.digits || p.Exp != c.exp || p.Negative != c.neg || p.Marks != c.marks {
			t.Errorf("ParseEstimate(%q) = %+v, want digits %d exp %d negative %v marks %q", c.in, p, c.digits, c.exp, c.neg, c.marks)
		}
		if p.Text != c.in {
			t.Errorf("ParseEstimate(%q).Text = %q", c.in, p.Text)
		}
	}
}

func TestParsePValue(t *testing.T) {
	for _, c := range []struct {
		in    string
		kind  PrintedKind
		value float64
		incl  bool
		marks string
	}{
		{".031", PrintedRounded, 0.031, false, ""},
		{"0.031", PrintedRounded, 0.031, false, ""},
		{"= .03", PrintedRounded, 0.03, false, ""},
		{"p = .03", PrintedRounded, 0.03, false, ""},
		{"p=.03", PrintedRounded, 0.03, false, ""},
		{"P = 0.030", PrintedRounded, 0.03, false, ""},
		{"< .001", PrintedBelow, 0.001, false, ""}, // APA 7th ed. §6.36
		{"<.05", PrintedBelow, 0.05, false, ""},
		{"p < .001", PrintedBelow, 0.001, false, ""},
		{"p<0.001", PrintedBelow, 0.001, false, ""},
		{"≤ .05", PrintedBelow, 0.05, true, ""},
		{"<= .05", PrintedBelow, 0.05, true, ""},
		{"> .05", PrintedAbove, 0.05, false, ""},
		{"p ≥ .10", PrintedAbove, 0.1, true, ""},
		{"ns", PrintedNotSignificant, math.NaN(), false, ""},
		{"n.s.", PrintedNotSignificant, math.NaN(), false, ""},
		{"NS", PrintedNotSignificant, math.NaN(), false, ""},
		{"**", PrintedMarks, math.NaN(), false, "**"},
		{"1.2e-5", PrintedRounded, 1.2e-5, false, ""},
		{"1.2E-05", PrintedRounded, 1.2e-5, false, ""},
		{"1.2 × 10⁻⁵", PrintedRounded, 1.2e-5, false, ""},
		{"p < 1 × 10⁻¹⁰", PrintedBelow, 1e-10, false, ""},
		{"3.4·10^-7", PrintedRounded, 3.4e-7, false, ""},
	} {
		p, err := ParsePValue(c.in)
		if err != nil {
			t.Errorf("ParsePValue(%q): %v", c.in, err)
			continue
		}
		v := p.Value()
		if p.Kind != c.kind || p.Inclusive != c.incl || p.Marks != c.marks ||
			!(v == c.value || math.IsNaN(v) && math.IsNaN(c.value)) {
			t.Errorf("ParsePValue(%q) = kind %d value %g inclusive %v marks %q; want %d %g %v %q",
				c.in, p.Kind, v, p.Inclusive, p.Marks, c.kind, c.value, c.incl, c.marks)
		}
	}
}

func TestParsePrintedErrors(t *testing.T) {
	for _, c := range []struct {
		in     string
		p      bool // a p-value, else an estimate
		offset int
		msg    string
	}{
		{"", false, 0, "empty"},
		{"  ", true, 0, "empty"},
		{".4.2", false, 2, "one decimal point"},
		{"0,42", false, 1, `","`},
		{",42", false, 0, `"."`},
		{"4.", false, 1, "digits after it"},
		{"abc", false, 0, `"a"`},
		{".42a", false, 3, `"a"`},
		{"-.03", true, 0, "no sign"},
		{"p .03", true, 2, "comparison"},
		{"p", true, 1, "comparison"},
		{"1.5", true, 0, "cannot exceed 1"},
		{"< ", true, 2, "missing"},
		{"** .05", true, 3, "after the significance marks"},
		{"1.2 × 5", false, 4, "power of ten"},
		{"1.2 × 10", false, 9, "superscript"}, // "×" is two bytes
		{"1.2e", false, 4, "needs digits"},
		{"1.2e-99999", false, 4, "out of range"},
		{"1234567890123456789012", false, 0, "at most 18 digits"},
		{".42\xff", false, 0, "UTF-8"},
	} {
		var err error
		if c.p {
			_, err = ParsePValue(c.in)
		} else {
			_, err = ParseEstimate(c.in)
		}
		pe, ok := err.(*PrintedError)
		if !ok {
			t.Errorf("parse %q: error %v, want a *PrintedError", c.in, err)
			continue
		}
		if pe.Offset != c.offset || !strings.Contains(pe.Msg, c.msg) {
			t.Errorf("parse %q: offset %d %q; want offset %d and %q", c.in, pe.Offset, pe.Msg, c.offset, c.msg)
		}
	}
}

// The rounding interval of a printed value: the printed number ± half a
// unit in its last digit, both ends included, because a paper rarely says
// whether it rounds half up (away from zero) or half to even (ISO
// 80000-1:2009, Annex B, rules A and B; IEEE 754-2008 roundTiesToAway and
// roundTiesToEven; from memory): 0.415 rounds to 0.42 half up, 0.425 rounds
// to 0.42 half to even.
func TestRounds(t *testing.T) {
	est := func(s string) Printed {
		p, err := ParseEstimate(s)
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	for _, c := range []struct {
		printed string
		v       float64
		want    bool
	}{
		{".42", 0.42, true},
		{".42", 0.4199999, true},
		{".42", 0.415, true},   // half up reaches 0.42 from below (0.415 is a little below 0.415 in binary; still within the slack)
		{".42", 0.425, true},   // half to even keeps 0.42
		{".42", 0.4149, false}, // rounds to 0.41 either way
		{".42", 0.4251, false}, // rounds to 0.43 either way
		{"0.420", 0.4204, true},
		{"0.420", 0.4206, false}, // three printed digits: [0.4195, 0.4205]
		{"−.12", -0.1234, true},  // U+2212
		{"−.12", 0.1234, false},  // the sign matters
		{"-.12", -0.115, true},
		{"-.12", -0.1251, false},
		{".00", -0.004, true}, // an unsigned zero: either side
		{".00", 0.004, true},
		{"-.00", 0.004, false}, // a signed zero: only below
		{"-.00", -0.004, true},
		{"1", 0.97, true}, // no decimals: [0.5, 1.5]
		{"1.00", 0.9949, false},
		{"1.2e-5", 1.24e-5, true},
		{"1.2e-5", 1.26e-5, false},
		{".42", math.NaN(), false},
	} {
		if got := est(c.printed).Rounds(c.v); got != c.want {
			t.Errorf("%q.Rounds(%v) = %v, want %v", c.printed, c.v, got, c.want)
		}
	}
	lo, hi := est(".42").RoundingInterval()
	if lo != 0.415 || hi != 0.425 {
		t.Errorf(".42: interval [%v, %v], want [0.415, 0.425]", lo, hi)
	}
	lo, hi = est("−.00").RoundingInterval()
	if lo != -0.005 || hi != 0 {
		t.Errorf("−.00: interval [%v, %v], want [−0.005, 0]", lo, hi)
	}
}

// Truncation cuts the digits after the last printed one: 0.4299 prints as
// 0.42, −0.4299 as −0.42 (toward zero).
func TestTruncates(t *testing.T) {
	for _, c := range []struct {
		printed string
		v       float64
		want    bool
	}{
		{".42", 0.4299, true},
		{".42", 0.42, true},
		{".42", 0.4199, false},
		{".42", 0.43, false}, // 0.43 in binary is a hair below 0.43; truncating software prints it as 0.43
		{"-.42", -0.4299, true},
		{"-.42", -0.4301, false},
		{"-.42", -0.4199, false},
		{".00", -0.0099, true},
		{".00", 0.0099, true},
		{"-.00", 0.001, false},
		{"-.00", -0.0099, true},
	} {
		p, err := ParseEstimate(c.printed)
		if err != nil {
			t.Fatal(err)
		}
		if got := p.Truncates(c.v); got != c.want {
			t.Errorf("%q.Truncates(%v) = %v, want %v", c.printed, c.v, got, c.want)
		}
	}
}

// Bounds are compared as printed: "< .001" says p < .001 (APA 7th ed.,
// §6.36), so p = .001 itself does not satisfy it; "≤ .05" includes .05.
func TestHoldsFor(t *testing.T) {
	for _, c := range []struct {
		printed string
		v       float64
		want    bool
	}{
		{"< .001", 0.0009, true},
		{"< .001", 0.001, false},
		{"< .001", 0.0011, false},
		{"≤ .05", 0.05, true},
		{"> .05", 0.05, false},
		{"> .05", 0.0501, true},
		{"≥ .05", 0.05, true},
		{"< .001", math.NaN(), false},
	} {
		p, err := ParsePValue(c.printed)
		if err != nil {
			t.Fatal(err)
		}
		if got := p.HoldsFor(c.v); got != c.want {
			t.Errorf("%q.HoldsFor(%v) = %v, want %v", c.printed, c.v, got, c.want)
		}
	}
}

// A star legend "*p < .05. **p < .01. ***p < .001." (APA 7th ed., §7.14;
// from memory): ** means .001 ≤ p < .01; no marks means p ≥ .05.
func TestMarksRange(t *testing.T) {
	pb := &Published{Stars: []StarLevel{{"*", 0.05}, {"**", 0.01}, {"***", 0.001}}}
	for _, c := range []struct {
		marks string
		p     float64
		want  bool
	}{
		{"***", 0.0009, true},
		{"***", 0.001, false},
		{"**", 0.001, true},
		{"**", 0.0099, true},
		{"**", 0.01, false},
		{"*", 0.049, true},
		{"*", 0.05, false},
		{"", 0.05, true},
		{"", 0.049, false},
		{"****", 0.0001, false}, // not in the legend
	} {
		if got := pb.MarksHold(c.marks, c.p); got != c.want {
			t.Errorf("MarksHold(%q, %v) = %v, want %v", c.marks, c.p, got, c.want)
		}
	}
	if got := pb.MarksMeaning("**"); got != ".001 ≤ p < .01" {
		t.Errorf("MarksMeaning(**) = %q", got)
	}
	if got := pb.MarksMeaning(""); got != "p ≥ .05" {
		t.Errorf("MarksMeaning() = %q", got)
	}
	if pb.NotSignificantBelow() != 0.05 || (&Published{}).NotSignificantBelow() != 0.05 {
		t.Error("ns threshold")
	}
}

func TestCanonical(t *testing.T) {
	for in, want := range map[string]string{"−.120": "-0.120", "-.00": "-0.00", "1.2e-5": "0.000012"} {
		p, err := ParseEstimate(in)
		if err != nil {
			t.Fatal(err)
		}
		if got := p.Canonical(); got != want {
			t.Errorf("%q.Canonical() = %q, want %q", in, got, want)
		}
	}
	for in, want := range map[string]string{"p<.001": "< 0.001", "≥ .05": ">= 0.05", "n.s.": "ns", "**": "**"} {
		p, err := ParsePValue(in)
		if err != nil {
			t.Fatal(err)
		}
		if got := p.Canonical(); got != want {
			t.Errorf("%q.Canonical() = %q, want %q", in, got, want)
		}
	}
}

// FuzzParsePrinted reads arbitrary text as a printed estimate and p-value.
// Whatever the input, the parsers must not panic; an error points inside
// the text; a value that parses is consistent: its rounding interval holds
// the printed number, truncation holds it too (it is its own truncation),
// and its canonical form parses back to the same number.
func FuzzParsePrinted(f *testing.F) {
	for _, s := range []string{".42", "−.12**", "p < .001", "ns", "1.2 × 10⁻⁵", "4.2x10^-1", "-.00", "p = .03", "≥ .05", "***", "1e-330"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		for _, parse := range []func(string) (Printed, error){ParseEstimate, ParsePValue} {
			p, err := parse(s)
			if err != nil {
				pe, ok := err.(*PrintedError)
				if !ok || pe.Offset < 0 || pe.Offset > len(s) {
					t.Fatalf("parse %q: %v (%T)", s, err, err)
				}
				continue
			}
			if p.Kind != PrintedRounded {
				continue
			}
			v := p.Value()
			if math.IsInf(v, 0) || math.IsNaN(v) || p.Exp < -300 || p.Exp > 290 {
				continue // beyond float64: nothing recomputed can be compared with it
			}
			lo, hi := p.RoundingInterval()
			if !(lo <= v && v <= hi) || !p.Rounds(v) {
				t.Fatalf("%q: %v not in its rounding interval [%v, %v]", s, v, lo, hi)
			}
			// (Beyond 2⁵³ the float64 nearest a printed integer may lie
			// above the next one: no truncation rule applies.)
			if p.Digits < 1<<53 && !p.Truncates(v) {
				t.Fatalf("%q: %v is not its own truncation", s, v)
			}
			back, err := ParseEstimate(p.Canonical())
			if err != nil || back.Value() != v {
				t.Fatalf("%q: canonical %q reads back as %v, %v", s, p.Canonical(), back.Value(), err)
			}
		}
	})
}
