package engine

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strconv"
	"time"

	"concordat/engine/bigmem"
	"concordat/engine/ledger"
	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/io/render"
	"concordat/recipe"
)

type renderedTable struct {
	table *recipe.Table
	data  []byte
}

// fullTable lays results out as the result record: one column per contract
// key, in contract order.
func fullTable(title string, rows []Result) *render.Table {
	// The cells are made row by row as the table is written: a matrix of
	// 10⁵ or more results would otherwise hold ~1.7 kB of cells per row.
	return &render.Table{Title: title, Columns: recordColumns, NumRows: len(rows),
		RowFunc: func(i int, dst []render.Cell) []render.Cell {
			r := &rows[i]
			return append(dst,
				render.Text(r.Test), render.Text(r.X), render.Text(r.Y), render.Text(r.Group),
				render.Text(r.Measure), render.Int(int64(r.N)), render.Int(int64(r.NDropped)),
				render.Real(r.Estimate), render.Text(r.Alternative), render.Prob(r.PValue),
				optText(r.PMethod), render.Real(r.CILow), render.Real(r.CIHigh),
				render.Real(r.CILevel), optText(r.CIMethod), render.Prob(r.PAdjusted),
				render.Text(r.AdjustMethod), render.Real(r.TiesX), render.Real(r.TiesY),
				render.List(r.Warnings), render.List(r.Controls),
			)
		}}
}

// optText is a text cell that is null when s is empty: the method of a
// p-value or interval that was not computed.
func optText(s string) render.Cell {
	if s == "" {
		return render.NoText()
	}
	return render.Text(s)
}

// readableTable is the Markdown shape: the columns a reader of a paper
// needs, with warnings numbered in notes under the table. The interval's
// level heads its column when all rows share it, else it gets a column of
// its own; the alternative gets a column when any row is one-sided, so a
// one-sided p-value never passes for a two-sided one.
func readableTable(title string, rows []Result) *render.Table {
	level, sameLevel := commonLevel(rows)
	oneSided := slices.ContainsFunc(rows, func(r Result) bool { return r.Alternative != stats.TwoSided.String() })
	adjusted := slices.ContainsFunc(rows, func(r Result) bool { return r.AdjustMethod != stats.AdjustNone.String() })
	partial := slices.ContainsFunc(rows, func(r Result) bool { return len(r.Controls) > 0 })

	cols := []string{"test", "x", "y", "group", "measure"}
	if partial {
		cols = append(cols, "controls")
	}
	cols = append(cols, "n", "estimate")
	if sameLevel {
		cols = append(cols, render.Percent(level)+"% CI")
	} else {
		cols = append(cols, "CI", "level")
	}
	if oneSided {
		cols = append(cols, "alternative")
	}
	cols = append(cols, "p", "p method")
	if adjusted {
		cols = append(cols, adjustedHeader(rows))
	}
	cols = append(cols, "notes")
	t := &render.Table{Title: title, Columns: cols}

	noteIndex := map[string]int{}
	for _, r := range rows {
		var refs []string
		for _, w := range r.Warnings {
			k, ok := noteIndex[w]
			if !ok {
				t.Notes = append(t.Notes, w)
				k = len(t.Notes)
				noteIndex[w] = k
			}
			refs = append(refs, strconv.Itoa(k))
		}
		row := []render.Cell{
			render.Text(r.Test), render.Text(r.X), render.Text(r.Y), render.Text(r.Group),
			render.Text(r.Measure),
		}
		if partial {
			row = append(row, render.List(r.Controls))
		}
		row = append(row, render.Int(int64(r.N)), render.Real(r.Estimate), render.Interval(r.CILow, r.CIHigh))
		if !sameLevel {
			if math.IsNaN(r.CILevel) {
				row = append(row, render.NoText())
			} else {
				row = append(row, render.Text(render.Percent(r.CILevel)+"%"))
			}
		}
		if oneSided {
			row = append(row, render.Text(r.Alternative))
		}
		row = append(row, render.Prob(r.PValue), optText(r.PMethod))
		if adjusted {
			adj := render.Prob(r.PAdjusted)
			if r.AdjustMethod == stats.AdjustNone.String() {
				adj = render.Text("")
			}
			row = append(row, adj)
		}
		row = append(row, render.List(refs))
		t.Rows = append(t.Rows, row)
	}
	for i := range t.Notes {
		t.Notes[i] = fmt.Sprintf("[%d] %s", i+1, t.Notes[i])
	}
	return t
}

