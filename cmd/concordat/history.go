package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"concordat/engine/ledger"
	"concordat/engine/prov"
	"concordat/io/render"
)

func cmdHistory(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("history", "Print the ledger of a recipe, newest record first: when each run finished, the\nrecipe, tool, seed, inputs, tests and tables with their hashes, and what\nchanged since the run before. The ledger's hashes and chain are checked first.\nWith --prov, write the ledger as a W3C PROV-JSON document instead.")
	cmd.args = "RECIPE"
	asProv := cmd.fs.Bool("prov", false, "write W3C PROV-JSON (entities: recipe, inputs, results, tables; activities: runs and tests; agent: the tool)")
	output := cmd.fs.StringP("output", "o", "", "with --prov, write the document to this file (atomically) instead of standard output")
	outDir := cmd.fs.String("out", "", "the `DIR` a run with --out wrote to: its ledger is there")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	if cmd.fs.NArg() != 1 {
		fmt.Fprintf(stderr, "concordat: error: history takes one recipe, not %d\n", cmd.fs.NArg())
		cmd.usage(stderr)
		return exitUsage
	}
	if *output != "" && !*asProv {
		fmt.Fprintf(stderr, "concordat: error: --output needs --prov\n")
		cmd.usage(stderr)
		return exitUsage
	}
	path := cmd.fs.Arg(0)
	if !recipeExists(path, stderr) {
		return exitUsage
	}
	ledgerPath := ledgerFor(path, *outDir) // outdir.go
	recs, err := ledger.Read(ledgerPath)
	var chain *ledger.ChainError
	switch {
	case errors.As(err, &chain):
		fmt.Fprintf(stderr, "concordat: error: %s: the ledger fails its own check: %v\n", path, err)
		return exitDiffers
	case err != nil:
		fmt.Fprintf(stderr, "concordat: error: %v\n", err)
		return exitFailed
	}

	if *asProv {
		doc, err := prov.Document(recs)
		if err != nil {
			fmt.Fprintf(stderr, "concordat: error: %s: %v\n", path, err)
			return exitFailed
		}
		if *output == "" {
			stdout.Write(doc)
			return exitOK
		}
		var b render.Batch
		defer b.Abort()
		err = b.Add(*output, doc)
		if err == nil {
			err = b.Commit()
		}
		if err != nil {
			fmt.Fprintf(stderr, "concordat: error: write %s: %v\n", *output, err)
			return exitFailed
		}
		b.Release()
		fmt.Fprintf(stdout, "%s: wrote %s (W3C PROV-JSON, %s)\n", path, *output, plural(len(recs), "run"))
		return exitOK
	}

	if len(recs) == 0 {
		fmt.Fprintf(stdout, "%s: no records yet (concordat run %s adds one)\n", ledgerPath, path)
		return exitOK
	}
	fmt.Fprintf(stdout, "%s: %s, newest first; every record's hash and the chain check out\n", ledgerPath, plural(len(recs), "record"))
	for i := len(recs) - 1; i >= 0; i-- {
		var prev *ledger.Record
		if i > 0 {
			prev = &recs[i-1]
		}
		writeRecord(stdout, i+1, &recs[i], prev, filepath.Dir(ledgerPath))
	}
	return exitOK
}

