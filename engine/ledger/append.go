package ledger

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"

	"concordat/io/render"
)

// Append adds rec as the last line of the ledger at path and returns the
// record as stored. It is Lock, Locked.Append and Unlock in one call, for a
// caller that has nothing else to do under the lock.
//
// It first verifies the existing ledger and refuses to extend one that fails
// (returning the *ChainError), so a break is never buried under new lines.
// It fills Format (when empty), RunSHA256 and PrevSHA256, and replaces nil
// Inputs, Steps, Outputs and Tool.Modules with empty lists. It then writes
// the existing bytes plus the new line to a temporary file in the same
// folder, syncs it, renames it over the ledger and syncs the folder: a crash
// leaves the old ledger or the new one, never a torn line. A new ledger gets
// the permissions 0666 less the umask, as from os.Create; a ledger that
// exists keeps its permissions.
//
// Once the rename has succeeded the record is stored, and Append reports
// success: the folder sync after it is best-effort durability, and its
// failure is not returned (a caller that took it for a failed append would
// undo outputs that the ledger now records). On Windows the folder is not
// synced at all, because it cannot be.
//
// If the record is stored but releasing the lock fails, Append returns the
// stored record together with the error.
func Append(path string, rec Record) (Record, error) {
	l, err := Lock(path)
	if err != nil {
		return Record{}, err
	}
	stored, err := l.Append(rec)
	if uerr := l.Unlock(); uerr != nil && err == nil {
		return stored, uerr
	}
	return stored, err
}

// appendRecord is Append for a caller that holds the ledger's lock.
func appendRecord(path string, rec Record) (Record, error) {
	normalize(&rec)
	if err := checkFormat(&rec); err != nil {
		return Record{}, fmt.Errorf("append to ledger %q: %w", path, err)
	}
	if rec.Settings != nil && !json.Valid(rec.Settings) {
		return Record{}, fmt.Errorf("append to ledger %q: settings are not valid JSON", path)
	}

	old, err := os.ReadFile(path)
	if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return Record{}, fmt.Errorf("append to ledger %q: %w", path, err)
	}
	_, last, err := verify(path, old)
	if err != nil {
		return Record{}, err // a *ChainError naming the broken line
	}

	rec.RunSHA256, err = runHash(&rec)
	if err != nil {
		return Record{}, fmt.Errorf("append to ledger %q: %w", path, err)
	}
	rec.PrevSHA256 = ""
	if len(old) > 0 {
		rec.PrevSHA256 = sumHex(last)
	}
	line, err := encodeLine(&rec)
	if err != nil {
		return Record{}, fmt.Errorf("append to ledger %q: %w", path, err)
	}
	if err := replace(path, append(old, line...)); err != nil {
		return Record{}, fmt.Errorf("append to ledger %q: %w", path, err)
	}

	// Return the record as a reader will see it.
	stored, err := parseLine(line[:len(line)-1])
	if err != nil {
		return Record{}, fmt.Errorf("append to ledger %q: reread: %w", path, err)
	}
	return stored, nil
}

// normalize fills what Append fills before hashing: the format when empty,
// and empty lists for nil ones.
func normalize(rec *Record) {
	if len(rec.Cached) == 0 {
		rec.Cached = nil
	}
	if rec.Format == "" {
		rec.Format = FormatV1
		if rec.Cached != nil {
			rec.Format = FormatV2
		}
	}
	if rec.Tool.Modules == nil {
		rec.Tool.Modules = []Module{}
	}
	if rec.Inputs == nil {
		rec.Inputs = []Input{}
	}
	if rec.Steps == nil {
		rec.Steps = []Step{}
	}
	if rec.Outputs == nil {
		rec.Outputs = []Output{}
	}
}

// encodeLine returns rec as one line of compact JSON ending in a newline.
// <, > and & are written as they are (the ledger is read by people and git,
// not browsers).
func encodeLine(rec *Record) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(rec); err != nil { // Encode ends the value with "\n"
		return nil, fmt.Errorf("encode record: %w", err)
	}
	return buf.Bytes(), nil
}

// replace writes data over path atomically through a render.Batch, the
// project's one implementation of replace-by-rename: the temporary file is
// synced before the rename, the new file keeps path's permissions (or 0666
// less the umask), and the folder sync after the rename is best-effort, so
// an error means path was not replaced.
func replace(path string, data []byte) error {
	var b render.Batch
	defer b.Abort()
	if err := b.Add(path, data); err != nil {
		return err
	}
	if err := b.Commit(); err != nil {
		return err
	}
	// The ledger is replaced; a backup left behind is untidy, not wrong.
	_ = b.Release()
	return nil
}
