package main

import (
	"bytes"
	"os"
	"strconv"
	"strings"

	"github.com/rogpeppe/go-internal/testscript"
)

// cmdReplace edits a file in place: "replace FILE OLD NEW" replaces the
// first occurrence of OLD with NEW and fails when OLD is not there, so a
// script's edit cannot silently miss. A backslash followed by n in OLD or
// NEW stands for a line break.
func cmdReplace(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 3 {
		ts.Fatalf("usage: replace FILE OLD NEW")
	}
	path := ts.MkAbs(args[0])
	data, err := os.ReadFile(path)
	ts.Check(err)
	old := strings.ReplaceAll(args[1], `\n`, "\n")
	new := strings.ReplaceAll(args[2], `\n`, "\n")
	if !bytes.Contains(data, []byte(old)) {
		ts.Fatalf("%s does not contain %q", args[0], old)
	}
	data = bytes.Replace(data, []byte(old), []byte(new), 1)
	ts.Check(os.WriteFile(path, data, 0o644))
}

// cmdTruncate cuts the last N bytes off a file: "truncate FILE N".
func cmdTruncate(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 2 {
		ts.Fatalf("usage: truncate FILE N")
	}
	n, err := strconv.Atoi(args[1])
	if err != nil || n < 0 {
		ts.Fatalf("bad byte count %q", args[1])
	}
	path := ts.MkAbs(args[0])
	data, err := os.ReadFile(path)
	ts.Check(err)
	if n > len(data) {
		ts.Fatalf("%s has only %d bytes", args[0], len(data))
	}
	ts.Check(os.WriteFile(path, data[:len(data)-n], 0o644))
}
