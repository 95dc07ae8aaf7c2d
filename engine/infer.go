package engine

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"concordat/engine/stats"
	"concordat/recipe"
)

// pRoute is the computation behind one result's p-value.
type pRoute int

const (
	_                 pRoute = iota
	routeSpearmanNull        // the exact null of rho without ties (stats.SpearmanExactP)
	routeKendallNull         // the exact null of S without ties (stats.KendallExactP)
	routeEdgeworth           // the Edgeworth series for rho (stats.SpearmanEdgeworthP)
	routeT                   // Student's t (stats.CorrelationT)
	routePartialT            // Student's t with n − 2 − k df (stats.PartialT)
	routeNormal              // the normal approximation to S (stats.KendallNormal)
	routeEnumerate           // every distinct arrangement of y against x
	routeMonteCarlo          // random permutations, p = (b + 1)/(m + 1)
)

// minExceedances is the fewest permutations that must reach the observed
// statistic for auto to keep a Monte Carlo p-value: with b = 10 the
// estimate's relative standard error is about 1/√10 ≈ 30% (binomial; common
// practice), and below that the p-value mostly reflects the draw count.
const minExceedances = 10

// pChoice is how one result's p-value is computed, the method the result
// record reports, and any note the reader needs about the choice.
type pChoice struct {
	route  pRoute
	method stats.PMethod
	notes  []string
}

// autoPermutationMaxN is the largest n for which p_value = "auto" turns to
// Monte Carlo permutations when ties leave too many arrangements to
// enumerate. Small tied samples are where the t and normal approximations
// are least trustworthy and permutations cheapest. Measured here on
// five-level ordinal pairs (40 samples per n, p between 0.005 and 0.2,
// against 200 000 permutations): the t p-value of rho and the normal
// p-value of S were up to 11% and 14% off (relative) at n = 20–30, 8% and
// 10% at n = 50, but 4% and 5% at n = 80, about the Monte Carlo error of
// 10 000 draws there. Beyond n = 50 the tie-corrected approximations serve,
// and a matrix of thousands of pairs stays fast.
const autoPermutationMaxN = 50

