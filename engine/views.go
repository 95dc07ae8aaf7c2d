package engine

import (
	"slices"
	"sync"

	"golang.org/x/sync/errgroup"

	"concordat/engine/bigmem"
	"concordat/engine/stats"
	"concordat/recipe"
)

// shared is a set of columns over the same rows, of which the pairs that
// use them take views: what a column costs to prepare (ranks, tie share,
// monotonicity order) is paid once, and when enough pairs use the set,
// their Spearman and Pearson values come from one correlation matrix.
//
// A group has its base set (every column when listwise; the columns without
// missing cells when pairwise). Under pairwise deletion it also has one set
// per missing pattern that some pair needs (patternView): the rows where a
// column with missing cells has values, which serve every pair of that
// column with a column missing on none but those rows. Only pairs whose
// two columns miss incomparable sets of rows are copied pair by pair.
type shared struct {
	cols  map[string]*column
	names []string // the columns of the pairs that use the set, in pairing order
	pairs int      // the pairs that use the set

	// The correlation matrices of names, computed once by the first cell
	// that asks, when pairs ≥ matrixMinPairs.
	matrixOnce sync.Once
	matrixErr  error
	index      map[string]int // column → row of the matrices
	rhoMatrix  []float64      // Spearman: Pearson's r of the columns' ranks
	rMatrix    []float64      // Pearson's r of the values, nil when any is infinite
}

// matrixMinPairs is the number of pairs from which a set's correlations
// come from one correlation matrix (a blocked rank-k update) rather than
// pair by pair; below it the matrix costs more than it saves.
const matrixMinPairs = 16

// baseShared returns the group's base set of shared columns.
func (src *cellSource) baseShared() *shared {
	t := src.test
	listwise := t.Pairing.Missing == recipe.Listwise
	sh := &shared{cols: src.cols}
	in := map[string]bool{}
	for _, pair := range t.Pairing.Pairs {
		cx, cy := src.cols[pair.X], src.cols[pair.Y]
		if !listwise && (cx.missing > 0 || cy.missing > 0 || len(t.Controls) > 0) {
			continue
		}
		sh.pairs++
		in[pair.X], in[pair.Y] = true, true
	}
	for _, name := range pairingColumns(t.Pairing) {
		if in[name] {
			sh.names = append(sh.names, name)
		}
	}
	sh.rankBlock(t)
	return sh
}

// patternView is one missing pattern of a group under pairwise deletion:
// the positions (in the order of the source's columns) where a column is
// missing, and the shared columns restricted to the other positions, made
// on first use.
type patternView struct {
	missing []uint64 // bit set of the missing positions
	count   int      // positions missing
	names   []string // the columns its pairs use
	seen    map[string]bool
	pairs   int

	once sync.Once
	sh   *shared
}

// patternViewsOn is false only in tests that compare the views with the
// pair-by-pair copies.
var patternViewsOn = true

// patternMaxWords bounds the bit sets of a group's missing patterns (8 MiB
// of them): past it, pairs with missing cells are copied pair by pair.
const patternMaxWords = 1 << 20

// patternViews finds the missing pattern of every column with missing
// cells and assigns each pair with missing cells to the view of the larger
// pattern when the other column's missing rows are among its own (a
// column without missing cells fits every pattern). Pairs whose patterns
// are incomparable get no view.
func (src *cellSource) patternViews() map[recipe.Pair]*patternView {
	t := src.test
	words := (src.total + 63) / 64
	byColumn := map[string]*patternView{}
	byKey := map[string]*patternView{}
	budget := patternMaxWords
	for _, name := range pairingColumns(t.Pairing) {
		c := src.cols[name]
		if c.missing == 0 {
			continue
		}
		if budget -= words; budget < 0 {
			return nil
		}
		set := make([]uint64, words)
		for k, v := range c.values {
			if v != v {
				set[k/64] |= 1 << (k % 64)
			}
		}
		key := bitsKey(set)
		v, ok := byKey[key]
		if !ok {
			v = &patternView{missing: set, count: c.missing, seen: map[string]bool{}}
			byKey[key] = v
		}
		byColumn[name] = v
	}
	if len(byColumn) == 0 {
		return nil
	}
	type twoViews struct{ a, b *patternView }
	subset := map[twoViews]bool{}
	within := func(a, b *patternView) bool { // a's missing rows are among b's
		k := twoViews{a, b}
		r, ok := subset[k]
		if !ok {
			r = a.count <= b.count && isSubset(a.missing, b.missing)
			subset[k] = r
		}
		return r
	}
	viewOf := map[recipe.Pair]*patternView{}
	for _, pair := range t.Pairing.Pairs {
		px, py := byColumn[pair.X], byColumn[pair.Y]
		var v *patternView
		switch {
		case px == nil && py == nil:
			continue // the base set
		case px == nil || px == py:
			v = py
		case py == nil:
			v = px
		case within(px, py):
			v = py
		case within(py, px):
			v = px
		default:
			continue // incomparable: copied pair by pair
		}
		viewOf[pair] = v
		v.pairs++
		for _, name := range []string{pair.X, pair.Y} {
			if !v.seen[name] {
				v.seen[name] = true
				v.names = append(v.names, name)
			}
		}
	}
	return viewOf
}

