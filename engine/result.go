package engine

// Result is one row of the result record contract (DESIGN.md): one test ×
// pair × group × measure. A float64 field holding NaN is undefined and is
// written as JSON null (empty in CSV, "—" in Markdown); Warnings then says why.
type Result struct {
	Test         string   `json:"test"`
	X            string   `json:"x"`
	Y            string   `json:"y"`
	Group        string   `json:"group"` // "all" when the pairing has no `by`
	Measure      string   `json:"measure"`
	N            int      `json:"n"`         // pairs used
	NDropped     int      `json:"n_dropped"` // rows of the group left out by the missing rule
	Estimate     float64  `json:"estimate"`
	Alternative  string   `json:"alternative"`
	PValue       float64  `json:"p_value"`
	PMethod      string   `json:"p_method"` // exact | edgeworth | t | normal | permutation
	CILow        float64  `json:"ci_low"`
	CIHigh       float64  `json:"ci_high"`
	CILevel      float64  `json:"ci_level"`
	CIMethod     string   `json:"ci_method"`
	PAdjusted    float64  `json:"p_adjusted"`
	AdjustMethod string   `json:"adjust_method"`
	TiesX        float64  `json:"ties_x"` // share of x values that share their value with another
	TiesY        float64  `json:"ties_y"`
	Warnings     []string `json:"warnings"`
	Controls     []string `json:"controls"` // columns partialled out; empty for a plain correlation

	// pFamily is the p-value as computed, before it was withheld or
	// bounded: the multiplicity adjustment counts every result that has
	// one, so withholding a p-value cannot shrink the family.
	pFamily float64
}

// recordColumns are the result record's keys in contract order. Add keys at
// the end; never rename.
var recordColumns = []string{
	"test", "x", "y", "group", "measure", "n", "n_dropped", "estimate",
	"alternative", "p_value", "p_method", "ci_low", "ci_high", "ci_level",
	"ci_method", "p_adjusted", "adjust_method", "ties_x", "ties_y", "warnings",
	"controls",
}