// pMethodFor picks the p-value computation of measure m in test t for a
// sample s, tied when x or y holds equal values:
//
//   - auto: without ties, the exact null for rho up to
//     stats.SpearmanExactMaxN, then the Edgeworth series up to
//     stats.SpearmanEdgeworthMaxN (t where |rho| lies beyond the series'
//     reach, with a note), then t; the exact null of S for every
//     Kendall-type measure up to stats.KendallExactMaxN, then normal. With
//     ties, the exact conditional distribution (every distinct arrangement
//     of y against x) when there are at most stats.MaxEnumeration of them,
//     else Monte Carlo permutations up to autoPermutationMaxN pairs, else
//     t (rho) or normal (S). Pearson's r uses t, exact under bivariate
//     normality.
//   - exact: as auto where an exact method is available; elsewhere Monte
//     Carlo permutations, with a note, because an approximation would not
//     be what was asked for.
//   - asymptotic: t for rho and r, normal for S.
//   - permutation: Monte Carlo permutations, t.Permutations draws; when
//     there are no more distinct arrangements than draws, all of them are
//     enumerated instead and the p-value is exact.
//
// With controls every p-value is the partial correlation's t test.
//
// Every Kendall-type measure (tau-a, tau-b, tau-c, gamma, Somers' d) is
// tested through S = n_c − n_d: under independence with fixed margins each
// is S divided by a positive constant, except gamma, whose permutation
// distribution is enumerated or sampled on gamma itself.
//
// arr returns the number of distinct arrangements of the sample's values
// (stats.Arrangements), computed only when a route may enumerate.
func pMethodFor(t *recipe.Test, m stats.Measure, s sample, tied bool, arr func() float64) pChoice {
	n := len(s.x)
	if len(t.Controls) > 0 {
		return pChoice{route: routePartialT, method: stats.PT}
	}
	asymptotic := func() pChoice {
		if isKendall(m) {
			return pChoice{route: routeNormal, method: stats.PNormal}
		}
		return pChoice{route: routeT, method: stats.PT}
	}
	monteCarlo := pChoice{route: routeMonteCarlo, method: stats.PPermutation}
	enumerate := pChoice{route: routeEnumerate, method: stats.PExact}
	// The count of arrangements costs a sort of each column: only the
	// routes that can enumerate ask for it.
	arrangements := func() float64 {
		if m == stats.Spearman && t.Ties.Rule == stats.TieFirst {
			return arrangementsFor(t, m, s)
		}
		return arr()
	}
	if m == stats.Spearman && t.Ties.Rule == stats.TieFirst {
		// The "first" rule breaks every tie: the ranks are a permutation
		// of 1..n, so the untied null of rho applies exactly.
		tied = false
	}
	// exactUntied is the exact null without ties, when affordable.
	exactUntied := func() (pChoice, bool) {
		switch {
		case tied:
		case m == stats.Spearman && n <= stats.SpearmanExactMaxN:
			return pChoice{route: routeSpearmanNull, method: stats.PExact}, true
		case isKendall(m) && n <= stats.KendallExactMaxN:
			return pChoice{route: routeKendallNull, method: stats.PExact}, true
		}
		return pChoice{}, false
	}

	switch t.PValue {
	case recipe.PAsymptotic:
		return asymptotic()
	case recipe.PPermutation:
		if a := arrangements(); a <= float64(min(t.Permutations, stats.MaxEnumeration)) {
			enumerate.notes = []string{fmt.Sprintf(
				"the %.0f distinct arrangements of these data are no more than the %d permutations asked for, so all of them were enumerated and the p-value is exact",
				a, t.Permutations)}
			return enumerate
		}
		return monteCarlo
	case recipe.PAuto:
		if m == stats.PearsonR {
			return pChoice{route: routeT, method: stats.PT}
		}
		if c, ok := exactUntied(); ok {
			return c
		}
		switch {
		case !tied && m == stats.Spearman && n <= stats.SpearmanEdgeworthMaxN:
			return pChoice{route: routeEdgeworth, method: stats.PEdgeworth}
		case tied && arrangements() <= stats.MaxEnumeration:
			return enumerate
		case tied && n <= autoPermutationMaxN:
			return monteCarlo
		}
		return asymptotic()
	case recipe.PExact:
		if c, ok := exactUntied(); ok {
			return c
		}
		a := arrangements()
		if a <= stats.MaxEnumeration {
			return enumerate
		}
		why := fmt.Sprintf("n = %d", n)
		if tied {
			why += " with ties"
		}
		many := fmt.Sprintf("about %.2g", a)
		if math.IsInf(a, 1) {
			many = "more than 1e308"
		}
		monteCarlo.notes = []string{fmt.Sprintf(
			"an exact p-value is not affordable here (%s: %s distinct arrangements); it is estimated from %d random permutations as (b + 1)/(m + 1)",
			why, many, t.Permutations)}
		return monteCarlo
	}
	panic(fmt.Sprintf("engine: p-value method %v has no route", t.PValue))
}

// arrangementsFor is how many distinct arrangements an exact permutation
// test of m must visit. Under the "first" tie rule Spearman's ranks are
// all distinct and move with their values, so every one of the n!
// orderings counts.
func arrangementsFor(t *recipe.Test, m stats.Measure, s sample) float64 {
	if len(s.x) < minPairs {
		return math.Inf(1)
	}
	if m == stats.Spearman && t.Ties.Rule == stats.TieFirst {
		return math.Gamma(float64(len(s.x)) + 1)
	}
	return stats.Arrangements(s.x, s.y)
}

