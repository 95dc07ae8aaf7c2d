package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"concordat/engine"
	"concordat/engine/stats"
	"concordat/recipe"
)

// tiny shrinks an item's data set so that a test runs in milliseconds.
func tiny(it item) dataSet {
	d := dataSet{kind: it.kind, rows: 2000, cols: 2}
	if it.kind == kindMatrix {
		d.rows, d.cols = 300, 12
	}
	return d
}

func fileSHA256(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// TestGenerateIsDeterministic writes every kind of data set twice, into two
// folders, and checks that the CSV and Parquet bytes are the same; the CSV
// hashes are also pinned, so that a change of generator (or of Go's PCG or
// normal sampler) shows here. When the change is meant, bump
// generatorVersion and paste the new hashes.
func TestGenerateIsDeterministic(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	for _, tc := range []struct {
		kind dataKind
		want string // sha256 of the CSV
	}{
		{kindSpearman, "8e20f3aefad375504cae20266f84647f7c8e7e19537e721b859f651c6691ac64"},
		{kindLikert, "06305796d5d4e8b78233d24dfa7a1be9aa5eea865a5d430fc221fd4978924485"},
		{kindDistinct, "20916f81ca87a659486bd35eda4a02de0cf6a46890047c753e5de728e6fe8d90"},
		{kindMatrix, "a65104a5a140dc47125cca9fa020aba45fc2e11fc828ab54735ccff6e8a5c561"},
		{kindPermutation, "02f41dd1549f4a6fdeef2137f2036fdccccf58114ef64207dc8f9d79e5094167"},
	} {
		d := dataSet{kind: tc.kind, rows: 2000, cols: 2}
		if tc.kind == kindMatrix {
			d.rows, d.cols = 300, 12
		}
		for _, dir := range []string{a, b} {
			wrote, err := writeData(dir, d, true)
			if err != nil || !wrote {
				t.Fatalf("%s: wrote %t, %v", d.base(), wrote, err)
			}
		}
		for _, ext := range []string{".csv", ".parquet"} {
			ha := fileSHA256(t, filepath.Join(a, d.base()+ext))
			hb := fileSHA256(t, filepath.Join(b, d.base()+ext))
			if ha != hb {
				t.Errorf("%s%s: two generations differ: %s and %s", d.base(), ext, ha, hb)
			}
		}
		if got := fileSHA256(t, d.csvPath(a)); got != tc.want {
			t.Errorf("%s.csv: sha256 %s, want %s", d.base(), got, tc.want)
		}
		// A second call finds the stamp and leaves the files alone.
		if wrote, err := writeData(a, d, false); err != nil || wrote {
			t.Errorf("%s: regenerated over a matching stamp (wrote %t, %v)", d.base(), wrote, err)
		}
	}
}

// TestDataShapes checks what each generator promises: the shape, ties where
// there should be ties, none where there should be none, and values whose
// CSV text reads back to the same doubles.
func TestDataShapes(t *testing.T) {
	distinct := func(v []float64) int {
		seen := map[float64]bool{}
		for _, x := range v {
			seen[x] = true
		}
		return len(seen)
	}
	for _, tc := range []struct {
		kind                     dataKind
		rows, cols               int
		minDistinct, maxDistinct int // of the first column
	}{
		{kindSpearman, 5000, 2, 20, 100},
		{kindLikert, 5000, 2, 5, 5},
		{kindDistinct, 5000, 2, 5000, 5000},
		{kindMatrix, 5000, 7, 1000, 5000},
		{kindPermutation, 1000, 2, 100, 999},
	} {
		d := dataSet{kind: tc.kind, rows: tc.rows, cols: tc.cols}
		names, cols := d.generate()
		if len(names) != tc.cols || len(cols) != tc.cols || len(cols[0]) != tc.rows {
			t.Errorf("%s: %d names, %d columns of %d rows", d.base(), len(names), len(cols), len(cols[0]))
			continue
		}
		if n := distinct(cols[0]); n < tc.minDistinct || n > tc.maxDistinct {
			t.Errorf("%s: %d distinct values in the first column, want %d…%d", d.base(), n, tc.minDistinct, tc.maxDistinct)
		}
		if tc.kind == kindDistinct {
			if n := distinct(cols[1]); n != tc.rows {
				t.Errorf("%s: y has %d distinct values, want %d", d.base(), n, tc.rows)
			}
		}
	}
}

// TestRecipesLoad writes every item on tiny data and checks that its recipe
// loads with recipe.Load, asks for the work the item names, and matches the
// data's header (engine.Check), and that its R script reads the same data.
func TestRecipesLoad(t *testing.T) {
	out := t.TempDir()
	dataDir := filepath.Join(out, "data")
	for _, it := range items {
		for _, parquet := range []bool{false, true} {
			d := tiny(it)
			if _, err := writeData(dataDir, d, true); err != nil {
				t.Fatal(err)
			}
			dir := filepath.Join(out, "items", it.name)
			if err := writeItem(dir, dataDir, it, d, parquet); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join(dir, "recipe.hcl")
			plan, diags := recipe.Load(path)
			if diags.HasErrors() || plan == nil {
				t.Fatalf("%s (parquet %t): %v", it.name, parquet, diags)
			}
			if diags := engine.Check(plan); diags.HasErrors() {
				t.Fatalf("%s (parquet %t): engine.Check: %v", it.name, parquet, diags)
			}
			if len(plan.Tests) != 1 || len(plan.Tables) != 1 {
				t.Fatalf("%s: %d tests, %d tables", it.name, len(plan.Tests), len(plan.Tables))
			}
			test := plan.Tests[0]
			wantPairs := 1
			if it.matrix {
				wantPairs = d.cols * (d.cols - 1) / 2
				if test.Pairing.Missing != recipe.Listwise {
					t.Errorf("%s: missing rule %v, want listwise", it.name, test.Pairing.Missing)
				}
			}
			if got := len(test.Pairing.Pairs); got != wantPairs {
				t.Errorf("%s: %d pairs, want %d", it.name, got, wantPairs)
			}
			wantMeasure := stats.Spearman
			if it.measure == "kendall_b" {
				wantMeasure = stats.KendallB
			}
			if len(test.Measures) != 1 || test.Measures[0] != wantMeasure {
				t.Errorf("%s: measures %v, want [%v]", it.name, test.Measures, wantMeasure)
			}
			wantP := recipe.PAsymptotic
			if it.permutations > 0 {
				wantP = recipe.PPermutation
				if test.Permutations != it.permutations {
					t.Errorf("%s: %d permutations, want %d", it.name, test.Permutations, it.permutations)
				}
			}
			if test.PValue != wantP {
				t.Errorf("%s: p_value %v, want %v", it.name, test.PValue, wantP)
			}
			wantData := d.csvPath(dataDir)
			if parquet {
				wantData = d.parquetPath(dataDir)
			}
			if got := plan.Datasets[0].Path; got != wantData {
				t.Errorf("%s: data path %s, want %s", it.name, got, wantData)
			}
			script, err := os.ReadFile(filepath.Join(dir, "reference.R"))
			if err != nil {
				t.Fatal(err)
			}
			if !bytes.Contains(script, []byte(`fread("../../data/`+d.base()+`.csv")`)) {
				t.Errorf("%s: reference.R does not read the CSV:\n%s", it.name, script)
			}
		}
	}
}

func TestParseMaxRSS(t *testing.T) {
	// An excerpt of GNU time 1.9's -v report.
	report := "\tCommand being timed: \"concordat run recipe.hcl\"\n" +
		"\tUser time (seconds): 1.23\n" +
		"\tElapsed (wall clock) time (h:mm:ss or m:ss): 0:01.50\n" +
		"\tMaximum resident set size (kbytes): 412345\n" +
		"\tExit status: 0\n"
	if got, want := parseMaxRSS([]byte(report)), int64(412345*1024); got != want {
		t.Errorf("parseMaxRSS = %d, want %d", got, want)
	}
	if got := parseMaxRSS([]byte("Command terminated by signal 9\n")); got != 0 {
		t.Errorf("parseMaxRSS without the line = %d, want 0", got)
	}
}

func TestMedian(t *testing.T) {
	if got := median([]float64{3, 1, 2}); got != 2 {
		t.Errorf("median(3, 1, 2) = %g", got)
	}
	if got := median([]float64{4, 1, 3, 2}); got != 2.5 {
		t.Errorf("median(4, 1, 3, 2) = %g", got)
	}
}

func TestCompareResults(t *testing.T) {
	dir := t.TempDir()
	ours := filepath.Join(dir, "result.csv")
	ref := filepath.Join(dir, "reference.csv")
	os.WriteFile(ours, []byte("test,x,y,measure,estimate,p_value\n"+
		"bench,v1,v2,spearman,0.5,0.01\nbench,v1,v3,spearman,0.25,1e-320\n"), 0o644)
	os.WriteFile(ref, []byte("x,y,estimate,p_value\n"+
		"v2,v1,0.5000000000000001,0.0100000001\nv1,v3,0.25,0\n"), 0o644)
	got := compareResults(ours, ref, true)
	if !strings.HasPrefix(got, "Δ est 1e-16, rel. Δ p 1e-08") {
		t.Errorf("compareResults = %q", got)
	}
	os.WriteFile(ref, []byte("x,y,estimate,p_value\nv1,v2,0.5,0.01\n"), 0o644)
	if got := compareResults(ours, ref, true); !strings.HasPrefix(got, "pairs differ") {
		t.Errorf("compareResults with a pair missing = %q", got)
	}
}

func TestGroup(t *testing.T) {
	for n, want := range map[int]string{7: "7", 1000: "1 000", 20000: "20 000", 10000000: "10 000 000"} {
		if got := group(n); got != want {
			t.Errorf("group(%d) = %q, want %q", n, got, want)
		}
	}
}

func TestFlags(t *testing.T) {
	for _, args := range [][]string{
		{"--sizes", "huge"}, {"--only", "nope"}, {"--runs", "0"}, {"--format", "tsv"}, {"extra"},
	} {
		var stdout, stderr bytes.Buffer
		if code := run(args, &stdout, &stderr); code != exitUsage {
			t.Errorf("run(%q) = %d, want %d; stderr %s", args, code, exitUsage, stderr.String())
		}
	}
}

// TestRunnerMeasures runs a real command through the fallback (the child's
// rusage) and, when installed, through GNU time.
func TestRunnerMeasures(t *testing.T) {
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("no sh")
	}
	modes := []bool{false}
	if _, err := os.Stat(timeBinary); err == nil {
		modes = append(modes, true)
	}
	for _, gnu := range modes {
		s, err := runner{gnuTime: gnu, timeout: time.Minute}.run(context.Background(), t.TempDir(), []string{sh, "-c", "echo compute_seconds 0.25"})
		if err != nil {
			t.Fatalf("gnuTime %t: %v", gnu, err)
		}
		if s.peakRSS <= 0 || s.wall <= 0 {
			t.Errorf("gnuTime %t: peak RSS %d, wall %s", gnu, s.peakRSS, s.wall)
		}
		if c, ok := computeSeconds(s.stdout); !ok || c != 0.25 {
			t.Errorf("gnuTime %t: computeSeconds(%q) = %g, %t", gnu, s.stdout, c, ok)
		}
		if _, err := (runner{gnuTime: gnu}).run(context.Background(), t.TempDir(), []string{sh, "-c", "echo oops >&2; exit 3"}); err == nil || !strings.Contains(err.Error(), "oops") {
			t.Errorf("gnuTime %t: a failing command gave %v", gnu, err)
		}
	}
}

