package engine

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"time"

	"concordat/engine/ledger"
	"concordat/recipe"
)

// This file builds the ledger record of a computation without writing
// anything: commit (emit.go) appends it, and `concordat verify` compares it
// with a record already in the ledger (engine/verify).

// Table is one output table as a computation rendered it, not yet written.
type Table struct {
	Name   string // the table or figure block's label
	Path   string // where the recipe writes it (resolved)
	Format string // the table format's word ("json", "csv", …) or the figure's ("svg", "png")
	Data   []byte
}

// Tables returns the rendered tables, in recipe order.
func (c *Computation) Tables() []Table {
	out := make([]Table, len(c.tables))
	for i, rt := range c.tables {
		out[i] = Table{Name: rt.name, Path: rt.path, Format: rt.format, Data: rt.data}
	}
	return out
}

// Record returns the ledger record that a run of plan would append for this
// computation, with RunSHA256 and PrevSHA256 left empty (the ledger fills
// them when it appends) and both times set to opts' clock. Nothing is
// written.
func (c *Computation) Record(plan *recipe.Plan, opts Options) (ledger.Record, error) {
	now := opts.now()
	return c.record(plan, opts, now, now)
}

// record builds the ledger record of the computation: the recipe's hash,
// the tool, the seed and resolved settings, the inputs, the steps and the
// outputs with their hashes.
func (c *Computation) record(plan *recipe.Plan, opts Options, started, finished time.Time) (ledger.Record, error) {
	settings, err := json.Marshal(plan.Settings())
	if err != nil {
		return ledger.Record{}, fmt.Errorf("encode settings: %w", err)
	}
	var outputs []ledger.Output
	for _, rt := range c.tables {
		sum := sha256.Sum256(rt.data)
		outputs = append(outputs, ledger.Output{
			Table: rt.name, Path: relPath(plan.OutputDir(), rt.path), // recipe/outdir.go
			Format: rt.format, SHA256: hex.EncodeToString(sum[:]), Bytes: int64(len(rt.data)),
		})
	}
	recipeSum := sha256.Sum256(plan.Source)
	format := ledger.FormatV1
	if len(c.cached) > 0 {
		format = ledger.FormatV2
	}
	return ledger.Record{
		Format:   format,
		Recipe:   ledger.File{Path: relPath(plan.Dir, plan.Path), SHA256: hex.EncodeToString(recipeSum[:]), Bytes: int64(len(plan.Source))},
		Title:    plan.Title,
		Tool:     ledger.CurrentTool(version(opts)),
		Seed:     plan.Seed,
		Settings: settings,
		Inputs:   c.inputs,
		Steps:    c.steps,
		Outputs:  outputs,
		Started:  ledger.Timestamp(started),
		Finished: ledger.Timestamp(finished),
		Cached:   c.cached,
	}, nil
}
