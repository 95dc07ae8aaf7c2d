package engine

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"time"

	"concordat/engine/bigmem"
	"concordat/engine/ledger"
	"concordat/engine/stats"
	"concordat/io/dataset"
	"concordat/io/render"
	"concordat/recipe"
)

// renderedTable is one output file ready to be written: a table, or a
// figure (whose format is "svg" or "png").
type renderedTable struct {
	name   string // the table or figure block's label
	path   string
	format string
	data   []byte
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

// renderTable writes one table block's results in its format (present.go
// lays them out). The files of result records (csv, tsv, json, parquet)
// keep every digit (shortest round-trip), so no number is lost to
// rounding; digits and style shape the readable tables.
func renderTable(plan *recipe.Plan, tb *recipe.Table, rows []Result, figs map[string]renderedFigure) ([]byte, error) {
	// About what a row takes: growing the buffer by doubling would copy a
	// large table several times over (and fault in new memory each time).
	perRow := 256
	switch tb.Format {
	case recipe.CSV, recipe.TSV:
		perRow = 512
	case recipe.JSON:
		perRow = 1024
	}
	buf := bytes.NewBuffer(bigmem.Make[byte](0, perRow*(len(rows)+1)))
	style := styleOf(tb)
	if !tb.Format.Readable() {
		style = render.Style{Numbers: render.Plain, Digits: -1}
	}
	if err := render.Write(buf, tableDocument(plan, tb, rows, figs), formatOf(tb.Format), style); err != nil {
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
	inHash, err := stepInputHash(plan, t, inputs, where)
	if err != nil {
		return ledger.Step{}, err
	}
	outHash, err := resultHash(results)
	if err != nil {
		return ledger.Step{}, err
	}
	return ledger.Step{Test: t.Name, InputSHA256: inHash, ResultSHA256: outHash, Results: len(results)}, nil
}

// stepInputHash is a step's input hash (see stepRecord): what the test
// asks for and the bytes of the data it reads.
func stepInputHash(plan *recipe.Plan, t *recipe.Test, inputs []ledger.Input, where *whereOutcome) (string, error) {
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
		return "", fmt.Errorf("hash inputs of test %q: %w", t.Name, err)
	}
	return inHash, nil
}

// resultHash is a step's result hash (see stepRecord). The JSON text goes
// straight into the hash: for a matrix of 10⁵ correlations it would be
// hundreds of megabytes.
func resultHash(results []Result) (string, error) {
	h := sha256.New()
	if err := render.Encode(h, fullTable("", results), render.JSON, -1); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// commit writes the tables and appends the ledger record, or nothing. The
// ledger's lock is held from the first look at the ledger to the append, so
// two runs of one recipe cannot interleave their tables and records; if the
// append fails after the tables moved into place, the earlier tables are
// put back.
func (c *Computation) commit(ctx context.Context, plan *recipe.Plan, opts Options, started time.Time) (*Report, error) {
	ledgerPath := plan.LedgerPath()
	rec, err := c.record(plan, opts, started, opts.now()) // engine/record.go
	if err != nil {
		return nil, err
	}
	outputs := rec.Outputs
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
	for _, rt := range c.tables {
		if err := batch.Add(rt.path, rt.data); err != nil {
			return nil, fmt.Errorf("write %q: %w", rt.name, err)
		}
	}

	held, err = ledger.LockContext(ctx, ledgerPath, func() {
		fmt.Fprintf(opts.stderr(), "concordat: waiting for the ledger lock of %s (another run of this recipe is writing)\n", plan.Path)
	})
	if err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	// Put right what a run killed while writing left behind (journal.go).
	if err := recoverJournal(held, ledgerPath, opts.stderr()); err != nil {
		return nil, err
	}
	// Refuse before any table moves if the ledger is damaged, and stop
	// here if the run was interrupted: this is the last point at which
	// nothing has been written.
	recs, err := held.Records()
	if err != nil {
		return nil, fmt.Errorf("ledger: %w", err)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	// The journal lets the next run finish or undo this commit should the
	// process die between the first rename and the ledger's append.
	if err := writeJournal(ledgerPath, len(recs), c.tables); err != nil {
		return nil, err
	}
	if err := batch.Commit(); err != nil {
		removeJournal(ledgerPath)
		return nil, fmt.Errorf("move tables into place: %w", err)
	}
	stored, err := appendRecord(held, rec)
	if err != nil {
		err = fmt.Errorf("append ledger: %w", err)
		if uerr := batch.Undo(); uerr != nil {
			// The journal stays: the next run tries to put them back.
			return nil, &PartialWriteError{Err: err, Undo: uerr}
		}
		removeJournal(ledgerPath)
		return nil, err
	}
	if err := removeJournal(ledgerPath); err != nil {
		fmt.Fprintf(opts.stderr(), "concordat: warning: %v\n", err)
	}
	if err := batch.Release(); err != nil {
		// The run is complete and recorded; a leftover backup is untidy,
		// not wrong, so it is not a failure.
		fmt.Fprintf(opts.stderr(), "concordat: warning: %v\n", err)
	}
	return &Report{Results: c.Results, Record: stored, Ledger: ledgerPath, Outputs: outputs, Reproductions: c.Reproductions}, nil
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

// pairsDecl is how a pairing declares its pairs: every x with every y, or
// every pair among columns, in that order. The pairs follow from it, and it
// hashes in a fraction of the time of the pairs themselves (a 1000-column
// matrix has half a million).
type pairsDecl struct {
	X       []string `json:"x"`
	Y       []string `json:"y"`
	Columns []string `json:"columns"`
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
		Pairs        pairsDecl     `json:"pairs"`
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
	}{t.Name, p.Dataset.Name, columns, p.Dataset.Missing, pairsDecl{nonNilStrings(p.X), nonNilStrings(p.Y), nonNilStrings(p.Columns)}, p.Missing.String(), p.By,
		nonNilStrings(t.Controls), t.Ties.Rule.String(), t.Ties.MaxShare, measures, t.Alternative.String(),
		t.PValue.String(), t.Permutations, seed, t.Interval.Level, t.Interval.Method.String(),
		t.Interval.Resamples, t.Adjust.String(), where}
}
