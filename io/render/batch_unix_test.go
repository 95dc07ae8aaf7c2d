//go:build unix

package render

import (
	"os"
	"path/filepath"
	"syscall"
	"testing"
)

// withUmask sets the process's umask to mask until the test ends. The umask
// belongs to the whole process, so a test that uses it must not run in
// parallel with others that create files.
func withUmask(t *testing.T, mask int) {
	old := syscall.Umask(mask)
	t.Cleanup(func() { syscall.Umask(old) })
}

func wantMode(t *testing.T, path string, want os.FileMode) {
	t.Helper()
	info, err := os.Stat(path)
	if err != nil {
		t.Fatal(err)
	}
	if got := info.Mode().Perm(); got != want {
		t.Errorf("%s has mode %04o, want %04o", path, got, want)
	}
}

func TestBatchModes(t *testing.T) {
	// Under umask 077 a new table is readable by its owner only (as a file
	// from os.Create would be), and a replaced table keeps the mode it had.
	withUmask(t, 0o077)
	dir := t.TempDir()
	fresh := filepath.Join(dir, "out", "new.csv")
	shared := filepath.Join(dir, "shared.md")
	writeFile(t, shared, "old\n")
	if err := os.Chmod(shared, 0o640); err != nil {
		t.Fatal(err)
	}
	open := filepath.Join(dir, "open.md")
	writeFile(t, open, "old\n")
	if err := os.Chmod(open, 0o644); err != nil {
		t.Fatal(err)
	}

	var b Batch
	defer b.Abort()
	for _, p := range []string{fresh, shared, open} {
		if err := b.Add(p, []byte("new\n")); err != nil {
			t.Fatal(err)
		}
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	if err := b.Release(); err != nil {
		t.Fatal(err)
	}
	wantMode(t, fresh, 0o600)
	wantMode(t, filepath.Dir(fresh), 0o700)
	wantMode(t, shared, 0o640)
	wantMode(t, open, 0o644)
}

func TestBatchModeUmask022(t *testing.T) {
	// The usual umask gives the usual 0644.
	withUmask(t, 0o022)
	dest := filepath.Join(t.TempDir(), "t.csv")
	var b Batch
	defer b.Abort()
	if err := b.Add(dest, []byte("x\n")); err != nil {
		t.Fatal(err)
	}
	if err := b.Commit(); err != nil {
		t.Fatal(err)
	}
	b.Release()
	wantMode(t, dest, 0o644)
}
