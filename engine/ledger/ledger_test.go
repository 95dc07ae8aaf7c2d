package ledger

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"
)

// sample returns an invented record: an orchard survey run whose outputs
// differ with i.
func sample(i int) Record {
	return Record{
		Recipe: File{Path: "orchard.hcl", SHA256: strings.Repeat("ab", 32), Bytes: 1234},
		Title:  "Canopy shade and fruit grade, 2026 harvest",
		Tool: Tool{Version: "0.1.0", Go: "go1.26.8", OS: "linux", Arch: "amd64", Modules: []Module{
			{Path: "gonum.org/v1/gonum", Version: "v0.17.0", Sum: "h1:invented="},
		}},
		Seed:     20261202,
		Settings: json.RawMessage(`{"ties": {"rank": "average"}, "alpha": 0.05, "label": "<a & b>"}`),
		Inputs:   []Input{{Name: "harvest", Path: "data/orchard_harvest.csv", SHA256: strings.Repeat("cd", 32), Bytes: 98765, Rows: 480}},
		Steps:    []Step{{Test: "shade_grade", InputSHA256: strings.Repeat("01", 32), ResultSHA256: strings.Repeat("23", 32), Results: 8}},
		Outputs:  []Output{{Table: "table_2", Path: "out/table_2.md", Format: "markdown", SHA256: fmt.Sprintf("%064x", i), Bytes: int64(900 + i)}},
		Started:  Timestamp(time.Date(2026, 12, 2, 9, 0, i, 0, time.UTC)),
		Finished: Timestamp(time.Date(2026, 12, 2, 9, 1, i, 0, time.UTC)),
	}
}

// ledgerWith appends n sample records to a new ledger and returns its path.
func ledgerWith(t *testing.T, n int) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	for i := range n {
		if _, err := Append(path, sample(i)); err != nil {
			t.Fatalf("Append %d: %v", i, err)
		}
	}
	return path
}

// lines returns the lines of the file at path, without their newlines.
func lines(t *testing.T, path string) [][]byte {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return bytes.Split(bytes.TrimSuffix(data, []byte("\n")), []byte("\n"))
}

func writeLines(t *testing.T, path string, ls [][]byte) {
	t.Helper()
	data := append(bytes.Join(ls, []byte("\n")), '\n')
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
}

// wantChainError checks that err is a *ChainError at line.
func wantChainError(t *testing.T, err error, line int) {
	t.Helper()
	var ce *ChainError
	if !errors.As(err, &ce) {
		t.Fatalf("error %v, want a *ChainError at line %d", err, line)
	}
	if ce.Line != line {
		t.Fatalf("ChainError at line %d (%s), want line %d", ce.Line, ce.Reason, line)
	}
	if !strings.Contains(err.Error(), fmt.Sprintf("line %d", line)) {
		t.Errorf("message %q does not name line %d", err, line)
	}
	// The message says what to do about it.
	if !strings.HasSuffix(err.Error(), "; restore the ledger from version control (git checkout -- "+ce.Path+") or move it aside to start a new one") {
		t.Errorf("message %q does not end with the way forward", err)
	}
}

func TestAppendRead(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	var stored []Record
	for i := range 3 {
		rec, err := Append(path, sample(i))
		if err != nil {
			t.Fatal(err)
		}
		stored = append(stored, rec)
	}
	got, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 3 {
		t.Fatalf("Read %d records, want 3", len(got))
	}
	ls := lines(t, path)
	for i, rec := range got {
		if rec.Format != FormatV1 {
			t.Errorf("record %d format %q", i, rec.Format)
		}
		if len(rec.RunSHA256) != 64 {
			t.Errorf("record %d run_sha256 %q", i, rec.RunSHA256)
		}
		want := ""
		if i > 0 {
			want = sumHex(ls[i-1])
		}
		if rec.PrevSHA256 != want {
			t.Errorf("record %d prev_sha256 %q, want %q", i, rec.PrevSHA256, want)
		}
		a, _ := json.Marshal(rec)
		b, _ := json.Marshal(stored[i])
		if !bytes.Equal(a, b) {
			t.Errorf("record %d read back as\n%s\nAppend returned\n%s", i, a, b)
		}
		if rec.Started != sample(i).Started {
			t.Errorf("record %d started %q, want %q", i, rec.Started, sample(i).Started)
		}
	}
	// The JSON keys are snake_case in the struct's order.
	first := string(ls[0])
	keys := []string{`"format"`, `"recipe"`, `"title"`, `"tool"`, `"seed"`, `"settings"`, `"inputs"`,
		`"steps"`, `"outputs"`, `"run_sha256"`, `"prev_sha256"`, `"started"`, `"finished"`}
	at := 0
	for _, k := range keys {
		i := strings.Index(first[at:], k)
		if i < 0 {
			t.Fatalf("key %s missing or out of order in %s", k, first)
		}
		at += i
	}
	if !strings.Contains(first, `"label":"<a & b>"`) {
		t.Errorf("settings not stored compact and unescaped: %s", first)
	}
}

