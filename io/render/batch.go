package render

import (
	"errors"
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"
)

// A Batch stages files next to their destinations and moves them into place
// together, so that a run either replaces all of its outputs or leaves every
// previous one as it was.
//
// Its life is
//
//	Add … → Commit → Release  (the run is kept)
//	Add … → Commit → Undo     (a later step of the run failed)
//	Add … → Commit → Abort    (the run stopped before it decided: as Undo)
//	Add … → Abort             (the run failed before Commit)
//
// Add creates the destination's folder if needed, writes the file's bytes to
// a hidden temporary file in that folder and syncs it to disk. Commit moves
// the temporaries onto their destinations, in the order they were added,
// keeping each file it replaces as a hidden backup in the same folder, and
// syncs the folders. A rename within one folder replaces the destination
// atomically, so a reader sees either the old file or the new one, never a
// mixture. If a rename fails, Commit puts back every file it had already
// replaced and reports the file that failed, so the outputs are as they
// were before.
//
// After a successful Commit the caller decides: Release deletes the backups
// and keeps the new files; Undo puts the previous files back (and removes
// the files that did not exist before), for when something that must happen
// together with the outputs, such as appending the ledger record, fails.
//
// Abort ends the Batch and leaves the outputs as they were before it: before
// Commit it removes the temporaries, and after a Commit that was neither
// released nor undone it undoes the Commit. So a run that returns early or
// panics between Commit and Release gets its previous outputs back; only
// Release keeps the new outputs. A deferred Abort leaves no hidden files
// behind, except the backup of a file that could not be put back:
//
//	var b render.Batch
//	defer b.Abort() // undoes everything unless Release was reached
//	… b.Add(path, data) …
//	if err := b.Commit(); err != nil {
//		return err // every previous output is in place
//	}
//	if err := appendLedger(); err != nil {
//		return errors.Join(err, b.Undo())
//	}
//	return b.Release()
//
// Abort, Release and Undo may each be called more than once, and any of
// them in a state where it has nothing to do does nothing. After Release,
// Undo and Abort do nothing; after Undo, Release and Abort do nothing (they
// would otherwise delete the backups of files that could not be put back).
//
// Folders that Add created are removed again, deepest first, when the Batch
// ends without keeping its outputs (Abort, a failed Commit, Undo), if they
// are then empty; a folder that something else has put a file in stays.
//
// New files get the permissions 0666 less the process's umask, as files
// made by os.Create do; a file that replaces another takes the permissions
// of the file it replaces.
//
// Syncing a folder is for durability only: once every rename has
// succeeded the outputs are in place, so Commit does not fail (or roll
// back) because a folder could not be synced, and on Windows, where a folder
// cannot be synced, it is not tried. A crash soon after such a Commit may
// then lose the renames on some file systems.
//
// The backup is a second hard link to the replaced file, so the destination
// never goes missing. On a file system without hard links the file is
// renamed aside instead, and for that moment the destination is absent.
// A crash part way through Commit or Undo can leave hidden temporaries and
// backups (named .NAME.tmp-* and .NAME.bak-*) beside the destinations; the
// backups then hold the previous outputs.
//
// The zero Batch is empty and ready to use. A Batch is not safe for
// concurrent use.
type Batch struct {
	staged []stagedFile
	state  batchState
	// made lists the folders that Add created, each after its parent, so
	// that a failed run can remove them again in reverse order.
	made []string
}

// batchState is where a Batch is in its life. The zero value is a Batch
// that is still staging files.
type batchState int

const (
	batchStaging   batchState = iota // Add, Commit and Abort are allowed
	batchCommitted                   // outputs replaced; backups held
	batchReleased                    // backups deleted; the new outputs stay
	batchUndone                      // previous outputs restored (perhaps only partly, see Undo)
	batchAborted                     // Abort, or a Commit that failed and rolled back
)

type stagedFile struct {
	path string // the destination
	temp string // the hidden temporary beside it; "" once moved or removed
	// backup is the hidden copy of the file that was at path before Commit,
	// or "" when there was none (or it has been restored or released).
	backup string
	// displaced is true while path no longer holds what it held before
	// Commit: the temporary has been renamed onto it, or the previous file
	// has been renamed aside.
	displaced bool
}

