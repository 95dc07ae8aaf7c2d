package dataset

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
)

// Read reads the columns that spec asks for from spec.Path, following the
// value rules in the package documentation, and hashes the file's bytes.
// Cancelling ctx stops the read between blocks of text or batches of
// Parquet rows. Read works on up to GOMAXPROCS goroutines; its result does
// not depend on their number.
//
// A cell that cannot be read is reported as a *CellError, a requested column
// that the file lacks as a *MissingColumnError, and a requested column that
// cannot be read as a whole (a Parquet type that does not fit its kind, or a
// name the header holds twice) as a *ColumnError. A file with a header and no
// data rows gives a Table with Rows 0.
func Read(ctx context.Context, spec Spec) (*Table, error) {
	if err := checkSpec(spec); err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	switch spec.Format {
	case CSV, TSV:
		return readText(ctx, spec, separator(spec.Format))
	case Parquet:
		return readParquet(ctx, spec)
	}
	return nil, fmt.Errorf("read dataset %q: invalid format %d", spec.Path, int(spec.Format))
}

// Header returns the file's column names, in file order, without reading
// the data: the first record of a CSV or TSV file (after any byte order
// mark), or the top-level fields of a Parquet schema. Every name is
// returned, a repeated one as often as it occurs: Header does not judge the
// names, and a caller that checks the columns it will request can report a
// repeated one itself. (Read reports a requested name that occurs twice as
// a *ColumnError.)
func Header(path string, f Format) ([]string, error) {
	switch f {
	case CSV, TSV:
		return textHeader(path, separator(f))
	case Parquet:
		return parquetHeader(path)
	}
	return nil, fmt.Errorf("read header of %q: invalid format %d", path, int(f))
}

// HashFile returns the lowercase hex SHA-256 of the file's bytes and their
// count, reading the file as a stream. [Read] hashes the bytes it parses
// itself, so its Table needs no second call.
func HashFile(path string) (string, int64, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", 0, fmt.Errorf("hash %q: %w", path, err)
	}
	defer f.Close()
	sum, n, err := hashStream(f)
	if err != nil {
		return "", 0, fmt.Errorf("hash %q: %w", path, err)
	}
	return sum, n, nil
}

// hashStream returns the lowercase hex SHA-256 of the bytes read from r
// and their count.
func hashStream(r io.Reader) (string, int64, error) {
	h := sha256.New()
	n, err := io.Copy(h, r)
	if err != nil {
		return "", 0, err
	}
	return hex.EncodeToString(h.Sum(nil)), n, nil
}

// Types checks, without reading any data, that each requested column of a
// Parquet file has a stored type that can be read as the requested kind. It
// returns every mismatch as a *ColumnError, joined with errors.Join, or nil.
// Text files store no types, so for CSV and TSV it returns nil: their cells
// are checked as they are read. Missing and repeated names are the caller's
// to check with [Header].
func Types(spec Spec) error {
	if spec.Format != Parquet {
		return nil
	}
	f, err := os.Open(spec.Path)
	if err != nil {
		return fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	defer f.Close()
	_, fr, err := openParquet(spec.Path, f)
	if err != nil {
		return err
	}
	names := fieldNames(fr)
	var errs []error
	for _, cs := range spec.Columns {
		i := slices.Index(names, cs.Name)
		if i < 0 {
			continue
		}
		if err := checkParquetType(spec.Path, cs, fr.Manifest.Fields[i]); err != nil {
			errs = append(errs, err)
		}
	}
	return errors.Join(errs...)
}