// pValues fills in the p-value of every result of a cell whose estimate is
// defined; counts are the sample's Kendall pair counts when already known,
// else nil. The permutation routes share one pass over the arrangements (or
// draws) for all the measures that take them.
func pValues(env cellEnv, c cellInput, results []Result, choices []pChoice, counts *stats.PairCounts) error {
	t, s := c.test, c.s
	n := len(s.x)
	alt := t.Alternative
	kendall := func() stats.PairCounts {
		if counts == nil {
			pc := stats.CountPairs(s.x, s.y)
			counts = &pc
		}
		return *counts
	}
	var enumerate, draw []int // indices of the results that take each route
	for i := range results {
		r := &results[i]
		if math.IsNaN(r.Estimate) {
			continue
		}
		switch choices[i].route {
		case routeSpearmanNull:
			r.PValue = stats.SpearmanExactP(r.Estimate, n, alt)
		case routeEdgeworth:
			r.PValue = stats.SpearmanEdgeworthP(r.Estimate, n, alt)
			if farTail(r.Estimate, alt) {
				if in, edgeP := stats.SpearmanEdgeworthReach(r.Estimate, n); !in {
					// Past the series' reach neither it nor t can be
					// trusted (t is 25–2000 times too small here), but
					// the exact tail is below the series' value at its
					// edge: report that bound, on the safe side.
					if alt == stats.TwoSided {
						edgeP = math.Min(1, 2*edgeP)
					}
					r.PValue = edgeP
					choices[i].notes = append(choices[i].notes, fmt.Sprintf(
						"rho = %.3f lies beyond the reach of the Edgeworth series at n = %d: the p-value written, %.2g, is the series' tail where it still holds, an upper bound; the exact p-value is smaller",
						r.Estimate, n, edgeP))
				}
			}
		case routeT:
			r.PValue = stats.CorrelationT(r.Estimate, n, alt)
		case routePartialT:
			r.PValue = stats.PartialT(r.Estimate, n, len(s.z), alt)
		case routeNormal:
			r.PValue = stats.KendallNormal(kendall(), alt)
		case routeKendallNull:
			r.PValue = stats.KendallExactP(kendall().S(), n, alt)
		case routeEnumerate:
			enumerate = append(enumerate, i)
		case routeMonteCarlo:
			draw = append(draw, i)
		default:
			panic(fmt.Sprintf("engine: unknown p-value route %d", choices[i].route))
		}
	}
	for _, batch := range []struct {
		idx   []int
		exact bool
	}{{enumerate, true}, {draw, false}} {
		if len(batch.idx) == 0 {
			continue
		}
		spec := stats.PermutationSpec{
			Rule: t.Ties.Rule, Alt: alt, Draws: t.Permutations,
			Key:      stats.NewStreamKey(env.seed, "permutation", t.Name, c.pair.X, c.pair.Y, c.group),
			Workers:  env.workers,
			Progress: env.progress.draws(),
		}
		for _, i := range batch.idx {
			spec.Measures = append(spec.Measures, t.Measures[i])
		}
		run := stats.PermutationTest
		if batch.exact {
			run = stats.ExactPermutationTest
		}
		res, err := run(env.ctx, s.x, s.y, spec)
		if errors.Is(err, stats.ErrTooManyArrangements) {
			// Enumeration was judged affordable but is not (a bug in
			// arrangementsFor): sample instead of failing the run.
			res, err = stats.PermutationTest(env.ctx, s.x, s.y, spec)
			for _, i := range batch.idx {
				choices[i] = pChoice{route: routeMonteCarlo, method: stats.PPermutation, notes: []string{fmt.Sprintf(
					"the arrangements of these data were too many to enumerate; the p-value is estimated from %d random permutations", t.Permutations)}}
			}
		}
		if err != nil {
			return err
		}
		for j, i := range batch.idx {
			r := &results[i]
			r.PValue = res.P[j]
			if batch.exact || math.IsNaN(r.PValue) {
				continue
			}
			// b of m draws reached the observed value: p = (b + 1)/(m + 1).
			b := int(math.Round(r.PValue*float64(res.Draws+1))) - 1
			switch {
			case b < minExceedances && t.PValue == recipe.PAuto:
				// Too few exceedances to estimate so small a p: auto
				// does not let the draw count cap it (a family
				// adjustment would then find nothing), and the
				// asymptotic approximation is closer in the far tail.
				mc := r.PValue
				if isKendall(t.Measures[i]) {
					r.PValue = stats.KendallNormal(kendall(), alt)
					choices[i] = pChoice{route: routeNormal, method: stats.PNormal}
				} else {
					r.PValue = stats.CorrelationT(r.Estimate, n, alt)
					choices[i] = pChoice{route: routeT, method: stats.PT}
				}
				choices[i].notes = []string{fmt.Sprintf(
					"only %d of %d random permutations reached the observed value, too few to estimate so small a p-value (the permutation estimate, %.2g, is little more than its floor 1/(m + 1)); the %s approximation is reported",
					b, res.Draws, mc, choices[i].method)}
			case b == 0:
				choices[i].notes = append(choices[i].notes, fmt.Sprintf(
					"no random permutation of %d reached the observed value: p = 1/(m + 1) = %.2g only bounds the p-value from above; more permutations resolve smaller p-values",
					res.Draws, r.PValue))
			}
		}
	}
	return nil
}