// Add stages data for path: it creates path's folder if needed and writes
// data to a new hidden temporary file there, synced to disk, with the
// permissions 0666 less the umask. It never touches path itself. Adding the
// same path twice is an error, and so is Add after Commit or Abort.
func (b *Batch) Add(path string, data []byte) error {
	if b.state != batchStaging {
		return fmt.Errorf("stage %q: batch already %s", path, b.state)
	}
	for _, s := range b.staged {
		if filepath.Clean(s.path) == filepath.Clean(path) {
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
	made, err := makeFolders(dir)
	if err != nil {
		return fmt.Errorf("stage %q: %w", path, err)
	}
	f, err := createTemp(dir, "."+base+".tmp-")
	if err != nil {
		removeFolders(made)
		return fmt.Errorf("stage %q: %w", path, err)
	}
	temp := f.Name()
	_, err = f.Write(data)
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(temp)
		removeFolders(made)
		return fmt.Errorf("stage %q: %w", path, err)
	}
	b.staged = append(b.staged, stagedFile{path: path, temp: temp})
	b.made = append(b.made, made...)
	return nil
}

// createTemp creates a new file in dir named prefix followed by a random
// number, for writing, with the permissions 0666 less the umask. Unlike
// os.CreateTemp, which always uses 0600, it lets the umask decide, as
// os.Create does, so a new output is as readable as any other file the user
// creates.
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

// makeFolders creates dir and any missing parents, as os.MkdirAll does
// (with the permissions 0777 less the umask), and returns the folders it
// created, each after its parent. A folder that appears meanwhile, made by
// someone else, is not among them. If it fails, it removes what it created.
func makeFolders(dir string) ([]string, error) {
	var missing []string // deepest first
	for d := filepath.Clean(dir); ; {
		info, err := os.Stat(d)
		if err == nil {
			if !info.IsDir() {
				return nil, &fs.PathError{Op: "mkdir", Path: d, Err: errors.New("not a folder")}
			}
			break
		}
		if !errors.Is(err, fs.ErrNotExist) {
			return nil, err
		}
		missing = append(missing, d)
		parent := filepath.Dir(d)
		if parent == d {
			break
		}
		d = parent
	}
	var made []string
	for i := len(missing) - 1; i >= 0; i-- {
		d := missing[i]
		err := os.Mkdir(d, 0o777)
		if errors.Is(err, fs.ErrExist) {
			if info, serr := os.Stat(d); serr == nil && info.IsDir() {
				continue // made by someone else meanwhile: not ours to remove
			}
		}
		if err != nil {
			removeFolders(made)
			return nil, err
		}
		made = append(made, d)
	}
	return made, nil
}

// removeFolders removes the folders in made, last first, where they are
// empty, and returns those it could not remove (in their order). A folder
// that is no longer empty is left alone; so is one that is already gone.
func removeFolders(made []string) []string {
	var kept []string
	for i := len(made) - 1; i >= 0; i-- {
		err := os.Remove(made[i])
		if err != nil && !errors.Is(err, fs.ErrNotExist) {
			kept = append(kept, made[i])
		}
	}
	slices.Reverse(kept)
	return kept
}

// Commit moves every staged file onto its destination, in the order they
// were added, keeping each replaced file as a hidden backup, then syncs each
// destination folder so the renames survive a crash. A file that replaces
// another first takes its permissions. A destination that is a folder is
// not replaced: that is an error.
//
// If a step fails, Commit restores every destination it had replaced from
// its backup, removes the destinations that did not exist before, the
// temporaries not yet moved and the empty folders that Add created, and
// returns an error naming the file that failed (and, if putting something
// back failed too, where its backup is). The Batch is then finished, as
// after Abort.
//
// Once every rename has succeeded, Commit succeeds: the folder sync that
// follows is best-effort durability, and a folder that cannot be synced is
// not a reason to take outputs back that are already in place.
//
// Committing an empty batch does nothing; committing twice, or after Abort,
// is an error.
func (b *Batch) Commit() error {
	if b.state != batchStaging {
		return fmt.Errorf("commit batch: already %s", b.state)
	}
	var dirs []string
	for i := range b.staged {
		s := &b.staged[i]
		if err := s.replace(); err != nil {
			err = fmt.Errorf("commit %q: %w", s.path, err)
			return errors.Join(err, b.rollBack())
		}
		dirs = appendNew(dirs, filepath.Dir(s.path))
	}
	b.state = batchCommitted
	syncDirs(dirs)
	return nil
}

// replace moves the previous file at s.path (if any) to a backup and the
// temporary onto s.path, giving the temporary the previous file's
// permissions first.
func (s *stagedFile) replace() error {
	info, err := os.Lstat(s.path)
	switch {
	case errors.Is(err, fs.ErrNotExist):
		// Nothing to keep.
	case err != nil:
		return err
	case info.IsDir():
		return errors.New("destination is a folder")
	default:
		// Stat, not Lstat: a symbolic link's own mode says nothing about
		// who may read the table.
		if target, err := os.Stat(s.path); err == nil && target.Mode().IsRegular() {
			if err := os.Chmod(s.temp, target.Mode().Perm()); err != nil {
				return fmt.Errorf("keep the permissions of the previous file: %w", err)
			}
		}
		backup, displaced, err := backUp(s.path)
		if err != nil {
			return fmt.Errorf("back up previous file: %w", err)
		}
		s.backup, s.displaced = backup, displaced
	}
	if err := os.Rename(s.temp, s.path); err != nil {
		return err
	}
	s.temp = ""
	s.displaced = true
	return nil
}

// linkFile is os.Link; tests replace it to take the path of a file system
// without hard links.
var linkFile = os.Link

// backUp keeps the file at path under a new hidden name beside it: a second
// hard link where the file system allows one, which leaves path in place,
// or else the file itself renamed aside (displaced is then true).
func backUp(path string) (backup string, displaced bool, err error) {
	dir, base := filepath.Split(path)
	// Like os.CreateTemp, try random names until one is free; 10000 tries
	// is os.CreateTemp's own limit.
	for range 10000 {
		name := filepath.Join(dir, "."+base+".bak-"+strconv.FormatUint(uint64(rand.Uint32()), 10))
		err := linkFile(path, name)
		if err == nil {
			return name, false, nil
		}
		if !errors.Is(err, fs.ErrExist) {
			break // no hard links here (or no permission to make one)
		}
	}
	// Reserve a name, then rename the file over it, which is atomic.
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".bak-*")
	if err != nil {
		return "", false, err
	}
	name := f.Name()
	f.Close()
	if err := os.Rename(path, name); err != nil {
		os.Remove(name)
		return "", false, err
	}
	return name, true, nil
}

