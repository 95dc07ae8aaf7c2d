package engine

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"concordat/engine/stats"
	"concordat/recipe"
)

// sample is one (test, pair, group) cell of work: the paired, complete
// observations (and controls, when the test has any) and how many rows of
// the group were dropped and why.
type sample struct {
	x, y      []float64
	z         [][]float64 // one slice per control, same length as x
	dropped   int
	dropNote  string // why rows were dropped, "" when none were
	groupNote string // about the group itself (rows without a group label), or ""
}

// minPairs is the smallest n for which any correlation here is defined: with
// two pairs every correlation is ±1 and its t statistic has 0 df (common
// practice).
const minPairs = 3

// smallN is the sample size below which a test of association has little
// power whatever its p-value method: at n = 9 a two-sided 5% test of rho
// needs |rho| ≥ 0.70 (the exact null; Zar 1972, Table 1), so a moderate
// association cannot reach significance. Below it an asymptotic p-value can
// also be far from the exact one (common practice).
const smallN = 10

// cellEnv is what measuring one cell needs beyond the recipe and its
// sample: cancellation, the seed the resampling streams derive from, the
// workers a resampling may use, and the progress counter.
type cellEnv struct {
	ctx      context.Context
	seed     int64
	workers  int
	progress *progress // nil: no progress shown
}

// cellInput is one cell: where its results go in the tables and its data.
// px and py are the shared columns the sample is a view of, or nil when the
// sample is the pair's own copy.
type cellInput struct {
	test   *recipe.Test
	pair   recipe.Pair
	group  string
	s      sample
	px, py *column
	sh     *shared  // the shared columns px and py belong to
	dst    []Result // where the results go: one per measure of the test
}

