package engine

import (
	"fmt"
	"math"
	"strings"
	"sync"
	"sync/atomic"

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
	rows  []int  // the group's rows in file order, nil for every row
	total int    // rows in the group
	group string // the group's name ("all" for every row)
	note  string

	// Listwise: the table rows complete in every column of the pairing and
	// every control, and the note every pair of the group carries.
	complete []int // nil when no row is dropped
	kept     int   // rows in the sample: len(complete), or total
	dropNote string

	cols map[string]*column

	// base is cols as shared columns: all of them when listwise, those
	// without missing cells when pairwise (engine/views.go).
	base *shared
	// viewOf gives, under pairwise deletion, the missing-pattern view of
	// each pair with missing cells whose rows one view holds (nil: the pair
	// is copied by pairUp).
	viewOf map[recipe.Pair]*patternView
}

// column is one variable of a cellSource, over the source's shared rows
// (the complete rows when listwise, the group's rows otherwise).
type column struct {
	values  []float64
	missing int // missing cells among the group's rows

	once     sync.Once
	prepared atomic.Bool      // once has run
	rankInto []float64        // where prepare writes the ranks, if set before it runs
	share    float64          // stats.TieShare
	ranks    []float64        // under the test's tie rule
	mono     *stats.MonotoneX // the monotonicity subsample prepared as x
	monoY    stats.MonotoneY  // the monotonicity subsample prepared as y

	constant   bool    // every value equal
	constValue float64 // that value

	// The note on the column's ties above max_share: the same text for
	// every pair of the column, so made once.
	tieOnce sync.Once
	tieNote string

	// arrangements is n! over the product of t! for the column's tie
	// groups: stats.Arrangements of a pair is the smaller of its columns'.
	// It costs a sort, so it is counted on first use (arrangementCount).
	arrOnce      sync.Once
	arrangements float64
}

// arrangementCount returns the column's count of distinct orders, counting
// it once. A column longer than stats.MaxEnumeration has more orders than
// that (at least n unless it is constant), which is all a caller asks.
func (c *column) arrangementCount() float64 {
	c.arrOnce.Do(func() {
		switch {
		case len(c.values) == 0:
			c.arrangements = math.Inf(1)
		case len(c.values) > stats.MaxEnumeration && !c.constant:
			c.arrangements = math.Inf(1)
		default:
			c.arrangements = stats.Arrangements(c.values, c.values)
		}
	})
	return c.arrangements
}

// monotoneRows is the most rows the monotonicity check reads: above it, an
// evenly spaced subsample in file order. The check flags a bend only when
// it explains at least a tenth of the rank variance (stats.CheckMonotone);
// at 2000 rows in ten groups such a bend has an F statistic of at least
// (0.1/9)/(0.9/1990) ≈ 24.6 on (9, 1990) degrees of freedom, ten times its
// 1% point (≈ 2.4), so the decision rests on the size of the bend, which
// 2000 rows estimate to within a few hundredths. The matrix of a 1000-column table then costs O(2000) per
// column pair instead of O(n).
const monotoneRows = 2000

// monotoneSubsample returns every ⌈n/monotoneRows⌉-th value of v (v itself
// when it is short enough).
func monotoneSubsample(v []float64) []float64 {
	if len(v) <= monotoneRows {
		return v
	}
	stride := (len(v) + monotoneRows - 1) / monotoneRows
	out := make([]float64, 0, monotoneRows)
	for i := 0; i < len(v); i += stride {
		out = append(out, v[i])
	}
	return out
}

