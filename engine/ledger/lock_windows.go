//go:build windows

package ledger

import (
	"os"

	"golang.org/x/sys/windows"
)

// allBytes, passed as both the low and the high half of the length, locks
// the whole range a file can have, so the lock does not depend on the lock
// file's size (it stays empty).
const allBytes = ^uint32(0)

// lockFile waits for an exclusive LockFileEx lock on f. Without
// LOCKFILE_FAIL_IMMEDIATELY, LockFileEx on a handle opened for synchronous
// I/O (as os.OpenFile opens it) returns only once the lock is granted. The
// lock belongs to the handle, so two Locks in one process exclude each other.
func lockFile(f *os.File) error {
	h := windows.Handle(f.Fd())
	return windows.LockFileEx(h, windows.LOCKFILE_EXCLUSIVE_LOCK, 0, allBytes, allBytes, new(windows.Overlapped))
}

// unlockFile releases the range locked by lockFile.
func unlockFile(f *os.File) error {
	h := windows.Handle(f.Fd())
	return windows.UnlockFileEx(h, 0, allBytes, allBytes, new(windows.Overlapped))
}
