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

// intervalText formats an interval cell as "[lo, hi]", each bound as fixed
// formats it. c must not be null.
func intervalText(c Cell, digits int) string {
	return "[" + fixed(c.f, digits) + ", " + fixed(c.hi, digits) + "]"
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
func jsonNumber(f float64) string { return string(appendJSONNumber(nil, f)) }

// appendJSONNumber appends jsonNumber(f) to b.
func appendJSONNumber(b []byte, f float64) []byte {
	if f == 0 {
		return append(b, '0')
	}
	abs := math.Abs(f)
	if abs >= 1e-6 && abs < 1e21 {
		return strconv.AppendFloat(b, f, 'f', -1, 64)
	}
	start := len(b)
	b = strconv.AppendFloat(b, f, 'e', -1, 64)
	// Shorten a two-digit negative exponent: 1e-07 becomes 1e-7.
	if s := b[start:]; len(s) >= 4 && s[len(s)-4] == 'e' && s[len(s)-3] == '-' && s[len(s)-2] == '0' {
		b[len(b)-2] = b[len(b)-1]
		b = b[:len(b)-1]
	}
	return b
}

// levelDigits is how many significant digits Percent keeps of 100·level.
// Multiplying by 100 can leave an error in the last bit or two of a float64
// (which holds 15–17 significant digits), as in 100 × 0.57 =
// 56.99999999999999; 10 digits drop that noise and still keep any level a
// person writes, such as 0.9999 or 0.99995, exactly.
const levelDigits = 10

// Percent returns a confidence level such as 0.95 as the percentage a column
// header shows, without the percent sign: "95". It rounds 100·level to 10
// significant digits and prints the result with no trailing zeros, in plain
// decimal notation: 0.57 gives "57", 0.975 "97.5", 0.999 "99.9". NaN gives
// "NaN" and infinities "Inf" and "-Inf"; Percent does not check that level
// lies in (0, 1).
func Percent(level float64) string {
	if math.IsNaN(level) {
		return "NaN"
	}
	pct := 100 * level
	if math.IsInf(pct, 0) {
		return fixed(pct, -1)
	}
	pct, err := strconv.ParseFloat(strconv.FormatFloat(pct, 'g', levelDigits, 64), 64)
	if err != nil {
		panic("render: reparse a formatted float: " + err.Error()) // FormatFloat's output always parses
	}
	return dropNegativeZero(strconv.FormatFloat(pct, 'f', -1, 64))
}