// bitsKey is a map key for a bit set.
func bitsKey(set []uint64) string {
	b := make([]byte, 0, 8*len(set))
	for _, w := range set {
		for s := 0; s < 64; s += 8 {
			b = append(b, byte(w>>s))
		}
	}
	return string(b)
}

// isSubset says whether every bit of a is set in b.
func isSubset(a, b []uint64) bool {
	for i, w := range a {
		if w&^b[i] != 0 {
			return false
		}
	}
	return true
}

// columns returns the view's shared columns, restricting the source's
// columns to the rows the pattern keeps on first use.
func (v *patternView) columns(src *cellSource) *shared {
	v.once.Do(func() {
		keep := make([]int, 0, src.total-v.count)
		for k := range src.total {
			if v.missing[k/64]&(1<<(k%64)) == 0 {
				keep = append(keep, k)
			}
		}
		sh := &shared{cols: make(map[string]*column, len(v.names)), names: v.names, pairs: v.pairs}
		for _, name := range v.names {
			all := src.cols[name].values
			c := &column{values: make([]float64, len(keep))}
			for j, k := range keep {
				c.values[j] = all[k]
			}
			sh.cols[name] = c
		}
		sh.rankBlock(src.test)
		v.sh = sh
		v.missing = nil // no longer needed
	})
	return v.sh
}

// rankBlock gives the columns of a set that will have a Spearman matrix
// one block of memory for their ranks, which can be mapped in huge pages
// (engine/bigmem): a 1000-column matrix ranks a thousand columns at once.
// It runs before any cell of the set, as prepare reads rankInto.
func (sh *shared) rankBlock(t *recipe.Test) {
	if sh.pairs < matrixMinPairs || len(t.Controls) > 0 || len(sh.names) < 2 || !slices.Contains(t.Measures, stats.Spearman) {
		return
	}
	n := len(sh.cols[sh.names[0]].values)
	block := bigmem.Make[float64](n*len(sh.names), 0)
	for i, name := range sh.names {
		sh.cols[name].rankInto = block[i*n : (i+1)*n : (i+1)*n]
	}
}

// matrixValue returns measure m (Spearman or Pearson, no controls) of pair
// from the set's correlation matrix when enough pairs use the set; ok is
// false otherwise. The matrix is computed on first use, by whichever cell
// needs it first.
func (sh *shared) matrixValue(env cellEnv, t *recipe.Test, m stats.Measure, pair recipe.Pair) (v float64, ok bool, err error) {
	if sh == nil || len(t.Controls) > 0 || sh.pairs < matrixMinPairs || (m != stats.Spearman && m != stats.PearsonR) {
		return 0, false, nil
	}
	sh.matrixOnce.Do(func() { sh.matrixErr = sh.buildMatrices(env, t) })
	if sh.matrixErr != nil {
		return 0, false, sh.matrixErr
	}
	i, okX := sh.index[pair.X]
	j, okY := sh.index[pair.Y]
	if !okX || !okY {
		return 0, false, nil
	}
	k := len(sh.index)
	switch {
	case m == stats.Spearman && sh.rhoMatrix != nil:
		return sh.rhoMatrix[i*k+j], true, nil
	case m == stats.PearsonR && sh.rMatrix != nil:
		return sh.rMatrix[i*k+j], true, nil
	}
	return 0, false, nil
}

// buildMatrices computes the correlation matrices of the set's columns for
// the measures the test asks for.
func (sh *shared) buildMatrices(env cellEnv, t *recipe.Test) error {
	names := sh.names
	if len(names) < 2 || len(sh.cols[names[0]].values) < minPairs {
		return nil
	}
	sh.index = make(map[string]int, len(names))
	for i, name := range names {
		sh.index[name] = i
	}
	if slices.Contains(t.Measures, stats.Spearman) {
		// Every cell of the set waits for the matrix: rank its columns on
		// all workers.
		var eg errgroup.Group
		eg.SetLimit(env.workers)
		ranks := make([][]float64, len(names))
		for i, name := range names {
			eg.Go(func() error {
				if err := env.ctx.Err(); err != nil {
					return err
				}
				ranks[i] = sh.cols[name].prepare(t.Ties.Rule).ranks
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
		sh.rhoMatrix = m
	}
	if slices.Contains(t.Measures, stats.PearsonR) {
		vals := make([][]float64, len(names))
		for i, name := range names {
			vals[i] = sh.cols[name].values
			if hasInf(vals[i]) {
				return nil // Pearson's r is undefined there: pair by pair says why
			}
		}
		m, err := stats.CorrelationMatrix(env.ctx, vals, env.workers)
		if err != nil {
			return err
		}
		sh.rMatrix = m
	}
	return nil
}
