package render

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
)

// A Batch stages files next to their destinations and moves them into place
// together, so that a run either replaces all of its outputs or leaves every
// previous one as it was.
//
// Add writes each file's bytes to a hidden temporary file in the
// destination's folder and syncs it to disk; Commit renames the temporaries
// onto their destinations, in the order they were added, and syncs the
// folders; Abort removes whatever has not been committed. A rename within one
// folder replaces the destination atomically, so a reader sees either the old
// file or the new one, never a mixture.
//
// The set of files is not one atomic unit: if a rename fails part way
// through Commit (which takes an I/O error or a permission change between Add
// and Commit), the files renamed before it stay replaced and Commit says
// which file failed. TODO: keep the replaced files as hidden backups until the
// last rename succeeds, so Commit can roll back too.
//
// The zero Batch is empty and ready to use. A Batch is not safe for
// concurrent use.
type Batch struct {
	staged    []stagedFile
	committed bool
}

type stagedFile struct {
	path string // the destination
	temp string // the hidden temporary beside it
}

// Add stages data for path: it creates path's folder if needed and writes
// data to a new hidden temporary file there, with permissions 0644, synced to
// disk. It never touches path itself. Adding the same path twice is an error.
func (b *Batch) Add(path string, data []byte) error {
	if b.committed {
		return fmt.Errorf("stage %q: batch already committed", path)
	}
	for _, s := range b.staged {
		if s.path == path {
			return fmt.Errorf("stage %q: path added twice", path)
		}
	}
	dir, base := filepath.Split(path)
	if base == "" {
		return fmt.Errorf("stage %q: path names a folder", path)
	}
	if dir == "" {
		dir = "."
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("stage %q: %w", path, err)
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp-*")
	if err != nil {
		return fmt.Errorf("stage %q: %w", path, err)
	}
	temp := f.Name()
	_, err = f.Write(data)
	if err == nil {
		err = f.Chmod(0o644)
	}
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(temp)
		return fmt.Errorf("stage %q: %w", path, err)
	}
	b.staged = append(b.staged, stagedFile{path: path, temp: temp})
	return nil
}

// Commit renames every staged file onto its destination, in the order they
// were added, then syncs each destination folder so the renames survive a
// crash. After a failed rename it removes the temporaries not yet renamed and
// reports the destination that failed. Committing an empty batch does
// nothing; committing twice is an error.
func (b *Batch) Commit() error {
	if b.committed {
		return errors.New("commit batch: already committed")
	}
	b.committed = true
	var dirs []string
	for i, s := range b.staged {
		if err := os.Rename(s.temp, s.path); err != nil {
			for _, rest := range b.staged[i:] {
				os.Remove(rest.temp)
			}
			return fmt.Errorf("commit %q: %w", s.path, err)
		}
		dirs = appendNew(dirs, filepath.Dir(s.path))
	}
	for _, dir := range dirs {
		if err := syncDir(dir); err != nil {
			return fmt.Errorf("commit: sync folder %q: %w", dir, err)
		}
	}
	return nil
}

// Abort removes every temporary file that has not been committed. It is safe
// to call more than once and after Commit, where it does nothing; a deferred
// Abort therefore cleans up after any early return.
func (b *Batch) Abort() {
	if b.committed {
		return
	}
	for _, s := range b.staged {
		os.Remove(s.temp)
	}
	b.staged = nil
}

// appendNew appends s to list unless it is already there.
func appendNew(list []string, s string) []string {
	for _, have := range list {
		if have == s {
			return list
		}
	}
	return append(list, s)
}

// syncDir flushes a folder's entries (such as a rename) to disk.
func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	err = d.Sync()
	if cerr := d.Close(); err == nil {
		err = cerr
	}
	return err
}
