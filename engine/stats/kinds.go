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
// Pearson measure is PearsonR, because Pearson is the function computing it.
type Measure int

const (
	_         Measure = iota
	Spearman          // Spearman's rho: Pearson's r on ranks
	KendallB          // Kendall's tau-b, corrected for ties
	PearsonR          // Pearson's product-moment r on the raw values
	KendallA          // Kendall's tau-a: ties stay in the denominator
	KendallC          // Stuart's tau-c
	Gamma             // Goodman and Kruskal's gamma
	SomersDYX         // Somers' d with y dependent
	SomersDXY         // Somers' d with x dependent
)

// String returns the measure's name as it appears in recipes and tables.
func (m Measure) String() string {
	switch m {
	case Spearman:
		return "spearman"
	case KendallB:
		return "kendall_b"
	case PearsonR:
		return "pearson"
	case KendallA:
		return "kendall_a"
	case KendallC:
		return "kendall_c"
	case Gamma:
		return "gamma"
	case SomersDYX:
		return "somers_d_yx"
	case SomersDXY:
		return "somers_d_xy"
	}
	return fmt.Sprintf("Measure(%d)", int(m))
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
