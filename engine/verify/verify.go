package verify

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"concordat/engine"
	"concordat/engine/ledger"
	"concordat/recipe"
)

// A Target is the ledger record that a verification compares with.
type Target struct {
	Ledger  string          // the ledger file
	Number  int             // the record, 1-based
	Records []ledger.Record // the whole ledger, checked
}

// Open reads and checks the ledger of the recipe at recipePath and picks
// record n (counted from 1 at the first line, as `concordat history`
// numbers them), or the last one when n is 0. A broken ledger is the
// *ledger.ChainError naming its line; an empty one wraps ErrNoRecords; an n
// beyond the ledger is a *RecordRangeError.
func Open(recipePath string, n int) (*Target, error) {
	return OpenLedger(ledger.PathFor(recipePath), n)
}

// OpenLedger is Open for the ledger at path (a run with --out keeps it in
// its output folder: recipe.Plan.LedgerPath).
func OpenLedger(path string, n int) (*Target, error) {
	recs, err := ledger.Read(path)
	if err != nil {
		return nil, err
	}
	if len(recs) == 0 {
		return nil, fmt.Errorf("verify %s: %w", path, ErrNoRecords)
	}
	if n == 0 {
		n = len(recs)
	}
	if n < 1 || n > len(recs) {
		return nil, &RecordRangeError{Record: n, Records: len(recs)}
	}
	return &Target{Ledger: path, Number: n, Records: recs}, nil
}

// Record returns the record compared with.
func (t *Target) Record() ledger.Record { return t.Records[t.Number-1] }

// Overrides returns the --param values that the recorded run was given, so
// that the recipe can be loaded as it ran (recipe.LoadWith).
func (t *Target) Overrides() ([]recipe.Override, error) {
	return recipe.OverridesOf(t.Record().Settings)
}

// Kind says what a Difference is about. The zero value is invalid.
type Kind int

const (
	_        Kind = iota
	Recipe        // the recipe's bytes
	Settings      // the resolved settings (a --param, or a default of another build)
	Input         // a data file
	Step          // a test: what it read, or the results it produced
	Output        // a table: as recomputed, or as it is on disk
)

