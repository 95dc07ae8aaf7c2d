//go:build unix

package ledger

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

func TestAppendModes(t *testing.T) {
	// Under umask 077 a new ledger is readable by its owner only, and an
	// existing ledger keeps its mode through every append.
	withUmask(t, 0o077)
	dir := t.TempDir()
	fresh := filepath.Join(dir, "new.ledger.jsonl")
	for i := range 2 {
		if _, err := Append(fresh, sample(i)); err != nil {
			t.Fatal(err)
		}
		wantMode(t, fresh, 0o600)
	}
	wantMode(t, fresh+".lock", 0o600)

	shared := filepath.Join(dir, "shared.ledger.jsonl")
	if _, err := Append(shared, sample(0)); err != nil {
		t.Fatal(err)
	}
	if err := os.Chmod(shared, 0o640); err != nil {
		t.Fatal(err)
	}
	if _, err := Append(shared, sample(1)); err != nil {
		t.Fatal(err)
	}
	wantMode(t, shared, 0o640)
}

func TestAppendModeUmask022(t *testing.T) {
	// The usual umask gives the usual 0644.
	withUmask(t, 0o022)
	path := filepath.Join(t.TempDir(), "orchard.ledger.jsonl")
	if _, err := Append(path, sample(0)); err != nil {
		t.Fatal(err)
	}
	wantMode(t, path, 0o644)
}