// measureSample computes every measure of the cell's test on its sample,
// in the order the recipe lists them. The p-value method of each result
// is chosen by pMethodFor; resampling (permutations, bootstrap) uses
// streams keyed by the seed, the test, the pair and the group, so neither
// the worker count nor the order of the cells can change a number.
func measureSample(env cellEnv, c cellInput) error {
	t, pair, s := c.test, c.pair, c.s
	n := len(s.x)
	k := len(s.z)
	level := t.Interval.Level

	shareX, shareY := math.NaN(), math.NaN()
	switch {
	case c.px != nil:
		// One column after the other (a no-op when another cell has
		// prepared them already): a long column's sort runs on two
		// goroutines itself, and preparing both at once would hold two
		// sets of sort scratch (stats.RankTies).
		c.px.prepare(t.Ties.Rule)
		c.py.prepare(t.Ties.Rule)
		shareX, shareY = c.px.share, c.py.share
	case n > 0:
		shareX, shareY = stats.TieShare(s.x), stats.TieShare(s.y)
	}
	tied := shareX > 0 || shareY > 0

	// Notes every result of the cell shares.
	base := commonNotes(s)
	defined := n >= minPairs
	if !defined {
		base = append(base, fmt.Sprintf("n = %d is too few pairs: at least %d are needed, so the estimate is undefined", n, minPairs))
	} else {
		ds := t.Pairing.Dataset
		constX, constY := constant, constant
		if c.px != nil {
			// Shared columns know it already: no scan per pair.
			constX, constY = c.px.isConstant, c.py.isConstant
		}
		if cst, v := constX(s.x); cst {
			base = append(base, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.X, n, valueText(ds, pair.X, v)))
			defined = false
		}
		if cst, v := constY(s.y); cst {
			base = append(base, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.Y, n, valueText(ds, pair.Y, v)))
			defined = false
		}
		if n-2-k < 1 {
			base = append(base, fmt.Sprintf("n = %d is too few pairs for %d %s: a partial correlation needs n > %d", n, k, pluralWord(k, "control", "controls"), k+2))
			defined = false
		}
	}
	if defined {
		base = append(base, monotoneNote(c)...)
	}

	// The distinct arrangements of the values, for the routes that may
	// enumerate: from the shared columns' counts when there are any.
	arrangements := func() float64 {
		if c.px != nil {
			return min(c.px.arrangementCount(), c.py.arrangementCount())
		}
		return stats.Arrangements(s.x, s.y)
	}

	results := c.dst
	choices := make([]pChoice, len(t.Measures))
	var counts *stats.PairCounts // Kendall's pair counts, computed once
	for i, m := range t.Measures {
		r := Result{
			Test: t.Name, X: pair.X, Y: pair.Y, Group: c.group, Measure: m.String(),
			N: n, NDropped: s.dropped, Alternative: t.Alternative.String(),
			Estimate: math.NaN(), PValue: math.NaN(), CILow: math.NaN(), CIHigh: math.NaN(),
			CILevel: level, PAdjusted: math.NaN(), AdjustMethod: t.Adjust.String(),
			TiesX: shareX, TiesY: shareY, Controls: nonNilStrings(t.Controls),
			CIMethod: intervalName(t, m),
		}
		r.Warnings = slices.Clone(base)
		if defined {
			choices[i] = pMethodFor(t, m, s, tied, arrangements)
			fromMatrix := false
			if c.px != nil && k == 0 {
				v, ok, err := c.sh.matrixValue(env, t, m, pair)
				if err != nil {
					return err
				}
				if ok {
					r.Estimate, fromMatrix = v, true
				}
			}
			switch {
			case fromMatrix:
			case m == stats.Spearman && k > 0:
				r.Estimate = stats.PartialSpearman(s.x, s.y, s.z, t.Ties.Rule)
			case m == stats.Spearman && c.px != nil:
				// SpearmanRho on the columns' shared ranks.
				r.Estimate = stats.SpearmanRanks(c.px.ranks, c.py.ranks)
			case m == stats.Spearman:
				r.Estimate = stats.SpearmanRho(s.x, s.y, t.Ties.Rule)
			case m == stats.PearsonR && (hasInf(s.x) || hasInf(s.y) || anyInf(s.z)):
				r.Warnings = append(r.Warnings, "infinite values present: Pearson's r is undefined (rank measures treat them as extreme values)")
			case m == stats.PearsonR && k > 0:
				r.Estimate = stats.PartialCorrelation(s.x, s.y, s.z)
			case m == stats.PearsonR:
				r.Estimate = stats.Pearson(s.x, s.y)
			default: // the Kendall family, on the values themselves
				// Kendall-type measures depend only on the order of the
				// values, so they are computed on them directly: breaking
				// ties by a rank rule (such as "first") would hide the
				// very ties they correct for.
				if counts == nil {
					pc := stats.CountPairs(s.x, s.y)
					counts = &pc
				}
				r.Estimate = counts.Estimate(m)
			}
			r.Warnings = append(r.Warnings, tieWarnings(t, m, c, shareX, shareY, counts, choices[i])...)
			if k > 0 && math.IsNaN(r.Estimate) && !slices.ContainsFunc(r.Warnings, func(w string) bool { return strings.HasPrefix(w, "infinite") }) {
				r.Warnings = append(r.Warnings, fmt.Sprintf(
					"the partial correlation is undefined: after removing %s, nothing of %s or %s is left to correlate (a control determines its ranks or values, or the controls are collinear)",
					joinAnd(t.Controls), pair.X, pair.Y))
			}
		}
		results[i] = r
	}

	if err := pValues(env, c, results, choices, counts); err != nil {
		return err
	}
	if err := intervals(env, c, results); err != nil {
		return err
	}

	for i := range results {
		r := &results[i]
		m := t.Measures[i]
		if !math.IsNaN(r.Estimate) {
			r.Warnings = append(r.Warnings, choices[i].notes...)
			r.Warnings = append(r.Warnings, inferenceWarnings(t, m, r, choices[i], s, tied)...)
		} else {
			r.PValue, r.CILow, r.CIHigh = math.NaN(), math.NaN(), math.NaN()
			r.pFamily = math.NaN()
			if len(r.Warnings) == len(commonNotes(s)) {
				// Every undefined value says why; this is the catch-all.
				r.Warnings = append(r.Warnings, "the estimate is undefined for these data")
			}
		}
		if !math.IsNaN(r.PValue) {
			r.PMethod = choices[i].method.String()
		}
		if math.IsNaN(r.CILow) && math.IsNaN(r.CIHigh) {
			// No interval: no method and no level to report either.
			r.CIMethod, r.CILevel = "", math.NaN()
		}
		if t.Adjust == stats.AdjustNone {
			// No family adjustment: the adjusted p-value is the p-value.
			r.PAdjusted = r.PValue
		}
		if r.Warnings == nil {
			r.Warnings = []string{}
		}
	}
	return nil
}

// commonNotes are the notes every result of a sample carries whatever the
// measure (group and deletion notes), so that the catch-all for undefined
// estimates fires only when nothing else explains them.
func commonNotes(s sample) []string {
	var w []string
	if s.groupNote != "" {
		w = append(w, s.groupNote)
	}
	if s.dropNote != "" {
		w = append(w, s.dropNote)
	}
	return w
}