// restore puts back what s.path held before Commit and deletes the backup
// and the temporary. It leaves s unchanged where it fails, so a later call
// can try again.
func (s *stagedFile) restore() error {
	var errs []error
	if s.temp != "" {
		if err := os.Remove(s.temp); err != nil && !errors.Is(err, fs.ErrNotExist) {
			errs = append(errs, fmt.Errorf("remove temporary %q: %w", s.temp, err))
		} else {
			s.temp = ""
		}
	}
	switch {
	case s.backup != "" && s.displaced:
		if err := os.Rename(s.backup, s.path); err != nil {
			errs = append(errs, fmt.Errorf("restore %q from backup %q: %w", s.path, s.backup, err))
		} else {
			s.backup, s.displaced = "", false
		}
	case s.backup != "":
		// path still holds the previous file; the backup is a spare link.
		if err := os.Remove(s.backup); err != nil && !errors.Is(err, fs.ErrNotExist) {
			errs = append(errs, fmt.Errorf("remove backup %q: %w", s.backup, err))
		} else {
			s.backup = ""
		}
	case s.displaced:
		// There was no file at path before.
		if err := os.Remove(s.path); err != nil && !errors.Is(err, fs.ErrNotExist) {
			errs = append(errs, fmt.Errorf("remove %q: %w", s.path, err))
		} else {
			s.displaced = false
		}
	}
	return errors.Join(errs...)
}

