package engine

import (
	"fmt"
	"math"
	"slices"

	"concordat/engine/stats"
	"concordat/recipe"
)

// sample is one (test, pair, group) cell of work: the paired, complete
// observations and how many rows of the group were dropped and why.
type sample struct {
	x, y      []float64
	dropped   int
	dropNote  string // why rows were dropped, "" when none were
	groupNote string // about the group itself (rows without a group label), or ""
}

// minPairs is the smallest n for which any correlation here is defined: with
// two pairs every correlation is ±1 and its t statistic has 0 df (common
// practice).
const minPairs = 3

// smallN is the sample size below which the asymptotic p-values of rho (t)
// and tau (normal) are flagged: the exact null distributions are discrete
// and far from their approximations there (common practice; e.g. at n = 4
// the smallest attainable exact two-sided p of rho is 1/12, while the t
// approximation gives 0 for rho = 1).
const smallN = 10

// measureSample computes every measure of test t on one sample, in the
// order the recipe lists them.
func measureSample(t *recipe.Test, pair recipe.Pair, group string, s sample) []Result {
	n := len(s.x)
	out := make([]Result, 0, len(t.Measures))

	var shareX, shareY float64 = math.NaN(), math.NaN()
	if n > 0 {
		shareX, shareY = stats.TieShare(s.x), stats.TieShare(s.y)
	}
	common := func() []string {
		w := commonNotes(s)
		if n < minPairs {
			w = append(w, fmt.Sprintf("n = %d is too few pairs: at least %d are needed, so the estimate is undefined", n, minPairs))
			return w
		}
		ds := t.Pairing.Dataset
		if c, v := constant(s.x); c {
			w = append(w, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.X, n, valueText(ds, pair.X, v)))
		}
		if c, v := constant(s.y); c {
			w = append(w, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.Y, n, valueText(ds, pair.Y, v)))
		}
		return w
	}

	var counts *stats.PairCounts // Kendall's pair counts, computed once
	level := t.Interval.Level

	for _, m := range t.Measures {
		r := Result{
			Test: t.Name, X: pair.X, Y: pair.Y, Group: group, Measure: m.String(),
			N: n, NDropped: s.dropped, Alternative: t.Alternative.String(),
			Estimate: math.NaN(), PValue: math.NaN(), CILow: math.NaN(), CIHigh: math.NaN(),
			CILevel: level, PAdjusted: math.NaN(), AdjustMethod: t.Adjust,
			TiesX: shareX, TiesY: shareY,
		}
		r.Warnings = common()
		switch m {
		case stats.Spearman:
			r.PMethod, r.CIMethod = stats.PT.String(), "bonett-wright"
		case stats.KendallB:
			r.PMethod, r.CIMethod = stats.PNormal.String(), "fieller"
		case stats.PearsonR:
			r.PMethod, r.CIMethod = stats.PT.String(), "fisher"
		default:
			panic(fmt.Sprintf("engine: measure %v has no kernel", m))
		}
		if n >= minPairs {
			switch m {
			case stats.Spearman:
				r.Warnings = append(r.Warnings, tieWarnings(t, pair, n, shareX, shareY)...)
				if t.Ties.Rule != stats.TieAverage && (shareX > 0 || shareY > 0) {
					r.Warnings = append(r.Warnings, fmt.Sprintf(
						"ranks use the %q tie rule: with ties this is not Spearman's rho with midranks, and its p-value and interval assume average ranks",
						t.Ties.Rule.String()))
				}
				r.Estimate = stats.SpearmanRho(s.x, s.y, t.Ties.Rule)
				r.PValue = stats.CorrelationT(r.Estimate, n, t.Alternative)
				r.CILow, r.CIHigh = stats.BonettWrightInterval(r.Estimate, n, level, t.Alternative)
			case stats.KendallB:
				// Kendall's tau-b depends only on the order of the values,
				// so it is computed on them directly: breaking ties by a
				// rank rule (such as "first") would hide the very ties
				// tau-b corrects for.
				if counts == nil {
					c := stats.CountPairs(s.x, s.y)
					counts = &c
				}
				r.Estimate = counts.TauB()
				r.PValue = stats.KendallNormal(*counts, t.Alternative)
				r.CILow, r.CIHigh = stats.FiellerInterval(r.Estimate, n, level, t.Alternative)
			case stats.PearsonR:
				if hasInf(s.x) || hasInf(s.y) {
					r.Warnings = append(r.Warnings, "infinite values present: Pearson's r is undefined (rank measures treat them as extreme values)")
				} else {
					r.Estimate = stats.Pearson(s.x, s.y)
					r.PValue = stats.CorrelationT(r.Estimate, n, t.Alternative)
					r.CILow, r.CIHigh = stats.FisherInterval(r.Estimate, n, level, t.Alternative)
				}
			}
			r.Warnings = append(r.Warnings, inferenceWarnings(m, &r, shareX > 0 || shareY > 0)...)
		}
		if math.IsNaN(r.Estimate) {
			r.PValue, r.CILow, r.CIHigh = math.NaN(), math.NaN(), math.NaN()
			if len(r.Warnings) == len(commonNotes(s)) {
				// Every undefined value says why; this is the catch-all.
				r.Warnings = append(r.Warnings, "the estimate is undefined for these data")
			}
		}
		if t.Adjust == "none" {
			// No family adjustment: the adjusted p-value is the p-value.
			r.PAdjusted = r.PValue
		}
		if r.Warnings == nil {
			r.Warnings = []string{}
		}
		out = append(out, r)
	}
	return out
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

