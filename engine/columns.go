package engine

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"
	"sync/atomic"

	"golang.org/x/sync/errgroup"

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
	complete []int // nil when no row is dropped
	kept     int   // rows in the sample: len(complete), or total
	dropNote string

	cols map[string]*column

	// The correlation matrices of the shared columns, computed once when a
	// pairing has enough pairs to make that cheaper than pair by pair.
	matrixOnce sync.Once
	matrixErr  error
	index      map[string]int // shared column → row of the matrices
	rhoMatrix  []float64      // Spearman: Pearson's r of the columns' ranks
	rMatrix    []float64      // Pearson's r of the values, nil when any is infinite
}

// matrixMinPairs is the number of pairs from which a group's correlations
// come from one correlation matrix (a blocked rank-k update) rather than
// pair by pair; below it the matrix costs more than it saves.
const matrixMinPairs = 16

// column is one variable of a cellSource, over the source's shared rows
// (the complete rows when listwise, the group's rows otherwise).
type column struct {
	values  []float64
	missing int // missing cells among the group's rows

	once     sync.Once
	prepared atomic.Bool      // once has run
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
	src := &cellSource{test: t, tbl: tbl, rows: g.rows, total: tbl.Rows, note: g.note, cols: map[string]*column{}}
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
		s.dropped = src.total - src.kept
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
		// One radix pass gives the ranks and the tie groups.
		r := stats.RankTies(c.values, rule)
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

// matrixValue returns measure m (Spearman or Pearson, no controls) of pair
// from the group's correlation matrix when the pairing is large enough to
// have one and both columns are shared; ok is false otherwise. The matrix is
// computed on first use, by whichever cell needs it first.
func (src *cellSource) matrixValue(env cellEnv, m stats.Measure, pair recipe.Pair) (v float64, ok bool, err error) {
	t := src.test
	if len(t.Controls) > 0 || len(t.Pairing.Pairs) < matrixMinPairs || (m != stats.Spearman && m != stats.PearsonR) {
		return 0, false, nil
	}
	src.matrixOnce.Do(func() { src.matrixErr = src.buildMatrices(env) })
	if src.matrixErr != nil {
		return 0, false, src.matrixErr
	}
	i, okX := src.index[pair.X]
	j, okY := src.index[pair.Y]
	if !okX || !okY {
		return 0, false, nil
	}
	k := len(src.index)
	switch {
	case m == stats.Spearman && src.rhoMatrix != nil:
		return src.rhoMatrix[i*k+j], true, nil
	case m == stats.PearsonR && src.rMatrix != nil:
		return src.rMatrix[i*k+j], true, nil
	}
	return 0, false, nil
}

// buildMatrices computes the correlation matrices of the shared columns for
// the measures the test asks for.
func (src *cellSource) buildMatrices(env cellEnv) error {
	t := src.test
	listwise := t.Pairing.Missing == recipe.Listwise
	var names []string
	for _, name := range pairingColumns(t.Pairing) {
		if c := src.cols[name]; listwise || c.missing == 0 {
			names = append(names, name)
		}
	}
	if len(names) < 2 || len(src.cols[names[0]].values) < minPairs {
		return nil
	}
	src.index = make(map[string]int, len(names))
	for i, name := range names {
		src.index[name] = i
	}
	if slices.Contains(t.Measures, stats.Spearman) {
		// Every cell of the group waits for the matrix: rank its columns
		// on all workers.
		var eg errgroup.Group
		eg.SetLimit(env.workers)
		ranks := make([][]float64, len(names))
		for i, name := range names {
			eg.Go(func() error {
				if err := env.ctx.Err(); err != nil {
					return err
				}
				ranks[i] = src.cols[name].prepare(t.Ties.Rule).ranks
				return nil
			})
		}
		if err := eg.Wait(); err != nil {
			return err
		}
		m, err := stats.CorrelationMatrix(env.ctx, ranks, env.workers)
		if err != nil {
			return err
		}
		src.rhoMatrix = m
	}
	if slices.Contains(t.Measures, stats.PearsonR) {
		vals := make([][]float64, len(names))
		for i, name := range names {
			vals[i] = src.cols[name].values
			if hasInf(vals[i]) {
				return nil // Pearson's r is undefined there: pair by pair says why
			}
		}
		m, err := stats.CorrelationMatrix(env.ctx, vals, env.workers)
		if err != nil {
			return err
		}
		src.rMatrix = m
	}
	return nil
}

// isConstant is constant() for the column's values (v is ignored: it is
// the column's own slice), computed once.
func (c *column) isConstant(_ []float64) (bool, float64) {
	return c.constant, c.constValue
}
