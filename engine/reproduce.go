package engine

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/hashicorp/hcl/v2"

	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/recipe"
)

// This file compares the values a paper printed (recipe `published`
// blocks) with the results of the run, and for each value that does not
// reproduce, recomputes the cell under the conventions a published analysis
// may have used instead, to say which of them reproduce it.

// Outcome is what the comparison of one printed value found. The zero value
// is invalid.
type Outcome int

const (
	_             Outcome = iota
	Matched               // the recomputed value agrees with the printed one
	NotMatched            // it does not
	NotComparable         // there is no recomputed value to compare (undefined or withheld)
)

// String returns the outcome as the report writes it.
func (o Outcome) String() string {
	switch o {
	case Matched:
		return "matched"
	case NotMatched:
		return "not matched"
	case NotComparable:
		return "not comparable"
	}
	return fmt.Sprintf("Outcome(%d)", int(o))
}

// Reproduction is the comparison of one published table with a run.
type Reproduction struct {
	Published *recipe.Published
	Values    []ReproducedValue // row by row; in a row: estimate, stars, p_value, n
}

// ReproducedValue is one printed value beside its recomputation.
type ReproducedValue struct {
	Row *recipe.PublishedRow
	// Value says which value: "estimate", "stars" (the marks after a
	// printed estimate, read through the legend), "p_value" or "n".
	Value   string
	Printed string // as written; for stars, the marks ("" for none)
	// Recomputed is the run's value that the printed one is compared
	// with: the estimate, the p-value (adjusted when the test adjusts),
	// or n; NaN when the run has none.
	Recomputed float64
	Outcome    Outcome
	// Reproduces lists, for a value that did not match, every convention
	// under which it does (in the order tried), each with the value it
	// then takes; empty when none does (or the value matched).
	Reproduces []string
	// Tried is how many conventions were tried for the value (0 when it
	// matched).
	Tried int
	// Note says why a value is not comparable; "" otherwise.
	Note string
}

// Counts returns how many printed values matched and how many there are.
func (rp *Reproduction) Counts() (matched, total int) {
	for _, v := range rp.Values {
		if v.Outcome == Matched {
			matched++
		}
	}
	return matched, len(rp.Values)
}

// Complete reports whether every printed value matched.
func (rp *Reproduction) Complete() bool {
	m, n := rp.Counts()
	return m == n
}

// Summary is the one-line result: "11 of 12 printed values reproduced".
func (rp *Reproduction) Summary() string {
	m, n := rp.Counts()
	s := fmt.Sprintf("%d of %s reproduced", m, plural(n, "printed value", "printed values"))
	nc := 0
	for _, v := range rp.Values {
		if v.Outcome == NotComparable {
			nc++
		}
	}
	if nc > 0 {
		s += fmt.Sprintf(" (%d not comparable)", nc)
	}
	return s
}

// maxReasons is how many conventions a value's diagnosis names; more are
// counted ("and 2 more").
const maxReasons = 3

