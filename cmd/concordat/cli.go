package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"
	"runtime/debug"
	"strings"
	"syscall"

	"github.com/hashicorp/hcl/v2"
	"github.com/spf13/pflag"
	"golang.org/x/term"

	"concordat/engine"
	"concordat/recipe"
)

// Exit codes (DESIGN.md).
const (
	exitOK     = 0
	exitFailed = 1 // a run failed: data error, I/O
	exitUsage  = 2 // usage or recipe error
)

// version is the tool version written to ledgers. Release builds set it with
// -ldflags "-X main.version=…"; otherwise the module version from the build
// info is used, or "devel".
var version = ""

const usage = `usage: concordat <command> [flags] [arguments]

commands:
  run RECIPE...      compute the recipe's tests, write its tables, append to its ledger
                     (--shard K/N: one part of the run, for a job array)
  merge RECIPE       combine the shard files of a recipe into its tables and ledger record
  check RECIPE...    validate recipes against their data headers and print the plan; compute nothing
  verify RECIPE...   recompute without writing and compare with the ledger; exit 3 on any difference
  history RECIPE     the ledger's records, newest first (--prov: as W3C PROV-JSON)
  power              power of a test of association, or the n needed for a target power
  inspect FILE       describe a data file's columns; --recipe prints a recipe skeleton for it
  version            print the version

Run "concordat <command> --help" for the flags of a command.
`

func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return exitUsage
	}
	cmd, rest := args[0], args[1:]
	switch cmd {
	case "run":
		return cmdRun(rest, stdout, stderr)
	case "check":
		return cmdCheck(rest, stdout, stderr)
	case "power":
		return cmdPower(rest, stdout, stderr)
	case "inspect":
		return cmdInspect(rest, stdout, stderr) // inspect.go
	case "verify":
		return cmdVerify(rest, stdout, stderr) // verify.go
	case "history":
		return cmdHistory(rest, stdout, stderr) // history.go
	case "merge":
		return cmdMerge(rest, stdout, stderr) // shard.go
	case "version", "--version":
		fmt.Fprintf(stdout, "concordat %s\n", toolVersion())
		return exitOK
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return exitOK
	}
	fmt.Fprintf(stderr, "concordat: error: unknown command %q\n%s", cmd, usage)
	return exitUsage
}

func toolVersion() string {
	if version != "" {
		return version
	}
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return "devel"
}

// command is a sub-command's flag set and usage text.
type command struct {
	fs      *pflag.FlagSet
	summary string
	args    string // what follows the flags in the usage line; "" for none
}

func newCommand(name, summary string) *command {
	fs := pflag.NewFlagSet(name, pflag.ContinueOnError)
	fs.SetOutput(io.Discard) // usage is printed by parse, to the right stream
	fs.Usage = func() {}
	return &command{fs: fs, summary: summary, args: "RECIPE..."}
}

func (c *command) usage(w io.Writer) {
	line := "usage: concordat " + c.fs.Name() + " [flags]"
	if c.args != "" {
		line += " " + c.args
	}
	fmt.Fprintf(w, "%s\n\n%s\n", line, c.summary)
	if !c.fs.HasFlags() {
		return
	}
	fmt.Fprintf(w, "\nflags:\n")
	c.fs.SetOutput(w)
	c.fs.PrintDefaults()
	c.fs.SetOutput(io.Discard)
}

// parse parses args and returns the exit code to stop with, or -1 to go on.
// --help prints the usage to stdout; a usage error prints it to stderr.
func (c *command) parse(args []string, stdout, stderr io.Writer) int {
	if err := c.fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			c.usage(stdout)
			return exitOK
		}
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		c.usage(stderr)
		return exitUsage
	}
	switch {
	case c.args != "" && c.fs.NArg() == 0:
		what := "at least one recipe file"
		if c.args == "FILE" {
			what = "a data file" // inspect
		}
		fmt.Fprintf(stderr, "concordat: error: %s needs %s\n", c.fs.Name(), what)
		c.usage(stderr)
		return exitUsage
	case c.args == "" && c.fs.NArg() > 0:
		fmt.Fprintf(stderr, "concordat: error: %s takes flags only, not %q\n", c.fs.Name(), c.fs.Arg(0))
		c.usage(stderr)
		return exitUsage
	}
	return -1
}