func TestReadMissing(t *testing.T) {
	recs, err := Read(filepath.Join(t.TempDir(), "none.ledger.jsonl"))
	if err != nil || recs != nil {
		t.Errorf("Read of a missing ledger = %v, %v; want an empty ledger", recs, err)
	}
}

func TestRunHashIgnoresTimes(t *testing.T) {
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	a := sample(1)
	b := sample(1)
	b.Started = "2027-04-01T17:30:00Z" // recomputed months later
	b.Finished = "2027-04-01T17:31:12.5Z"
	// Settings with other white space and member order are the same settings.
	b.Settings = json.RawMessage(`{"label":"<a & b>","alpha":5e-2,"ties":{"rank":"average"}}`)
	ra, err := Append(path, a)
	if err != nil {
		t.Fatal(err)
	}
	rb, err := Append(path, b)
	if err != nil {
		t.Fatal(err)
	}
	if ra.RunSHA256 != rb.RunSHA256 {
		t.Errorf("equal content, different times: run_sha256 %s and %s differ", ra.RunSHA256, rb.RunSHA256)
	}
	c := sample(1)
	c.Seed++
	rc, err := Append(path, c)
	if err != nil {
		t.Fatal(err)
	}
	if rc.RunSHA256 == ra.RunSHA256 {
		t.Error("a different seed gave the same run_sha256")
	}
}

func TestRunHashLargeSeed(t *testing.T) {
	// 2^53 and 2^53+1 are the same IEEE double; the seed is hashed as a
	// string so they still differ.
	a, b := sample(0), sample(0)
	a.Seed, b.Seed = 1<<53, 1<<53+1
	ha, err := runHash(&a)
	if err != nil {
		t.Fatal(err)
	}
	hb, err := runHash(&b)
	if err != nil {
		t.Fatal(err)
	}
	if ha == hb {
		t.Error("seeds 2^53 and 2^53+1 hash equal")
	}
}