// adjustedHeader names the adjusted p-value column after its method when
// every adjusted row shares one, e.g. "p adjusted (holm)".
func adjustedHeader(rows []Result) string {
	method := ""
	for _, r := range rows {
		switch {
		case r.AdjustMethod == stats.AdjustNone.String():
		case method == "":
			method = r.AdjustMethod
		case method != r.AdjustMethod:
			return "p adjusted"
		}
	}
	return "p adjusted (" + method + ")"
}

func renderTable(plan *recipe.Plan, tb *recipe.Table, rows []Result) ([]byte, error) {
	// About what a row takes: growing the buffer by doubling would copy a
	// large table several times over (and fault in new memory each time).
	perRow := map[recipe.TableFormat]int{recipe.Markdown: 256, recipe.CSV: 512, recipe.JSON: 1024}[tb.Format]
	buf := bytes.NewBuffer(bigmem.Make[byte](0, perRow*(len(rows)+1)))
	var err error
	switch tb.Format {
	case recipe.Markdown:
		err = render.Encode(buf, readableTable(plan.Title, rows), render.Markdown, tb.Digits)
	case recipe.CSV:
		// CSV and JSON are the machine-readable result record: they keep
		// every digit (shortest round-trip) so no number is lost to
		// rounding; `digits` shapes the human-facing Markdown table.
		err = render.Encode(buf, fullTable(plan.Title, rows), render.CSV, -1)
	case recipe.JSON:
		err = render.Encode(buf, fullTable(plan.Title, rows), render.JSON, -1)
	default:
		panic(fmt.Sprintf("engine: table format %v has no renderer", tb.Format))
	}
	if err != nil {
		return nil, fmt.Errorf("render table %q: %w", tb.Name, err)
	}
	return buf.Bytes(), nil
}

// commonLevel returns the interval level shared by every row, and whether
// there is one (tests of one table may declare different levels).
func commonLevel(rows []Result) (float64, bool) {
	level := math.NaN()
	for _, r := range rows {
		switch {
		case math.IsNaN(r.CILevel): // no interval: no level to show
		case math.IsNaN(level):
			level = r.CILevel
		case r.CILevel != level:
			return 0, false
		}
	}
	if math.IsNaN(level) {
		return 0.95, true
	}
	return level, true
}

// stepRecord hashes what one test read and what it produced. The input hash
// covers the test's resolved settings and the hashes of the data it read;
// the result hash is the sha256 of the test's results in the JSON table
// encoding, which is canonical (fixed key order, shortest round-trip numbers).
func stepRecord(plan *recipe.Plan, t *recipe.Test, inputs []ledger.Input, where *whereOutcome, results []Result) (ledger.Step, error) {
	var data []ledger.Input
	for _, in := range inputs {
		if in.Name == t.Pairing.Dataset.Name {
			data = append(data, in)
		}
	}
	inHash, err := ledger.Hash(struct {
		Test     any            `json:"test"`
		Datasets []ledger.Input `json:"datasets"`
	}{testSettings(t, plan.Seed, where), data})
	if err != nil {
		return ledger.Step{}, fmt.Errorf("hash inputs of test %q: %w", t.Name, err)
	}
	// The JSON text goes straight into the hash: for a matrix of 10⁵
	// correlations it would be hundreds of megabytes.
	h := sha256.New()
	if err := render.Encode(h, fullTable("", results), render.JSON, -1); err != nil {
		return ledger.Step{}, err
	}
	return ledger.Step{Test: t.Name, InputSHA256: inHash, ResultSHA256: hex.EncodeToString(h.Sum(nil)), Results: len(results)}, nil
}

