package stats

import "fmt"

// TieRule says which rank tied values receive. The zero value is invalid, so
// a forgotten setting is caught rather than silently defaulted.
type TieRule int

const (
	_          TieRule = iota
	TieAverage         // 1, 2.5, 2.5, 4 (midranks)
	TieMin             // 1, 2, 2, 4
	TieMax             // 1, 3, 3, 4
	TieDense           // 1, 2, 2, 3
	TieFirst           // 1, 2, 3, 4 (order of appearance)
)

// String returns the recipe word for the rule.
func (r TieRule) String() string {
	switch r {
	case TieAverage:
		return "average"
	case TieMin:
		return "min"
	case TieMax:
		return "max"
	case TieDense:
		return "dense"
	case TieFirst:
		return "first"
	}
	return fmt.Sprintf("TieRule(%d)", int(r))
}

// Alternative is the alternative hypothesis of a test of association. The
// zero value is invalid.
type Alternative int

const (
	_        Alternative = iota
	TwoSided             // association ≠ 0
	Greater              // association > 0
	Less                 // association < 0
)

// String returns the recipe word for the alternative.
func (a Alternative) String() string {
	switch a {
	case TwoSided:
		return "two-sided"
	case Greater:
		return "greater"
	case Less:
		return "less"
	}
	return fmt.Sprintf("Alternative(%d)", int(a))
}

// Measure names an association measure. The zero value is invalid. The
// Pearson measure is PearsonR, because Pearson is the function computing it;
// the Kendall family (KendallA … SomersDXY) is computed from PairCounts.
type Measure int

const (
	_         Measure = iota
	Spearman          // Spearman's rho: Pearson's r on ranks
	KendallB          // Kendall's tau-b, corrected for ties
	PearsonR          // Pearson's product-moment r on the raw values
	KendallA          // Kendall's tau-a: S over all pairs
	KendallC          // Stuart's tau-c: S scaled by the smaller number of categories
	Gamma             // Goodman and Kruskal's gamma: S over the untied pairs
	SomersDYX         // Somers' d with y dependent: S over the pairs untied on x
	SomersDXY         // Somers' d with x dependent: S over the pairs untied on y
)

// measureWords holds the recipe and table word of every Measure, in
// declaration order.
var measureWords = []struct {
	m    Measure
	word string
}{
	{Spearman, "spearman"},
	{KendallB, "kendall_b"},
	{PearsonR, "pearson"},
	{KendallA, "kendall_a"},
	{KendallC, "kendall_c"},
	{Gamma, "gamma"},
	{SomersDYX, "somers_d_yx"},
	{SomersDXY, "somers_d_xy"},
}

// String returns the measure's name as it appears in recipes and tables.
func (m Measure) String() string {
	for _, w := range measureWords {
		if w.m == m {
			return w.word
		}
	}
	return fmt.Sprintf("Measure(%d)", int(m))
}

// ParseMeasure returns the Measure whose String is s, and false when s names
// none (the match is exact: no case folding, no trimming).
func ParseMeasure(s string) (Measure, bool) {
	for _, w := range measureWords {
		if w.word == s {
			return w.m, true
		}
	}
	return 0, false
}

// Measures returns every valid Measure in declaration order, in a new slice.
func Measures() []Measure {
	ms := make([]Measure, len(measureWords))
	for i, w := range measureWords {
		ms[i] = w.m
	}
	return ms
}

// PMethod says how a p-value was obtained; the engine reports it in the
// result's p_method field. The zero value is invalid.
type PMethod int

const (
	_            PMethod = iota
	PExact               // the exact null distribution
	PEdgeworth           // an Edgeworth series approximation
	PT                   // Student's t approximation (CorrelationT)
	PNormal              // the normal approximation (KendallNormal)
	PPermutation         // a Monte Carlo permutation distribution
)

// String returns the method's name as it appears in result tables.
func (m PMethod) String() string {
	switch m {
	case PExact:
		return "exact"
	case PEdgeworth:
		return "edgeworth"
	case PT:
		return "t"
	case PNormal:
		return "normal"
	case PPermutation:
		return "permutation"
	}
	return fmt.Sprintf("PMethod(%d)", int(m))
}
