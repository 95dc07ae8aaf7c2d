package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"

	"concordat/engine"
	"concordat/recipe"
)

// This file runs the recipes of one `concordat run` command: one recipe as
// before, or many at once with a bounded pool (a batch).
//
// How --jobs is split: --jobs N is the number of workers of the whole
// command (default: the number of CPUs). Up to M recipes run at the same
// time, M = --at-once, by default min(N, number of recipes); each gets
// max(1, N/M) workers for its cells. So `--jobs 8` runs eight small recipes
// at once with one worker each, or two large ones with four each when
// `--at-once 2` says so (a way to bound memory: each running recipe holds
// its data). The split never changes a number (results do not depend on
// the worker count).
//
// Recipes that touch the same files — one writes a table, ledger or shard
// file that another writes or reads — never run at the same time: the
// later (in argument order) waits for the earlier, so a batch does what
// running the recipes one after the other would do. A recipe that fails,
// or panics, fails alone; the others run to the end.
//
// Each recipe's messages are held until it ends and then printed in
// argument order, so the messages of two recipes never interleave: one
// summary line per recipe on stdout, its diagnostics on stderr, and at the
// end a line naming the recipes that failed.

// runConfig is what the run command's flags say about every recipe.
type runConfig struct {
	jobs, atOnce int
	given        []recipe.Override
	pin          bool
	cacheDir     string
	timings      bool
	outDir       string     // --out: where outputs and the ledger go ("" for the recipe's folder)
	shard        *shardFlag // --shard K/N: compute a shard and write its file (shard.go)
	shardFile    string     // --shard-file
}

// recipeJob is one recipe of a run command and what it printed.
type recipeJob struct {
	path   string
	plan   *recipe.Plan // nil when it failed to load
	code   int
	line   string // the summary line of a batch
	stdout bytes.Buffer
	stderr bytes.Buffer
	deps   []int // earlier recipes that touch the same files
	done   chan struct{}
}

// runRecipes runs every recipe at paths and returns the exit code: the
// largest of theirs.
func runRecipes(ctx context.Context, paths []string, cfg runConfig, stdout, stderr io.Writer) int {
	if len(paths) == 1 {
		// One recipe: its messages go out as they come, with progress on
		// a terminal, and the summary names every file written.
		plan, code := loadForRun(paths[0], cfg, stdout, stderr)
		if plan == nil {
			return code
		}
		code, _ = runOne(ctx, plan, cfg, cfg.jobs, stdout, stderr, terminal(stderr))
		return code
	}

	jobs := make([]*recipeJob, len(paths))
	for i, p := range paths {
		j := &recipeJob{path: p, done: make(chan struct{})}
		j.plan, j.code = loadForRun(p, cfg, &j.stdout, &j.stderr)
		jobs[i] = j
	}
	workers := cfg.jobs
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	loaded := 0
	for _, j := range jobs {
		if j.plan != nil {
			loaded++
		}
	}
	atOnce := cfg.atOnce
	if atOnce <= 0 {
		atOnce = min(workers, max(loaded, 1))
	}
	each := max(1, workers/atOnce)
	findConflicts(jobs, cfg)

	slots := make(chan struct{}, atOnce)
	var wg sync.WaitGroup
	for _, j := range jobs {
		if j.plan == nil {
			close(j.done)
			continue
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			defer close(j.done)
			for _, d := range j.deps {
				<-jobs[d].done
			}
			select {
			case slots <- struct{}{}:
			case <-ctx.Done():
				fmt.Fprintf(&j.stderr, "concordat: error: %s: interrupted before it started; nothing was written\n", j.path)
				j.code = exitFailed
				return
			}
			defer func() { <-slots }()
			j.code, j.line = runGuarded(ctx, j.plan, cfg, each, &j.stderr)
		}()
	}

	// Print each recipe's messages as soon as it and every recipe before it
	// have ended.
	var failed []string
	for _, j := range jobs {
		<-j.done
		io.Copy(stderr, &j.stderr)
		io.Copy(stdout, &j.stdout)
		if j.code != exitOK {
			failed = append(failed, j.path)
			fmt.Fprintf(stdout, "%s: FAILED (exit %d: %s; the messages are on stderr)\n", j.path, j.code, exitMeaning(j.code))
			continue
		}
		fmt.Fprintln(stdout, j.line)
	}
	wg.Wait()
	if len(failed) > 0 {
		fmt.Fprintf(stderr, "concordat: error: %d of %d recipes failed: %s\n", len(failed), len(jobs), strings.Join(failed, ", "))
	}
	code := exitOK
	for _, j := range jobs {
		code = max(code, j.code)
	}
	return code
}

// exitMeaning says in a few words what an exit code means.
func exitMeaning(code int) string {
	switch code {
	case exitFailed:
		return "the run failed"
	case exitUsage:
		return "a usage or recipe error"
	}
	return "failed"
}

// runGuarded is runOne for a recipe of a batch: a panic (a bug) fails that
// recipe with the stack on its stderr instead of ending the whole batch.
// (A panic on one of the recipe's own worker goroutines cannot be caught
// this way; it still ends the process.)
func runGuarded(ctx context.Context, plan *recipe.Plan, cfg runConfig, workers int, stderr io.Writer) (code int, line string) {
	defer func() {
		if v := recover(); v != nil {
			fmt.Fprintf(stderr, "concordat: error: %s: internal error (please report it): %v\n%s", plan.Path, v, debug.Stack())
			code, line = exitFailed, ""
		}
	}()
	// A batch prints one line per recipe, not runOne's full summary.
	return runOne(ctx, plan, cfg, workers, io.Discard, stderr, nil)
}