// reproduce compares every published block of plan with the results.
// byTest holds each test's results; data and groupsOf are what the run
// read, for the recomputations of the diagnosis. A row whose group the
// data does not have is a diagnostic that points at the row.
func reproduce(ctx context.Context, plan *recipe.Plan, opts Options, byTest map[string][]Result, data map[string]*dataset.Table, groupsOf map[*recipe.Pairing][]group) ([]*Reproduction, error) {
	var out []*Reproduction
	var diags hcl.Diagnostics
	env := cellEnv{ctx: ctx, seed: plan.Seed, workers: opts.jobs()}
	for _, pb := range plan.Published {
		rp := &Reproduction{Published: pb}
		for _, row := range pb.Rows {
			t := row.Test
			results := byTest[t.Name]
			at := slices.IndexFunc(results, func(r Result) bool {
				return r.X == row.X && r.Y == row.Y && r.Group == row.Group && r.Measure == row.Measure.String()
			})
			groups := groupsOf[t.Pairing]
			if at < 0 {
				var names []string
				for _, g := range groups {
					names = append(names, g.name)
				}
				detail := fmt.Sprintf("The row prints group %q, which the data of test %q does not have.", row.Group, t.Name)
				if s := recipe.Suggest(row.Group, names); s != "" {
					detail += fmt.Sprintf(" Did you mean %q?", s)
				}
				detail += " Its groups are: " + quoteList(names) + "."
				diags = append(diags, &hcl.Diagnostic{Severity: hcl.DiagError, Summary: "Printed row matches no result",
					Detail: detail, Subject: row.DeclRange.Ptr()})
				continue
			}
			gi := slices.IndexFunc(groups, func(g group) bool { return g.name == row.Group })
			rc := &rowCheck{
				pb: pb, row: row, t: t, r: &results[at], env: env,
				tbl: data[t.Pairing.Dataset.Name], g: groups[gi],
				runs: map[runKey]Result{}, samples: map[recipe.MissingRule]sample{},
			}
			for _, r := range results {
				if r.Measure == row.Measure.String() {
					if r.X == row.X && r.Y == row.Y && r.Group == row.Group {
						rc.at = len(rc.family)
					}
					rc.family = append(rc.family, r.pFamily)
				}
			}
			vals, err := rc.compare()
			if err != nil {
				return nil, err
			}
			rp.Values = append(rp.Values, vals...)
		}
		out = append(out, rp)
	}
	if diags.HasErrors() {
		return nil, &DiagnosticsError{Diags: diags, Data: true}
	}
	return out, nil
}

// rowCheck compares one printed row with its result and diagnoses what
// does not match.
type rowCheck struct {
	pb  *recipe.Published
	row *recipe.PublishedRow
	t   *recipe.Test
	r   *Result // the run's result for the row
	env cellEnv
	tbl *dataset.Table
	g   group

	family []float64 // the p-values of the row's multiplicity family (the test's results of its measure), as computed
	at     int       // the row's place in family

	samples map[recipe.MissingRule]sample
	runs    map[runKey]Result
}

// outcome is what a convention (or the run itself) gives for a row: the
// estimate, the p-value as compared (adjusted when adjusting), n, and how
// the printed values are read.
type outcome struct {
	est, p   float64
	n, nAll  int // pairs used; rows of the group before deletion
	truncate bool
	nBefore  bool
}

// compare builds the row's values, and diagnoses those that did not match.
func (rc *rowCheck) compare() ([]ReproducedValue, error) {
	row, r := rc.row, rc.r
	var vals []ReproducedValue
	p := r.PValue
	if rc.t.Adjust != stats.AdjustNone {
		p = r.PAdjusted
	}
	if row.Estimate != nil {
		vals = append(vals, ReproducedValue{Row: row, Value: "estimate", Printed: row.Estimate.Text, Recomputed: r.Estimate})
		if len(rc.pb.Stars) > 0 {
			vals = append(vals, ReproducedValue{Row: row, Value: "stars", Printed: row.Estimate.Marks, Recomputed: p})
		}
	}
	if row.PValue != nil {
		vals = append(vals, ReproducedValue{Row: row, Value: "p_value", Printed: row.PValue.Text, Recomputed: p})
	}
	if row.N >= 0 {
		vals = append(vals, ReproducedValue{Row: row, Value: "n", Printed: row.NText, Recomputed: float64(r.N)})
	}
	base := outcome{est: r.Estimate, p: p, n: r.N, nAll: r.N + r.NDropped}
	need := false
	for i := range vals {
		v := &vals[i]
		v.Outcome = rc.check(v, base)
		if v.Outcome == NotComparable {
			v.Note = rc.whyNotComparable(v)
		}
		need = need || v.Outcome != Matched
	}
	if need {
		if err := rc.diagnose(vals); err != nil {
			return nil, err
		}
	}
	return vals, nil
}

