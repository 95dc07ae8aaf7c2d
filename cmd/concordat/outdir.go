package main

import (
	"path/filepath"

	"github.com/spf13/pflag"

	"concordat/engine/ledger"
)

// outFlag adds --out to a command (recipe/outdir.go says where outputs go).
func outFlag(fs *pflag.FlagSet) *string {
	return fs.String("out", "", "write the tables, figures and ledger under `DIR` (at the paths the recipe gives, leading ../ and / taken off) instead of the recipe's folder; needed for outputs that would leave it")
}

// ledgerFor is the ledger of the recipe at path for a run that wrote to
// outDir ("" for the recipe's folder), as recipe.Plan.LedgerPath says.
func ledgerFor(path, outDir string) string {
	if outDir == "" {
		return ledger.PathFor(path)
	}
	return filepath.Join(outDir, filepath.Base(ledger.PathFor(path)))
}
