//go:build (!unix && !windows) || aix

package ledger

import (
	"errors"
	"fmt"
	"os"
	"runtime"
)

// tryLockFile fails: this platform has no file lock that excludes two holders
// in one process and is released when its holder dies. (A lock file created
// with O_EXCL would be left behind by a crash and block every later run until
// someone deleted it by hand; see the package documentation.)
func tryLockFile(*os.File) (bool, error) {
	return false, fmt.Errorf("file locks are not supported on %s: %w", runtime.GOOS, errors.ErrUnsupported)
}

// unlockFile is never reached, because tryLockFile never succeeds.
func unlockFile(*os.File) error { return nil }