// inferenceWarnings flags p-values and intervals that the asymptotic
// methods cannot be trusted for. A rank measure's asymptotic p-value that
// falls below the smallest p-value any exact permutation test could give
// at this n is withheld (set to NaN), because no exact analysis could
// support it.
func inferenceWarnings(m stats.Measure, r *Result, tied bool) []string {
	var w []string
	if math.IsNaN(r.Estimate) {
		return nil
	}
	interval := !math.IsNaN(r.CILow) || !math.IsNaN(r.CIHigh)
	if math.Abs(r.Estimate) == 1 {
		msg := "a perfect association in the sample"
		if interval {
			msg += ": the interval collapses to a point"
		}
		if r.PMethod == stats.PT.String() {
			msg += "; the t approximation's p-value is its limit, 0"
		}
		w = append(w, msg)
	}
	if m != stats.PearsonR && r.N < smallN && !math.IsNaN(r.PValue) {
		floor := exactFloor(r.N, r.Alternative == stats.TwoSided.String() && !tied)
		if r.PValue < floor {
			w = append(w, fmt.Sprintf("the %s approximation gives p = %.2g, below %.2g, the smallest exact p-value attainable with n = %d pairs: the p-value is withheld (exact p-values are not available in this version)",
				r.PMethod, r.PValue, floor, r.N))
			r.PValue = math.NaN()
		} else {
			w = append(w, fmt.Sprintf("n = %d is small: the %s approximation to the p-value can differ noticeably from the exact one (exact p-values are not available in this version)", r.N, r.PMethod))
		}
	}
	if !interval {
		w = append(w, fmt.Sprintf("n = %d is too few for the %s interval (needs n ≥ %d)", r.N, r.CIMethod, intervalMinN(m)))
	}
	return w
}

// exactFloor is the smallest p-value an exact permutation test of a rank
// correlation can attain with n pairs: the observed order alone has
// probability 1/n! under independence, and without ties its mirror image
// attains the same |statistic|, so a two-sided p is at least 2/n! (the
// permutation distribution of rank statistics; e.g. Hollander & Wolfe,
// Nonparametric Statistical Methods, 1973, ch. 8).
func exactFloor(n int, mirrored bool) float64 {
	f := 1.0
	for k := 2; k <= n; k++ {
		f *= float64(k)
	}
	if mirrored {
		return 2 / f
	}
	return 1 / f
}

// intervalMinN is the smallest n for which each interval's standard error is
// finite: n − 3 > 0 for Fisher z and Bonett–Wright, n − 4 > 0 for Fieller.
func intervalMinN(m stats.Measure) int {
	if m == stats.KendallB {
		return 5
	}
	return 4
}

// tieWarnings flags columns with more tied values than the test's ties
// block allows, suggesting Kendall's tau-b when the test does not already
// report it.
func tieWarnings(t *recipe.Test, pair recipe.Pair, n int, sx, sy float64) []string {
	var w []string
	hasTauB := slices.Contains(t.Measures, stats.KendallB)
	for _, side := range []struct {
		name  string
		share float64
	}{{pair.X, sx}, {pair.Y, sy}} {
		if side.share > t.Ties.MaxShare {
			tied := int(math.Round(side.share * float64(n)))
			// Round down so that a share just under 1 never reads 100%.
			msg := fmt.Sprintf("%d of %d %s values (%.0f%%) equal another value (above max_share %g)",
				tied, n, side.name, math.Floor(100*side.share), t.Ties.MaxShare)
			if !hasTauB {
				msg += "; Kendall's tau-b is often preferred when ties are this many"
			}
			w = append(w, msg)
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

// valueText shows a value as the data wrote it: an ordinal code as its
// label, a number in shortest form.
func valueText(ds *recipe.Dataset, column string, v float64) string {
	if lv := ds.Levels[column]; v == math.Trunc(v) && v >= 1 && int(v) <= len(lv) {
		return fmt.Sprintf("%q", lv[int(v)-1])
	}
	return fmt.Sprintf("%g", v)
}