// rollBack restores every file, last added first, syncs the folders and
// removes the empty folders that Add created; Commit calls it when it fails.
// It returns nil when everything is back.
func (b *Batch) rollBack() error {
	b.state = batchAborted
	err := b.restoreAll()
	if err != nil {
		err = fmt.Errorf("roll back: %w", err)
	}
	return err
}

// restoreAll restores every staged file, last added first, so that a path
// is restored in the reverse order of its changes, syncs the folders
// (best-effort, as in Commit) and removes the folders that Add created
// where they are empty. It returns the files it could not put back.
func (b *Batch) restoreAll() error {
	var errs []error
	var dirs []string
	for i := len(b.staged) - 1; i >= 0; i-- {
		s := &b.staged[i]
		if err := s.restore(); err != nil {
			errs = append(errs, err)
		}
		dirs = appendNew(dirs, filepath.Dir(s.path))
	}
	syncDirs(dirs)
	b.made = removeFolders(b.made)
	return errors.Join(errs...)
}

// Undo, after a successful Commit, puts every previous output back: each
// replaced file is restored from its backup, and each file that did not
// exist before is removed; then the folders are synced and the folders that
// Add created are removed where they are empty. It is for a step that must
// succeed together with the outputs, such as appending the ledger record,
// and failed after Commit.
//
// If some file cannot be put back, Undo still restores the others and
// returns an error naming the file and its backup; calling Undo again
// retries only what failed. Undo does nothing before Commit, after a failed
// Commit, or after Release.
func (b *Batch) Undo() error {
	if b.state != batchCommitted && b.state != batchUndone {
		return nil
	}
	b.state = batchUndone
	if err := b.restoreAll(); err != nil {
		return fmt.Errorf("undo batch: %w", err)
	}
	return nil
}

// Release, after a successful Commit, keeps the new outputs and deletes the
// backups of the files they replaced. It returns an error naming any backup
// it could not delete (the outputs are in place regardless), and does
// nothing when called again, before Commit, after a failed Commit or after
// Undo.
func (b *Batch) Release() error {
	if b.state != batchCommitted && b.state != batchReleased {
		return nil
	}
	b.state = batchReleased
	b.made = nil // they hold the outputs now
	var errs []error
	for i := range b.staged {
		s := &b.staged[i]
		if s.backup == "" {
			continue
		}
		if err := os.Remove(s.backup); err != nil && !errors.Is(err, fs.ErrNotExist) {
			errs = append(errs, fmt.Errorf("release batch: remove backup %q: %w", s.backup, err))
			continue
		}
		s.backup = ""
	}
	return errors.Join(errs...)
}

// Abort ends the Batch and leaves the outputs as they were before it.
// Before Commit it removes every staged temporary file and the empty
// folders that Add created; Add and Commit are errors after it. After a
// successful Commit that was neither released nor undone, it is Undo (whose
// error it drops: a deferred Abort has no one to tell, and a caller that
// wants the error calls Undo itself). After Release, Undo or a failed
// Commit it does nothing. It is safe to call more than once, and meant to
// be deferred, so that only a run that reaches Release keeps its outputs.
func (b *Batch) Abort() {
	switch b.state {
	case batchStaging:
		b.state = batchAborted
		for i := range b.staged {
			s := &b.staged[i]
			if s.temp != "" {
				os.Remove(s.temp)
				s.temp = ""
			}
		}
		b.made = removeFolders(b.made)
	case batchCommitted:
		b.Undo()
	}
}

// String describes s for error messages ("committed", "aborted", …).
func (s batchState) String() string {
	switch s {
	case batchStaging:
		return "staging"
	case batchCommitted:
		return "committed"
	case batchReleased:
		return "committed and released"
	case batchUndone:
		return "committed and undone"
	case batchAborted:
		return "aborted"
	}
	return "batchState(" + strconv.Itoa(int(s)) + ")"
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

// syncDirs flushes each folder's entries (such as a rename) to disk, as far
// as it can: see syncDir. An error is dropped, because by then the renames
// have been made and cannot be taken back for its sake; it costs only
// durability across a crash.
func syncDirs(dirs []string) {
	for _, dir := range dirs {
		_ = syncFolder(dir)
	}
}

// syncFolder is syncDir; tests replace it to make folder syncs fail.
var syncFolder = syncDir
