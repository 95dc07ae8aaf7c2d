// Package verify recomputes a recipe and compares the outcome with a record
// of its provenance ledger, for `concordat verify`.
//
// What is compared, and against what:
//
//   - the recipe's sha256, and its resolved settings (every default made
//     explicit), which name the value that changed when the recipe did;
//   - each input's path, sha256, size and row count;
//   - each test's input hash (its settings and data) and result hash (its
//     result records in a canonical encoding);
//   - each table, twice: the bytes recomputed now against the sha256 the
//     record holds, and the file on disk against that same sha256.
//
// Nothing is written. The recomputation renders the tables in memory
// (engine.Compute), so neither the outputs nor the ledger are touched, and a
// dataset's sha256 pin is not enforced: a changed input is a difference to
// report, not a reason to stop.
//
// # Naming the values that moved
//
// The ledger keeps hashes only: a record of a large matrix would otherwise
// carry hundreds of thousands of numbers per run. When a test's result hash
// differs, the recorded values are therefore read back from a table on disk
// that holds the test, and only from one whose sha256 is the one the record
// holds for it — that file is then byte for byte what the recorded run
// wrote. A JSON or CSV table (every digit) is preferred to a Markdown one
// (the digits it prints). The recomputed table is compared with it cell by
// cell, rows matched by test, pair, group and measure, and each difference
// is named by those four, the column, and both values. When no such file is
// left (the tables were rewritten by a later run, or never committed), the
// report says that the values cannot be named.
//
// The same cell comparison shows a table on disk that was edited after its
// run: the recomputed table, when it still hashes as recorded, is the
// recorded table, so each changed cell is named with its recorded value.
package verify
