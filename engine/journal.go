package engine

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"concordat/engine/ledger"
	"concordat/io/render"
)

// This file makes a run's tables and its ledger record one unit across a
// crash. render.Batch moves a run's tables into place one rename at a time,
// and the ledger's append is one more rename; a process killed between two
// of them (kill -9, a power cut) would leave some tables new, others old,
// and perhaps no record of the new ones.
//
// So, under the ledger's lock and before the first table moves, commit
// writes a journal, "<ledger>.pending": how many records the ledger holds,
// and for each table its path, the sha256 of the file it replaces ("" for
// none) and the sha256 of the new bytes. It removes the journal once the
// record is appended. A journal found by the next run of the recipe (under
// the lock, before it writes anything) is the trace of a run that died in
// between, and is resolved:
//
//   - the ledger holds one record more than the journal says: the run was
//     recorded, so its tables stand, and the backups of the old ones are
//     deleted (roll forward);
//   - otherwise the run was not recorded: each table that holds the new
//     bytes gets its old bytes back from the hidden backup that the Batch
//     made (.NAME.bak-*, found by its sha256), or is removed if it did not
//     exist before (roll back).
//
// Either way the tables and the ledger are again those of one recorded run.
// A table found holding neither the old nor the new bytes was changed by
// someone else since; it is left alone, with a warning. Hidden temporary
// files of the killed run (.NAME.tmp-*) are left too: another run waiting
// for the lock may have staged files of the same pattern, and they are
// never read.

// journalFormat identifies the journal's layout.
const journalFormat = "concordat-pending/1"

type journal struct {
	Format  string         `json:"format"`
	Records int            `json:"records"` // records in the ledger before the append
	Outputs []journalEntry `json:"outputs"`
}

type journalEntry struct {
	Path string `json:"path"` // relative to the ledger's folder, with forward slashes
	Old  string `json:"old_sha256"`
	New  string `json:"new_sha256"`
}

// JournalPath returns the journal of the ledger at ledgerPath.
func JournalPath(ledgerPath string) string { return ledgerPath + ".pending" }

// writeJournal records, before any table moves, what a commit is about to
// replace.
func writeJournal(ledgerPath string, records int, tables []renderedTable) error {
	j := journal{Format: journalFormat, Records: records}
	base, err := filepath.Abs(filepath.Dir(ledgerPath))
	if err != nil {
		return fmt.Errorf("journal: %w", err)
	}
	for _, rt := range tables {
		old, err := fileSum(rt.path)
		if err != nil {
			return fmt.Errorf("journal: %w", err)
		}
		// Relative to the ledger's folder, as the ledger names files: the
		// run that resolves the journal may start in another folder.
		abs, err := filepath.Abs(rt.path)
		if err != nil {
			return fmt.Errorf("journal: %w", err)
		}
		rel, err := filepath.Rel(base, abs)
		if err != nil {
			return fmt.Errorf("journal: %w", err)
		}
		j.Outputs = append(j.Outputs, journalEntry{Path: filepath.ToSlash(rel), Old: old, New: sum(rt.data)})
	}
	data, err := json.MarshalIndent(j, "", "  ")
	if err != nil {
		return fmt.Errorf("journal: %w", err)
	}
	var b render.Batch
	defer b.Abort()
	if err := b.Add(JournalPath(ledgerPath), append(data, '\n')); err != nil {
		return fmt.Errorf("journal: %w", err)
	}
	if err := b.Commit(); err != nil {
		return fmt.Errorf("journal: %w", err)
	}
	b.Release()
	return nil
}

// removeJournal ends a commit, done or undone.
func removeJournal(ledgerPath string) error {
	if err := os.Remove(JournalPath(ledgerPath)); err != nil && !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("remove journal: %w", err)
	}
	return nil
}

// Recover resolves the journal that an interrupted run of the recipe whose
// ledger is at ledgerPath left behind, if any, as the file comment above
// describes: it takes the ledger's lock, and reports what it did on w
// (nothing when there was no journal). Every run does this itself before it
// writes; Recover is for a caller that wants it done now.
func Recover(ctx context.Context, ledgerPath string, w io.Writer) error {
	held, err := ledger.LockContext(ctx, ledgerPath, nil)
	if err != nil {
		return fmt.Errorf("ledger: %w", err)
	}
	defer held.Unlock()
	return recoverJournal(held, ledgerPath, w)
}