func TestEditDetected(t *testing.T) {
	for _, tc := range []struct {
		name string
		edit func(ls [][]byte) [][]byte
		line int
		why  string
	}{{
		name: "recipe sha digit in line 1",
		// The recipe hash is part of line 1's content, so line 1's own
		// run_sha256 no longer matches.
		edit: func(ls [][]byte) [][]byte {
			ls[0] = bytes.Replace(ls[0], []byte(`"sha256":"abab`), []byte(`"sha256":"bbab`), 1)
			return ls
		},
		line: 1, why: "run_sha256",
	}, {
		name: "started time in line 1",
		// Times are outside run_sha256, so line 1 still verifies by itself,
		// but line 2's prev_sha256 covers line 1's exact bytes.
		edit: func(ls [][]byte) [][]byte {
			ls[0] = bytes.Replace(ls[0], []byte(`"started":"2026-12-02T09:00:00Z"`), []byte(`"started":"2026-12-02T08:00:00Z"`), 1)
			return ls
		},
		line: 2, why: "prev_sha256",
	}, {
		name: "white space added to line 1",
		edit: func(ls [][]byte) [][]byte {
			ls[0] = bytes.Replace(ls[0], []byte(`"title":`), []byte(`"title": `), 1)
			return ls
		},
		line: 2, why: "prev_sha256",
	}, {
		name: "prev_sha256 of line 2",
		edit: func(ls [][]byte) [][]byte {
			ls[1] = bytes.Replace(ls[1], []byte(`"prev_sha256":"`), []byte(`"prev_sha256":"0`), 1)
			return ls
		},
		line: 2, why: "prev_sha256",
	}, {
		name: "line 1 removed",
		edit: func(ls [][]byte) [][]byte { return ls[1:] },
		line: 1, why: "first record",
	}, {
		name: "lines 2 and 3 swapped",
		edit: func(ls [][]byte) [][]byte { ls[1], ls[2] = ls[2], ls[1]; return ls },
		line: 2, why: "prev_sha256",
	}, {
		name: "unknown field in line 3",
		edit: func(ls [][]byte) [][]byte {
			ls[2] = bytes.Replace(ls[2], []byte(`{"format"`), []byte(`{"extra":1,"format"`), 1)
			return ls
		},
		line: 3, why: "unknown field",
	}, {
		name: "blank line",
		edit: func(ls [][]byte) [][]byte { return slices.Insert(ls, 1, []byte{}) },
		line: 2, why: "empty line",
	}, {
		name: "CRLF line endings",
		edit: func(ls [][]byte) [][]byte {
			for i := range ls {
				ls[i] = append(ls[i], '\r')
			}
			return ls
		},
		line: 2, why: "CRLF",
	}} {
		t.Run(tc.name, func(t *testing.T) {
			path := ledgerWith(t, 3)
			writeLines(t, path, tc.edit(lines(t, path)))
			_, err := Read(path)
			wantChainError(t, err, tc.line)
			if !strings.Contains(err.Error(), tc.why) {
				t.Errorf("reason %q does not mention %q", err, tc.why)
			}
		})
	}
}

func TestLastLineTimesNotVouchedFor(t *testing.T) {
	// Documented limit: no later line covers the last line's times.
	path := ledgerWith(t, 2)
	ls := lines(t, path)
	ls[1] = bytes.Replace(ls[1], []byte(`"finished":"2026-12-02T09:01:01Z"`), []byte(`"finished":"2026-12-02T10:01:01Z"`), 1)
	writeLines(t, path, ls)
	if _, err := Read(path); err != nil {
		t.Errorf("Read: %v", err)
	}
}

func TestTruncated(t *testing.T) {
	path := ledgerWith(t, 3)
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	for _, cut := range []int{1, 2, 40} { // only the newline, then part of the line
		if err := os.WriteFile(path, data[:len(data)-cut], 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Read(path)
		wantChainError(t, err, 3)
	}
}

func TestAppendRefusesBrokenLedger(t *testing.T) {
	path := ledgerWith(t, 3)
	intact, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	ls := lines(t, path)
	ls[1] = bytes.Replace(ls[1], []byte(`"rows":480`), []byte(`"rows":481`), 1)
	writeLines(t, path, ls)
	before, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	_, err = Append(path, sample(9))
	wantChainError(t, err, 2)
	after, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(before, after) {
		t.Error("Append changed a broken ledger")
	}
	entries, err := os.ReadDir(filepath.Dir(path))
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp-") {
			t.Errorf("temporary %s left behind", e.Name())
		}
	}
	// A truncated ledger is refused too.
	if err := os.WriteFile(path, intact[:len(intact)-1], 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = Append(path, sample(9))
	wantChainError(t, err, 3)
}

func TestAppendRejects(t *testing.T) {
	path := filepath.Join(t.TempDir(), "x.ledger.jsonl")
	r := sample(0)
	r.Format = "concordat-ledger/9"
	if _, err := Append(path, r); err == nil {
		t.Error("unknown format: no error")
	}
	r = sample(0)
	r.Settings = json.RawMessage(`{"a":`)
	if _, err := Append(path, r); err == nil {
		t.Error("invalid settings: no error")
	}
	if _, err := os.Stat(path); err == nil {
		t.Error("a refused Append created the ledger")
	}
}

func TestAppendNilLists(t *testing.T) {
	path := filepath.Join(t.TempDir(), "x.ledger.jsonl")
	rec, err := Append(path, Record{Title: "empty run"})
	if err != nil {
		t.Fatal(err)
	}
	if rec.Inputs == nil || rec.Steps == nil || rec.Outputs == nil || rec.Tool.Modules == nil {
		t.Errorf("nil lists not replaced by empty ones: %+v", rec)
	}
	line := string(lines(t, path)[0])
	if !strings.Contains(line, `"inputs":[]`) || !strings.Contains(line, `"settings":null`) {
		t.Errorf("line %s", line)
	}
	if _, err := Read(path); err != nil {
		t.Error(err)
	}
}