// check compares value v with what outcome o gives for it.
func (rc *rowCheck) check(v *ReproducedValue, o outcome) Outcome {
	row := rc.row
	switch v.Value {
	case "estimate":
		if math.IsNaN(o.est) {
			return NotComparable
		}
		if o.truncate {
			return matchedIf(row.Estimate.Truncates(o.est))
		}
		return matchedIf(row.Estimate.Rounds(o.est))
	case "stars":
		if math.IsNaN(o.p) {
			return NotComparable
		}
		return matchedIf(rc.pb.MarksHold(row.Estimate.Marks, o.p))
	case "p_value":
		if math.IsNaN(o.p) {
			return NotComparable
		}
		pv := row.PValue
		switch pv.Kind {
		case recipe.PrintedRounded:
			if o.truncate {
				return matchedIf(pv.Truncates(o.p))
			}
			return matchedIf(pv.Rounds(o.p))
		case recipe.PrintedBelow, recipe.PrintedAbove:
			return matchedIf(pv.HoldsFor(o.p))
		case recipe.PrintedNotSignificant:
			return matchedIf(o.p >= rc.pb.NotSignificantBelow())
		case recipe.PrintedMarks:
			return matchedIf(rc.pb.MarksHold(pv.Marks, o.p))
		}
	case "n":
		if o.nBefore {
			return matchedIf(o.nAll == row.N)
		}
		return matchedIf(o.n == row.N)
	}
	panic("engine: unknown printed value " + v.Value)
}

func matchedIf(ok bool) Outcome {
	if ok {
		return Matched
	}
	return NotMatched
}

// whyNotComparable says why the run has no value for v.
func (rc *rowCheck) whyNotComparable(v *ReproducedValue) string {
	if math.IsNaN(rc.r.Estimate) {
		return "the estimate is undefined here (see the result's warnings)"
	}
	return "the run reports no p-value here (see the result's warnings)"
}

// A convention is one way in which a published analysis may have differed
// from the test as the recipe declares it. Zero fields mean "as run".
type convention struct {
	missing   recipe.MissingRule // the other deletion rule
	tie       stats.TieRule      // another tie rule (Spearman)
	noTies    bool               // rho by 1 − 6Σd²/(n(n²−1)) on midranks
	measure   stats.Measure      // another measure
	flipSides bool               // one-sided (in the estimate's direction) for two-sided, or the reverse
	pValue    recipe.PMethod     // another p-value method of the engine
	pVariant  pVariant           // a p-value method the engine does not offer
	adjust    stats.Adjustment   // another multiplicity adjustment, when setAdjust
	setAdjust bool
	truncate  bool // printed values truncated, not rounded
	nBefore   bool // n counts the group's rows before deletion
}

// pVariant is a p-value computation that concordat does not report but
// published analyses used.
type pVariant int

const (
	_           pVariant = iota
	pIgnoreTies          // the null distribution without ties, applied to tied data
	pContinuity          // the normal (Kendall) or t (Spearman) approximation with a continuity correction
)

// candidate is a convention with the dimension it changes, so that two
// changes combine only across dimensions.
type candidate struct {
	dim int
	c   convention
}

// The dimensions, in the order the diagnosis tries them.
const (
	dimDeletion = iota + 1
	dimTies
	dimMeasure
	dimSides
	dimPValue
	dimAdjust
	dimTruncate
	dimNBefore
)

// alternativeMeasures are the measures a table may have printed in place
// of the one the row names, tried in this order.
var alternativeMeasures = map[stats.Measure][]stats.Measure{
	stats.Spearman: {stats.PearsonR},
	stats.PearsonR: {stats.Spearman},
	stats.KendallB: {stats.KendallA, stats.KendallC},
	stats.KendallA: {stats.KendallB, stats.KendallC},
	stats.KendallC: {stats.KendallA, stats.KendallB},
}

