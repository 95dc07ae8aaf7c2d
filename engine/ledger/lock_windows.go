//go:build windows

package ledger

import (
	"errors"
	"os"

	"golang.org/x/sys/windows"
)

// allBytes, passed as both the low and the high half of the length, locks
// the whole range a file can have, so the lock does not depend on the lock
// file's size (it stays empty).
const allBytes = ^uint32(0)

// tryLockFile tries once to take an exclusive LockFileEx lock on f,
// without waiting (LOCKFILE_FAIL_IMMEDIATELY): it reports false, and no
// error, when another holder has it. The lock belongs to the handle, so two
// Locks in one process exclude each other.
func tryLockFile(f *os.File) (bool, error) {
	h := windows.Handle(f.Fd())
	flags := uint32(windows.LOCKFILE_EXCLUSIVE_LOCK | windows.LOCKFILE_FAIL_IMMEDIATELY)
	err := windows.LockFileEx(h, flags, 0, allBytes, allBytes, new(windows.Overlapped))
	switch {
	case err == nil:
		return true, nil
	case errors.Is(err, windows.ERROR_LOCK_VIOLATION):
		return false, nil
	}
	return false, err
}

// unlockFile releases the range locked by tryLockFile.
func unlockFile(f *os.File) error {
	h := windows.Handle(f.Fd())
	return windows.UnlockFileEx(h, 0, allBytes, allBytes, new(windows.Overlapped))
}
