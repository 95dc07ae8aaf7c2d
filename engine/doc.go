// Package engine runs a resolved recipe plan: it loads each dataset once
// (only the columns the plan needs), pairs the columns per test and group,
// drops missing rows per the pairing's rule, ranks, measures, infers, writes
// every table atomically and appends one record to the provenance ledger.
//
// A run either completes and records, or leaves every earlier output and the
// ledger as they were: tables are staged beside their destinations and moved
// into place only after every step has succeeded and the ledger has been
// found intact.
//
// A run killed while it moves its tables into place leaves a journal beside
// the ledger, from which the next run restores the tables of the last record
// (or keeps the new ones, if the record was written): see journal.go.
// Computation.Record builds the record a run would append without writing
// anything, which is what `concordat verify` (engine/verify) compares.
//
// Results come out in recipe order (test, pair, group, measure) whatever the
// number of workers, so outputs and hashes are byte-identical for any Jobs.
package engine
