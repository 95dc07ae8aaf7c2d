package engine

import (
	"cmp"
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"github.com/hashicorp/hcl/v2"
	"golang.org/x/sync/errgroup"

	"concordat/engine/ledger"
	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/recipe"
)

// Options tunes a run. The zero value is ready to use: as many workers as
// GOMAXPROCS, tool version "devel", the wall clock.
type Options struct {
	Jobs    int              // workers for the (test, pair, group) cells; ≤ 0 means GOMAXPROCS
	Version string           // tool version written to the ledger; "" means "devel"
	Now     func() time.Time // clock for the ledger's recorded (never hashed) times
	Stderr  io.Writer        // where warnings about the run itself go; nil means os.Stderr

	// Progress, when not nil, receives a progress line that is redrawn in
	// place (meant for a terminal); nil shows none.
	Progress io.Writer

	// Timings, when not nil, receives one line with the time each phase
	// of the run took (reading, computing, tables, writing).
	Timings io.Writer

	// CacheDir is the step cache's folder (engine/cache.go); "" means no
	// cache: every step is computed.
	CacheDir string

	part *partition // a shard's or a merge's cells (shard.go); nil: all of them
}

func (o Options) stderr() io.Writer {
	if o.Stderr != nil {
		return o.Stderr
	}
	return os.Stderr
}

func (o Options) jobs() int {
	if o.Jobs > 0 {
		return o.Jobs
	}
	return runtime.GOMAXPROCS(0)
}

func (o Options) now() time.Time {
	if o.Now != nil {
		return o.Now()
	}
	return time.Now()
}

// Report is what a completed run produced.
type Report struct {
	Results []Result        // every result, in recipe order
	Record  ledger.Record   // the ledger record appended
	Ledger  string          // path of the ledger file
	Outputs []ledger.Output // tables written

	// Reproductions compare the recipe's published tables with the
	// results, in recipe order (reproduce.go).
	Reproductions []*Reproduction
}

// Run computes plan, writes its tables and appends one ledger record. On
// any error nothing is written. Recipe problems found against the data (an
// unknown column, a pin that does not match, a label outside `levels`) come
// back as a *DiagnosticsError pointing at the recipe.
func Run(ctx context.Context, plan *recipe.Plan, opts Options) (*Report, error) {
	started := opts.now()
	// A damaged ledger would refuse the record at the end: say so before
	// the computing, not after it.
	if _, err := ledger.Read(plan.LedgerPath()); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	comp, err := Compute(ctx, plan, opts)
	if err != nil {
		return nil, err
	}
	return comp.commitTimed(ctx, plan, opts, started)
}

// commitTimed is commit, closing the write phase of --timings after it.
func (c *Computation) commitTimed(ctx context.Context, plan *recipe.Plan, opts Options, started time.Time) (*Report, error) {
	rep, err := c.commit(ctx, plan, opts, started)
	if err == nil {
		c.clock.lap("write")
		c.clock.report(plan.Path)
	}
	return rep, err
}

// Computation holds everything a run computed before anything is written.
type Computation struct {
	Results []Result
	inputs  []ledger.Input
	steps   []ledger.Step
	tables  []renderedTable
	clock   *timings
	cached  []string // tests whose results came from the step cache

	// Reproductions compare the published tables with Results.
	Reproductions []*Reproduction
}