// recoverJournal is Recover for a caller that holds the lock.
func recoverJournal(held *ledger.Locked, ledgerPath string, w io.Writer) error {
	data, err := os.ReadFile(JournalPath(ledgerPath))
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("read journal: %w", err)
	}
	var j journal
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&j); err != nil || j.Format != journalFormat {
		return fmt.Errorf("%s is not a journal of this version of concordat (%v); restore the tables and the ledger from version control and remove it", JournalPath(ledgerPath), err)
	}
	base, err := filepath.Abs(filepath.Dir(ledgerPath))
	if err != nil {
		return fmt.Errorf("read journal: %w", err)
	}
	for i := range j.Outputs {
		j.Outputs[i].Path = filepath.Join(base, filepath.FromSlash(j.Outputs[i].Path))
	}
	recs, err := held.Records()
	if err != nil {
		return fmt.Errorf("ledger: %w", err)
	}
	if len(recs) == j.Records+1 {
		for _, e := range j.Outputs {
			removeBackups(e.Path, e.Old)
		}
		fmt.Fprintf(w, "concordat: note: an earlier run of this recipe was stopped after it was recorded (record %d); its tables stand, and the backups of the ones they replaced were removed\n", len(recs))
		return removeJournal(ledgerPath)
	}
	if len(recs) != j.Records {
		return fmt.Errorf("%s says the ledger held %d records before an interrupted run, but it holds %d: it no longer belongs to this ledger; restore the tables from version control and remove it", JournalPath(ledgerPath), j.Records, len(recs))
	}
	var problems []string
	restored := 0
	for _, e := range j.Outputs {
		cur, err := fileSum(e.Path)
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		switch {
		case cur == e.Old:
			// Never moved, or already put back.
		case cur == e.New || cur == "":
			if err := putBack(e); err != nil {
				problems = append(problems, err.Error())
				continue
			}
			restored++
		default:
			fmt.Fprintf(w, "concordat: warning: %s was changed after an interrupted run and is left as it is\n", e.Path)
		}
		removeBackups(e.Path, e.Old)
	}
	if len(problems) > 0 {
		return fmt.Errorf("put back the tables of an interrupted run: %s; restore them from version control, then remove %s", strings.Join(problems, "; "), JournalPath(ledgerPath))
	}
	if restored > 0 {
		fmt.Fprintf(w, "concordat: note: an earlier run of this recipe was stopped while writing its tables, before it was recorded; %d of them were put back to what the ledger records\n", restored)
	}
	return removeJournal(ledgerPath)
}

// putBack gives a table the bytes it had before an interrupted commit: from
// the Batch's hidden backup beside it, or by removing it when it did not
// exist before.
func putBack(e journalEntry) error {
	if e.Old == "" {
		if err := os.Remove(e.Path); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return err
		}
		return nil
	}
	for _, b := range backups(e.Path) {
		if s, err := fileSum(b); err == nil && s == e.Old {
			if err := os.Rename(b, e.Path); err != nil {
				return fmt.Errorf("restore %s from %s: %w", e.Path, b, err)
			}
			return nil
		}
	}
	return fmt.Errorf("no backup of %s holds its earlier bytes (sha256 %s)", e.Path, e.Old)
}

// backups lists the hidden backups that render.Batch keeps beside path
// (".NAME.bak-" and a number).
func backups(path string) []string {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	entries, _ := os.ReadDir(dir)
	var out []string
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), "."+base+".bak-") && e.Type().IsRegular() {
			out = append(out, filepath.Join(dir, e.Name()))
		}
	}
	return out
}

// removeBackups deletes the backups of path that hold the bytes old.
func removeBackups(path, old string) {
	for _, b := range backups(path) {
		if s, err := fileSum(b); err == nil && s == old {
			os.Remove(b)
		}
	}
}

// fileSum returns the hex sha256 of the file at path, or "" when there is
// none.
func fileSum(path string) (string, error) {
	f, err := os.Open(path)
	if errors.Is(err, fs.ErrNotExist) {
		return "", nil
	}
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("read %s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

func sum(data []byte) string {
	s := sha256.Sum256(data)
	return hex.EncodeToString(s[:])
}