// singles lists the single changes worth trying for this row, in a fixed
// order: deletion, tie rule (and the no-ties formula), measure, sides,
// p-value method (and continuity correction, untied null), adjustment,
// truncation, n before deletion.
func (rc *rowCheck) singles() []candidate {
	t, r, row := rc.t, rc.r, rc.row
	m := row.Measure
	var out []candidate
	add := func(dim int, c convention) { out = append(out, candidate{dim, c}) }

	if len(pairingColumns(t.Pairing)) > 2 { // with two columns the rules drop the same rows
		other := recipe.Listwise
		if t.Pairing.Missing == recipe.Listwise {
			other = recipe.Pairwise
		}
		add(dimDeletion, convention{missing: other})
	}
	tied := r.TiesX > 0 || r.TiesY > 0
	if m == stats.Spearman && tied {
		for _, rule := range []stats.TieRule{stats.TieAverage, stats.TieMin, stats.TieMax, stats.TieDense, stats.TieFirst} {
			if rule != t.Ties.Rule {
				add(dimTies, convention{tie: rule})
			}
		}
		if len(t.Controls) == 0 {
			add(dimTies, convention{noTies: true})
		}
	}
	for _, alt := range alternativeMeasures[m] {
		add(dimMeasure, convention{measure: alt})
	}
	add(dimSides, convention{flipSides: true})
	if len(t.Controls) == 0 && m != stats.PearsonR {
		for _, pm := range []recipe.PMethod{recipe.PExact, recipe.PAsymptotic} {
			if pm != t.PValue {
				add(dimPValue, convention{pValue: pm})
			}
		}
		sTest := m == stats.Spearman || isKendall(m) && m != stats.Gamma
		n := r.N
		if tied && (m == stats.Spearman && n <= stats.SpearmanEdgeworthMaxN || isKendall(m) && m != stats.Gamma && n <= stats.KendallExactMaxN) {
			add(dimPValue, convention{pVariant: pIgnoreTies})
		}
		if sTest {
			add(dimPValue, convention{pVariant: pContinuity})
		}
	}
	if len(rc.family) > 1 || t.Adjust != stats.AdjustNone {
		for _, a := range []stats.Adjustment{stats.AdjustNone, stats.Bonferroni, stats.Holm, stats.BH} {
			if a != t.Adjust {
				add(dimAdjust, convention{adjust: a, setAdjust: true})
			}
		}
	}
	if row.Estimate != nil || row.PValue != nil && row.PValue.Kind == recipe.PrintedRounded {
		add(dimTruncate, convention{truncate: true})
	}
	if row.N >= 0 && r.NDropped > 0 {
		add(dimNBefore, convention{nBefore: true})
	}
	return out
}

// compatible reports whether two single changes make sense together.
func compatible(a, b candidate) bool {
	if a.dim == b.dim || a.dim == dimNBefore || b.dim == dimNBefore {
		return false
	}
	has := func(d int) bool { return a.dim == d || b.dim == d }
	other := func(d int) candidate {
		if a.dim == d {
			return b
		}
		return a
	}
	switch {
	case has(dimAdjust):
		// The family's other p-values stay as run: only changes of how
		// this p-value is read combine with an adjustment.
		o := other(dimAdjust).dim
		return o == dimSides || o == dimTruncate
	case has(dimTies) && has(dimMeasure), has(dimMeasure) && has(dimPValue):
		return false
	case has(dimTies) && has(dimPValue):
		// The no-ties formula is not an engine measure: only the p-value
		// variants computed here apply to it.
		return !(a.c.noTies || b.c.noTies) || a.c.pValue == 0 && b.c.pValue == 0
	}
	return true
}

func merge(a, b convention) convention {
	c := a
	if b.missing != 0 {
		c.missing = b.missing
	}
	if b.tie != 0 {
		c.tie = b.tie
	}
	c.noTies = c.noTies || b.noTies
	if b.measure != 0 {
		c.measure = b.measure
	}
	c.flipSides = c.flipSides || b.flipSides
	if b.pValue != 0 {
		c.pValue = b.pValue
	}
	if b.pVariant != 0 {
		c.pVariant = b.pVariant
	}
	if b.setAdjust {
		c.adjust, c.setAdjust = b.adjust, true
	}
	c.truncate = c.truncate || b.truncate
	c.nBefore = c.nBefore || b.nBefore
	return c
}