// Compute loads the data and computes every result of plan, writing nothing.
func Compute(ctx context.Context, plan *recipe.Plan, opts Options) (*Computation, error) {
	if diags := Check(plan); diags.HasErrors() {
		return nil, &DiagnosticsError{Diags: diags, Data: anyDataFault(diags)}
	}
	clock := newTimings(opts.Timings)
	tables, inputs, err := loadDatasets(ctx, plan)
	if err != nil {
		return nil, err
	}
	// Row filters run before any grouping or pairing (engine/where.go).
	wheres, err := applyWheres(ctx, plan, tables, opts.jobs())
	if err != nil {
		return nil, err
	}

	clock.lap("read")

	// Lay out the cells of work in recipe order, then fill them concurrently.
	// A cell is one (test, pair, group): a matrix has hundreds of
	// thousands, so it is kept small and its input is made when it runs.
	type cell struct {
		src  *cellSource // the test and group
		pair int         // index into the test's pairs
		at   int         // its first result in results
	}
	var cells []cell
	groupsOf := map[*recipe.Pairing][]group{}
	var diags hcl.Diagnostics
	for _, p := range plan.Pairings {
		tbl, ok := tables[p.Dataset.Name]
		if !ok {
			continue // no test uses it
		}
		g, d := groupRows(tbl, p, wheres[p.Dataset.Name])
		groupsOf[p] = g
		diags = append(diags, d...)
	}
	if diags.HasErrors() {
		return nil, &DiagnosticsError{Diags: diags, Data: true}
	}
	// Every cell has one result per measure of its test, so the results
	// are laid out before they are computed: each cell fills its own
	// window of one slice (a matrix has hundreds of thousands of results,
	// which are large), and each test's results are one window of it, as
	// its cells are contiguous.
	total, ncells := 0, 0
	for _, t := range plan.Tests {
		total += len(t.Pairing.Pairs) * len(groupsOf[t.Pairing]) * len(t.Measures)
		ncells += len(t.Pairing.Pairs) * len(groupsOf[t.Pairing])
	}
	cells = make([]cell, 0, ncells)
	results := make([]Result, total)
	byTest := map[string][]Result{}
	// A test whose step the cache holds (engine/cache.go) takes its
	// results from there and has no cells.
	cache := openStepCache(opts.CacheDir)
	inHashes := make([]string, len(plan.Tests))
	cached := map[string]bool{}
	at := 0
	for ti, t := range plan.Tests {
		n := len(t.Pairing.Pairs) * len(groupsOf[t.Pairing]) * len(t.Measures)
		start := at
		if cache != nil {
			h, err := stepInputHash(plan, t, inputs, wheres[t.Pairing.Dataset.Name])
			if err != nil {
				return nil, err
			}
			inHashes[ti] = h
			if rs, ok := cache.load(cache.key(h), n); ok {
				copy(results[at:at+n], rs)
				at += n
				byTest[t.Name] = results[start:at:at]
				cached[t.Name] = true
				continue
			}
		}
		tbl := tables[t.Pairing.Dataset.Name]
		groups := groupsOf[t.Pairing]
		srcs := make([]*cellSource, len(groups))
		for gi, g := range groups {
			srcs[gi] = newCellSource(t, tbl, g)
		}
		for pi := range t.Pairing.Pairs {
			for gi := range groups {
				cells = append(cells, cell{src: srcs[gi], pair: pi, at: at})
				at += len(t.Measures)
			}
		}
		byTest[t.Name] = results[start:at:at]
	}

	// A shard computes only its cells, a merge none: it takes the results
	// from the shard files (shard.go).
	if opts.part != nil {
		keep, err := opts.part.begin(plan, groupsOf, inputs, results)
		if err != nil {
			return nil, err
		}
		cells = slices.DeleteFunc(cells, func(c cell) bool { return !keep(c.at) })
	}

	prog := newProgress(opts.Progress, len(cells))
	defer prog.finish()
	// The sort scratch kept between columns is not needed once every
	// cell has its results.
	defer stats.ReleaseScratch()
	eg, ectx := errgroup.WithContext(ctx)
	env := cellEnv{ctx: ectx, seed: plan.Seed, workers: opts.jobs(), progress: prog}
	// Each worker takes the next cell until none is left: a matrix has
	// hundreds of thousands of cells, too many for a goroutine each.
	var next atomic.Int64
	for range min(opts.jobs(), len(cells)) {
		eg.Go(func() error {
			for {
				i := int(next.Add(1) - 1)
				if i >= len(cells) {
					return nil
				}
				if err := ectx.Err(); err != nil {
					return err
				}
				c := cells[i]
				t := c.src.test
				in := cellInput{test: t, pair: t.Pairing.Pairs[c.pair], group: c.src.group,
					dst: results[c.at : c.at+len(t.Measures) : c.at+len(t.Measures)]}
				in.s, in.px, in.py, in.sh = c.src.sample(in.pair)
				err := measureSample(env, in)
				prog.cellDone()
				if err != nil {
					return err
				}
			}
		})
	}
	if err := eg.Wait(); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	clock.lap("compute")
	if opts.part != nil && opts.part.shard != nil {
		// A shard's results are adjusted, hashed and laid out in tables
		// by the merge, over every cell.
		return &Computation{inputs: inputs, Results: results, clock: clock}, nil
	}

	adjustFamilies(plan, results, cached)
	// Published tables: each printed value against its result, and the
	// conventions that reproduce those that differ (reproduce.go).
	repros, err := reproduce(ctx, plan, opts, byTest, tables, groupsOf)
	if err != nil {
		return nil, err
	}
	reproByName := map[string]*Reproduction{}
	for _, rp := range repros {
		reproByName[rp.Published.Name] = rp
	}
	comp := &Computation{inputs: inputs, Results: results, clock: clock, steps: make([]ledger.Step, len(plan.Tests)), Reproductions: repros}
	for _, t := range plan.Tests {
		if cached[t.Name] {
			comp.cached = append(comp.cached, t.Name)
		}
	}
	// The step hashes and the outputs are independent of each other: on a
	// large matrix each is seconds of encoding, so they run side by side.
	var out errgroup.Group
	out.SetLimit(opts.jobs())
	for i, t := range plan.Tests {
		out.Go(func() error {
			step, err := stepRecord(plan, t, inputs, wheres[t.Pairing.Dataset.Name], byTest[t.Name])
			comp.steps[i] = step
			if err == nil && cache != nil && !cached[t.Name] {
				cache.store(cache.key(inHashes[i]), byTest[t.Name], step.ResultSHA256)
			}
			return err
		})
	}
	// Tables and figures (engine/figure.go), rendered but not yet written.
	out.Go(func() error {
		var err error
		comp.tables, err = renderOutputs(plan, byTest, tables, groupsOf, reproByName, opts.jobs())
		return err
	})
	if err := out.Wait(); err != nil {
		return nil, err
	}
	for _, rp := range repros { // after the tests' steps, whose input hashes they cite
		step, err := reproductionStep(rp, comp.steps[:len(plan.Tests)])
		if err != nil {
			return nil, err
		}
		comp.steps = append(comp.steps, step)
	}
	clock.lap("tables")
	return comp, nil
}