func TestConcurrentAppend(t *testing.T) {
	path := filepath.Join(t.TempDir(), "sensors.ledger.jsonl")
	var wg sync.WaitGroup
	errs := make(chan error, 40)
	for g := range 2 {
		wg.Go(func() {
			for i := range 20 {
				if _, err := Append(path, sample(g*100+i)); err != nil {
					errs <- err
				}
			}
		})
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	recs, err := Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 40 {
		t.Fatalf("%d records, want 40", len(recs))
	}
	seen := map[int64]bool{}
	for _, r := range recs {
		seen[r.Outputs[0].Bytes] = true
	}
	if len(seen) != 40 {
		t.Errorf("%d distinct records, want 40", len(seen))
	}
}

func TestPathFor(t *testing.T) {
	for in, want := range map[string]string{
		"recipes/orchard.hcl":  filepath.Join("recipes", "orchard.ledger.jsonl"),
		"orchard.hcl":          "orchard.ledger.jsonl",
		"/srv/a/sensors.hcl":   "/srv/a/sensors.ledger.jsonl",
		"recipes/plain":        filepath.Join("recipes", "plain.ledger.jsonl"),
		"recipes/v2.field.hcl": filepath.Join("recipes", "v2.field.ledger.jsonl"),
	} {
		if got := PathFor(in); got != want {
			t.Errorf("PathFor(%q) = %q, want %q", in, got, want)
		}
	}
}

func TestCurrentTool(t *testing.T) {
	tool := CurrentTool("0.1.0")
	if tool.Version != "0.1.0" || tool.Go != runtime.Version() || tool.OS != runtime.GOOS || tool.Arch != runtime.GOARCH {
		t.Errorf("CurrentTool = %+v", tool)
	}
	if tool.Modules == nil {
		t.Error("Modules is nil; want an empty list when none is linked")
	}
	if !slices.IsSortedFunc(tool.Modules, func(a, b Module) int { return strings.Compare(a.Path, b.Path) }) {
		t.Errorf("modules not sorted: %v", tool.Modules)
	}
	for _, m := range tool.Modules {
		if !slices.Contains(computing, m.Path) {
			t.Errorf("module %s is not one that computes", m.Path)
		}
	}
}

func TestTimestamp(t *testing.T) {
	at := time.Date(2026, 12, 2, 10, 4, 5, 250_000_000, time.FixedZone("CET", 3600))
	if got, want := Timestamp(at), "2026-12-02T09:04:05.25Z"; got != want {
		t.Errorf("Timestamp = %q, want %q", got, want)
	}
}

// TestCachedRecords: a record with Cached is written as FormatV2, reads
// back with its list, hashes as the same record without it (Cached is not
// covered by run_sha256), and chains with FormatV1 records; a FormatV1
// line that carries "cached" is refused with its line number.
func TestCachedRecords(t *testing.T) {
	path := ledgerWith(t, 1)
	plain := sample(1)
	cached := sample(1)
	cached.Cached = []string{"shade_grade"}
	a, err := Append(path, cached)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Append(path, plain)
	if err != nil {
		t.Fatal(err)
	}
	if a.Format != FormatV2 || b.Format != FormatV1 || a.RunSHA256 != b.RunSHA256 {
		t.Errorf("formats %q, %q and hashes %s, %s; want v2, v1 and equal hashes", a.Format, b.Format, a.RunSHA256, b.RunSHA256)
	}
	recs, err := Read(path)
	if err != nil || len(recs) != 3 || !slices.Equal(recs[1].Cached, []string{"shade_grade"}) || recs[2].Cached != nil {
		t.Fatalf("Read = %d records, %v; err %v", len(recs), recs, err)
	}
	ls := lines(t, path)
	ls[1] = bytes.Replace(ls[1], []byte(`"format":"concordat-ledger/2"`), []byte(`"format":"concordat-ledger/1"`), 1)
	writeLines(t, path, ls)
	_, err = Read(path)
	wantChainError(t, err, 2)
}
