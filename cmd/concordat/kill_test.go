//go:build unix

package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"concordat/engine"
	"concordat/engine/ledger"
)

// killRecipe has a long permutation step (about half a second here) and three
// tables; its seed is a parameter, so two seeds give two known sets of
// table bytes.
const killRecipe = `
param "seed" {
  default = 1
}
seed = param.seed

dataset "plots" {
  path = "plots.csv"
}
pairing "p" {
  dataset = "plots"
  x       = ["shade"]
  y       = ["yield_kg", "sugar"]
}
test "t" {
  pairing      = "p"
  measures     = ["spearman", "kendall_b"]
  p_value      = "permutation"
  permutations = 50000
}
table "a" {
  tests = ["t"]
  path  = "out/a.csv"
}
table "b" {
  tests = ["t"]
  path  = "out/b.md"
}
table "c" {
  tests = ["t"]
  path  = "out/c.json"
}
`

// killData is 400 invented plots with a weak shade–yield relation, so that
// permutation p-values, and so the tables, depend on the seed.
func killData() string {
	rng := rand.New(rand.NewPCG(5, 5))
	var b strings.Builder
	b.WriteString("plot,shade,yield_kg,sugar\n")
	for i := range 400 {
		s := rng.IntN(91)
		fmt.Fprintf(&b, "%d,%d,%.1f,%.1f\n", i, s, 6-float64(s)/300+rng.NormFloat64(), 12+rng.NormFloat64())
	}
	return b.String()
}

// buildConcordat builds the command into a temporary folder.
func buildConcordat(t *testing.T) string {
	t.Helper()
	goTool := filepath.Join(runtime.GOROOT(), "bin", "go")
	if _, err := os.Stat(goTool); err != nil {
		if goTool, err = exec.LookPath("go"); err != nil {
			t.Skip("no go command to build concordat with")
		}
	}
	bin := filepath.Join(t.TempDir(), "concordat")
	build := exec.Command(goTool, "build", "-o", bin, ".")
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

var killOutputs = []string{"out/a.csv", "out/b.md", "out/c.json"}

// outputs returns the sha256 of each table, "" for a missing one.
func outputs(t *testing.T, dir string) []string {
	t.Helper()
	sums := make([]string, len(killOutputs))
	for i, o := range killOutputs {
		data, err := os.ReadFile(filepath.Join(dir, o))
		if os.IsNotExist(err) {
			continue
		}
		if err != nil {
			t.Fatal(err)
		}
		s := sha256.Sum256(data)
		sums[i] = hex.EncodeToString(s[:])
	}
	return sums
}

// TestKillNineLeavesOldOrNew starts runs of a recipe with a long
// permutation step and kills them with SIGKILL at points spread over the
// run, the commit at its end included. After each kill the ledger verifies
// and every table holds either the bytes of the previous run or those of
// the killed one, never a mixture within a file; once the journal of an
// interrupted commit is resolved (as the next run does first), the tables
// are exactly those of the ledger's last record: old or new as a whole.
func TestKillNineLeavesOldOrNew(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and runs it for about 10 s")
	}
	bin := buildConcordat(t)
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "recipe.hcl"), []byte(killRecipe), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "plots.csv"), []byte(killData()), 0o644); err != nil {
		t.Fatal(err)
	}
	ledgerPath := filepath.Join(dir, "recipe.ledger.jsonl")
	// A step cache of the test's own: after the first two runs every run
	// takes its results from it, which brings more kill points into the
	// commit, where the tables move and the ledger grows.
	cache := t.TempDir()
	command := func(seed int) *exec.Cmd {
		c := exec.Command(bin, "run", "--param", fmt.Sprintf("seed=%d", seed), "recipe.hcl")
		c.Dir = dir
		c.Env = append(os.Environ(), "CONCORDAT_CACHE_DIR="+cache)
		return c
	}

	// The two outcomes, from complete runs: seed 2, then seed 1.
	want := map[int][]string{}
	var took time.Duration
	for _, seed := range []int{2, 1} {
		start := time.Now()
		if out, err := command(seed).CombinedOutput(); err != nil {
			t.Fatalf("run seed %d: %v\n%s", seed, err, out)
		}
		took = time.Since(start)
		want[seed] = outputs(t, dir)
	}
	if strings.Join(want[1], "") == strings.Join(want[2], "") {
		t.Fatal("the two seeds give the same tables; the test could not tell old from new")
	}

	current, records := 1, 2
	// Kill points as fractions of a whole run: early, in the middle, and
	// around the end, where the tables move and the ledger grows; runs take
	// longer or shorter, so some of the later points let a run finish.
	for i, frac := range []float64{0.1, 0.5, 0.9, 0.97, 1.0, 1.05, 1.2, 1.5, 0.95} {
		next := 3 - current
		cmd := command(next)
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(frac * float64(took)))
		cmd.Process.Kill() // SIGKILL; an error means the run had finished
		state := cmd.Wait()

		recs, err := ledger.Read(ledgerPath)
		if err != nil {
			t.Fatalf("kill %d (at %.2f of a run): the ledger fails: %v", i, frac, err)
		}
		if n := len(recs); n != records && n != records+1 {
			t.Fatalf("kill %d: %d records, want %d or %d", i, n, records, records+1)
		}
		// Each table, as the kill left it, is one run's bytes or the other's.
		for k, s := range outputs(t, dir) {
			if s != want[current][k] && s != want[next][k] {
				t.Fatalf("kill %d: %s holds bytes of neither run (sha256 %s)", i, killOutputs[k], s)
			}
		}
		// Resolved, the tables are those of the last record.
		var note bytes.Buffer
		if err := engine.Recover(context.Background(), ledgerPath, &note); err != nil {
			t.Fatalf("kill %d: recover: %v", i, err)
		}
		if len(recs) == records+1 {
			current, records = next, records+1
		}
		got := outputs(t, dir)
		for k := range got {
			if got[k] != want[current][k] {
				t.Fatalf("kill %d: %s is not the table of the last record (seed %d)\n%s", i, killOutputs[k], current, note.String())
			}
		}
		for k, o := range recs[len(recs)-1].Outputs {
			if o.SHA256 != got[k] {
				t.Fatalf("kill %d: %s does not hold what the last record says", i, o.Path)
			}
		}
		t.Logf("kill %d at %.2f of a run (%v): %d records; %v %s", i, frac, took, len(recs), state, strings.TrimSpace(note.String()+" "+stderr.String()))
	}
	if _, err := os.Stat(engine.JournalPath(ledgerPath)); !os.IsNotExist(err) {
		t.Errorf("journal left behind: %v", err)
	}
	// And the next run, after all that, extends the ledger normally.
	if out, err := command(3).CombinedOutput(); err != nil {
		t.Fatalf("run after the kills: %v\n%s", err, out)
	}
	if recs, err := ledger.Read(ledgerPath); err != nil || len(recs) != records+1 {
		t.Fatalf("after a last run: %d records, %v", len(recs), err)
	}
}
