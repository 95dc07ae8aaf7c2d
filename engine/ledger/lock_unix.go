//go:build unix && !aix

package ledger

import (
	"os"

	"golang.org/x/sys/unix"
)

// tryLockFile tries once to take an exclusive flock(2) on f, without
// waiting: it reports false, and no error, when another holder has it.
// Flock locks belong to the open file, not to the process, so two Locks in
// one process exclude each other as two processes do.
//
// AIX has no flock(2), and its fcntl(2) record locks belong to the process
// (a second Lock in the same process would be granted at once), so AIX uses
// lock_other.go.
func tryLockFile(f *os.File) (bool, error) {
	for {
		err := unix.Flock(int(f.Fd()), unix.LOCK_EX|unix.LOCK_NB)
		switch err {
		case nil:
			return true, nil
		case unix.EWOULDBLOCK:
			return false, nil
		case unix.EINTR:
			continue
		}
		return false, err
	}
}

// unlockFile releases the flock taken by tryLockFile.
func unlockFile(f *os.File) error {
	return unix.Flock(int(f.Fd()), unix.LOCK_UN)
}
