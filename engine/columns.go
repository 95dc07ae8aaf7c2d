package engine

import (
	"fmt"
	"math"
	"strings"
	"sync"

	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/recipe"
)

// cellSource supplies the samples of one (test, group). Where every pair of
// the group sees the same rows — listwise deletion, or pairwise deletion of
// two columns without missing values — the pair's sample is a view of
// shared columns, and what a column costs to prepare (its ranks, tie share
// and monotonicity order) is computed once and reused by every pair and
// measure that needs it. A pair whose rows differ gets its own copy, as
// pairUp makes it.
type cellSource struct {
	test  *recipe.Test
	tbl   *dataset.Table
	rows  []int // the group's rows in file order, nil for every row
	total int   // rows in the group
	note  string

	// Listwise: the table rows complete in every column of the pairing and
	// every control, and the note every pair of the group carries.
	complete []int
	dropNote string

	cols map[string]*column
}

// column is one variable of a cellSource, over the source's shared rows
// (the complete rows when listwise, the group's rows otherwise).
type column struct {
	values  []float64
	missing int // missing cells among the group's rows

	once  sync.Once
	share float64          // stats.TieShare
	ranks []float64        // under the test's tie rule
	mid   []float64        // midranks (the same slice when the rule is average)
	mono  *stats.MonotoneX // x prepared for the monotonicity check
}

// newCellSource gathers the columns of test t's pairing (and controls) for
// one group.
func newCellSource(t *recipe.Test, tbl *dataset.Table, g group) *cellSource {
	src := &cellSource{test: t, tbl: tbl, rows: g.rows, total: tbl.Rows, note: g.note, cols: map[string]*column{}}
	if g.rows != nil {
		src.total = len(g.rows)
	}
	names := append(pairingColumns(t.Pairing), t.Controls...)
	full := make(map[string][]float64, len(names))
	for _, name := range names {
		full[name] = valueColumn(tbl, name).Values
	}
	row := func(k int) int {
		if g.rows != nil {
			return g.rows[k]
		}
		return k
	}
	listwise := t.Pairing.Missing == recipe.Listwise
	missing := make(map[string]int, len(names))
	if listwise {
		src.complete = make([]int, 0, src.total)
		for k := 0; k < src.total; k++ {
			i, ok := row(k), true
			for _, name := range names {
				if math.IsNaN(full[name][i]) {
					missing[name]++
					ok = false
				}
			}
			if ok {
				src.complete = append(src.complete, i)
			}
		}
		src.dropNote = listwiseNote(names, missing, src.total, len(src.complete))
	}
	for _, name := range names {
		c := &column{}
		if listwise {
			c.values = make([]float64, len(src.complete))
			for j, i := range src.complete {
				c.values[j] = full[name][i]
			}
			c.missing = missing[name]
		} else {
			c.values = make([]float64, src.total)
			for k := range c.values {
				v := full[name][row(k)]
				c.values[k] = v
				if math.IsNaN(v) {
					c.missing++
				}
			}
		}
		src.cols[name] = c
	}
	return src
}

// listwiseNote says how many rows listwise deletion left out and which
// columns were missing; "" when none were.
func listwiseNote(names []string, missing map[string]int, total, kept int) string {
	if kept == total {
		return ""
	}
	var parts []string
	for _, name := range names {
		if missing[name] > 0 {
			parts = append(parts, fmt.Sprintf("%d missing %s", missing[name], name))
		}
	}
	return fmt.Sprintf("%d of %d rows dropped (listwise: a row missing any column of the pairing is left out): %s",
		total-kept, total, strings.Join(parts, ", "))
}

// sample returns the cell's sample for pair, and the shared columns of x
// and y when the sample is a view of them (nil, nil when it is a copy).
func (src *cellSource) sample(pair recipe.Pair) (sample, *column, *column) {
	t := src.test
	cx, cy := src.cols[pair.X], src.cols[pair.Y]
	shared := t.Pairing.Missing == recipe.Listwise ||
		(cx.missing == 0 && cy.missing == 0 && len(t.Controls) == 0)
	if !shared {
		s := pairUp(src.tbl, t, pair, src.rows)
		s.groupNote = src.note
		return s, nil, nil
	}
	s := sample{x: cx.values, y: cy.values, groupNote: src.note}
	for _, name := range t.Controls {
		s.z = append(s.z, src.cols[name].values)
	}
	if t.Pairing.Missing == recipe.Listwise {
		s.dropped = src.total - len(src.complete)
		s.dropNote = src.dropNote
	}
	return s, cx, cy
}

// prepare computes the column's shared statistics once; safe for
// concurrent use by the cells that share the column.
func (c *column) prepare(rule stats.TieRule) *column {
	c.once.Do(func() {
		if len(c.values) == 0 {
			c.share = math.NaN()
			return
		}
		c.ranks, c.share = stats.Rank(c.values, rule), stats.TieShare(c.values)
		c.mid = c.ranks
		if rule != stats.TieAverage {
			c.mid = stats.Rank(c.values, stats.TieAverage)
		}
		c.mono = stats.PrepareMonotone(c.values)
	})
	return c
}
