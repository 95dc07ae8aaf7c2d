package ledger

import (
	"context"
	"errors"
	"fmt"
	"os"
	"sync"
	"time"
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
// It is LockContext with a context that is never cancelled and no waiting
// callback: it waits for as long as another holder keeps the lock.
func Lock(path string) (*Locked, error) {
	return LockContext(context.Background(), path, nil)
}

// LockContext takes the exclusive lock like Lock, but gives up with ctx.Err() when ctx is cancelled while waiting. waiting, when not nil, is called once if the lock is not free at the first try (so the CLI can print "waiting for the ledger lock …").
//
// The lock file is created when missing (with the permissions 0644 less the
// umask) and stays in place after Unlock; its contents are never read or
// written. While another holder keeps the lock, LockContext tries again
// every 50 ms at first, backing off to every 250 ms, so a holder that
// unlocks is followed within about a quarter of a second; the error it
// returns when ctx is done wraps ctx.Err(), so errors.Is(err,
// context.Canceled) holds after a Ctrl-C. A ctx that is already done is
// reported before the lock is tried. How the lock is taken on each
// platform, and where it is not available, is described in the package
// documentation.
func LockContext(ctx context.Context, path string, waiting func()) (*Locked, error) {
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("lock ledger %q: %w", path, err)
	}
	f, err := os.OpenFile(path+".lock", os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, fmt.Errorf("lock ledger %q: %w", path, err)
	}
	if err := waitLock(ctx, f, waiting); err != nil {
		f.Close()
		return nil, fmt.Errorf("lock ledger %q: %w", path, err)
	}
	return &Locked{path: path, file: f}, nil
}

// The polling interval of waitLock starts at firstPoll and grows by half
// on each try up to lastPoll. Chosen, not measured: 50 ms is short next to a
// run, and 250 ms keeps an idle waiter at four cheap system calls a second.
const (
	firstPoll = 50 * time.Millisecond
	lastPoll  = 250 * time.Millisecond
)

// waitLock takes the lock on f, trying again until it is free or ctx is
// done. It calls waiting, if not nil, once the first try has found the lock
// held. (Polling, because neither flock nor LockFileEx can be interrupted by
// a context; a blocking call in a goroutine would hold the lock file open,
// and might take the lock, after LockContext had given up.)
func waitLock(ctx context.Context, f *os.File, waiting func()) error {
	interval := firstPoll
	var timer *time.Timer
	for tries := 0; ; tries++ {
		ok, err := tryLockFile(f)
		if err != nil || ok {
			return err
		}
		if tries == 0 {
			if waiting != nil {
				waiting()
			}
			timer = time.NewTimer(interval)
			defer timer.Stop()
		} else {
			interval = min(interval*3/2, lastPoll)
			timer.Reset(interval)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-timer.C:
		}
	}
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
