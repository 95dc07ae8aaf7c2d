package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"sort"
	"strings"
	"syscall"

	"concordat/engine"
	"concordat/recipe"
)

// `run --shard K/N` and `concordat merge`: one run split over the tasks of
// a job array (engine/shard.go says how the cells are split and why the
// merge is the single run's bytes).

// shardFlag is a parsed --shard.
type shardFlag = engine.Shard

// parseShard reads --shard (and checks --shard-file against it); it
// returns the exit code to stop with, or -1 to go on.
func (c *runConfig) parseShard(cmd *command, text string, stderr io.Writer) int {
	if text == "" {
		if c.shardFile != "" {
			fmt.Fprintf(stderr, "concordat: error: --shard-file needs --shard\n")
			cmd.usage(stderr)
			return exitUsage
		}
		return -1
	}
	s, err := engine.ParseShard(text)
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: --%v\n", err)
		cmd.usage(stderr)
		return exitUsage
	}
	if c.shardFile != "" && cmd.fs.NArg() > 1 {
		fmt.Fprintf(stderr, "concordat: error: --shard-file names one file, but %d recipes are given\n", cmd.fs.NArg())
		cmd.usage(stderr)
		return exitUsage
	}
	if c.pin {
		fmt.Fprintf(stderr, "concordat: error: --pin edits the recipe, which the other shards read at the same time; pin before sharding\n")
		cmd.usage(stderr)
		return exitUsage
	}
	c.shard = &s
	return -1
}

// shardFilePath is where shard K of N of plan goes: --shard-file, else
// <recipe>.shard-K-of-N.json beside the ledger.
func shardFilePath(plan *recipe.Plan, cfg runConfig) string {
	if cfg.shardFile != "" {
		return cfg.shardFile
	}
	return filepath.Join(filepath.Dir(plan.LedgerPath()), shardFileName(plan.Name, *cfg.shard))
}

func shardFileName(name string, s engine.Shard) string {
	return fmt.Sprintf("%s.shard-%d-of-%d.json", name, s.K, s.N)
}

// runShard computes one shard of plan and writes its file.
func runShard(ctx context.Context, plan *recipe.Plan, cfg runConfig, opts engine.Options, stdout, stderr io.Writer) (int, string) {
	f, err := engine.ComputeShard(ctx, plan, *cfg.shard, opts)
	if err != nil {
		code := reportError(stderr, plan.Path, plan, err)
		return code, ""
	}
	path := shardFilePath(plan, cfg)
	if err := engine.WriteShardFile(path, f); err != nil {
		fmt.Fprintf(stderr, "concordat: error: %s: write shard file: %v\n", plan.Path, err)
		return exitFailed, ""
	}
	line := fmt.Sprintf("%s: shard %s: %d of %d cells, %s; wrote %s", plan.Path, f.Shard, f.CellCount(), f.Cells, plural(len(f.Records), "result"), path)
	fmt.Fprintln(stdout, line)
	return exitOK, line
}

func cmdMerge(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("merge", "Combine the shard files of one recipe (written by run --shard K/N, one per\ntask of a job array) into its tables and one ledger record, exactly as a single\nrun would have written them. The shards must be 1 to N of one N, each once, of\nthese recipe bytes, settings and data, by this build. Without SHARDFILEs, the\nfiles <recipe>.shard-K-of-N.json beside the ledger are merged.")
	cmd.args = "RECIPE [SHARDFILE...]"
	jobs := cmd.fs.IntP("jobs", "j", 0, "worker count for the tables (default: the number of CPUs)")
	outDir := outFlag(cmd.fs)
	timed := cmd.fs.Bool("timings", false, "print how long reading, tables and writing took (to stderr)")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	path := cmd.fs.Arg(0)
	if !recipeExists(path, stderr) {
		return exitUsage
	}
	names := cmd.fs.Args()[1:]

	// The recipe is loaded with the parameters the shards were given.
	var shards []*engine.ShardFile
	read := func(p string) bool {
		f, err := engine.ReadShardFile(p)
		if err != nil {
			fmt.Fprintf(stderr, "concordat: error: %v\n", err)
			return false
		}
		shards = append(shards, f)
		return true
	}
	bare, files, diags := recipe.LoadWith(path, nil)
	if !diags.HasErrors() {
		diags = append(diags, bare.ConfineOutputs(*outDir)...)
	}
	if diags.HasErrors() {
		printDiags(stderr, path, files, diags)
		fmt.Fprintf(stderr, "concordat: error: %s: %s in the recipe; nothing was merged\n", path, plural(errorCount(diags), "problem"))
		return exitUsage
	}
	if len(names) == 0 {
		names = findShardFiles(bare)
		if len(names) == 0 {
			fmt.Fprintf(stderr, "concordat: error: %s: no shard files %s in %s; run concordat run --shard K/N first, or name the files\n",
				path, bare.Name+".shard-K-of-N.json", filepath.Dir(bare.LedgerPath()))
			return exitUsage
		}
	}
	for _, n := range names {
		if !read(n) {
			return exitFailed
		}
	}
	given, err := recipe.OverridesOf(shards[0].Settings)
	if err != nil {
		fmt.Fprintf(stderr, "concordat: error: %s: %v\n", names[0], err)
		return exitFailed
	}
	plan, files, diags := recipe.LoadWith(path, given)
	if !diags.HasErrors() {
		diags = append(diags, plan.ConfineOutputs(*outDir)...)
	}
	printDiags(stderr, path, files, diags)
	if diags.HasErrors() {
		fmt.Fprintf(stderr, "concordat: error: %s: %s in the recipe; nothing was merged\n", path, plural(errorCount(diags), "problem"))
		return exitUsage
	}

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	context.AfterFunc(ctx, stop)
	opts := engine.Options{Jobs: *jobs, Version: toolVersion(), Stderr: stderr, Progress: terminal(stderr)}
	if *timed {
		opts.Timings = stderr
	}
	rep, err := engine.Merge(ctx, plan, shards, opts)
	var se *engine.ShardSetError
	if errors.As(err, &se) {
		fmt.Fprintf(stderr, "concordat: error: %s: %v; nothing was written\n", path, err)
		return exitUsage
	}
	if err != nil {
		return reportError(stderr, path, plan, err)
	}
	fmt.Fprintf(stdout, "%s: merged %s\n", path, plural(len(shards), "shard"))
	summarise(stdout, path, plan, rep)
	return summariseReproductions(stdout, stderr, path, rep) // reproduce.go
}

// findShardFiles lists the shard files of plan beside its ledger, in shard
// order.
func findShardFiles(plan *recipe.Plan) []string {
	dir := filepath.Dir(plan.LedgerPath())
	found, _ := filepath.Glob(filepath.Join(dir, globQuote(plan.Name)+".shard-*-of-*.json"))
	sort.Slice(found, func(i, j int) bool {
		var ki, ni, kj, nj int
		fmt.Sscanf(strings.TrimPrefix(filepath.Base(found[i]), plan.Name+".shard-"), "%d-of-%d", &ki, &ni)
		fmt.Sscanf(strings.TrimPrefix(filepath.Base(found[j]), plan.Name+".shard-"), "%d-of-%d", &kj, &nj)
		if ni != nj {
			return ni < nj
		}
		return ki < kj
	})
	return found
}

// globQuote escapes the characters filepath.Match treats specially.
func globQuote(s string) string {
	var b strings.Builder
	for _, r := range s {
		if strings.ContainsRune(`*?[\`, r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}
