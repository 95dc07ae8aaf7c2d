package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"slices"
	"syscall"

	"concordat/engine"
	"concordat/engine/ledger"
	"concordat/engine/verify"
	"concordat/recipe"
)

// exitDiffers is the exit code of a verification that found differences
// (DESIGN.md), or a ledger that fails its own check.
const exitDiffers = 3

func cmdVerify(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("verify", "Recompute each recipe without writing anything and compare the outcome with the\nlast record of its ledger (or record N): the recipe, each input, each test's\nresults and each table, as recomputed and as it is on disk. The recipe's\nparameters are those the recorded run was given. Exits 3 when anything\ndiffers, naming it.")
	jobs := cmd.fs.IntP("jobs", "j", 0, "worker count (default: the number of CPUs); results do not depend on it")
	record := cmd.fs.Int("record", 0, "compare with record N of the ledger (1 is the first; see concordat history) instead of the last")
	params := cmd.fs.StringArray("param", nil, "set a recipe parameter, `name=value`, in place of the recorded one (repeatable)")
	outDir := cmd.fs.String("out", "", "the `DIR` a run with --out wrote to: its ledger and tables are there")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	if *record < 0 {
		fmt.Fprintf(stderr, "concordat: error: --record must be 1 or more, not %d\n", *record)
		cmd.usage(stderr)
		return exitUsage
	}
	given, ok := overrides(cmd, *params, stderr)
	if !ok {
		return exitUsage
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	context.AfterFunc(ctx, stop)

	code := exitOK
	for _, path := range cmd.fs.Args() {
		code = max(code, verifyOne(ctx, path, *record, *jobs, given, *outDir, stdout, stderr))
	}
	return code
}

func verifyOne(ctx context.Context, path string, record, jobs int, given []recipe.Override, outDir string, stdout, stderr io.Writer) int {
	if !recipeExists(path, stderr) {
		return exitUsage
	}
	target, err := verify.OpenLedger(ledgerFor(path, outDir), record) // outdir.go
	var chain *ledger.ChainError
	var rng *verify.RecordRangeError
	switch {
	case errors.As(err, &chain):
		fmt.Fprintf(stderr, "concordat: error: %s: the ledger fails its own check: %v\n", path, err)
		return exitDiffers
	case errors.As(err, &rng):
		fmt.Fprintf(stderr, "concordat: error: %s: --record %d: %v\n", path, record, err)
		return exitUsage
	case err != nil:
		fmt.Fprintf(stderr, "concordat: error: %s: %v\n", path, err)
		return exitFailed
	}
	// The recorded run's parameters (those the recipe still declares: the
	// settings comparison names the others), then any given now.
	recorded, err := target.Overrides()
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: %s: %v\n", path, err)
		return exitFailed
	}
	if len(recorded) > 0 {
		if bare, _, diags := recipe.LoadWith(path, nil); !diags.HasErrors() {
			recorded = slices.DeleteFunc(recorded, func(o recipe.Override) bool {
				return !slices.ContainsFunc(bare.Params, func(p *recipe.Param) bool { return p.Name == o.Name })
			})
		}
	}
	plan, files, diags := recipe.LoadWith(path, append(recorded, given...))
	if !diags.HasErrors() && outDir != "" {
		diags = append(diags, plan.ConfineOutputs(outDir)...) // where that run wrote
	}
	printDiags(stderr, path, files, diags)
	if diags.HasErrors() {
		fmt.Fprintf(stderr, "concordat: error: %s: %s in the recipe; nothing was verified\n", path, plural(errorCount(diags), "problem"))
		return exitUsage
	}
	rep, err := target.Verify(ctx, plan, engine.Options{Jobs: jobs, Version: toolVersion(), Stderr: stderr, Progress: terminal(stderr)})
	if err != nil {
		return reportVerifyError(stderr, path, plan, err)
	}
	if err := rep.Write(stdout, path); err != nil {
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return exitFailed
	}
	if rep.Differs() {
		return exitDiffers
	}
	return exitOK
}

// reportVerifyError prints a recomputation that failed, as reportError does
// for a run, but says that nothing was verified.
func reportVerifyError(stderr io.Writer, path string, plan *recipe.Plan, err error) int {
	var de *engine.DiagnosticsError
	if errors.As(err, &de) {
		printDiags(stderr, path, plan.Files, de.Diags)
		fmt.Fprintf(stderr, "concordat: error: %s: the recipe cannot be recomputed; nothing was verified\n", path)
		if de.Data {
			return exitFailed
		}
		return exitUsage
	}
	if errors.Is(err, context.Canceled) {
		fmt.Fprintf(stderr, "concordat: error: %s: interrupted; nothing was verified\n", path)
		return exitFailed
	}
	fmt.Fprintf(stderr, "concordat: error: %s: %v; nothing was verified\n", path, err)
	return exitFailed
}
