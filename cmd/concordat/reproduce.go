package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"concordat/engine"
)

// maxMismatchLines is how many values that did not reproduce run lists
// under a published table's summary; the report table has them all.
const maxMismatchLines = 10

// summariseReproductions prints one line per published table ("published
// "table_2": 11 of 12 printed values reproduced") and a line for each value
// that did not reproduce, and returns the exit code: exitFailed when a
// strict published table did not fully reproduce (its outputs and ledger
// record are written all the same), else exitOK.
func summariseReproductions(stdout, stderr io.Writer, path string, rep *engine.Report) int {
	code := exitOK
	for _, rp := range rep.Reproductions {
		pb := rp.Published
		fmt.Fprintf(stdout, "  published %q: %s\n", pb.Name, rp.Summary())
		shown := 0
		for _, v := range rp.Values {
			if v.Outcome == engine.Matched {
				continue
			}
			if shown == maxMismatchLines {
				m, total := rp.Counts()
				fmt.Fprintf(stdout, "    … and %d more (see the reproduction table)\n", total-m-shown)
				break
			}
			shown++
			fmt.Fprintf(stdout, "    %s\n", mismatchLine(v))
		}
		if pb.Strict && !rp.Complete() {
			m, n := rp.Counts()
			fmt.Fprintf(stderr, "concordat: error: %s: published %q is strict and %d of its %d printed values did not reproduce; the tables and the ledger record were written\n",
				path, pb.Name, n-m, n)
			code = exitFailed
		}
	}
	return code
}

// mismatchLine describes a value that did not reproduce in one line:
// `line 42, sleep_hours ~ feels_rested (all, spearman): estimate printed
// ".45", recomputed 0.4312; reproduces with listwise deletion (0.4486, n = 229)`.
func mismatchLine(v engine.ReproducedValue) string {
	r := v.Row
	where := fmt.Sprintf("line %d, %s ~ %s (%s, %s)", r.DeclRange.Start.Line, r.X, r.Y, r.Group, r.Measure)
	printed := strconv.Quote(v.Printed)
	if v.Value == "stars" && v.Printed == "" {
		printed = "no marks"
	}
	got := "none"
	if !math.IsNaN(v.Recomputed) {
		switch v.Value {
		case "n":
			got = strconv.Itoa(int(v.Recomputed))
		case "estimate":
			got = strconv.FormatFloat(v.Recomputed, 'f', 4, 64)
		default:
			got = "p = " + strconv.FormatFloat(v.Recomputed, 'g', 3, 64)
		}
	}
	line := fmt.Sprintf("%s: %s printed %s, recomputed %s, %s", where, v.Value, printed, got, v.Outcome)
	switch {
	case v.Outcome == engine.NotComparable:
		line += "; " + v.Note
	case len(v.Reproduces) > 0:
		short, more := v.ShortReasons()
		line += "; reproduces with " + strings.Join(short, "; or with ")
		if more > 0 {
			line += fmt.Sprintf("; and %d more", more)
		}
	default:
		line += fmt.Sprintf("; none of the %d conventions tried reproduces it", v.Tried)
	}
	return line
}