// String names the kind for messages.
func (k Kind) String() string {
	switch k {
	case Recipe:
		return "recipe"
	case Settings:
		return "settings"
	case Input:
		return "input"
	case Step:
		return "test"
	case Output:
		return "output"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}

// A Difference is one thing that no longer matches the record.
type Difference struct {
	Kind    Kind
	Subject string   // what differs: `recipe orchard.hcl`, `input "harvest" (data/plots.csv)`, …
	Summary string   // how, in one line: the recorded and the current hash, counts
	Details []string // the values that moved, one per line
}

// A Report is the outcome of a verification.
type Report struct {
	Ledger     string        // the ledger file
	Number     int           // the record compared with, 1-based
	Records    int           // how many records the ledger holds
	Recorded   ledger.Record // the record compared with
	Recomputed ledger.Record // the record this recomputation would append (never stored)

	Differences []Difference
	Matches     []string // what matched, briefly ("recipe", "1 input", …)
	Notes       []string // what is worth knowing but is no difference
}

// Differs reports whether anything differs from the record.
func (r *Report) Differs() bool { return len(r.Differences) > 0 }

// ErrNoRecords is returned when the ledger holds no record to compare with.
var ErrNoRecords = errors.New("the ledger has no record to verify against; run the recipe first")

// RecordRangeError is an Options.Record beyond the ledger.
type RecordRangeError struct {
	Record, Records int
}

func (e *RecordRangeError) Error() string {
	return fmt.Sprintf("record %d does not exist: the ledger holds records 1 to %d", e.Record, e.Records)
}

// Verify recomputes plan and compares the outcome with the target record:
// the recipe's
// hash and resolved settings, each input's hash, size and row count, each
// test's input and result hashes, and each table's hash, both as recomputed
// and as it is on disk. It writes nothing: the tables are rendered in
// memory, and neither the outputs nor the ledger are touched.
//
// A dataset's sha256 pin is
// not enforced here, so that a changed input is reported as a difference
// (with the pin) rather than stopping the recomputation.
//
// Where a test's results differ, the values that moved are named by
// comparing the recomputed table with the table on disk, which is trusted
// as the recorded values only when its sha256 is the one the record holds
// for it (the ledger stores hashes only; see the package documentation).
//
// opts is passed to engine.Compute (workers, tool version, progress); its
// clock only stamps the recomputed record, which is never stored.
func (t *Target) Verify(ctx context.Context, plan *recipe.Plan, opts engine.Options) (*Report, error) {
	recs, n := t.Records, t.Number

	// The settings name the pins as written; the recomputation ignores them.
	settings, err := json.Marshal(plan.Settings())
	if err != nil {
		return nil, fmt.Errorf("encode settings: %w", err)
	}
	pins := map[string]string{}
	for _, ds := range plan.Datasets {
		if ds.SHA256 != "" {
			pins[ds.Name] = ds.SHA256
			defer func(ds *recipe.Dataset, pin string) { ds.SHA256 = pin }(ds, ds.SHA256)
			ds.SHA256 = ""
		}
	}
	comp, err := engine.Compute(ctx, plan, opts)
	if err != nil {
		return nil, err
	}
	now, err := comp.Record(plan, opts)
	if err != nil {
		return nil, err
	}
	now.Settings = settings

	rep := &Report{Ledger: t.Ledger, Number: n, Records: len(recs), Recorded: recs[n-1], Recomputed: now}
	c := &comparison{Report: rep, plan: plan, tables: comp.Tables(), later: recs[n:], pins: pins, named: map[string]bool{}}
	c.recipe()
	c.inputs()
	changed := c.steps()
	c.outputs(changed)
	c.tool()
	if _, err := os.Stat(engine.JournalPath(t.Ledger)); err == nil {
		rep.Notes = append(rep.Notes, fmt.Sprintf("a run of this recipe was stopped while writing its tables and left %s: the next run puts the tables back as the ledger records them (verify writes nothing)", engine.JournalPath(t.Ledger)))
	}
	return rep, nil
}

type comparison struct {
	*Report
	plan   *recipe.Plan
	tables []engine.Table
	later  []ledger.Record // the records after the one compared with
	pins   map[string]string
	named  map[string]bool // tests whose moved values are listed already
}

func (c *comparison) differ(k Kind, subject, summary string, details ...string) {
	c.Differences = append(c.Differences, Difference{Kind: k, Subject: subject, Summary: summary, Details: details})
}

var recordedNow = labels{old: "recorded", new: "now"}

func (c *comparison) recipe() {
	old, now := c.Recorded, c.Recomputed
	settings := diffSettings(old.Settings, now.Settings, recordedNow)
	switch {
	case old.Recipe.SHA256 != now.Recipe.SHA256:
		c.differ(Recipe, "recipe "+now.Recipe.Path,
			fmt.Sprintf("sha256 recorded %s (%d bytes), now %s (%d bytes)", old.Recipe.SHA256, old.Recipe.Bytes, now.Recipe.SHA256, now.Recipe.Bytes),
			settings...)
	case len(settings) > 0:
		c.differ(Settings, "settings of "+now.Recipe.Path, "the recipe's bytes are as recorded, but it resolves to other settings", settings...)
	default:
		c.Matches = append(c.Matches, "recipe")
	}
	if old.Recipe.Path != now.Recipe.Path {
		c.Notes = append(c.Notes, fmt.Sprintf("the record names the recipe %s, now %s", old.Recipe.Path, now.Recipe.Path))
	}
}

func (c *comparison) inputs() {
	old, now := c.Recorded.Inputs, c.Recomputed.Inputs
	same := 0
	for _, o := range old {
		i := slices.IndexFunc(now, func(in ledger.Input) bool { return in.Name == o.Name })
		if i < 0 {
			c.differ(Input, fmt.Sprintf("input %q (%s)", o.Name, o.Path), "recorded, but no test reads it now")
			continue
		}
		n := now[i]
		if n == o {
			same++
			continue
		}
		var parts []string
		if o.Path != n.Path {
			parts = append(parts, fmt.Sprintf("path recorded %s, now %s", o.Path, n.Path))
		}
		if o.SHA256 != n.SHA256 {
			parts = append(parts, fmt.Sprintf("sha256 recorded %s, now %s", o.SHA256, n.SHA256))
		}
		if o.Rows != n.Rows {
			parts = append(parts, fmt.Sprintf("rows recorded %d, now %d", o.Rows, n.Rows))
		} else {
			parts = append(parts, fmt.Sprintf("%d rows as recorded", n.Rows))
		}
		if o.Bytes != n.Bytes {
			parts = append(parts, fmt.Sprintf("bytes recorded %d, now %d", o.Bytes, n.Bytes))
		}
		var details []string
		if pin := c.pins[n.Name]; pin != "" && pin != n.SHA256 {
			details = append(details, fmt.Sprintf("the recipe pins sha256 %s, so `concordat run` refuses this file", pin))
		}
		c.differ(Input, fmt.Sprintf("input %q (%s)", n.Name, n.Path), strings.Join(parts, "; "), details...)
	}
	for _, n := range now {
		if !slices.ContainsFunc(old, func(in ledger.Input) bool { return in.Name == n.Name }) {
			c.differ(Input, fmt.Sprintf("input %q (%s)", n.Name, n.Path), fmt.Sprintf("not in the record; now sha256 %s, %d rows", n.SHA256, n.Rows))
		}
	}
	if same > 0 {
		c.Matches = append(c.Matches, count(same, "input", "inputs"))
	}
}

// steps compares each test and returns the names of those whose results
// differ.
func (c *comparison) steps() map[string]bool {
	old, now := c.Recorded.Steps, c.Recomputed.Steps
	changed := map[string]bool{}
	same, results := 0, 0
	for _, o := range old {
		i := slices.IndexFunc(now, func(s ledger.Step) bool { return s.Test == o.Test })
		if i < 0 {
			c.differ(Step, fmt.Sprintf("test %q", o.Test), "recorded, but the recipe has no such test now")
			changed[o.Test] = true
			continue
		}
		n := now[i]
		if n == o {
			same++
			results += n.Results
			continue
		}
		subject := fmt.Sprintf("test %q", n.Test)
		if o.ResultSHA256 == n.ResultSHA256 {
			c.differ(Step, subject, fmt.Sprintf("same results, but it read other data or settings: input sha256 recorded %s, now %s", o.InputSHA256, n.InputSHA256))
			continue
		}
		changed[n.Test] = true
		summary := fmt.Sprintf("results differ: result sha256 recorded %s, now %s", o.ResultSHA256, n.ResultSHA256)
		if o.Results != n.Results {
			summary += fmt.Sprintf("; %d results recorded, %d now", o.Results, n.Results)
		}
		if o.InputSHA256 != n.InputSHA256 {
			summary += " (it read other data or settings)"
		} else {
			summary += " (from the same data and settings)"
		}
		c.differ(Step, subject, summary, c.movedValues(n.Test)...)
	}
	for _, n := range now {
		if !slices.ContainsFunc(old, func(s ledger.Step) bool { return s.Test == n.Test }) {
			c.differ(Step, fmt.Sprintf("test %q", n.Test), fmt.Sprintf("not in the record; now %s", count(n.Results, "result", "results")))
			changed[n.Test] = true
		}
	}
	if same > 0 {
		c.Matches = append(c.Matches, fmt.Sprintf("%s (%s)", count(same, "test", "tests"), count(results, "result", "results")))
	}
	return changed
}

// movedValues names the values of test that differ between the recorded
// run and the recomputation. The ledger holds only hashes, so the recorded
// values come from a table on disk that holds the test and whose sha256 is
// the one the record holds for it: the JSON or CSV table when there is one
// (every digit), else the Markdown table (the digits it prints).
func (c *comparison) movedValues(test string) []string {
	var best *engine.Table
	var bestData []byte
	for i, t := range c.tables {
		if !c.holds(t.Name, test) {
			continue
		}
		o, ok := c.recordedOutput(t.Name)
		if !ok || filepath.Join(c.plan.OutputDir(), filepath.FromSlash(o.Path)) != t.Path {
			continue
		}
		data, err := os.ReadFile(t.Path)
		if err != nil || sum(data) != o.SHA256 {
			continue
		}
		if best == nil || rank(t.Format) < rank(best.Format) {
			best, bestData = &c.tables[i], data
		}
	}
	if best == nil {
		return []string{"the ledger keeps hashes only, and no table on disk still holds this test's recorded values (none has the sha256 the record gives it), so the values that moved cannot be named; keep a json or csv table of the test committed to have them named"}
	}
	c.named[test] = true
	lines := diffTable(bestData, best.Data, best.Format, oneTest(test), recordedNow)
	if len(lines) == 0 {
		return []string{fmt.Sprintf("table %q (%s) shows no difference in its %s digits: the results differ beyond them or in a field it does not show", best.Name, relTo(c.plan.Dir, best.Path), best.Format)}
	}
	out := []string{fmt.Sprintf("recorded values from %s (its sha256 is the recorded one):", relTo(c.plan.Dir, best.Path))}
	return append(out, lines...)
}

// rank orders table formats by how well they keep a recorded value: every
// digit first.
func rank(f string) int {
	switch f {
	case "json":
		return 0
	case "csv":
		return 1
	case "markdown":
		return 2
	}
	return 3
}

// holds reports whether the recipe's table holds test's results.
func (c *comparison) holds(table, test string) bool {
	for _, t := range c.plan.Tables {
		if t.Name == table {
			return slices.ContainsFunc(t.Tests, func(tt *recipe.Test) bool { return tt.Name == test })
		}
	}
	return false
}

func (c *comparison) recordedOutput(table string) (ledger.Output, bool) {
	i := slices.IndexFunc(c.Recorded.Outputs, func(o ledger.Output) bool { return o.Table == table })
	if i < 0 {
		return ledger.Output{}, false
	}
	return c.Recorded.Outputs[i], true
}

// outputs compares each table three ways: the recorded hash, the
// recomputed bytes and the file on disk.
func (c *comparison) outputs(changed map[string]bool) {
	same := 0
	for _, o := range c.Recorded.Outputs {
		i := slices.IndexFunc(c.tables, func(t engine.Table) bool { return t.Name == o.Table })
		subject := fmt.Sprintf("output %q (%s)", o.Table, o.Path)
		if i < 0 {
			c.differ(Output, subject, "recorded, but the recipe has no such table now")
			continue
		}
		t := c.tables[i]
		nowSum := sum(t.Data)
		format := t.Format
		disk, err := os.ReadFile(t.Path)
		diskSum := ""
		switch {
		case err == nil:
			diskSum = sum(disk)
		case errors.Is(err, fs.ErrNotExist):
		default:
			c.differ(Output, subject, fmt.Sprintf("cannot be read: %v", err))
			continue
		}
		recomputedOK := nowSum == o.SHA256
		onDiskOK := diskSum == o.SHA256
		laterRun := c.laterRun(o.Path, diskSum)

		if !recomputedOK {
			summary := fmt.Sprintf("recomputed table differs: sha256 recorded %s, now %s", o.SHA256, nowSum)
			var details []string
			switch {
			case onDiskOK:
				// Leave out the rows of the tests above whose values are
				// listed already.
				rest := rowFilter{tests: func(test string) bool { return !c.named[test] }, extra: true}
				details = diffTable(disk, t.Data, format, rest, recordedNow)
				if len(details) == 0 {
					details = append(details, "its values that moved are listed under the tests above")
				}
			case c.tableHasChangedTest(o.Table, changed):
				details = append(details, "it holds a test whose results differ (above)")
			default:
				details = append(details, "no file on disk holds the recorded table, so what changed cannot be shown")
			}
			c.differ(Output, subject, summary, details...)
		}
		switch {
		case onDiskOK:
		case diskSum == "":
			c.differ(Output, subject, "missing on disk (the record says it was written with sha256 "+o.SHA256+")")
		case laterRun > 0:
			c.Notes = append(c.Notes, fmt.Sprintf("%s on disk is the table of the later record %d", o.Path, laterRun))
		case recomputedOK:
			c.differ(Output, subject, fmt.Sprintf("the file on disk was changed after the run: sha256 recorded %s, on disk %s", o.SHA256, diskSum),
				diffTable(t.Data, disk, format, everything, labels{old: "recorded", new: "on disk"})...)
		default:
			c.differ(Output, subject, fmt.Sprintf("the file on disk is neither the recorded table nor the recomputed one: sha256 recorded %s, on disk %s", o.SHA256, diskSum),
				diffTable(t.Data, disk, format, everything, labels{old: "recomputed", new: "on disk"})...)
		}
		if recomputedOK && (onDiskOK || laterRun > 0) {
			same++
		}
	}
	for _, t := range c.tables {
		if _, ok := c.recordedOutput(t.Name); !ok {
			c.differ(Output, fmt.Sprintf("output %q (%s)", t.Name, relTo(c.plan.Dir, t.Path)), "not in the record: the recipe writes it now")
		}
	}
	if same > 0 {
		c.Matches = append(c.Matches, count(same, "output", "outputs"))
	}
}

// laterRun returns the number of the latest record after the one compared
// with that wrote the table at path with sha256 s, or 0.
func (c *comparison) laterRun(path, s string) int {
	for i := len(c.later) - 1; i >= 0; i-- {
		for _, o := range c.later[i].Outputs {
			if o.Path == path && o.SHA256 == s && s != "" {
				return c.Number + 1 + i
			}
		}
	}
	return 0
}

func (c *comparison) tableHasChangedTest(table string, changed map[string]bool) bool {
	for _, t := range c.plan.Tables {
		if t.Name == table {
			return slices.ContainsFunc(t.Tests, func(tt *recipe.Test) bool { return changed[tt.Name] })
		}
	}
	return false
}

// tool notes a build other than the recorded one: it is no difference by
// itself, but it may explain one.
func (c *comparison) tool() {
	old, now := c.Recorded.Tool, c.Recomputed.Tool
	var parts []string
	if old.Version != now.Version {
		parts = append(parts, fmt.Sprintf("version recorded %s, now %s", old.Version, now.Version))
	}
	if old.Go != now.Go {
		parts = append(parts, fmt.Sprintf("Go recorded %s, now %s", old.Go, now.Go))
	}
	if old.OS != now.OS || old.Arch != now.Arch {
		parts = append(parts, fmt.Sprintf("platform recorded %s/%s, now %s/%s", old.OS, old.Arch, now.OS, now.Arch))
	}
	for _, m := range now.Modules {
		i := slices.IndexFunc(old.Modules, func(o ledger.Module) bool { return o.Path == m.Path })
		switch {
		case i < 0:
			parts = append(parts, fmt.Sprintf("%s %s not recorded", m.Path, m.Version))
		case old.Modules[i].Version != m.Version || old.Modules[i].Sum != m.Sum:
			parts = append(parts, fmt.Sprintf("%s recorded %s, now %s", m.Path, old.Modules[i].Version, m.Version))
		}
	}
	if len(parts) > 0 {
		c.Notes = append(c.Notes, "another build of concordat recomputed this: "+strings.Join(parts, "; "))
		return
	}
	if h, err := ledger.RunHash(c.Recomputed); err == nil && h == c.Recorded.RunSHA256 {
		c.Notes = append(c.Notes, "the recomputed run hashes to the recorded run_sha256 "+h)
	}
}

// Write prints the report for a person: a heading naming the record, one
// paragraph per difference, what matched, notes, and a closing count.
func (r *Report) Write(w io.Writer, recipePath string) error {
	var b strings.Builder
	rec := r.Recorded
	fmt.Fprintf(&b, "%s: verifying against record %d of %d in %s (run %s, finished %s)\n",
		recipePath, r.Number, r.Records, r.Ledger, short(rec.RunSHA256), rec.Finished)
	for _, d := range r.Differences {
		fmt.Fprintf(&b, "  differs: %s: %s\n", d.Subject, d.Summary)
		for _, l := range d.Details {
			fmt.Fprintf(&b, "      %s\n", l)
		}
	}
	if len(r.Matches) > 0 {
		fmt.Fprintf(&b, "  matches: %s\n", strings.Join(r.Matches, ", "))
	}
	for _, n := range r.Notes {
		fmt.Fprintf(&b, "  note: %s\n", n)
	}
	if r.Differs() {
		fmt.Fprintf(&b, "%s: %s from record %d\n", recipePath, count(len(r.Differences), "difference", "differences"), r.Number)
	} else {
		fmt.Fprintf(&b, "%s: everything matches record %d\n", recipePath, r.Number)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func sum(data []byte) string {
	s := sha256.Sum256(data)
	return hex.EncodeToString(s[:])
}

func short(h string) string {
	if len(h) > 12 {
		return h[:12]
	}
	return h
}

func count(n int, one, many string) string {
	return fmt.Sprintf("%d %s", n, plural(n, one, many))
}

// relTo writes path relative to dir with forward slashes, as the ledger
// does.
func relTo(dir, path string) string {
	if r, err := filepath.Rel(dir, path); err == nil {
		return filepath.ToSlash(r)
	}
	return filepath.ToSlash(path)
}
