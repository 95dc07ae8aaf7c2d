package engine

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"concordat/engine/ledger"
	"concordat/io/render"
	"concordat/recipe"
)

const journalRecipe = `
dataset "plots" { path = "plots.csv" }
pairing "p" {
  dataset = "plots"
  x = ["shade"]
  y = ["yield_kg"]
}
test "t" { pairing = "p" }
table "a" {
  tests = ["t"]
  path  = "out/a.csv"
}
table "b" {
  tests = ["t"]
  path  = "out/b.md"
}
`

const journalData = "plot,shade,yield_kg\n1,10,5.5\n2,20,4.1\n3,30,4.4\n4,40,3.0\n5,50,3.3\n"

// crashAfter stages the tables of a second computation (on other data) and
// does by hand what commit does, up to a crash: the journal, then the
// renames of the first `moved` tables, then (when recorded) the ledger's
// append. The lock is released, as the death of the process would.
func crashAfter(t *testing.T, p *recipe.Plan, moved int, recorded bool) {
	t.Helper()
	if err := os.WriteFile(filepath.Join(p.Dir, "plots.csv"), []byte(strings.Replace(journalData, "4,40,3.0", "4,40,6.0", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	comp := mustCompute(t, p)
	held, err := ledger.Lock(p.LedgerPath())
	if err != nil {
		t.Fatal(err)
	}
	defer held.Unlock()
	recs, err := held.Records()
	if err != nil {
		t.Fatal(err)
	}
	if err := writeJournal(p.LedgerPath(), len(recs), comp.tables); err != nil {
		t.Fatal(err)
	}
	var b render.Batch // never released or undone: the process "died"
	for _, rt := range comp.tables[:moved] {
		if err := b.Add(rt.path, rt.data); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if recorded {
		rec, err := comp.Record(p, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := held.Append(rec); err != nil {
			t.Fatal(err)
		}
	}
}

// snapshot returns the bytes of the run's tables and of every file in out/.
func snapshot(t *testing.T, dir string) map[string]string {
	t.Helper()
	out := map[string]string{}
	entries, err := os.ReadDir(filepath.Join(dir, "out"))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		data, err := os.ReadFile(filepath.Join(dir, "out", e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		out[e.Name()] = string(data)
	}
	return out
}

func equalSnapshots(a, b map[string]string) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if b[k] != v {
			return false
		}
	}
	return true
}

// A run that died after moving one of its two tables, before the ledger
// recorded it, is undone by the next look under the lock: the tables are
// those of the last record again, and no journal or backup is left.
func TestRecoverPutsBackAnUnrecordedCommit(t *testing.T) {
	p := plan(t, journalRecipe, map[string]string{"plots.csv": journalData})
	if _, err := Run(context.Background(), p, Options{}); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, p.Dir)
	crashAfter(t, p, 1, false)
	if equalSnapshots(before, snapshot(t, p.Dir)) {
		t.Fatal("the simulated crash changed nothing")
	}
	var msg bytes.Buffer
	if err := Recover(context.Background(), p.LedgerPath(), &msg); err != nil {
		t.Fatal(err)
	}
	if after := snapshot(t, p.Dir); !equalSnapshots(before, after) {
		t.Errorf("tables after recovery differ from the recorded ones:\n%v\n%v", before, after)
	}
	if !strings.Contains(msg.String(), "1 of them were put back to what the ledger records") {
		t.Errorf("message %q", msg.String())
	}
	if _, err := os.Stat(JournalPath(p.LedgerPath())); !os.IsNotExist(err) {
		t.Errorf("journal left: %v", err)
	}
	// Nothing to do a second time.
	msg.Reset()
	if err := Recover(context.Background(), p.LedgerPath(), &msg); err != nil || msg.Len() != 0 {
		t.Errorf("second Recover: %v, %q", err, msg.String())
	}
}

// A run that died after the ledger recorded it keeps its tables; only the
// backups of the old ones go.
func TestRecoverKeepsARecordedCommit(t *testing.T) {
	p := plan(t, journalRecipe, map[string]string{"plots.csv": journalData})
	if _, err := Run(context.Background(), p, Options{}); err != nil {
		t.Fatal(err)
	}
	crashAfter(t, p, 2, true)
	crashed := snapshot(t, p.Dir)
	var msg bytes.Buffer
	if err := Recover(context.Background(), p.LedgerPath(), &msg); err != nil {
		t.Fatal(err)
	}
	after := snapshot(t, p.Dir)
	for name := range after {
		if strings.HasPrefix(name, ".") {
			t.Errorf("hidden file %s left", name)
		}
	}
	if after["a.csv"] != crashed["a.csv"] || after["b.md"] != crashed["b.md"] {
		t.Error("the recorded tables were changed")
	}
	recs, err := ledger.Read(p.LedgerPath())
	if err != nil || len(recs) != 2 {
		t.Fatalf("%d records, %v", len(recs), err)
	}
	for _, o := range recs[1].Outputs {
		if sum([]byte(after[filepath.Base(o.Path)])) != o.SHA256 {
			t.Errorf("%s does not hold what record 2 says", o.Path)
		}
	}
	if !strings.Contains(msg.String(), "stopped after it was recorded (record 2)") {
		t.Errorf("message %q", msg.String())
	}
}

// A table that did not exist before the interrupted run is removed again,
// and the next run does the recovery by itself before it writes.
func TestRunRecoversFirst(t *testing.T) {
	p := plan(t, journalRecipe, map[string]string{"plots.csv": journalData})
	if err := os.MkdirAll(filepath.Join(p.Dir, "out"), 0o755); err != nil {
		t.Fatal(err)
	}
	crashAfter(t, p, 2, false) // the very first run, killed before recording
	if len(snapshot(t, p.Dir)) == 0 {
		t.Fatal("the simulated crash wrote nothing")
	}
	var msg bytes.Buffer
	rep, err := Run(context.Background(), p, Options{Stderr: &msg})
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(msg.String(), "2 of them were put back to what the ledger records") {
		t.Errorf("message %q", msg.String())
	}
	if rep.Record.PrevSHA256 != "" {
		t.Error("the run is not the ledger's first record")
	}
	if _, err := os.Stat(JournalPath(p.LedgerPath())); !os.IsNotExist(err) {
		t.Errorf("journal left: %v", err)
	}
}

// A run started in the recipe's folder with relative paths dies after
// moving its tables; the journal is resolved from another folder (as the
// next run of `concordat run some/dir/recipe.hcl` would): its paths are
// relative to the ledger's folder, so the right tables are put back and
// nothing is touched in the folder of the resolving process.
func TestRecoverFromAnotherFolder(t *testing.T) {
	p := plan(t, journalRecipe, map[string]string{"plots.csv": journalData})
	if _, err := Run(context.Background(), p, Options{}); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, p.Dir)
	t.Chdir(p.Dir)
	rel, diags := recipe.Load(filepath.Base(p.Path))
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	crashAfter(t, rel, 2, false)
	elsewhere := t.TempDir()
	t.Chdir(elsewhere)
	if err := Recover(context.Background(), filepath.Join(p.Dir, filepath.Base(p.LedgerPath())), io.Discard); err != nil {
		t.Fatal(err)
	}
	if after := snapshot(t, p.Dir); !equalSnapshots(before, after) {
		t.Errorf("tables after recovery from another folder differ from the recorded ones")
	}
	if entries, _ := os.ReadDir(elsewhere); len(entries) != 0 {
		t.Errorf("recovery wrote into the folder it ran in: %v", entries)
	}
}
