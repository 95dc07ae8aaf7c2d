// Package ledger keeps the provenance ledger: one JSON line per successful
// run, appended to a file beside the recipe and meant to be committed to git
// with it. A record says which recipe bytes, input bytes, settings, seed and
// tool build produced which output bytes.
//
// Two hashes protect the ledger, and they cover different things on purpose.
//
// run_sha256 is a record's own fingerprint: the SHA-256 of the canonical
// JSON (RFC 8785) of every field before it in the record — the format; the
// recipe's path, SHA-256 and size; the title; the tool (concordat's version,
// the Go version, the OS and architecture, and the versions and go.sum
// hashes of the modules that compute results); the seed; the settings; each
// input's name, path, SHA-256, size and row count; each step's test, input
// hash, result hash and result count; and each output's table, path, format,
// SHA-256 and size. It leaves out the start and finish times, and of course
// run_sha256 and prev_sha256 themselves: a clock reading would make every
// run unique and the comparison useless. Paths are relative to the ledger's
// folder, so where the project is checked out does not matter.
//
// So run_sha256 is equal for two runs only when the same recipe and data,
// with the same settings and seed, were run by the same build of concordat
// on the same OS and architecture and wrote the same table bytes: running a
// recipe again months later, on another machine with that same release,
// hashes equal. A run on another OS or architecture, or with a concordat
// built by another Go version or against other module versions, has another
// run_sha256 even when every number agrees. To compare the numbers alone
// across machines and builds, compare the steps' result_sha256
// (Step.ResultSHA256), which hashes a test's results and nothing about the
// tool, and their input_sha256, which says whether the test saw the same
// data and settings.
//
// prev_sha256 chains the lines: it is the SHA-256 of the previous line's
// exact bytes, times included. So any edit to an earlier line — a digit of a
// checksum, a rewritten time, even added white space — breaks the chain at
// the line after it, if not already at its own, and Read names the first
// line that fails. The last line's times are the only bytes no later line
// vouches for.
//
// The ledger is a history, not a proof of authorship: anyone who can write
// the file can rewrite the whole chain consistently. Its value is that
// accidental or casual edits show, and that git keeps the history.
//
// Keep line endings as written (LF): a checkout that turns them into CRLF
// changes every line's bytes and breaks the chain. A .gitattributes line such
// as "*.ledger.jsonl -text" prevents that.
//
// # Locking
//
// A run holds the ledger's lock for its whole length: Lock, then
// Locked.Records to verify the ledger, then move the tables into place, then
// Locked.Append (or, if that fails, put the old tables back), then Unlock. Two
// runs of one recipe, in one process or in two, then cannot interleave their
// table writes and ledger lines. LockContext is Lock for a caller that must
// be able to stop waiting (Ctrl-C) and tell the user that it waits. Append
// does Lock, Locked.Append and Unlock for a caller that needs nothing else
// under the lock. Read takes no lock: Append replaces the file by renaming,
// so Read sees either the old ledger or the new one.
//
// The lock is an advisory lock on a separate file, "<ledger>.lock", which is
// created on first use and left in place; it is not part of the record and
// can be ignored in git. Do not delete it while a run may hold it: the next
// run would lock a new file and not wait. Only Lock and LockContext honour
// the lock; a program that writes the ledger without it is not stopped. The
// lock is released when its holder unlocks, exits or dies, so a crash leaves
// no stale lock behind.
//
// On Unix systems other than AIX the lock is flock(2); on Windows it is
// LockFileEx with LOCKFILE_EXCLUSIVE_LOCK. Both belong to the open file, so
// they exclude two holders in one process as well as in two. Each is tried
// without blocking (LOCK_NB, LOCKFILE_FAIL_IMMEDIATELY) and tried again
// after a short pause while another holder has it, so that a wait can be
// cancelled. Locks on network file systems may not be honoured. On other
// platforms (AIX, Plan 9, js and wasip1) Lock, LockContext and Append fail
// with an error wrapping errors.ErrUnsupported. A lock file created with
// O_EXCL would work there but would outlive a crashed run and block every
// later one until someone deleted it by hand, and it could not share its
// name with the lock file that the other platforms leave in place.
package ledger
