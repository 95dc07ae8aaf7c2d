package dataset

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"io"
	"os"
)

// Read reads the columns that spec asks for from spec.Path, following the
// value rules in the package documentation, and hashes the file's bytes.
// Cancelling ctx stops the read between record batches.
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