// newCellSource gathers the columns of test t's pairing (and controls) for
// one group.
func newCellSource(t *recipe.Test, tbl *dataset.Table, g group) *cellSource {
	src := &cellSource{test: t, tbl: tbl, rows: g.rows, total: tbl.Rows, group: g.name, note: g.note, cols: map[string]*column{}}
	if g.rows != nil {
		src.total = len(g.rows)
	}
	names := append(pairingColumns(t.Pairing), t.Controls...)
	full := make([][]float64, len(names))
	for j, name := range names {
		full[j] = valueColumn(tbl, name).Values
	}
	row := func(k int) int {
		if g.rows != nil {
			return g.rows[k]
		}
		return k
	}
	listwise := t.Pairing.Missing == recipe.Listwise
	missing := make(map[string]int, len(names))
	src.kept = src.total
	if listwise {
		// Column by column (a matrix has a thousand columns); the list of
		// complete rows is made only when a row is dropped.
		var drop []bool
		for j, name := range names {
			col := full[j]
			for k := range src.total {
				if math.IsNaN(col[row(k)]) {
					missing[name]++
					if drop == nil {
						drop = make([]bool, src.total)
					}
					drop[k] = true
				}
			}
		}
		if drop != nil {
			src.complete = make([]int, 0, src.total)
			for k, d := range drop {
				if !d {
					src.complete = append(src.complete, row(k))
				}
			}
			src.kept = len(src.complete)
		}
		src.dropNote = listwiseNote(names, missing, src.total, src.kept)
	}
	// A column that keeps every row of the table is the table's own slice
	// (never written to), not a copy: at 10⁷ rows a copy is 80 MB.
	everyRow := g.rows == nil && src.complete == nil
	for j, name := range names {
		c := &column{}
		switch {
		case everyRow:
			c.values = full[j]
			if listwise {
				c.missing = missing[name]
			} else {
				c.missing = countNaN(c.values)
			}
		case src.complete != nil:
			c.values = make([]float64, len(src.complete))
			for k, i := range src.complete {
				c.values[k] = full[j][i]
			}
			c.missing = missing[name]
		default:
			c.values = make([]float64, src.total)
			for k := range c.values {
				v := full[j][row(k)]
				c.values[k] = v
				if math.IsNaN(v) {
					c.missing++
				}
			}
		}
		src.cols[name] = c
	}
	src.base = src.baseShared()
	if !listwise && len(t.Controls) == 0 && patternViewsOn {
		src.viewOf = src.patternViews()
	}
	return src
}

// countNaN counts the missing values (NaN) of v.
func countNaN(v []float64) int {
	n := 0
	for _, x := range v {
		if math.IsNaN(x) {
			n++
		}
	}
	return n
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

// sample returns the cell's sample for pair, with the shared columns of x
// and y and the set they belong to when the sample is a view of them (nil,
// nil, nil when it is the pair's own copy).
func (src *cellSource) sample(pair recipe.Pair) (sample, *column, *column, *shared) {
	t := src.test
	cx, cy := src.cols[pair.X], src.cols[pair.Y]
	listwise := t.Pairing.Missing == recipe.Listwise
	if listwise || (cx.missing == 0 && cy.missing == 0 && len(t.Controls) == 0) {
		s := sample{x: cx.values, y: cy.values, groupNote: src.note}
		for _, name := range t.Controls {
			s.z = append(s.z, src.cols[name].values)
		}
		if listwise {
			s.dropped = src.total - src.kept
			s.dropNote = src.dropNote
		}
		return s, cx, cy, src.base
	}
	if v := src.viewOf[pair]; v != nil {
		sh := v.columns(src)
		vx, vy := sh.cols[pair.X], sh.cols[pair.Y]
		s := sample{x: vx.values, y: vy.values, groupNote: src.note}
		// The view's rows are those of the column missing more; the other
		// column's missing rows are among them.
		var missX, missY, missBoth int
		if cx.missing >= cy.missing {
			missX, missBoth = cx.missing-cy.missing, cy.missing
		} else {
			missY, missBoth = cy.missing-cx.missing, cx.missing
		}
		s.dropped, s.dropNote = pairDropNote(t, pair, src.total, pairMisses{x: missX, y: missY, both: missBoth})
		return s, vx, vy, sh
	}
	s := pairUp(src.tbl, t, pair, src.rows)
	s.groupNote = src.note
	return s, nil, nil, nil
}

// prepare computes the column's shared statistics once; safe for
// concurrent use by the cells that share the column.

func (c *column) prepare(rule stats.TieRule) *column {
	c.once.Do(func() {
		if len(c.values) == 0 {
			c.share = math.NaN()
			return
		}
		// One radix pass gives the ranks and the tie groups.
		r := stats.RankTiesInto(c.values, rule, c.rankInto)
		c.ranks, c.share = r.Ranks, float64(r.Tied)/float64(len(c.values))
		if len(c.values) < 2 {
			c.share = 0 // as stats.TieShare
		}
		sub := monotoneSubsample(c.values)
		c.mono = stats.PrepareMonotone(sub)
		c.monoY = stats.PrepareMonotoneY(sub)
		c.constant, c.constValue = constant(c.values)
		c.prepared.Store(true)
	})
	return c
}

// isConstant is constant() for the column's values (v is ignored: it is
// the column's own slice), computed once.
func (c *column) isConstant(_ []float64) (bool, float64) {
	return c.constant, c.constValue
}
