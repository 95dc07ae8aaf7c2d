package ledger

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// FuzzRead feeds arbitrary bytes to Read as a ledger file. Read must never
// panic; it either fails with a *ChainError naming a line that exists, or
// returns one record per line whose hashes and chain verify independently.
func FuzzRead(f *testing.F) {
	dir := f.TempDir()
	path := filepath.Join(dir, "seed.ledger.jsonl")
	for i := range 3 {
		if _, err := Append(path, sample(i)); err != nil {
			f.Fatal(err)
		}
	}
	valid, err := os.ReadFile(path)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(valid)
	f.Add(valid[:len(valid)-1])
	f.Add(valid[:len(valid)/2])
	f.Add(bytes.ReplaceAll(valid, []byte("\n"), []byte("\r\n")))
	f.Add([]byte{})
	f.Add([]byte("\n"))
	f.Add([]byte("{}\n"))
	f.Add([]byte(`{"format":"concordat-ledger/1","settings":[[[[[[1e999]]]]]]}` + "\n"))

	// Read is os.ReadFile followed by verify. The target calls verify on the
	// bytes directly: writing a file for every input made fuzzing some 30
	// times slower, and TestReadMissing and the tests above cover the file.
	f.Fuzz(func(t *testing.T, data []byte) {
		recs, _, err := verify("fuzz.ledger.jsonl", data)
		nlines := bytes.Count(data, []byte("\n"))
		if len(data) > 0 && data[len(data)-1] != '\n' {
			nlines++
		}
		if err != nil {
			var ce *ChainError
			if !errors.As(err, &ce) {
				t.Fatalf("error %v is not a *ChainError", err)
			}
			if ce.Line < 1 || ce.Line > nlines {
				t.Fatalf("ChainError names line %d of %d", ce.Line, nlines)
			}
			return
		}
		if len(recs) != nlines {
			t.Fatalf("%d records from %d lines", len(recs), nlines)
		}
		ls := bytes.Split(data, []byte("\n"))
		for i, rec := range recs {
			h, err := runHash(&rec)
			if err != nil || h != rec.RunSHA256 {
				t.Fatalf("record %d: run_sha256 %q, content hashes to %q (%v)", i+1, rec.RunSHA256, h, err)
			}
			want := ""
			if i > 0 {
				want = sumHex(ls[i-1])
			}
			if rec.PrevSHA256 != want {
				t.Fatalf("record %d: prev_sha256 %q, want %q", i+1, rec.PrevSHA256, want)
			}
		}
	})
}
