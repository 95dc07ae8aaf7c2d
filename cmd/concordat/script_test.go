package main

import (
	"errors"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"

	"concordat/engine/ledger"
)

var update = flag.Bool("update", false, "rewrite the want files inside testdata/script/*.txtar from the actual output")

func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"concordat": func() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) },
	})
}

// TestScripts runs the txtar scripts in testdata/script against the real
// command. Each script starts in a fresh folder holding a copy of the demo
// recipes (recipes/) and data (testdata/demo/), laid out as in the repository.
func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:           filepath.Join("testdata", "script"),
		UpdateScripts: *update,
		Setup: func(env *testscript.Env) error {
			// A step cache of the script's own: HOME is /no-home, which a
			// test run as root can create, and a cache there would be
			// shared by every script and every test run.
			env.Setenv("CONCORDAT_CACHE_DIR", filepath.Join(env.WorkDir, ".cache"))
			for _, dir := range []string{"recipes", filepath.Join("testdata", "demo")} {
				if err := copyTree(filepath.Join("..", "..", dir), filepath.Join(env.WorkDir, "repo", dir)); err != nil {
					return err
				}
			}
			return nil
		},
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			"ledger":   cmdLedger,
			"exits":    cmdExits,
			"nohidden": cmdNoHidden,
			// outputs_test.go
			"parquetcsv": cmdParquetCSV,
			"htmlpage":   cmdHTMLPage,
			"image":      cmdImage,
			"latex":      cmdLaTeX,
			"replace":    cmdReplace,  // verify_test.go
			"truncate":   cmdTruncate, // verify_test.go
			"unescape":   cmdUnescape, // hostile_test.go
			"repeat":     cmdRepeat,   // hostile_test.go
		},
	})
}

// cmdLedger checks a ledger file: "ledger FILE N" asserts that it verifies
// (every run hash and the chain) and holds N records; "ledger FILE N same"
// also asserts that the last two records have the same run hash (a rerun on
// the same bytes computes the same numbers).
func cmdLedger(ts *testscript.TestScript, neg bool, args []string) {
	if len(args) < 2 {
		ts.Fatalf("usage: ledger FILE N [same]")
	}
	recs, err := ledger.Read(ts.MkAbs(args[0]))
	if neg {
		if err == nil {
			ts.Fatalf("ledger %s verified, but a failure was expected", args[0])
		}
		ts.Logf("%v", err)
		return
	}
	if err != nil {
		ts.Fatalf("%v", err)
	}
	want, err := strconv.Atoi(args[1])
	if err != nil {
		ts.Fatalf("bad count %q", args[1])
	}
	if len(recs) != want {
		ts.Fatalf("ledger %s has %d records, want %d", args[0], len(recs), want)
	}
	if len(args) > 2 && args[2] == "same" {
		a, b := recs[len(recs)-2], recs[len(recs)-1]
		if a.RunSHA256 != b.RunSHA256 {
			ts.Fatalf("run hashes differ: %s vs %s", a.RunSHA256, b.RunSHA256)
		}
	}
}

// cmdExits runs a program like exec and asserts its exit code:
// "exits 2 concordat run bad.hcl". Its stdout and stderr can be matched
// afterwards as after exec.
func cmdExits(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) < 2 {
		ts.Fatalf("usage: exits CODE PROGRAM [ARGS...]")
	}
	want, err := strconv.Atoi(args[0])
	if err != nil {
		ts.Fatalf("bad exit code %q", args[0])
	}
	got := 0
	if err := ts.Exec(args[1], args[2:]...); err != nil {
		var ee *exec.ExitError
		if !errors.As(err, &ee) {
			ts.Fatalf("%v", err)
		}
		got = ee.ExitCode()
	}
	if got != want {
		ts.Fatalf("%s exited with %d, want %d", args[1], got, want)
	}
}

// cmdNoHidden asserts that a folder holds no hidden files: no temporary or
// backup file of an atomic write was left behind. "nohidden DIR".
func cmdNoHidden(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 1 {
		ts.Fatalf("usage: nohidden DIR")
	}
	entries, err := os.ReadDir(ts.MkAbs(args[0]))
	if err != nil {
		ts.Fatalf("%v", err)
	}
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			ts.Fatalf("%s holds a hidden file %s", args[0], e.Name())
		}
	}
}

func copyTree(src, dst string) error {
	return filepath.WalkDir(src, func(path string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(src, path)
		target := filepath.Join(dst, rel)
		if d.IsDir() {
			if d.Name() == "out" {
				return filepath.SkipDir // outputs of a local demo run
			}
			return os.MkdirAll(target, 0o755)
		}
		if filepath.Ext(path) == ".jsonl" || filepath.Ext(path) == ".go" {
			return nil // local ledgers and generators are not part of the fixture
		}
		data, err := os.ReadFile(path)
		if err != nil {
			return fmt.Errorf("copy fixture: %w", err)
		}
		return os.WriteFile(target, data, 0o644)
	})
}