// smallestP is the smallest p-value an exact permutation test of measure m
// can give on this sample: the most extreme arrangement of y against x has
// probability 1/A among the A distinct arrangements (arrangementsFor), and
// a two-sided test adds its mirror image when that reaches the same |T|
// (always without ties; with ties only when the tie structure is
// symmetric, e.g. a binary x split 3/3). For rank statistics under
// independence (e.g. Hollander & Wolfe, Nonparametric Statistical Methods,
// 1973, ch. 8).
func smallestP(t *recipe.Test, m stats.Measure, s sample, alt stats.Alternative) float64 {
	least := 1 / arrangementsFor(t, m, s)
	if alt != stats.TwoSided || len(s.x) < minPairs {
		return least
	}
	xs, ys := slices.Clone(s.x), slices.Clone(s.y)
	slices.Sort(xs)
	slices.Sort(ys)
	up := estimate(t, m, xs, ys, nil)
	slices.Reverse(ys)
	down := estimate(t, m, xs, ys, nil)
	if math.Abs(math.Abs(up)-math.Abs(down)) <= 1e-12 {
		least *= 2
	}
	return math.Min(1, least)
}

// farTail reports whether alternative alt asks for the tail that rho lies
// in (the two-sided test always does), where a p-value can be tiny.
func farTail(rho float64, alt stats.Alternative) bool {
	switch alt {
	case stats.Greater:
		return rho > 0
	case stats.Less:
		return rho < 0
	}
	return true
}

// intervalName is the ci_method a result of measure m in test t reports.
func intervalName(t *recipe.Test, m stats.Measure) string {
	switch t.Interval.Method {
	case recipe.IntervalBootstrap:
		return "bootstrap"
	case recipe.IntervalBCa:
		return "bca"
	}
	switch m {
	case stats.Spearman:
		return "bonett-wright"
	case stats.PearsonR:
		return "fisher"
	case stats.KendallB:
		return "fieller"
	}
	return "wald"
}

// intervalMinN is the smallest n for which a Fisher-type interval's
// standard error is finite: n − 3 − k > 0 for Fisher z and Bonett–Wright
// (k controls), n − 4 > 0 for Fieller; the Wald intervals of the other
// Kendall-type measures need only a defined estimate.
func intervalMinN(t *recipe.Test, m stats.Measure) int {
	switch m {
	case stats.Spearman, stats.PearsonR:
		return 4 + len(t.Controls)
	case stats.KendallB:
		return 5
	}
	return minPairs
}

// intervals fills in the confidence interval of every result of a cell
// whose estimate is defined.
func intervals(env cellEnv, c cellInput, results []Result) error {
	t, s := c.test, c.s
	n, k := len(s.x), len(s.z)
	level, alt := t.Interval.Level, t.Alternative
	for i := range results {
		r := &results[i]
		if math.IsNaN(r.Estimate) {
			continue
		}
		m, est := t.Measures[i], r.Estimate
		if t.Interval.Method != recipe.IntervalFisher {
			spec := stats.BootstrapSpec{
				Resamples: t.Interval.Resamples, Level: level, Alt: alt,
				BCa: t.Interval.Method == recipe.IntervalBCa,
				// One stream per cell: every measure sees the same
				// resamples, so their intervals are comparable.
				Key:      stats.NewStreamKey(env.seed, "bootstrap", t.Name, c.pair.X, c.pair.Y, c.group),
				Workers:  env.workers,
				Progress: env.progress.draws(),
			}
			lo, hi, err := stats.BootstrapInterval(env.ctx, n, bootStatistic(t, m, s), spec)
			switch {
			case errors.Is(err, stats.ErrBootstrapUndefined):
				why := strings.TrimPrefix(err.Error(), "stats: bootstrap: ")
				why = strings.TrimSuffix(why, ": "+stats.ErrBootstrapUndefined.Error())
				r.Warnings = append(r.Warnings, fmt.Sprintf("the %s interval is undefined here: %s", r.CIMethod, why))
			case err != nil:
				return err
			}
			r.CILow, r.CIHigh = lo, hi
			continue
		}
		switch {
		case m == stats.Spearman && k > 0:
			r.CILow, r.CIHigh = stats.PartialBonettWrightInterval(est, n, k, level, alt)
		case m == stats.Spearman:
			r.CILow, r.CIHigh = stats.BonettWrightInterval(est, n, level, alt)
		case m == stats.PearsonR && k > 0:
			r.CILow, r.CIHigh = stats.PartialFisherInterval(est, n, k, level, alt)
		case m == stats.PearsonR:
			r.CILow, r.CIHigh = stats.FisherInterval(est, n, level, alt)
		case m == stats.KendallB:
			r.CILow, r.CIHigh = stats.FiellerInterval(est, n, level, alt)
		default:
			r.CILow, r.CIHigh = stats.WaldInterval(est, stats.OrdinalSE(s.x, s.y, m), level, alt)
		}
	}
	return nil
}