// monotoneNote warns when the relation between x and y is clearly not
// monotone (a U or an inverted U), so that a coefficient near 0 is not read
// as "no relation". The criterion is stats.CheckMonotone's.
func monotoneNote(c cellInput) []string {
	var mc stats.MonotoneCheck
	if c.px != nil {
		mc = c.px.prepare(c.test.Ties.Rule).mono.CheckY(c.py.prepare(c.test.Ties.Rule).monoY)
	} else {
		mc = stats.CheckMonotone(monotoneSubsample(c.s.x), monotoneSubsample(c.s.y))
	}
	if !mc.Applicable || !mc.NonMonotone {
		return nil
	}
	return []string{fmt.Sprintf(
		"the relation is not monotone: the best monotone fit explains %.0f%% of the rank variance of y, a fit that can bend %.0f%%; a rank correlation understates such a relation (e.g. a U shape), so look at the scatter before reading it",
		100*mc.R2Monotone, 100*mc.R2Free)}
}

// pFloor is the smallest p-value the result record states: below it the
// methods here do not resolve the value (a t or normal tail this small is
// dominated by the approximation's error, an exact tail may underflow), so
// a smaller p is written as this bound with a note, never as 0.
const pFloor = 1e-300

// inferenceWarnings flags p-values and intervals that cannot be taken at
// face value, and applies the record's rules to them: an asymptotic
// p-value of a rank measure that falls below the smallest p-value any exact
// test could give at this n is withheld (NaN), because no exact analysis
// could support it; a p-value below pFloor is written as that bound; a
// zero-width interval is left out. The p-value as computed, before any of
// this, stays in r.pFamily for the multiplicity adjustment.
func inferenceWarnings(t *recipe.Test, m stats.Measure, r *Result, pc pChoice, s sample, tied bool) []string {
	var w []string
	r.pFamily = r.PValue
	if math.Abs(r.Estimate) == 1 {
		w = append(w, "a perfect association in the sample")
	}
	asymptotic := pc.method == stats.PT || pc.method == stats.PNormal
	switch {
	case r.N >= smallN:
	case asymptotic && m != stats.PearsonR && len(t.Controls) == 0 && !math.IsNaN(r.PValue):
		floor := smallestP(t, m, s, t.Alternative)
		if r.PValue < floor {
			w = append(w, fmt.Sprintf("the %s approximation gives p = %.2g, below %.2g, the smallest exact p-value attainable with these %d pairs: the p-value is withheld (p_value = \"auto\" or \"exact\" gives the exact one)",
				pc.method, r.PValue, floor, r.N))
			r.PValue = math.NaN()
		} else {
			w = append(w, fmt.Sprintf("n = %d is small: the %s approximation to the p-value can differ noticeably from the exact one (p_value = \"auto\" or \"exact\" gives the exact one)", r.N, pc.method))
		}
	case len(t.Controls) == 0 && smallestP(t, m, s, t.Alternative) > 0.05:
		w = append(w, fmt.Sprintf("with n = %d no test of these data can reach p < 0.05: the smallest attainable p-value is %.2g",
			r.N, smallestP(t, m, s, t.Alternative)))
	case pc.method == stats.PExact:
		w = append(w, fmt.Sprintf("n = %d is small: the p-value is exact, but the test has little power, so only a strong association can reach significance", r.N))
	default:
		w = append(w, fmt.Sprintf("n = %d is small: the test has little power, so only a strong association can reach significance", r.N))
	}
	if r.PValue < pFloor {
		w = append(w, fmt.Sprintf("p is below %.0e, the smallest p-value the record states: the bound %.0e is written", pFloor, pFloor))
		r.PValue = pFloor
	}
	interval := !math.IsNaN(r.CILow) || !math.IsNaN(r.CIHigh)
	switch {
	case interval && r.CILow == r.CIHigh:
		why := "its standard error is 0"
		if math.Abs(r.Estimate) == 1 {
			why = "the sample association is perfect"
		}
		w = append(w, fmt.Sprintf("no interval: the %s interval has zero width here (%s), which says nothing about the population value", r.CIMethod, why))
		r.CILow, r.CIHigh = math.NaN(), math.NaN()
	case !interval && t.Interval.Method == recipe.IntervalFisher:
		// (A bootstrap interval that failed has said why already.)
		w = append(w, intervalGap(t, m, r))
	}
	return w
}

// intervalGap says why a result with an estimate has no Fisher-type
// interval.
func intervalGap(t *recipe.Test, m stats.Measure, r *Result) string {
	if need := intervalMinN(t, m); r.N < need {
		return fmt.Sprintf("n = %d is too few for the %s interval (needs n ≥ %d)", r.N, r.CIMethod, need)
	}
	return fmt.Sprintf("the %s interval is undefined here: its standard error cannot be estimated from these data", r.CIMethod)
}

