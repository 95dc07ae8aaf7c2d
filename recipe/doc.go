// Package recipe reads a concordat recipe — one HCL file that says which
// data to read, which columns to pair, how to rank ties and which tests and
// tables to produce — and resolves it into a Plan.
//
// Load and Parse check the whole recipe in one pass: syntax, unknown blocks
// and arguments, missing or mistyped values, unknown words, numbers out of
// range, duplicate names and references to blocks that do not exist. Every
// problem comes back as an hcl.Diagnostic whose Subject points at the
// offending text, so a command can print file:line:col with the source line.
// A Plan is returned only when there are no errors; every default is filled
// in and every path is resolved against the recipe's folder.
//
// The package never opens a data file: whether a column exists, or whether
// a level list covers the data, is for the engine to check against the
// ranges that the Plan keeps for that purpose (Pairing.ColumnRanges,
// ColumnDecl.LevelsRange, Dataset.Where's Columns).
//
// A param block declares a named value with a default, such as
// param "min_age" { default = 18 }, that any argument uses as param.min_age;
// LoadWith
// overrides defaults (`--param min_age=21`), and Plan.Params and the
// settings record the values used. Pin writes dataset sha256 pins into a
// recipe's text in place (`run --pin`).
//
// A dataset's where is the one argument whose bare names are not mistakes
// but column names: it is kept as an expression and checked by
// engine/filter (its operators, and the type each column is read as),
// while every other argument is a constant.
package recipe