// commit writes the tables and appends the ledger record, or nothing. The
// ledger's lock is held from the first look at the ledger to the append, so
// two runs of one recipe cannot interleave their tables and records; if the
// append fails after the tables moved into place, the earlier tables are
// put back.
func (c *Computation) commit(ctx context.Context, plan *recipe.Plan, opts Options, started time.Time) (*Report, error) {
	ledgerPath := plan.LedgerPath()
	settings, err := json.Marshal(plan.Settings())
	if err != nil {
		return nil, fmt.Errorf("encode settings: %w", err)
	}
	var batch render.Batch
	var held *ledger.Locked
	defer func() {
		// On any early return or panic, undo the tables while the ledger
		// is still locked (so no other run's tables are overwritten by our
		// backups), then release the lock.
		batch.Abort()
		if held != nil {
			held.Unlock()
		}
	}()
	var outputs []ledger.Output
	for _, rt := range c.tables {
		if err := batch.Add(rt.table.Path, rt.data); err != nil {
			return nil, fmt.Errorf("write table %q: %w", rt.table.Name, err)
		}
		sum := sha256.Sum256(rt.data)
		outputs = append(outputs, ledger.Output{
			Table: rt.table.Name, Path: relPath(plan.Dir, rt.table.Path),
			Format: rt.table.Format.String(), SHA256: hex.EncodeToString(sum[:]), Bytes: int64(len(rt.data)),
		})
	}
	recipeSum := sha256.Sum256(plan.Source)
	rec := ledger.Record{
		Format:   ledger.FormatV1,
		Recipe:   ledger.File{Path: relPath(plan.Dir, plan.Path), SHA256: hex.EncodeToString(recipeSum[:]), Bytes: int64(len(plan.Source))},
		Title:    plan.Title,
		Tool:     ledger.CurrentTool(version(opts)),
		Seed:     plan.Seed,
		Settings: settings,
		Inputs:   c.inputs,
		Steps:    c.steps,
		Outputs:  outputs,
		Started:  ledger.Timestamp(started),
		Finished: ledger.Timestamp(opts.now()),
	}

	held, err = ledger.LockContext(ctx, ledgerPath, func() {
		fmt.Fprintf(opts.stderr(), "concordat: waiting for the ledger lock of %s (another run of this recipe is writing)\n", plan.Path)
	})
	if err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	// Refuse before any table moves if the ledger is damaged, and stop
	// here if the run was interrupted: this is the last point at which
	// nothing has been written.
	if _, err := held.Records(); err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if err := batch.Commit(); err != nil {
		return nil, fmt.Errorf("move tables into place: %w", err)
	}
	stored, err := appendRecord(held, rec)
	if err != nil {
		err = fmt.Errorf("append ledger: %w", err)
		if uerr := batch.Undo(); uerr != nil {
			return nil, &PartialWriteError{Err: err, Undo: uerr}
		}
		return nil, err
	}
	if err := batch.Release(); err != nil {
		// The run is complete and recorded; a leftover backup is untidy,
		// not wrong, so it is not a failure.
		fmt.Fprintf(opts.stderr(), "concordat: warning: %v\n", err)
	}
	return &Report{Results: c.Results, Record: stored, Ledger: ledgerPath, Outputs: outputs}, nil
}

// appendRecord appends to the held ledger; tests replace it to make the
// append fail after the tables have moved.
var appendRecord = (*ledger.Locked).Append

func version(o Options) string {
	if o.Version == "" {
		return "devel"
	}
	return o.Version
}

// testSettings is the resolved description of a test that its step hash
// covers: everything that can change its numbers, including how each of its
// columns is read (kind, levels in order) and which tokens mean missing.
func testSettings(t *recipe.Test, seed int64, where *whereOutcome) any {
	p := t.Pairing
	measures := make([]string, len(t.Measures))
	for i, m := range t.Measures {
		measures[i] = m.String()
	}
	type column struct {
		Name   string   `json:"name"`
		Kind   string   `json:"kind"`
		Levels []string `json:"levels"`
	}
	var columns []column
	for _, name := range pairingColumns(p) {
		c := valueSpec(p.Dataset, name)
		columns = append(columns, column{c.Name, c.Kind.String(), c.Levels})
	}
	for _, name := range t.Controls {
		c := valueSpec(p.Dataset, name)
		columns = append(columns, column{c.Name, c.Kind.String(), c.Levels})
	}
	if p.By != "" {
		columns = append(columns, column{p.By, dataset.Label.String(), nil})
	}
	return struct {
		Name         string        `json:"name"`
		Dataset      string        `json:"dataset"`
		Columns      []column      `json:"columns"`
		MissingAs    []string      `json:"missing_tokens"`
		Pairs        []recipe.Pair `json:"pairs"`
		Missing      string        `json:"missing"`
		By           string        `json:"by"`
		Controls     []string      `json:"controls"`
		TieRule      string        `json:"tie_rule"`
		MaxShare     float64       `json:"max_share"`
		Measures     []string      `json:"measures"`
		Alternative  string        `json:"alternative"`
		PValue       string        `json:"p_value"`
		Permutations int           `json:"permutations"`
		Seed         int64         `json:"seed"`
		Level        float64       `json:"interval_level"`
		Interval     string        `json:"interval_method"`
		Resamples    int           `json:"resamples"`
		Adjust       string        `json:"adjust"`
		Where        *whereOutcome `json:"where,omitempty"`
	}{t.Name, p.Dataset.Name, columns, p.Dataset.Missing, p.Pairs, p.Missing.String(), p.By,
		nonNilStrings(t.Controls), t.Ties.Rule.String(), t.Ties.MaxShare, measures, t.Alternative.String(),
		t.PValue.String(), t.Permutations, seed, t.Interval.Level, t.Interval.Method.String(),
		t.Interval.Resamples, t.Adjust.String(), where}
}