// diagnose fills in, for each value that did not match, the conventions
// under which it does: single changes first, in their fixed order; when no
// single change reproduces a value, pairs of changes. A convention counts
// only if it also keeps every value of the row that matched as run.
func (rc *rowCheck) diagnose(vals []ReproducedValue) error {
	singles := rc.singles()
	var pairs []candidate
	for i, a := range singles {
		for _, b := range singles[i+1:] {
			if compatible(a, b) {
				pairs = append(pairs, candidate{c: merge(a.c, b.c)})
			}
		}
	}
	wasMatched := make([]bool, len(vals))
	for i := range vals {
		wasMatched[i] = vals[i].Outcome == Matched
	}
	differ := 0 // values of the row that did not match as run
	for i := range vals {
		if !wasMatched[i] {
			differ++
		}
	}
	type reason struct {
		text  string
		fixes int // differing values of the row the convention reproduces
	}
	found := make([][]reason, len(vals))
	for _, list := range [][]candidate{singles, pairs} {
		// The values still unexplained: pairs are tried only for those
		// that no single change reproduces.
		var open []int
		for i := range vals {
			if !wasMatched[i] && len(found[i]) == 0 {
				open = append(open, i)
				vals[i].Tried += len(list)
			}
		}
		if len(open) == 0 {
			break
		}
		for _, cand := range list {
			o, err := rc.eval(cand.c)
			if err != nil {
				return err
			}
			breaks := false
			for i := range vals {
				if wasMatched[i] && rc.check(&vals[i], o) != Matched {
					breaks = true
				}
			}
			if breaks {
				continue
			}
			fixes := 0
			for i := range vals {
				if !wasMatched[i] && rc.check(&vals[i], o) == Matched {
					fixes++
				}
			}
			for _, i := range open {
				if rc.check(&vals[i], o) == Matched {
					text := rc.explain(cand.c, &vals[i], o)
					if fixes == differ && differ > 1 {
						text += " — reproduces the whole row"
					}
					found[i] = append(found[i], reason{text, fixes})
				}
			}
		}
	}
	for i := range vals {
		// Conventions that reproduce more of the row's differences come
		// first; otherwise the order tried.
		slices.SortStableFunc(found[i], func(a, b reason) int { return b.fixes - a.fixes })
		for _, r := range found[i] {
			vals[i].Reproduces = append(vals[i].Reproduces, r.text)
		}
	}
	return nil
}

// ShortReasons returns the first conventions of v.Reproduces (at most
// three) and how many more there are, for readers.
func (v ReproducedValue) ShortReasons() ([]string, int) {
	if len(v.Reproduces) <= maxReasons {
		return v.Reproduces, 0
	}
	return v.Reproduces[:maxReasons], len(v.Reproduces) - maxReasons
}

// runKey identifies a recomputation by the engine: the settings that a
// convention can change.
type runKey struct {
	missing recipe.MissingRule
	tie     stats.TieRule
	measure stats.Measure
	alt     stats.Alternative
	pValue  recipe.PMethod
}

// eval recomputes the row's cell under convention c.
func (rc *rowCheck) eval(c convention) (outcome, error) {
	t := rc.t
	m := rc.row.Measure
	if c.measure != 0 {
		m = c.measure
	}
	missing := t.Pairing.Missing
	if c.missing != 0 {
		missing = c.missing
	}
	s := rc.sample(missing)
	n := len(s.x)
	o := outcome{n: n, nAll: n + s.dropped, truncate: c.truncate, nBefore: c.nBefore, est: math.NaN(), p: math.NaN()}
	alt := t.Alternative
	if c.flipSides && alt != stats.TwoSided {
		alt = stats.TwoSided
	}
	oneSided := c.flipSides && t.Alternative == stats.TwoSided

	if c.noTies {
		if n < minPairs {
			return o, nil
		}
		o.est = stats.SpearmanRhoD(s.x, s.y)
		if oneSided {
			alt = direction(o.est)
		}
		o.p = rc.variantP(c.pVariant, m, o.est, s, alt)
		o.p = rc.adjusted(c, o.p)
		return o, nil
	}
	res, err := rc.run(c, m, missing, alt, s)
	if err != nil {
		return o, err
	}
	o.est = res.Estimate
	if oneSided && !math.IsNaN(o.est) {
		alt = direction(o.est)
		if res, err = rc.run(c, m, missing, alt, s); err != nil {
			return o, err
		}
	}
	o.p = res.PValue
	if c.pVariant != 0 && !math.IsNaN(o.est) {
		o.p = rc.variantP(c.pVariant, m, o.est, s, alt)
	}
	o.p = rc.adjusted(c, o.p)
	return o, nil
}

