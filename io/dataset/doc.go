// Package dataset reads a data file — CSV, TSV or Parquet — through Apache
// Arrow into typed columns, and hashes its bytes for the provenance ledger.
//
// It decides nothing about pairing or statistics: [Read] returns the columns
// a [Spec] asks for, in the order asked, with missing values marked, and
// reports any cell it cannot read as a [*CellError] that names the file, the
// data row, the column and the value.
//
// Nor does it guess a file's format: the caller names it in [Spec.Format]
// (the recipe package decides what a file's extension means, and
// [ParseFormat] reads the recipe's word).
//
// # Hashes
//
// [Table.SHA256] is the hash of the bytes that were parsed. A CSV or TSV file
// is read once, in blocks that are hashed as they are read and then parsed.
// A Parquet file is read out of order, so it is hashed through the handle
// that parses it, before and after parsing; if the two hashes differ, Read
// fails with an error saying that the file changed while it was being read.
//
// # Speed and memory
//
// Read uses every core (GOMAXPROCS) and gives the same result whatever
// their number. A CSV or TSV file is cut into chunks of whole records,
// which are parsed in parallel by a tokenizer of this package (the rules of
// encoding/csv, numbers by strconv.ParseFloat) and appended in file order.
// A Parquet file is read by leaf column and row group in parallel, through
// Arrow's Parquet reader, straight into the columns. Only the requested
// columns are converted and kept; besides them, a read holds a few blocks
// or batches per core, and leaves garbage for the collector (Parquet pages).
// Reading two float columns of 10⁷ rows (160 MB as float64) peaked at about
// 200 MiB of heap from CSV and 260 MiB from Parquet when measured
// (BenchmarkReadCSV and BenchmarkReadParquet report it).
//
// # Column kinds
//
//   - [Numeric]: numbers, returned as float64.
//   - [Ordinal]: text with a declared order. The label at position i
//     (0-based) of [ColumnSpec.Levels], listed low to high, becomes i+1.
//   - [Label]: text kept as text, for grouping columns.
//
// One column may be requested twice, as a Label and as a Numeric or Ordinal
// column, when a recipe uses it both as a variable and for grouping; it is
// then returned twice, once per kind, and [Table.Column] finds each by name
// and kind.
//
// # Value rules (CSV and TSV)
//
// The first record of the file is the header. A UTF-8 byte order mark before
// it is dropped, CRLF line endings are accepted, fields may be quoted (a
// quoted field may hold the separator, quotes written twice, and line
// breaks), and every record must have as many fields as the header. Blank
// lines are skipped and do not count as rows. TSV follows the same rules
// with a tab as the separator, so a TSV field may be quoted too. Header names are compared
// exactly, without trimming or case folding.
//
// A cell equal to one of [Spec.Missing] is missing, whatever the column's
// kind. The comparison is exact: no trimming and no case folding, so with
// Missing = ["NA"] the cells "na" and " NA" are not missing. List "" to
// read empty cells as missing; an empty cell that is not declared missing is
// an error in a Numeric or Ordinal column and an empty label in a Label
// column.
//
// A Numeric cell that is not missing is trimmed of surrounding ASCII spaces
// and tabs and parsed with [strconv.ParseFloat], which rounds correctly to
// the nearest float64 and also accepts exponents, hexadecimal floats and
// underscores as that function does. Then:
//
//   - "NaN", in any case, is missing (it has no rank);
//   - "Inf", "+Inf", "-Inf", "Infinity" (any case) are kept as ±Inf, since
//     an extreme value has a well-defined rank;
//   - a value beyond the float64 range, such as 1e400, is an error rather
//     than a silent infinity; a value too small to represent rounds to zero
//     or a subnormal number, as [strconv.ParseFloat] does;
//   - a value written with a decimal comma ("3,5", quoted in a CSV) is an
//     error whose hint says so;
//   - anything else that is not a number is an error.
//
// An Ordinal cell must equal one of the levels exactly (no trimming, case
// matters); otherwise the error names the label and lists the levels.
//
// A Label cell is kept as written. Repeated labels share one string.
//
// # Value rules (Parquet)
//
// Columns are found by their top-level name. Integer (signed and unsigned),
// float32, float64 and decimal columns can be read as Numeric; Parquet nulls
// are missing, and NaN in a float column is missing too. String columns (and
// dictionary-encoded strings) can be read as Ordinal or Label, and so can
// integer columns, whose values are then written in decimal ("3") before
// they are matched against the levels. Asking for a Numeric column stored
// as text, for a float or decimal column as Ordinal or Label, or for any
// kind of a boolean, temporal or nested column, is a [*ColumnError] that
// names the file, the column and its type. [Spec.Missing] does not
// apply to Parquet, whose nulls already say what is missing.
//
// # Errors
//
// Problems in the data are typed so that a caller can point at the recipe
// line that asked for the column: [*CellError] for a cell or a row that
// cannot be read, [*MissingColumnError] for a requested column the file
// lacks, and [*ColumnError] for a requested column that cannot be read as a
// whole: a Parquet type that does not fit the kind asked for, or a name that
// the header holds more than once. (A repeated name that is not requested
// does no harm, and [Header] returns every name, repeats included.)
// Rows are counted from 1 after the header; for CSV and TSV the file line
// where the row starts is given as well.
package dataset
