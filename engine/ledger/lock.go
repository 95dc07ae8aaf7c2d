package ledger

import (
	"errors"
	"fmt"
	"os"
	"sync"
)

// Locked is a ledger held under its exclusive lock.
//
// A run takes the lock before it reads the ledger and keeps it until its
// record is appended (or the run has given up and put its tables back), so
// two runs of one recipe cannot interleave their table writes and ledger
// lines. Its methods may be called from several goroutines; they take turns.
type Locked struct {
	path string

	mu   sync.Mutex
	file *os.File // the open lock file; nil once unlocked
}

// errUnlocked is returned by the methods of a Locked after Unlock.
var errUnlocked = errors.New("the ledger lock was released")

// Lock takes the exclusive lock on "<path>.lock" (blocking) and returns the held ledger. The caller must Unlock.
//
// The lock file is created when missing (mode 0644) and stays in place after
// Unlock; its contents are never read or written. Lock waits for as long as
// another holder keeps the lock. How the lock is taken on each platform, and
// where it is not available, is described in the package documentation.
func Lock(path string) (*Locked, error) {
	f, err := os.OpenFile(path+".lock", os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("lock ledger %q: %w", path, err)
	}
	if err := lockFile(f); err != nil {
		f.Close()
		return nil, fmt.Errorf("lock ledger %q: %w", path, err)
	}
	return &Locked{path: path, file: f}, nil
}

// Records reads and verifies the ledger (as Read does) while the lock is held.
// It fails once the lock is released.
func (l *Locked) Records() ([]Record, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.file == nil {
		return nil, fmt.Errorf("read ledger %q: %w", l.path, errUnlocked)
	}
	return Read(l.path)
}

// Append appends rec as Append does, without taking the lock again.
// It fails once the lock is released.
func (l *Locked) Append(rec Record) (Record, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.file == nil {
		return Record{}, fmt.Errorf("append to ledger %q: %w", l.path, errUnlocked)
	}
	return appendRecord(l.path, rec)
}

// Unlock releases the lock; safe to call twice.
//
// It closes the lock file, which releases the lock even when unlocking
// reports an error. A second call does nothing and returns nil.
func (l *Locked) Unlock() error {
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.file == nil {
		return nil
	}
	f := l.file
	l.file = nil
	err := unlockFile(f)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("unlock ledger %q: %w", l.path, err)
	}
	return nil
}