// writeRecord prints one ledger record for a person. Hashes are shortened
// to 12 digits; `concordat history --prov` and the ledger itself have them
// in full.
func writeRecord(w io.Writer, n int, r, prev *ledger.Record, dir string) {
	fmt.Fprintf(w, "\nrecord %d, finished %s%s\n", n, r.Finished, took(r.Started, r.Finished))
	same := ""
	if prev != nil && prev.RunSHA256 == r.RunSHA256 {
		same = fmt.Sprintf(" (the same as record %d: same recipe, data, settings, build and tables)", n-1)
	}
	fmt.Fprintf(w, "  run     %s%s\n", short(r.RunSHA256), same)
	fmt.Fprintf(w, "  recipe  %s  sha256 %s  %d bytes\n", r.Recipe.Path, short(r.Recipe.SHA256), r.Recipe.Bytes)
	if r.Title != "" {
		fmt.Fprintf(w, "  title   %s\n", r.Title)
	}
	fmt.Fprintf(w, "  tool    concordat %s, %s, %s/%s%s\n", r.Tool.Version, r.Tool.Go, r.Tool.OS, r.Tool.Arch, modules(r.Tool.Modules))
	fmt.Fprintf(w, "  seed    %d\n", r.Seed)
	if p := params(r.Settings); p != "" {
		fmt.Fprintf(w, "  params  %s\n", p)
	}
	for _, in := range r.Inputs {
		fmt.Fprintf(w, "  input   %s  %s  sha256 %s  %d rows, %d bytes\n", in.Name, in.Path, short(in.SHA256), in.Rows, in.Bytes)
	}
	for _, s := range r.Steps {
		fmt.Fprintf(w, "  test    %s  %s  result sha256 %s\n", s.Test, plural(s.Results, "result"), short(s.ResultSHA256))
	}
	for _, o := range r.Outputs {
		fmt.Fprintf(w, "  table   %s  %s  sha256 %s\n", o.Table, o.Path, short(o.SHA256))
	}
	if prev != nil && same == "" {
		if c := changes(prev, r); len(c) > 0 {
			fmt.Fprintf(w, "  since record %d: %s\n", n-1, strings.Join(c, "; "))
		}
	}
}

// changes lists briefly what differs between two consecutive records.
func changes(a, b *ledger.Record) []string {
	var out []string
	if a.Recipe.SHA256 != b.Recipe.SHA256 {
		out = append(out, "recipe changed")
	} else if string(a.Settings) != string(b.Settings) {
		out = append(out, "settings changed")
	}
	for _, in := range b.Inputs {
		i := slices.IndexFunc(a.Inputs, func(x ledger.Input) bool { return x.Name == in.Name })
		switch {
		case i < 0:
			out = append(out, "input "+in.Name+" added")
		case a.Inputs[i].SHA256 != in.SHA256:
			out = append(out, "input "+in.Name+" changed")
		}
	}
	var moved []string
	for _, s := range b.Steps {
		i := slices.IndexFunc(a.Steps, func(x ledger.Step) bool { return x.Test == s.Test })
		if i < 0 || a.Steps[i].ResultSHA256 != s.ResultSHA256 {
			moved = append(moved, s.Test)
		}
	}
	if len(moved) > 0 {
		out = append(out, "results of "+strings.Join(moved, ", "))
	}
	if a.Tool.Version != b.Tool.Version || a.Tool.Go != b.Tool.Go || a.Tool.OS != b.Tool.OS || a.Tool.Arch != b.Tool.Arch {
		out = append(out, "another build of concordat")
	}
	if a.Seed != b.Seed && !slices.Contains(out, "recipe changed") {
		out = append(out, "seed")
	}
	if len(out) == 0 {
		out = append(out, "the same numbers and tables from another build or time")
	}
	return out
}

// params lists a record's recipe parameters, "name = value", marking those
// given with --param; "" when it has none.
func params(settings json.RawMessage) string {
	var s struct {
		Params []struct {
			Name  string          `json:"name"`
			Value json.RawMessage `json:"value"`
			Set   bool            `json:"set"`
		} `json:"params"`
	}
	if json.Unmarshal(settings, &s) != nil {
		return ""
	}
	parts := make([]string, len(s.Params))
	for i, p := range s.Params {
		parts[i] = p.Name + " = " + string(p.Value)
		if p.Set {
			parts[i] += " (--param)"
		}
	}
	return strings.Join(parts, ", ")
}

func modules(ms []ledger.Module) string {
	if len(ms) == 0 {
		return ""
	}
	parts := make([]string, len(ms))
	for i, m := range ms {
		parts[i] = filepath.Base(strings.TrimSuffix(strings.TrimSuffix(m.Path, "/v2"), "/v18")) + " " + m.Version
	}
	return "; " + strings.Join(parts, ", ")
}

// took says how long a run took, when both times read.
func took(started, finished string) string {
	s, err1 := time.Parse(time.RFC3339Nano, started)
	f, err2 := time.Parse(time.RFC3339Nano, finished)
	if err1 != nil || err2 != nil || f.Before(s) {
		return ""
	}
	return fmt.Sprintf(" (took %s)", f.Sub(s).Round(10*time.Millisecond))
}