// direction is the one-sided alternative in the direction of est.
func direction(est float64) stats.Alternative {
	if est < 0 {
		return stats.Less
	}
	return stats.Greater
}

// sample returns the row's pairs under a deletion rule.
func (rc *rowCheck) sample(missing recipe.MissingRule) sample {
	if s, ok := rc.samples[missing]; ok {
		return s
	}
	t := *rc.t
	p := *t.Pairing
	p.Missing = missing
	t.Pairing = &p
	s := pairUp(rc.tbl, &t, recipe.Pair{X: rc.row.X, Y: rc.row.Y}, rc.g.rows)
	rc.samples[missing] = s
	return s
}

// run measures the row's cell as the engine would under a test changed by
// convention c (the measure m, deletion, tie rule, alternative and p-value
// method), through the engine's own path (measureSample), so that each
// recomputation is exactly what a recipe with those settings would give.
// Its interval is Fisher-type, which the comparison does not use.
func (rc *rowCheck) run(c convention, m stats.Measure, missing recipe.MissingRule, alt stats.Alternative, s sample) (Result, error) {
	t := rc.t
	key := runKey{missing: missing, tie: t.Ties.Rule, measure: m, alt: alt, pValue: t.PValue}
	if c.tie != 0 {
		key.tie = c.tie
	}
	if c.pValue != 0 {
		key.pValue = c.pValue
	}
	if r, ok := rc.runs[key]; ok {
		return r, nil
	}
	t2 := *t
	p := *t.Pairing
	p.Missing = missing
	t2.Pairing = &p
	ties := *t.Ties
	ties.Rule = key.tie
	t2.Ties = &ties
	t2.Measures = []stats.Measure{m}
	t2.Alternative = alt
	t2.PValue = key.pValue
	t2.Interval = &recipe.Interval{Level: t.Interval.Level, Method: recipe.IntervalFisher, Resamples: t.Interval.Resamples, DeclRange: t.Interval.DeclRange}
	t2.Adjust = stats.AdjustNone
	dst := make([]Result, 1)
	err := measureSample(rc.env, cellInput{test: &t2, pair: recipe.Pair{X: rc.row.X, Y: rc.row.Y}, group: rc.g.name, s: s, dst: dst})
	if err != nil {
		return Result{}, err
	}
	rc.runs[key] = dst[0]
	return dst[0], nil
}

// variantP computes a p-value by a method the engine does not report.
func (rc *rowCheck) variantP(v pVariant, m stats.Measure, est float64, s sample, alt stats.Alternative) float64 {
	n := len(s.x)
	switch {
	case m == stats.Spearman && v == pContinuity:
		return stats.SpearmanTCorrected(est, n, alt)
	case m == stats.Spearman && v == pIgnoreTies && n <= stats.SpearmanExactMaxN:
		return stats.SpearmanExactP(est, n, alt)
	case m == stats.Spearman && v == pIgnoreTies && n <= stats.SpearmanEdgeworthMaxN:
		return stats.SpearmanEdgeworthP(est, n, alt)
	case m == stats.Spearman && v == 0:
		return stats.CorrelationT(est, n, alt)
	case isKendall(m) && v == pContinuity:
		return stats.KendallNormalCorrected(stats.CountPairs(s.x, s.y), alt)
	case isKendall(m) && v == pIgnoreTies && n <= stats.KendallExactMaxN:
		return untiedKendallP(stats.CountPairs(s.x, s.y).S(), n, alt)
	}
	return math.NaN()
}

// untiedKendallP is the exact p-value of S under the null distribution of
// untied data, for an S from tied data, which may lie between the values
// that distribution takes (they step by 2 from n(n−1)/2): a tail beyond a
// value it cannot take starts at the next value it can.
func untiedKendallP(s int64, n int, alt stats.Alternative) float64 {
	pairs := int64(n) * int64(n-1) / 2
	if (pairs-s)%2 != 0 {
		switch {
		case alt == stats.Greater, alt == stats.TwoSided && s >= 0:
			s++
		default:
			s--
		}
	}
	s = max(-pairs, min(pairs, s))
	return stats.KendallExactP(s, n, alt)
}