// loadForRun checks that the recipe exists, pins it if asked, and loads it
// with the run's parameters and output folder. It returns nil and the exit
// code when the recipe cannot run.
func loadForRun(path string, cfg runConfig, stdout, stderr io.Writer) (*recipe.Plan, int) {
	if !recipeExists(path, stderr) {
		return nil, exitUsage
	}
	if cfg.pin {
		if c := pinRecipe(path, cfg.given, stdout, stderr); c != exitOK { // pin.go
			return nil, c
		}
	}
	plan, files, diags := recipe.LoadWith(path, cfg.given)
	if !diags.HasErrors() {
		diags = append(diags, plan.ConfineOutputs(cfg.outDir)...) // recipe/outdir.go
	}
	printDiags(stderr, path, files, diags) // errors, or warnings only
	if diags.HasErrors() {
		fmt.Fprintf(stderr, "concordat: error: %s: %s in the recipe; nothing was computed\n", path, plural(errorCount(diags), "problem"))
		return nil, exitUsage
	}
	return plan, exitOK
}

// runOne runs one loaded recipe with the given workers: it computes and
// commits (or, with --shard, writes the shard file), prints the full
// summary to stdout and returns the exit code and the one-line summary a
// batch prints.
func runOne(ctx context.Context, plan *recipe.Plan, cfg runConfig, workers int, stdout, stderr, progress io.Writer) (int, string) {
	var timingsTo io.Writer
	if cfg.timings {
		timingsTo = stderr
	}
	opts := engine.Options{
		Jobs: workers, Version: toolVersion(), Stderr: stderr, Progress: progress, Timings: timingsTo,
		CacheDir: cfg.cacheDir,
	}
	if cfg.shard != nil {
		return runShard(ctx, plan, cfg, opts, stdout, stderr) // shard.go
	}
	rep, err := engine.Run(ctx, plan, opts)
	if err != nil {
		return reportError(stderr, plan.Path, plan, err), ""
	}
	summarise(stdout, plan.Path, plan, rep)
	code := summariseReproductions(stdout, stderr, plan.Path, rep) // reproduce.go
	return code, summaryLine(plan.Path, rep)
}

// summaryLine is a batch's line for a recipe that ran.
func summaryLine(path string, rep *engine.Report) string {
	warned := 0
	for _, r := range rep.Results {
		if len(r.Warnings) > 0 {
			warned++
		}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s: %s", path, plural(len(rep.Results), "result"))
	if warned > 0 {
		fmt.Fprintf(&b, " (%d with warnings)", warned)
	}
	fmt.Fprintf(&b, ", %s written, run %s", plural(len(rep.Outputs), "file"), short(rep.Record.RunSHA256))
	if c := len(rep.Record.Cached); c > 0 {
		fmt.Fprintf(&b, " (%s from the step cache)", plural(c, "test"))
	}
	return b.String()
}

// findConflicts gives each recipe of a batch the earlier recipes it must
// wait for: those that write a file it writes or reads, or read a file it
// writes. Paths are compared absolute and cleaned.
func findConflicts(jobs []*recipeJob, cfg runConfig) {
	type files struct{ read, write map[string]bool }
	abs := func(p string) string {
		if a, err := filepath.Abs(p); err == nil {
			return a
		}
		return filepath.Clean(p)
	}
	sets := make([]files, len(jobs))
	for i, j := range jobs {
		if j.plan == nil {
			continue
		}
		f := files{read: map[string]bool{}, write: map[string]bool{}}
		f.read[abs(j.plan.Path)] = true
		for _, ds := range j.plan.Datasets {
			f.read[abs(ds.Path)] = true
		}
		for _, p := range writtenBy(j.plan, cfg) {
			f.write[abs(p)] = true
		}
		sets[i] = f
	}
	overlaps := func(a, b map[string]bool) bool {
		for p := range a {
			if b[p] {
				return true
			}
		}
		return false
	}
	for i, a := range jobs {
		if a.plan == nil {
			continue
		}
		for k := range i {
			if jobs[k].plan == nil {
				continue
			}
			x, y := sets[k], sets[i]
			if overlaps(x.write, y.write) || overlaps(x.write, y.read) || overlaps(y.write, x.read) {
				a.deps = append(a.deps, k)
			}
		}
	}
}

// writtenBy lists the files a run of plan writes: its tables and figures,
// its ledger with its lock and journal, or with --shard its shard file.
func writtenBy(plan *recipe.Plan, cfg runConfig) []string {
	if cfg.shard != nil {
		return []string{shardFilePath(plan, cfg)} // shard.go
	}
	ledgerPath := plan.LedgerPath()
	out := []string{ledgerPath, ledgerPath + ".lock", engine.JournalPath(ledgerPath)}
	for _, t := range plan.Tables {
		out = append(out, t.Path)
	}
	for _, f := range plan.Figures {
		out = append(out, f.Path)
	}
	return out
}
