package dataset

import (
	"fmt"
	"strings"
)

// Format is the layout of a data file. The zero value is invalid, so a
// forgotten setting is caught rather than silently defaulted.
type Format int

const (
	_       Format = iota
	CSV            // comma-separated text with a header line
	TSV            // tab-separated text with a header line
	Parquet        // Apache Parquet
)

// String returns the recipe word for the format: "csv", "tsv" or "parquet".
func (f Format) String() string {
	switch f {
	case CSV:
		return "csv"
	case TSV:
		return "tsv"
	case Parquet:
		return "parquet"
	}
	return fmt.Sprintf("Format(%d)", int(f))
}

// ParseFormat maps a user's word ("csv", "tsv" or "parquet", in any case) to
// a Format.
func ParseFormat(s string) (Format, error) {
	switch strings.ToLower(s) {
	case "csv":
		return CSV, nil
	case "tsv":
		return TSV, nil
	case "parquet":
		return Parquet, nil
	}
	return 0, fmt.Errorf("unknown data format %q: known formats are \"csv\", \"tsv\", \"parquet\"", s)
}

// Kind says how a column's values are read. The zero value is invalid.
type Kind int

const (
	_       Kind = iota
	Numeric      // numbers, as float64
	Ordinal      // text labels with a declared order, mapped to 1..k
	Label        // text kept as text (grouping columns)
)

// String returns a lowercase word for the kind.
func (k Kind) String() string {
	switch k {
	case Numeric:
		return "numeric"
	case Ordinal:
		return "ordinal"
	case Label:
		return "label"
	}
	return fmt.Sprintf("Kind(%d)", int(k))
}