func cmdRun(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("run", "Compute every test of each recipe, write its tables and append one record to\nthe recipe's ledger (<recipe>.ledger.jsonl beside it). A failed run writes nothing.\nSeveral recipes run at once (a batch): one summary line each, exit code the worst.")
	jobs := cmd.fs.IntP("jobs", "j", 0, "workers of the whole command (default: the number of CPUs), shared by the recipes running at once; results do not depend on it")
	timed := cmd.fs.Bool("timings", false, "print how long reading, computing, tables and writing took (to stderr)")
	params := paramFlag(cmd.fs) // param.go
	pin := cmd.fs.Bool("pin", false, "first write each dataset's current sha256 into the recipe as its pin (in place; comments and layout kept)")
	noCache := cmd.fs.Bool("no-cache", false, "compute every test, even one whose results the step cache holds for the same inputs, settings and build")
	// Batches, output folders and shards (batch.go, shard.go).
	atOnce := cmd.fs.Int("at-once", 0, "recipes run at the same time (default: the smaller of --jobs and the number of recipes); each gets --jobs/at-once workers")
	outDir := outFlag(cmd.fs)
	shard := cmd.fs.String("shard", "", "compute only shard `K/N` (1 ≤ K ≤ N) of each recipe's cells and write a shard file instead of tables; concordat merge combines the N files")
	shardFile := cmd.fs.String("shard-file", "", "with --shard: write the shard file here (default: <recipe>.shard-K-of-N.json beside the ledger)")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	cfg := runConfig{jobs: *jobs, atOnce: *atOnce, pin: *pin, timings: *timed, outDir: *outDir, shardFile: *shardFile}
	if !*noCache {
		cfg.cacheDir = stepCacheDir()
	}
	var ok bool
	if cfg.given, ok = overrides(cmd, *params, stderr); !ok {
		return exitUsage
	}
	if code := cfg.parseShard(cmd, *shard, stderr); code >= 0 { // shard.go
		return code
	}
	if *atOnce < 0 || *jobs < 0 {
		fmt.Fprintf(stderr, "concordat: error: --jobs and --at-once take a positive count (0: the default)\n")
		cmd.usage(stderr)
		return exitUsage
	}
	// The first Ctrl-C (or SIGTERM from a scheduler) cancels the run, which
	// then writes nothing; once cancelled, the signals get their default
	// behaviour back, so a second Ctrl-C ends the process at once.
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	context.AfterFunc(ctx, stop)
	return runRecipes(ctx, cmd.fs.Args(), cfg, stdout, stderr) // batch.go
}

func cmdCheck(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("check", "Validate each recipe and the headers of its data files, and print the resolved\nplan with every default made explicit. Nothing is computed or written.")
	params := paramFlag(cmd.fs) // param.go
	outDir := outFlag(cmd.fs)   // batch.go
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	given, ok := overrides(cmd, *params, stderr)
	if !ok {
		return exitUsage
	}
	code := exitOK
	for _, path := range cmd.fs.Args() {
		if !recipeExists(path, stderr) {
			code = max(code, exitUsage)
			continue
		}
		plan, files, diags := recipe.LoadWith(path, given)
		if !diags.HasErrors() {
			diags = append(diags, plan.ConfineOutputs(*outDir)...) // recipe/outdir.go
		}
		if !diags.HasErrors() {
			diags = append(diags, engine.Check(plan)...)
		}
		printDiags(stderr, path, files, diags)
		if diags.HasErrors() {
			fmt.Fprintf(stderr, "concordat: error: %s: %s\n", path, plural(errorCount(diags), "problem"))
			code = max(code, diagsExit(diags))
			continue
		}
		if err := plan.Describe(stdout); err != nil {
			fmt.Fprintf(stderr, "concordat: error: %v\n", err)
			code = max(code, exitFailed)
		}
	}
	return code
}

// recipeExists reports a recipe path that names no readable file in one
// plain line rather than as a diagnostic without source.
func recipeExists(path string, stderr io.Writer) bool {
	info, err := os.Stat(path)
	switch {
	case err != nil && errors.Is(err, os.ErrNotExist):
		fmt.Fprintf(stderr, "concordat: error: %s: no such recipe file\n", path)
		return false
	case err != nil:
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return false
	case info.IsDir():
		fmt.Fprintf(stderr, "concordat: error: %s is a folder; give the recipe file (for example %s)\n", path, filepath.Join(path, "recipe.hcl"))
		return false
	}
	return true
}

