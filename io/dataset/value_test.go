package dataset

import (
	"math"
	"testing"
)

// The expected numbers are the decimal values written in the cells; the
// float64 they denote is what the Go compiler makes of the same literal.
func TestParseNumber(t *testing.T) {
	for _, c := range []struct {
		cell   string
		want   float64
		reason string // "" when the cell is a number
	}{
		{"3.25", 3.25, ""},
		{"  -0.5\t", -0.5, ""},
		{"1e-3", 0.001, ""},
		{"+7", 7, ""},
		{"0.1", 0.1, ""},
		{"1.7976931348623157e308", math.MaxFloat64, ""},
		{"4.9e-324", math.SmallestNonzeroFloat64, ""},
		{"NaN", nan, ""},
		{"nan", nan, ""},
		{"Inf", math.Inf(1), ""},
		{"+Inf", math.Inf(1), ""},
		{"-Inf", math.Inf(-1), ""},
		{"Infinity", math.Inf(1), ""},
		{"-infinity", math.Inf(-1), ""},
		{"1e400", 0, "is outside the range of a 64-bit float (about ±1.8e308)"},
		{"-1e400", 0, "is outside the range of a 64-bit float (about ±1.8e308)"},
		{"3,5", 0, "is not a number"},
		{"abc", 0, "is not a number"},
		{"1.2.3", 0, "is not a number"},
		{"", 0, "is empty"},
		{"   ", 0, "is empty"},
		{"12 kg", 0, "is not a number"},
	} {
		got, p := parseNumber(c.cell)
		switch {
		case c.reason == "" && p != nil:
			t.Errorf("parseNumber(%q): unexpected problem %q", c.cell, p.reason)
		case c.reason != "" && (p == nil || p.reason != c.reason):
			t.Errorf("parseNumber(%q) = %v, %+v; want problem %q", c.cell, got, p, c.reason)
		case c.reason == "" && got != c.want && !(math.IsNaN(got) && math.IsNaN(c.want)):
			t.Errorf("parseNumber(%q) = %v, want %v", c.cell, got, c.want)
		}
	}
	// Only a comma that would make a number gets the decimal-comma hint.
	for cell, hint := range map[string]bool{"3,5": true, "1,234": true, "a,b": false, "3,5,1": false, "3.5,1": false} {
		if _, p := parseNumber(cell); p == nil || (p.hint != "") != hint {
			t.Errorf("parseNumber(%q): problem %+v, want hint %v", cell, p, hint)
		}
	}
}