// adjusted is the p-value as the row compares it: after the test's
// adjustment, or the convention's. The family's other p-values stay as
// the run computed them.
func (rc *rowCheck) adjusted(c convention, p float64) float64 {
	method := rc.t.Adjust
	if c.setAdjust {
		method = c.adjust
	}
	if method == stats.AdjustNone || math.IsNaN(p) {
		return p
	}
	fam := slices.Clone(rc.family)
	fam[rc.at] = p
	return math.Max(stats.Adjust(fam, method)[rc.at], p)
}

// explain writes what convention c does to value v: "listwise deletion
// (0.4132, n = 198)".
func (rc *rowCheck) explain(c convention, v *ReproducedValue, o outcome) string {
	var parts []string
	switch v.Value {
	case "estimate":
		parts = append(parts, recomputedText(o.est, rc.row.Estimate.Decimals()+2))
	case "stars", "p_value":
		parts = append(parts, "p = "+pText(o.p))
	case "n":
		nn := o.n
		if o.nBefore {
			nn = o.nAll
		}
		parts = append(parts, "n = "+strconv.Itoa(nn))
	}
	if v.Value != "n" && o.n != rc.r.N {
		parts = append(parts, "n = "+strconv.Itoa(o.n))
	}
	return rc.describe(c) + " (" + strings.Join(parts, ", ") + ")"
}

// describe names a convention for a reader.
func (rc *rowCheck) describe(c convention) string {
	var parts []string
	if c.missing != 0 {
		parts = append(parts, c.missing.String()+" deletion")
	}
	if c.tie != 0 {
		parts = append(parts, fmt.Sprintf("the %q tie rule", c.tie.String()))
	}
	if c.noTies {
		parts = append(parts, "the no-ties formula 1 − 6Σd²/(n(n²−1)) on tied data")
	}
	if c.measure != 0 {
		parts = append(parts, measureNames[c.measure.String()]+" instead of "+measureNames[rc.row.Measure.String()])
	}
	if c.flipSides {
		if rc.t.Alternative == stats.TwoSided {
			parts = append(parts, "a one-sided p-value")
		} else {
			parts = append(parts, "a two-sided p-value")
		}
	}
	switch c.pValue {
	case recipe.PExact:
		parts = append(parts, "an exact p-value")
	case recipe.PAsymptotic:
		if isKendall(rc.row.Measure) {
			parts = append(parts, "the normal approximation to the p-value")
		} else {
			parts = append(parts, "Student's t approximation to the p-value")
		}
	}
	switch c.pVariant {
	case pIgnoreTies:
		parts = append(parts, "the p-value of the untied null distribution, ties ignored")
	case pContinuity:
		parts = append(parts, "a continuity correction")
	}
	if c.setAdjust {
		if c.adjust == stats.AdjustNone {
			parts = append(parts, "no multiplicity adjustment")
		} else {
			parts = append(parts, fmt.Sprintf("the %s adjustment over the test's %d %s results", adjustNames[c.adjust.String()], len(rc.family), rc.row.Measure))
		}
	}
	if c.truncate {
		parts = append(parts, "truncation instead of rounding")
	}
	if c.nBefore {
		parts = append(parts, "n counted before deletion")
	}
	return strings.Join(parts, " and ")
}

// recomputedText writes an estimate with d decimals (at least 3, at most
// 6).
func recomputedText(v float64, d int) string {
	if math.IsNaN(v) {
		return "undefined"
	}
	d = min(max(d, 3), 6)
	return strconv.FormatFloat(v, 'f', d, 64)
}

// pText writes a p-value with four decimals, or two significant digits
// below 0.0001.
func pText(p float64) string {
	switch {
	case math.IsNaN(p):
		return "none"
	case p > 0 && p < 1e-4:
		return strconv.FormatFloat(p, 'e', 1, 64)
	}
	return strconv.FormatFloat(p, 'f', 4, 64)
}