// reportError prints a failed run and returns its exit code.
func reportError(stderr io.Writer, path string, plan *recipe.Plan, err error) int {
	var de *engine.DiagnosticsError
	if errors.As(err, &de) {
		printDiags(stderr, path, plan.Files, de.Diags)
		if !de.Data {
			fmt.Fprintf(stderr, "concordat: error: %s: %s where the recipe meets its data; nothing was computed\n", path, plural(errorCount(de.Diags), "problem"))
			return exitUsage
		}
		fmt.Fprintf(stderr, "concordat: error: %s: run failed; nothing was written\n", path)
		return exitFailed
	}
	var pw *engine.PartialWriteError
	if errors.As(err, &pw) {
		fmt.Fprintf(stderr, "concordat: error: %s: %v\nconcordat: error: some tables may hold this run's output while the ledger does not record it; restore them from version control or rerun\n", path, err)
		return exitFailed
	}
	if errors.Is(err, context.Canceled) {
		fmt.Fprintf(stderr, "concordat: error: %s: interrupted; nothing was written\n", path)
		return exitFailed
	}
	fmt.Fprintf(stderr, "concordat: error: %s: %v; nothing was written\n", path, err)
	return exitFailed
}

// diagsExit is the exit code for diagnostics: 1 when the data could not be
// read (a run-time failure), else 2 (the recipe is wrong).
func diagsExit(diags hcl.Diagnostics) int {
	for _, d := range diags {
		if d.Severity == hcl.DiagError && engine.IsDataFault(d) {
			return exitFailed
		}
	}
	return exitUsage
}

// errorCount counts the errors among diags.
func errorCount(diags hcl.Diagnostics) int {
	n := 0
	for _, d := range diags {
		if d.Severity == hcl.DiagError {
			n++
		}
	}
	return n
}

// printDiags prints diagnostics with the recipe text they point at.
func printDiags(w io.Writer, path string, files map[string]*hcl.File, diags hcl.Diagnostics) {
	if len(diags) == 0 {
		return
	}
	width := uint(0)
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		if cols, _, err := term.GetSize(int(f.Fd())); err == nil {
			width = uint(cols)
		}
	}
	// Each diagnostic opens with its position as file:line:col, the form
	// editors and terminals link to; HCL's writer then shows the source
	// line, the detail and the suggestion.
	for _, d := range diags {
		var buf bytes.Buffer
		dw := hcl.NewDiagnosticTextWriter(&buf, files, width, false)
		dw.WriteDiagnostic(d)
		if d.Subject != nil {
			fmt.Fprintf(w, "%s:%d:%d: ", d.Subject.Filename, d.Subject.Start.Line, d.Subject.Start.Column)
		}
		w.Write(buf.Bytes())
	}
}

// terminal returns w when it is a terminal, for progress lines that redraw
// in place, and nil otherwise (a log file or a pipe gets no progress).
func terminal(w io.Writer) io.Writer {
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		return w
	}
	return nil
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// summarise prints one line per run and one per table written.
func summarise(w io.Writer, path string, plan *recipe.Plan, rep *engine.Report) {
	warned := 0
	for _, r := range rep.Results {
		if len(r.Warnings) > 0 {
			warned++
		}
	}
	fmt.Fprintf(w, "%s: %s", path, plural(len(rep.Results), "result"))
	if warned > 0 {
		fmt.Fprintf(w, " (%d with warnings; see the tables)", warned)
	}
	fmt.Fprintf(w, ", run %s\n", short(rep.Record.RunSHA256))
	if c := rep.Record.Cached; len(c) > 0 {
		fmt.Fprintf(w, "  from the step cache (same inputs, settings and build; --no-cache recomputes): %s\n", strings.Join(c, ", "))
	}
	for _, o := range rep.Outputs {
		fmt.Fprintf(w, "  wrote %s\n", filepath.Join(plan.OutputDir(), filepath.FromSlash(o.Path)))
	}
	fmt.Fprintf(w, "  ledger %s\n", rep.Ledger)
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

// stepCacheDir is the step cache's folder: $CONCORDAT_CACHE_DIR when set
// (empty turns the cache off), else concordat/ in the user's cache folder
// ($XDG_CACHE_HOME or ~/.cache on Linux), or "" when there is none.
func stepCacheDir() string {
	if dir, ok := os.LookupEnv("CONCORDAT_CACHE_DIR"); ok {
		return dir
	}
	base, err := os.UserCacheDir()
	if err != nil {
		return ""
	}
	return filepath.Join(base, "concordat")
}
