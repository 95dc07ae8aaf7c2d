package ledger

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
)

// A ChainError says where and why a ledger fails verification.
type ChainError struct {
	Path   string // the ledger file
	Line   int    // 1-based number of the first line that fails
	Reason string
}

// Error returns the message, naming the file and the line, and the way
// forward: a ledger that fails verification is not extended, so it must be
// restored from version control, or moved aside so that the next run starts
// a new one.
func (e *ChainError) Error() string {
	return fmt.Sprintf("verify ledger %q: line %d: %s; restore the ledger from version control (git checkout -- %s) or move it aside to start a new one",
		e.Path, e.Line, e.Reason, e.Path)
}

// Read parses the ledger at path and verifies it. Every line must be one
// valid record of format FormatV1 with no unknown fields, its run_sha256 must
// match its content, and its prev_sha256 must equal the SHA-256 of the
// previous line's bytes ("" on line 1). The file must end in a newline: a last
// line without one is the trace of a write that did not finish.
//
// The first line that fails is reported as a *ChainError naming it. An edit
// to a hashed field, to run_sha256 or to prev_sha256 shows on the edited line
// itself: its content no longer hashes to its run_sha256, or its prev_sha256
// no longer matches the line before. An edit to anything else — a time, white
// space, the order of the keys — shows on the line after it, whose
// prev_sha256 no longer matches; on the last line such an edit does not show.
// A missing file is an empty ledger.
//
// Read takes no lock: Append replaces the file by renaming, so Read sees
// either the old ledger or the new one. A run that must not see the ledger
// change before it appends reads it with Locked.Records.
func Read(path string) ([]Record, error) {
	data, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("read ledger %q: %w", path, err)
	}
	recs, _, err := verify(path, data)
	return recs, err
}

// verify parses and checks the bytes of a ledger. It returns the records and
// the last line (without its newline), which the next record chains to.
func verify(path string, data []byte) ([]Record, []byte, error) {
	var (
		recs []Record
		prev []byte
	)
	for n := 1; len(data) > 0; n++ {
		fail := func(format string, args ...any) ([]Record, []byte, error) {
			return nil, nil, &ChainError{Path: path, Line: n, Reason: fmt.Sprintf(format, args...)}
		}
		end := bytes.IndexByte(data, '\n')
		if end < 0 {
			return fail("no newline at the end of the line (an unfinished write?)")
		}
		line := data[:end]
		data = data[end+1:]

		if len(bytes.TrimSpace(line)) == 0 {
			return fail("empty line")
		}
		rec, err := parseLine(line)
		if err != nil {
			return fail("%v", err)
		}
		if err := checkFormat(&rec); err != nil {
			return fail("%v", err)
		}
		want, err := runHash(&rec)
		if err != nil {
			return fail("%v", err)
		}
		if rec.RunSHA256 != want {
			return fail("run_sha256 is %q but the record's content hashes to %q: the record was changed after it was written", rec.RunSHA256, want)
		}
		wantPrev := ""
		if n > 1 {
			wantPrev = sumHex(prev)
		}
		if rec.PrevSHA256 != wantPrev {
			if n == 1 {
				return fail("prev_sha256 is %q in the first record, want \"\" (lines were removed from the start?)", rec.PrevSHA256)
			}
			reason := fmt.Sprintf("prev_sha256 is %q but line %d hashes to %q: line %d or this prev_sha256 was changed, or lines were removed or reordered", rec.PrevSHA256, n-1, wantPrev, n-1)
			if bytes.HasSuffix(prev, []byte("\r")) {
				reason += " (it ends in CR: were the line endings converted to CRLF?)"
			}
			return fail("%s", reason)
		}
		recs = append(recs, rec)
		prev = line
	}
	return recs, prev, nil
}

// parseLine decodes one line as a Record, refusing unknown fields and
// anything after the object.
func parseLine(line []byte) (Record, error) {
	var rec Record
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&rec); err != nil {
		return Record{}, fmt.Errorf("not a ledger record: %w", err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return Record{}, errors.New("not a ledger record: text after the record")
	}
	return rec, nil
}

// checkFormat refuses a record of an unknown format, and a FormatV1 record
// with the FormatV2 field.
func checkFormat(rec *Record) error {
	switch {
	case rec.Format == FormatV1 && rec.Cached != nil:
		return fmt.Errorf("format %q has no \"cached\" field (want %q)", FormatV1, FormatV2)
	case rec.Format == FormatV1, rec.Format == FormatV2:
		return nil
	}
	return fmt.Errorf("unsupported format %q (want %q or %q)", rec.Format, FormatV1, FormatV2)
}
