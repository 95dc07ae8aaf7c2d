package engine

import (
	"fmt"
	"math"

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
		var w []string
		if s.groupNote != "" {
			w = append(w, s.groupNote)
		}
		if s.dropNote != "" {
			w = append(w, s.dropNote)
		}
		if n < minPairs {
			w = append(w, fmt.Sprintf("n = %d is too few pairs: at least %d are needed, so the estimate is undefined", n, minPairs))
			return w
		}
		if c, v := constant(s.x); c {
			w = append(w, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.X, n, formatValue(v)))
		}
		if c, v := constant(s.y); c {
			w = append(w, fmt.Sprintf("%s is constant after deletion (all %d values are %s): the correlation is undefined", pair.Y, n, formatValue(v)))
		}
		return w
	}

	var rx, ry []float64 // ranks, computed once for the rank measures
	ranks := func() {
		if rx == nil {
			rx = stats.Rank(s.x, t.Ties.Rule)
			ry = stats.Rank(s.y, t.Ties.Rule)
		}
	}
	level := t.Interval.Level

	for _, m := range t.Measures {
		r := Result{
			Test: t.Name, X: pair.X, Y: pair.Y, Group: group, Measure: m.String(),
			N: n, NDropped: s.dropped, Alternative: t.Alternative.String(),
			Estimate: math.NaN(), PValue: math.NaN(), CILow: math.NaN(), CIHigh: math.NaN(),
			CILevel: level, PAdjusted: math.NaN(), AdjustMethod: "none",
			TiesX: shareX, TiesY: shareY,
		}
		r.Warnings = common()
		switch m {
		case stats.Spearman:
			r.PMethod, r.CIMethod = "t", "bonett-wright"
		case stats.KendallB:
			r.PMethod, r.CIMethod = "normal", "fieller"
		case stats.PearsonR:
			r.PMethod, r.CIMethod = "t", "fisher"
		default:
			panic(fmt.Sprintf("engine: measure %v has no kernel", m))
		}
		if m == stats.Spearman && n >= minPairs {
			// Kendall's tau-b corrects for ties itself, and Pearson's r
			// does not rank; the warning is actionable only for rho.
			r.Warnings = append(r.Warnings, tieWarnings(t, pair, shareX, shareY)...)
		}
		if n >= minPairs {
			switch m {
			case stats.Spearman:
				ranks()
				r.Estimate = stats.Pearson(rx, ry)
				r.PValue = stats.CorrelationT(r.Estimate, n, t.Alternative)
				r.CILow, r.CIHigh = stats.BonettWrightInterval(r.Estimate, n, level, t.Alternative)
			case stats.KendallB:
				ranks()
				c := stats.CountPairs(rx, ry)
				r.Estimate = c.TauB()
				r.PValue = stats.KendallNormal(c, t.Alternative)
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
			if !math.IsNaN(r.Estimate) && math.IsNaN(r.CILow) && math.IsNaN(r.CIHigh) {
				r.Warnings = append(r.Warnings, fmt.Sprintf("n = %d is too few for the %s interval (needs n ≥ %d)", n, r.CIMethod, intervalMinN(m)))
			}
		}
		if math.IsNaN(r.Estimate) {
			r.PValue, r.CILow, r.CIHigh = math.NaN(), math.NaN(), math.NaN()
		}
		if r.Warnings == nil {
			r.Warnings = []string{}
		}
		out = append(out, r)
	}
	return out
}

// intervalMinN is the smallest n for which each interval's standard error is
// finite: n − 3 > 0 for Fisher z and Bonett–Wright, n − 4 > 0 for Fieller.
func intervalMinN(m stats.Measure) int {
	if m == stats.KendallB {
		return 5
	}
	return 4
}

func tieWarnings(t *recipe.Test, pair recipe.Pair, sx, sy float64) []string {
	var w []string
	for _, side := range []struct {
		name  string
		share float64
	}{{pair.X, sx}, {pair.Y, sy}} {
		if side.share > t.Ties.MaxShare {
			w = append(w, fmt.Sprintf("%.0f%% of %s values are tied (above max_share %g); Kendall's tau-b is often preferred when ties are this many",
				100*side.share, side.name, t.Ties.MaxShare))
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

func formatValue(v float64) string {
	return fmt.Sprintf("%g", v)
}
