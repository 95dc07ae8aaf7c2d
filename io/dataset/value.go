package dataset

import (
	"errors"
	"math"
	"strconv"
	"strings"
)

var nan = math.NaN()

// cellProblem says why a cell cannot be read; the reader adds the position.
type cellProblem struct {
	reason string
	hint   string
}

// parseNumber reads a Numeric cell that is not a missing token, following
// the rules in the package documentation. NaN in any spelling is returned
// as NaN (missing).
func parseNumber(cell string) (float64, *cellProblem) {
	s := trimBlanks(cell)
	if s == "" {
		return 0, &cellProblem{
			reason: "is empty",
			hint:   `if empty cells mean "no value", add "" to the dataset's missing tokens`,
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err == nil {
		return v, nil
	}
	if errors.Is(err, strconv.ErrRange) && math.IsInf(v, 0) {
		return 0, &cellProblem{reason: "is outside the range of a 64-bit float (about ±1.8e308)"}
	}
	p := &cellProblem{reason: "is not a number"}
	if strings.Count(s, ",") == 1 && !strings.Contains(s, ".") {
		if _, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64); err == nil {
			p.hint = `it looks like a decimal comma (or a thousands separator); write numbers with "." as the decimal point and no grouping, e.g. 3.5`
		}
	}
	return 0, p
}

// trimBlanks removes surrounding ASCII spaces and tabs.
func trimBlanks(s string) string {
	i, j := 0, len(s)
	for i < j && (s[i] == ' ' || s[i] == '\t') {
		i++
	}
	for j > i && (s[j-1] == ' ' || s[j-1] == '\t') {
		j--
	}
	return s[i:j]
}
