package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"syscall"
	"time"

	"github.com/spf13/pflag"
)

// Exit codes, as concordat's own.
const (
	exitOK     = 0
	exitFailed = 1 // a run failed (not a timeout: that is a result)
	exitUsage  = 2
)

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }

// options are the driver's flags.
type options struct {
	only      []string
	sizes     string
	format    string
	noR       bool
	out       string
	keep      bool
	runs      int
	timeout   time.Duration
	concordat string
}

const usageLine = "usage: concordat-bench [flags]"

func run(args []string, stdout, stderr io.Writer) int {
	fs := pflag.NewFlagSet("concordat-bench", pflag.ContinueOnError)
	fs.SetOutput(io.Discard)
	var o options
	fs.StringSliceVar(&o.only, "only", nil, "run only these items (comma-separated): "+itemNames())
	fs.StringVar(&o.sizes, "sizes", "full", "data sizes: full (the issue's) or small (10⁵ rows, 20 columns: a quick smoke run)")
	fs.StringVar(&o.format, "format", "csv", "what concordat reads for the Kendall, matrix and permutation items: csv or parquet (R always reads the CSV)")
	fs.BoolVar(&o.noR, "no-r", false, "do not run the R reference even when R is installed")
	fs.StringVar(&o.out, "out", "", "folder for the data sets and the work items (default: bench-data/ at the repository root)")
	fs.BoolVar(&o.keep, "keep", false, "keep the generated data and item folders (a later run reuses matching data)")
	fs.IntVar(&o.runs, "runs", 3, "runs of each command; the table gives the median time")
	fs.DurationVar(&o.timeout, "timeout", 10*time.Minute, "per run: a command still running then is killed and reported as a timeout")
	fs.StringVar(&o.concordat, "concordat", "", "the concordat binary to measure (default: built from this repository into a temporary folder)")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			fmt.Fprintf(stdout, "%s\n\nflags:\n%s", usageLine, fs.FlagUsages())
			return exitOK
		}
		fmt.Fprintf(stderr, "concordat-bench: error: %v\n%s\n", err, usageLine)
		return exitUsage
	}
	if msg := o.check(fs.Args()); msg != "" {
		fmt.Fprintf(stderr, "concordat-bench: error: %s\n%s\n", msg, usageLine)
		return exitUsage
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	if err := bench(ctx, o, stdout, stderr); err != nil {
		fmt.Fprintf(stderr, "concordat-bench: error: %v\n", err)
		return exitFailed
	}
	return exitOK
}

// check validates the flags and returns a message for the first problem.
func (o *options) check(args []string) string {
	switch {
	case len(args) > 0:
		return fmt.Sprintf("no arguments are taken, only flags (got %q)", args[0])
	case o.sizes != "full" && o.sizes != "small":
		return fmt.Sprintf("--sizes is full or small, not %q", o.sizes)
	case o.format != "csv" && o.format != "parquet":
		return fmt.Sprintf("--format is csv or parquet, not %q", o.format)
	case o.runs < 1:
		return "--runs must be at least 1"
	case o.timeout < 0:
		return "--timeout must not be negative"
	}
	for _, n := range o.only {
		if _, ok := findItem(n); !ok {
			return fmt.Sprintf("no work item %q; the items are %s", n, itemNames())
		}
	}
	return ""
}

// selected is the items to run, in the table's order.
func (o *options) selected() []item {
	if len(o.only) == 0 {
		return items
	}
	var sel []item
	for _, it := range items {
		if slices.Contains(o.only, it.name) {
			sel = append(sel, it)
		}
	}
	return sel
}