// tieWarnings says what ties do to measure m on this sample. For
// Spearman's rho: columns with more tied values than the ties block's
// max_share (suggesting Kendall's tau-b when the test does not report it
// and can), and a tie rule other than midranks. For gamma and tau-a, which
// treat tied pairs in ways a reader may not expect: how many pairs that is.
func tieWarnings(t *recipe.Test, m stats.Measure, c cellInput, sx, sy float64, counts *stats.PairCounts, pc pChoice) []string {
	pair, s := c.pair, c.s
	n := len(s.x)
	heavy := sx > t.Ties.MaxShare || sy > t.Ties.MaxShare
	var w []string
	switch m {
	case stats.Spearman:
		// Kendall's measures have no partial form, so with controls there
		// is nothing to suggest.
		suggest := !slices.Contains(t.Measures, stats.KendallB) && len(t.Controls) == 0
		for _, side := range []struct {
			name  string
			share float64
			col   *column
		}{{pair.X, sx, c.px}, {pair.Y, sy, c.py}} {
			if side.share <= t.Ties.MaxShare {
				continue
			}
			note := func() string {
				tied := int(math.Round(side.share * float64(n)))
				// Round down so that a share just under 1 never reads 100%.
				msg := fmt.Sprintf("%d of %d %s values (%.0f%%) equal another value (above max_share %g)",
					tied, n, side.name, math.Floor(100*side.share), t.Ties.MaxShare)
				if suggest {
					msg += "; Kendall's tau-b is often preferred when ties are this many"
				}
				return msg
			}
			if side.col != nil {
				// The same for every pair of a shared column: written once.
				side.col.tieOnce.Do(func() { side.col.tieNote = note() })
				w = append(w, side.col.tieNote)
			} else {
				w = append(w, note())
			}
		}
		if t.Ties.Rule != stats.TieAverage && (sx > 0 || sy > 0) {
			msg := fmt.Sprintf("ranks use the %q tie rule: with ties this is not Spearman's rho with midranks", t.Ties.Rule.String())
			switch pc.route {
			case routeEnumerate, routeMonteCarlo:
				msg += "; its p-value permutes these ranks, but its interval assumes average ranks"
			default:
				msg += ", and its p-value and interval assume average ranks"
			}
			w = append(w, msg)
		}
	case stats.Gamma, stats.KendallA:
		if counts == nil || !heavy {
			break
		}
		all := counts.Pairs()
		tiedPairs := counts.TiedX + counts.TiedY - counts.TiedXY
		share := math.Floor(100 * float64(tiedPairs) / float64(all))
		if m == stats.Gamma {
			w = append(w, fmt.Sprintf("gamma leaves out the %d of %d pairs (%.0f%%) tied in %s or %s, so with this many ties it can be much larger in size than tau-b, which counts them", tiedPairs, all, share, pair.X, pair.Y))
		} else {
			w = append(w, fmt.Sprintf("tau-a keeps the %d of %d pairs (%.0f%%) tied in %s or %s in its denominator, so here it cannot exceed %.3f in size; tau-b corrects for ties", tiedPairs, all, share, pair.X, pair.Y, float64(all-tiedPairs)/float64(all)))
		}
	}
	return w
}

func constant(v []float64) (bool, float64) {
	if len(v) == 0 {
		return false, 0
	}
	for _, x := range v[1:] {
		if x != v[0] {
			return false, 0
		}
	}
	return true, v[0]
}

func hasInf(v []float64) bool {
	for _, x := range v {
		if math.IsInf(x, 0) {
			return true
		}
	}
	return false
}

func anyInf(z [][]float64) bool {
	return slices.ContainsFunc(z, hasInf)
}

func nonNilStrings(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

func pluralWord(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// valueText shows a value as the data wrote it: an ordinal code as its
// label, a number in shortest form.
func valueText(ds *recipe.Dataset, column string, v float64) string {
	if lv := ds.Levels[column]; v == math.Trunc(v) && v >= 1 && int(v) <= len(lv) {
		return fmt.Sprintf("%q", lv[int(v)-1])
	}
	return fmt.Sprintf("%g", v)
}

// isKendall reports whether m is one of the measures computed from
// Kendall's pair counts.
func isKendall(m stats.Measure) bool {
	switch m {
	case stats.KendallA, stats.KendallB, stats.KendallC, stats.Gamma, stats.SomersDYX, stats.SomersDXY:
		return true
	}
	return false
}

// joinAnd writes "a", "a and b", "a, b and c".
func joinAnd(items []string) string {
	switch len(items) {
	case 0:
		return ""
	case 1:
		return items[0]
	}
	return strings.Join(items[:len(items)-1], ", ") + " and " + items[len(items)-1]
}
