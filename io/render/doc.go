// Package render formats result tables for people and programs, and writes
// files so that a run either replaces all of its outputs or none of them.
//
// A Table holds typed cells (text, integers, real numbers, p-values,
// intervals and lists of warnings); Encode writes it as Markdown, CSV or
// JSON. Percent formats a confidence level for a column header. The package
// computes nothing but formatting: numbers arrive finished and leave rounded
// only as the chosen format requires. For identical input every format's
// output is byte-identical, which the reproducibility contract relies on.
//
// A Batch stages each output in a hidden temporary file beside its
// destination and renames them all into place on Commit, so that readers
// never see a half-written table. It keeps the files it replaced as hidden
// backups until the caller releases them, so a failed Commit, or a failure
// after it (such as the ledger append), can put every previous output back.
package render