// bench runs the whole benchmark and prints the report to stdout; progress
// goes to stderr. A run that fails ends its item's runs and is reported in
// the table; bench then goes on to the next item, and returns an error once
// the report is printed. A timeout is a result, not a failure.
func bench(ctx context.Context, o options, stdout, stderr io.Writer) error {
	logf := func(format string, a ...any) { fmt.Fprintf(stderr, "concordat-bench: "+format+"\n", a...) }
	root, rootErr := repoRoot()
	if o.out == "" {
		if rootErr != nil {
			return fmt.Errorf("%v; give --out", rootErr)
		}
		o.out = filepath.Join(root, "bench-data")
	}
	out, err := filepath.Abs(o.out)
	if err != nil {
		return err
	}
	tmp, err := os.MkdirTemp("", "concordat-bench-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)

	bin := o.concordat
	if bin == "" {
		if rootErr != nil {
			return fmt.Errorf("%v; give --concordat", rootErr)
		}
		bin = filepath.Join(tmp, "concordat")
		logf("building concordat (go build -o %s ./cmd/concordat)", bin)
		cmd := exec.CommandContext(ctx, "go", "build", "-o", bin, "./cmd/concordat")
		cmd.Dir = root
		if msg, err := cmd.CombinedOutput(); err != nil {
			return fmt.Errorf("build concordat: %v\n%s", err, msg)
		}
	}
	if bin, err = filepath.Abs(bin); err != nil {
		return err
	}
	env := describeMachine(ctx, bin)
	env.loadBefore = loadAverage()

	r := runner{timeout: o.timeout}
	if _, err := os.Stat(timeBinary); err == nil {
		r.gnuTime = true
	} else {
		env.notes = append(env.notes, "peak RSS from the child's rusage ("+timeBinary+" is absent: apt-get install -y time)")
	}
	rs := rStatus{}
	if !o.noR {
		rs = probeR(ctx)
		env.notes = append(env.notes, rs.notes...)
		if rs.version != "" {
			env.r = rs.version
		}
	}

	var created []string // paths this run made, removed at the end unless --keep
	defer func() {
		if o.keep {
			return
		}
		for _, p := range slices.Backward(created) {
			os.RemoveAll(p)
		}
		os.Remove(filepath.Join(out, "data"))
		os.Remove(filepath.Join(out, "items"))
		os.Remove(out)
	}()
	if _, err := os.Stat(out); errors.Is(err, os.ErrNotExist) {
		created = append(created, out)
	}

	var rows []row
	dataDir := filepath.Join(out, "data")
	selected := o.selected()
	for _, it := range selected {
		d := it.dataSet(o.sizes)
		parquet := it.readsParquet(o.format)
		// The Parquet file is written when any selected item on the same
		// data reads it, so spearman_csv and spearman_parquet share one
		// generation.
		needParquet := slices.ContainsFunc(selected, func(s item) bool { return s.kind == it.kind && s.readsParquet(o.format) })
		logf("%s: data %s (%s)", it.name, d.base(), dims(d))
		start := time.Now()
		wrote, err := writeData(dataDir, d, needParquet)
		if err != nil {
			return fmt.Errorf("generate %s: %w", d.base(), err)
		}
		if wrote {
			created = append(created, d.csvPath(dataDir), d.parquetPath(dataDir), filepath.Join(dataDir, d.base()+".stamp"))
			logf("%s: generated in %s", it.name, fmtSeconds(time.Since(start).Seconds()))
		}
		dir := filepath.Join(out, "items", it.name)
		if _, err := os.Stat(dir); errors.Is(err, os.ErrNotExist) {
			created = append(created, dir)
		}
		if err := writeItem(dir, dataDir, it, d, parquet); err != nil {
			return fmt.Errorf("write %s: %w", it.name, err)
		}
		j := job{item: it, data: d, parquet: parquet, dir: dir, dataDir: dataDir}
		rw, err := j.measure(ctx, r, o.runs, bin, rs, logf)
		if err != nil {
			return fmt.Errorf("%s: %w", it.name, err)
		}
		rows = append(rows, rw)
	}
	env.sizes, env.runs, env.timeout, env.format = o.sizes, o.runs, o.timeout, o.format
	env.loadAfter = loadAverage()
	writeReport(stdout, env, rows)
	failed := 0
	for _, rw := range rows {
		if rw.concordat.failed || rw.r.failed {
			failed++
		}
	}
	if failed > 0 {
		return fmt.Errorf("%s failed (see the messages above)", plural(failed, "item"))
	}
	return nil
}

// job is one item made ready to run: its data written, its folder holding
// recipe.hcl and reference.R.
type job struct {
	item    item
	data    dataSet
	parquet bool   // concordat reads the Parquet file
	dir     string // the item's folder
	dataDir string
}

// measure runs concordat, then R, runs times each, and compares their
// results.
func (j job) measure(ctx context.Context, r runner, runs int, bin string, rs rStatus, logf func(string, ...any)) (row, error) {
	it, dir := j.item, j.dir
	rw := row{item: it, data: j.data, parquet: j.parquet}
	dataFile := j.data.csvPath(j.dataDir)
	if j.parquet {
		dataFile = j.data.parquetPath(j.dataDir)
	}
	if fi, err := os.Stat(dataFile); err == nil {
		rw.bytes = fi.Size()
	}
	for i := range runs {
		// Each run starts from the same state: no outputs, no ledger to
		// read back and extend.
		for _, p := range []string{"out", "recipe.ledger.jsonl", "recipe.ledger.jsonl.lock"} {
			if err := os.RemoveAll(filepath.Join(dir, p)); err != nil {
				return rw, err
			}
		}
		s, err := r.run(ctx, dir, []string{bin, "run", "--timings", "--no-cache", "recipe.hcl"})
		if errors.Is(err, errTimeout) {
			logf("%s: concordat run %d: timed out after %s", it.name, i+1, r.timeout)
			rw.concordat.timedOut = true
			break
		}
		if ctx.Err() != nil {
			return rw, ctx.Err()
		}
		if err != nil {
			logf("%s: concordat run %d failed: %v", it.name, i+1, err)
			rw.concordat.failed = true
			break
		}
		c, ok := inMemorySeconds(s.stderr)
		if ok {
			rw.concordat.compute = append(rw.concordat.compute, c)
		}
		logf("%s: concordat run %d: %s (CPU %s; in memory %s), peak RSS %s", it.name, i+1, fmtSeconds(s.wall.Seconds()), fmtSeconds(s.cpu.Seconds()), fmtSeconds(c), fmtBytes(s.peakRSS))
		rw.concordat.add(s)
	}
	if !rs.usable(it) {
		rw.rSkipped = rs.skipReason(it)
		return rw, nil
	}
	for i := range runs {
		os.Remove(filepath.Join(dir, "reference.csv"))
		s, err := r.run(ctx, dir, []string{"Rscript", "--vanilla", "reference.R"})
		if errors.Is(err, errTimeout) {
			logf("%s: R run %d: timed out after %s", it.name, i+1, r.timeout)
			rw.r.timedOut = true
			break
		}
		if ctx.Err() != nil {
			return rw, ctx.Err()
		}
		if err != nil {
			logf("%s: R run %d failed: %v", it.name, i+1, err)
			rw.r.failed = true
			break
		}
		c, ok := computeSeconds(s.stdout)
		if ok {
			rw.r.compute = append(rw.r.compute, c)
		}
		logf("%s: R run %d: %s (CPU %s; in memory %s), peak RSS %s", it.name, i+1, fmtSeconds(s.wall.Seconds()), fmtSeconds(s.cpu.Seconds()), fmtSeconds(c), fmtBytes(s.peakRSS))
		rw.r.add(s)
	}
	if len(rw.concordat.wall) > 0 && len(rw.r.wall) > 0 {
		rw.agree = compareResults(filepath.Join(dir, "out", "result.csv"), filepath.Join(dir, "reference.csv"), it.permutations == 0)
	}
	return rw, nil
}

// repoRoot finds the concordat module's root above the working directory.
func repoRoot() (string, error) {
	dir, err := os.Getwd()
	if err != nil {
		return "", err
	}
	for {
		mod, err := os.ReadFile(filepath.Join(dir, "go.mod"))
		if err == nil && bytes.HasPrefix(mod, []byte("module concordat\n")) {
			return dir, nil
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			return "", errors.New("not inside the concordat repository")
		}
		dir = parent
	}
}

// rStatus says what of R is installed.
type rStatus struct {
	dataTable bool // Rscript runs and data.table loads
	pcaPP     bool // pcaPP loads: the Kendall items' O(n log n) tau
	version   string
	notes     []string
}

// probeR asks Rscript which packages load.
func probeR(ctx context.Context) rStatus {
	var rs rStatus
	if _, err := exec.LookPath("Rscript"); err != nil {
		rs.notes = append(rs.notes, "no R reference: Rscript is not installed (apt-get install -y r-base-core r-cran-data.table r-cran-pcapp)")
		return rs
	}
	cmd := exec.CommandContext(ctx, "Rscript", "--vanilla", "-e",
		`cat(R.version.string, "|", requireNamespace("data.table", quietly = TRUE), "|", `+
			`requireNamespace("pcaPP", quietly = TRUE), "|", `+
			`tryCatch(as.character(packageVersion("data.table")), error = function(e) ""), "\n")`)
	got, err := cmd.Output()
	parts := strings.Split(strings.TrimSpace(string(got)), "|")
	if err != nil || len(parts) != 4 {
		rs.notes = append(rs.notes, fmt.Sprintf("no R reference: Rscript failed (%v)", err))
		return rs
	}
	rs.dataTable = strings.TrimSpace(parts[1]) == "TRUE"
	rs.pcaPP = strings.TrimSpace(parts[2]) == "TRUE"
	rs.version = strings.TrimSpace(parts[0])
	if rs.dataTable {
		rs.version += ", data.table " + strings.TrimSpace(parts[3])
	} else {
		rs.notes = append(rs.notes, "no R reference: the data.table package is missing (apt-get install -y r-cran-data.table)")
	}
	if !rs.pcaPP {
		rs.notes = append(rs.notes, "no R reference for Kendall: pcaPP is missing (apt-get install -y r-cran-pcapp); R's own cor() is O(n²) for Kendall")
	}
	return rs
}

func (rs rStatus) usable(it item) bool {
	return rs.dataTable && (it.measure != "kendall_b" || rs.pcaPP)
}

func (rs rStatus) skipReason(it item) string {
	switch {
	case rs.version == "":
		return "not run"
	case !rs.dataTable:
		return "no data.table"
	case it.measure == "kendall_b" && !rs.pcaPP:
		return "no pcaPP"
	}
	return "not run"
}

// machine describes where the figures were measured.
type machine struct {
	cpu, memory, goVersion, concordat, r string
	sizes, format                        string
	loadBefore, loadAfter                string // 1-minute load averages: other work on the machine
	runs                                 int
	timeout                              time.Duration
	notes                                []string
}

func describeMachine(ctx context.Context, bin string) machine {
	m := machine{cpu: fmt.Sprintf("%d cores", runtime.NumCPU()), goVersion: runtime.Version(), r: "not run"}
	if b, err := os.ReadFile("/proc/cpuinfo"); err == nil {
		for _, line := range strings.Split(string(b), "\n") {
			if name, ok := strings.CutPrefix(line, "model name"); ok {
				m.cpu = strings.TrimSpace(strings.TrimPrefix(strings.TrimSpace(name), ":")) + ", " + m.cpu
				break
			}
		}
	}
	if b, err := os.ReadFile("/proc/meminfo"); err == nil {
		var kb int64
		if _, err := fmt.Sscanf(string(b), "MemTotal: %d kB", &kb); err == nil {
			m.memory = fmtBytes(kb * 1024)
		}
	}
	if v, err := exec.CommandContext(ctx, bin, "version").Output(); err == nil {
		m.concordat = strings.TrimSpace(string(v))
	}
	return m
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// loadAverage is the 1-minute load average from /proc/loadavg, or "".
func loadAverage() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return ""
	}
	f := strings.Fields(string(b))
	if len(f) == 0 {
		return ""
	}
	return f[0]
}