// TestRunnerTimeout checks that a command outliving its timeout is killed
// with its children (the sleep under sh), promptly, as errTimeout.
func TestRunnerTimeout(t *testing.T) {
	sh, err := exec.LookPath("sh")
	if err != nil {
		t.Skip("no sh")
	}
	start := time.Now()
	_, err = runner{timeout: 200 * time.Millisecond}.run(context.Background(), t.TempDir(), []string{sh, "-c", "sleep 30; echo done"})
	if !errors.Is(err, errTimeout) {
		t.Fatalf("err = %v, want errTimeout", err)
	}
	// Were sleep left running, it would hold the output pipes open until
	// the runner's 5 s WaitDelay gave up on them.
	if d := time.Since(start); d > 4*time.Second {
		t.Errorf("the timeout took %s to end the command and its children", d)
	}
}

// TestInMemorySeconds reads the compute phase of a
// `run --timings` line, and nothing from other stderr.
func TestInMemorySeconds(t *testing.T) {
	line := []byte("warning: something\nconcordat: recipe.hcl: time: read 1.250 s (peak memory so far 200 MiB), compute 0.750 s (peak memory so far 500 MiB), tables 0.125 s (peak memory so far 510 MiB), write 0.010 s\n")
	if v, ok := inMemorySeconds(line); !ok || v != 0.75 {
		t.Errorf("inMemorySeconds = %v, %v; want 0.75, true", v, ok)
	}
	if _, ok := inMemorySeconds([]byte("concordat: error: no such file\n")); ok {
		t.Error("inMemorySeconds found a time in an error message")
	}
}
