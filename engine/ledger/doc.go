// Package ledger keeps the provenance ledger: one JSON line per successful
// run, appended to a file beside the recipe and meant to be committed to git
// with it. A record says which recipe bytes, input bytes, settings, seed and
// tool build produced which output bytes.
//
// Two hashes protect the ledger, and they cover different things on purpose.
//
// run_sha256 is a record's own fingerprint: the SHA-256 of the canonical
// JSON (RFC 8785) of everything that determines the results — recipe, tool,
// seed, settings, inputs, steps, outputs. It leaves out the start and finish
// times, because the point of the fingerprint is that recomputing the same
// analysis months later, on another machine, hashes equal; a clock reading
// would make every run unique and the comparison useless.
//
// prev_sha256 chains the lines: it is the SHA-256 of the previous line's
// exact bytes, times included. So any edit to an earlier line — a digit of a
// checksum, a rewritten time, even added white space — breaks the chain at
// the line after it, and Read names that line. The last line's times are the
// only bytes no later line vouches for.
//
// The ledger is a history, not a proof of authorship: anyone who can write
// the file can rewrite the whole chain consistently. Its value is that
// accidental or casual edits show, and that git keeps the history.
//
// Keep line endings as written (LF): a checkout that turns them into CRLF
// changes every line's bytes and breaks the chain. A .gitattributes line such
// as "*.ledger.jsonl -text" prevents that. The "<ledger>.lock" file that
// Append uses is not part of the record and can be ignored in git.
package ledger