// estimate computes measure m of test t on one sample; bootstrap resamples
// go through it too, so a resample is measured exactly as the sample was.
func estimate(t *recipe.Test, m stats.Measure, x, y []float64, z [][]float64) float64 {
	switch {
	case m == stats.Spearman && len(z) > 0:
		return stats.PartialSpearman(x, y, z, t.Ties.Rule)
	case m == stats.Spearman:
		return stats.SpearmanRho(x, y, t.Ties.Rule)
	case m == stats.PearsonR && len(z) > 0:
		return stats.PartialCorrelation(x, y, z)
	case m == stats.PearsonR:
		return stats.Pearson(x, y)
	}
	return stats.CountPairs(x, y).Estimate(m)
}

// bootStatistic measures m on bootstrap resamples of s, each worker with
// its own buffers.
func bootStatistic(t *recipe.Test, m stats.Measure, s sample) stats.NewStatistic {
	return func() func(idx []int) float64 {
		n := len(s.x)
		bx, by := make([]float64, n), make([]float64, n)
		bz := make([][]float64, len(s.z))
		for j := range bz {
			bz[j] = make([]float64, n)
		}
		return func(idx []int) float64 {
			for i, j := range idx {
				bx[i], by[i] = s.x[j], s.y[j]
				for c := range bz {
					bz[c][i] = s.z[c][j]
				}
			}
			return estimate(t, m, bx, by, bz)
		}
	}
}

// adjustFamilies sets p_adjusted on results: each test's results of one
// measure form a family (every pair and group of the test), adjusted by the
// test's method. A result whose p-value was computed but withheld (an
// asymptotic p below what any exact test could give) still counts in the
// family size, so withholding never makes the adjustment less
// conservative; its adjusted value is withheld too. Results without any
// p-value (an undefined estimate) stay out of the family.
func adjustFamilies(plan *recipe.Plan, results []Result, cached map[string]bool) {
	byTest := map[string]*recipe.Test{}
	for _, t := range plan.Tests {
		byTest[t.Name] = t
	}
	type family struct{ test, measure string }
	members := map[family][]int{}
	var order []family
	for i, r := range results {
		t := byTest[r.Test]
		if t.Adjust == stats.AdjustNone || cached[r.Test] {
			continue // cached results were adjusted when computed
		}
		f := family{r.Test, r.Measure}
		if _, ok := members[f]; !ok {
			order = append(order, f)
		}
		members[f] = append(members[f], i)
	}
	for _, f := range order {
		idx := members[f]
		p := make([]float64, len(idx))
		for j, i := range idx {
			p[j] = results[i].pFamily
		}
		adj := stats.Adjust(p, byTest[f.test].Adjust)
		for j, i := range idx {
			r := &results[i]
			switch {
			case math.IsNaN(r.PValue): // withheld: counted in m, not shown
				r.PAdjusted = math.NaN()
			default:
				r.PAdjusted = math.Max(adj[j], r.PValue) // the bound pFloor, if p was written as it
			}
		}
	}
}
