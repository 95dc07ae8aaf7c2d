package render

import (
	"math"
	"strconv"
	"strings"
)

func itoa(i int64) string { return strconv.FormatInt(i, 10) }

// fixed formats f with digits decimals ('f' format), or with the fewest
// digits that read back as f when digits < 0. It never returns a negative
// zero such as "-0.000": a value that rounds to zero prints without a sign.
// Infinities print as "Inf" and "-Inf" (which strconv.ParseFloat accepts).
// f must not be NaN.
func fixed(f float64, digits int) string {
	if math.IsInf(f, 1) {
		return "Inf"
	}
	if math.IsInf(f, -1) {
		return "-Inf"
	}
	var s string
	if digits < 0 {
		s = strconv.FormatFloat(f, 'g', -1, 64)
	} else {
		s = strconv.FormatFloat(f, 'f', digits, 64)
	}
	return dropNegativeZero(s)
}

// dropNegativeZero removes the sign of a formatted number whose digits are
// all zero ("-0", "-0.000", "-0e+00").
func dropNegativeZero(s string) string {
	if !strings.HasPrefix(s, "-") {
		return s
	}
	mantissa := s[1:]
	if i := strings.IndexAny(mantissa, "eE"); i >= 0 {
		mantissa = mantissa[:i]
	}
	if strings.Trim(mantissa, "0.") == "" {
		return s[1:]
	}
	return s
}

// jsonNumber formats a finite f as the shortest JSON number that reads back
// as f exactly. It uses plain decimal notation for magnitudes in [1e-6, 1e21)
// and exponent notation outside (as JavaScript and encoding/json do), and
// writes negative zero as 0.
func jsonNumber(f float64) string {
	if f == 0 {
		return "0"
	}
	abs := math.Abs(f)
	if abs >= 1e-6 && abs < 1e21 {
		return strconv.FormatFloat(f, 'f', -1, 64)
	}
	s := strconv.FormatFloat(f, 'e', -1, 64)
	// Shorten a two-digit negative exponent: 1e-07 becomes 1e-7.
	if n := len(s); n >= 4 && s[n-4] == 'e' && s[n-3] == '-' && s[n-2] == '0' {
		s = s[:n-2] + s[n-1:]
	}
	return s
}
