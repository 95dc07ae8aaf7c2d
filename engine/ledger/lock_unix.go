//go:build unix && !aix

package ledger

import (
	"os"

	"golang.org/x/sys/unix"
)

// lockFile waits for an exclusive flock(2) on f. Flock locks belong to the
// open file, not to the process, so two Locks in one process exclude each
// other as two processes do.
//
// AIX has no flock(2), and its fcntl(2) record locks belong to the process
// (a second Lock in the same process would be granted at once), so AIX uses
// lock_other.go.
func lockFile(f *os.File) error {
	for {
		err := unix.Flock(int(f.Fd()), unix.LOCK_EX)
		if err != unix.EINTR {
			return err
		}
	}
}

// unlockFile releases the flock taken by lockFile.
func unlockFile(f *os.File) error {
	return unix.Flock(int(f.Fd()), unix.LOCK_UN)
}