// group is the rows of one analysis group, in file order.
type group struct {
	name string
	rows []int  // nil means every row
	note string // said in every result of the group, "" for none
}

// groupRows returns "all" followed by one group per distinct label of the
// pairing's `by` column: in numeric order when every label is a number, else
// in text order. Rows whose label is missing belong only to "all". A label
// spelled "all" would be indistinguishable from the whole sample in every
// table, so it is an error that points at the `by` attribute.
//
// Only the rows that the dataset's where keeps (w; nil without a filter)
// take part, and every group says how many the filter excluded.
func groupRows(t *dataset.Table, p *recipe.Pairing, w *whereOutcome) ([]group, hcl.Diagnostics) {
	kept := w.rows() // nil: every row
	out := []group{{name: "all", rows: kept, note: w.note()}}
	if p.By == "" {
		return out, nil
	}
	col := labelColumn(t, p.By)
	idx := map[string][]int{}
	unlabelled := 0
	n := len(col.Labels)
	if kept != nil {
		n = len(kept)
	}
	for k := 0; k < n; k++ {
		i := k
		if kept != nil {
			i = kept[k]
		}
		if col.Missing != nil && col.Missing[i] {
			unlabelled++
			continue
		}
		l := col.Labels[i]
		idx[l] = append(idx[l], i)
	}
	if rows, ok := idx["all"]; ok {
		r := p.ColumnRanges[p.By]
		return nil, hcl.Diagnostics{{
			Severity: hcl.DiagError, Summary: "Group label clashes with the whole sample",
			Detail: fmt.Sprintf("%d rows of %s have %s = \"all\", the name every table gives the whole sample. Rename that group in the data, or group by another column.",
				len(rows), p.Dataset.PathAsWritten, p.By),
			Subject: r.Ptr(),
		}}
	}
	if unlabelled > 0 {
		out[0].note = joinNotes(out[0].note, fmt.Sprintf("%s no %s value: counted in \"all\" only", plural(unlabelled, "row has", "rows have"), p.By))
	}
	names := make([]string, 0, len(idx))
	for k := range idx {
		names = append(names, k)
	}
	sortLabels(names)
	for _, k := range names {
		out = append(out, group{name: k, rows: idx[k], note: w.note()})
	}
	return out, nil
}

// sortLabels orders group labels numerically when all of them are numbers
// (so "2" comes before "10"), and as text otherwise.
func sortLabels(names []string) {
	nums := make(map[string]float64, len(names))
	for _, k := range names {
		v, err := strconv.ParseFloat(strings.TrimSpace(k), 64)
		if err != nil || math.IsNaN(v) {
			slices.Sort(names)
			return
		}
		nums[k] = v
	}
	slices.SortFunc(names, func(a, b string) int {
		if c := cmp.Compare(nums[a], nums[b]); c != 0 {
			return c
		}
		return strings.Compare(a, b)
	})
}

