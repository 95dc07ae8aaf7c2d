package ledger

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
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
	if rec.Format == "" {
		rec.Format = FormatV1
	}
	if rec.Format != FormatV1 {
		return Record{}, fmt.Errorf("append to ledger %q: unsupported format %q", path, rec.Format)
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

// replace writes data to a new hidden temporary file beside path, syncs
// it, and renames it over path; then it syncs the folder, best-effort, so
// the rename survives a crash. The new file keeps path's permissions when
// path exists and otherwise has 0666 less the umask. An error means path
// was not replaced.
func replace(path string, data []byte) error {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := createTemp(dir, "."+base+".tmp-")
	if err != nil {
		return err
	}
	temp := f.Name()
	_, err = f.Write(data)
	if info, serr := os.Stat(path); err == nil && serr == nil {
		err = f.Chmod(info.Mode().Perm())
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(temp, path)
	}
	if err != nil {
		os.Remove(temp)
		return err
	}
	// The ledger is replaced. A failed folder sync risks only losing the
	// rename in a crash, and cannot be taken back by failing now.
	_ = syncFolder(dir)
	return nil
}

// syncFolder is syncDir; tests replace it to make folder syncs fail.
var syncFolder = syncDir

// createTemp creates a new file in dir named prefix followed by a random
// number, for writing, with the permissions 0666 less the umask. Unlike
// os.CreateTemp, which always uses 0600, it lets the umask decide, as
// os.Create does.
func createTemp(dir, prefix string) (*os.File, error) {
	// Like os.CreateTemp, try random names until one is free; 10000 tries
	// is os.CreateTemp's own limit.
	var err error
	for range 10000 {
		name := filepath.Join(dir, prefix+strconv.FormatUint(uint64(rand.Uint32()), 10))
		var f *os.File
		f, err = os.OpenFile(name, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o666)
		if !errors.Is(err, fs.ErrExist) {
			return f, err
		}
	}
	return nil, fmt.Errorf("create temporary file in %q: %w", dir, err)
}