// pairUp returns the complete (x, y) observations of one group of test
// t's pairing under its missing rule, with t's controls: a row missing a
// control is dropped whatever the rule, since a partial correlation needs
// every variable.
func pairUp(tbl *dataset.Table, t *recipe.Test, pair recipe.Pair, rows []int) sample {
	p := t.Pairing
	xs, ys := valueColumn(tbl, pair.X).Values, valueColumn(tbl, pair.Y).Values
	var others [][]float64
	if p.Missing == recipe.Listwise {
		for _, name := range pairingColumns(p) {
			if name != pair.X && name != pair.Y {
				others = append(others, valueColumn(tbl, name).Values)
			}
		}
	}
	controls := make([][]float64, len(t.Controls))
	for j, name := range t.Controls {
		controls[j] = valueColumn(tbl, name).Values
	}
	total := tbl.Rows
	if rows != nil {
		total = len(rows)
	}
	s := sample{x: make([]float64, 0, total), y: make([]float64, 0, total)}
	if len(controls) > 0 {
		s.z = make([][]float64, len(controls))
		for j := range s.z {
			s.z[j] = make([]float64, 0, total)
		}
	}
	anyMissing := func(cols [][]float64, i int) bool {
		for _, o := range cols {
			if math.IsNaN(o[i]) {
				return true
			}
		}
		return false
	}
	var missX, missY, missBoth, missOther, missControl int
	for k := 0; k < total; k++ {
		i := k
		if rows != nil {
			i = rows[k]
		}
		x, y := xs[i], ys[i]
		mx, my := math.IsNaN(x), math.IsNaN(y)
		switch {
		case mx && my:
			missBoth++
			continue
		case mx:
			missX++
			continue
		case my:
			missY++
			continue
		case anyMissing(others, i):
			missOther++
			continue
		case anyMissing(controls, i):
			missControl++
			continue
		}
		s.x = append(s.x, x)
		s.y = append(s.y, y)
		for j, c := range controls {
			s.z[j] = append(s.z[j], c[i])
		}
	}
	s.dropped, s.dropNote = pairDropNote(t, pair, total, pairMisses{missX, missY, missBoth, missOther, missControl})
	return s
}

// pairMisses counts a pair's dropped rows by reason.
type pairMisses struct{ x, y, both, other, control int }

// pairDropNote returns how many of the group's total rows a pair dropped
// and the note that says why ("" when none were).
func pairDropNote(t *recipe.Test, pair recipe.Pair, total int, m pairMisses) (int, string) {
	dropped := m.x + m.y + m.both + m.other + m.control
	if dropped == 0 {
		return 0, ""
	}
	var why []string
	if m.x > 0 {
		why = append(why, fmt.Sprintf("%d missing %s", m.x, pair.X))
	}
	if m.y > 0 {
		why = append(why, fmt.Sprintf("%d missing %s", m.y, pair.Y))
	}
	if m.both > 0 {
		why = append(why, fmt.Sprintf("%d missing both", m.both))
	}
	if m.other > 0 {
		why = append(why, fmt.Sprintf("%d missing another column of the pairing (listwise)", m.other))
	}
	if m.control > 0 {
		why = append(why, fmt.Sprintf("%d missing a control (%s)", m.control, strings.Join(t.Controls, ", ")))
	}
	return dropped, fmt.Sprintf("%d of %d rows dropped: %s", dropped, total, strings.Join(why, ", "))
}

// pairingColumns lists the variables of a pairing (not its `by` column).
func pairingColumns(p *recipe.Pairing) []string {
	var out []string
	seen := map[string]bool{}
	for _, list := range [][]string{p.X, p.Y, p.Columns} {
		for _, c := range list {
			if !seen[c] {
				seen[c] = true
				out = append(out, c)
			}
		}
	}
	return out
}

// valueColumn returns the numeric or ordinal column name of t.
func valueColumn(t *dataset.Table, name string) *dataset.Column {
	if c := t.Column(name, dataset.Numeric); c != nil {
		return c
	}
	if c := t.Column(name, dataset.Ordinal); c != nil {
		return c
	}
	panic(fmt.Sprintf("engine: column %q was not loaded as values", name))
}

// labelColumn returns the grouping column name of t.
func labelColumn(t *dataset.Table, name string) *dataset.Column {
	if c := t.Column(name, dataset.Label); c != nil {
		return c
	}
	panic(fmt.Sprintf("engine: column %q was not loaded as labels", name))
}

// relPath writes path relative to the recipe's folder with forward slashes,
// so that ledgers compare equal across machines.
func relPath(dir, path string) string {
	if r, err := filepath.Rel(dir, path); err == nil {
		return filepath.ToSlash(r)
	}
	return filepath.ToSlash(path)
}

// DiagnosticsError is a failed run whose causes point at the recipe text.
// Data reports whether the data (not the recipe alone) was at fault.
type DiagnosticsError struct {
	Diags hcl.Diagnostics
	Data  bool
}

func (e *DiagnosticsError) Error() string { return e.Diags.Error() }

// PartialWriteError is the one failure after which earlier outputs may not
// be as they were: the ledger append failed after the tables moved into
// place, and putting the earlier tables back failed too. Undo says what
// could not be restored (and where the backups are).
type PartialWriteError struct {
	Err  error // why the run failed
	Undo error // why the earlier tables could not all be restored
}

func (e *PartialWriteError) Error() string {
	return fmt.Sprintf("%v; restoring the earlier tables failed: %v", e.Err, e.Undo)
}

func (e *PartialWriteError) Unwrap() error { return e.Err }

// plural picks the singular or plural phrase for n and prefixes n.
func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}
