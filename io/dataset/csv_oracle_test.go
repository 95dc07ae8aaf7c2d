package dataset

import (
	"bufio"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"os"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	arrowcsv "github.com/apache/arrow-go/v18/arrow/csv"
)

// oracleBatchRows is the Arrow record batch size of readTextArrow; tests
// lower it to cross batch boundaries.
var oracleBatchRows = 1 << 16

// hashCounter hashes and counts the bytes written to it.
type hashCounter struct {
	h hash.Hash
	n int64
}

func (c *hashCounter) Write(p []byte) (int, error) {
	c.n += int64(len(p))
	return c.h.Write(p)
}

// readTextArrow is the reader that readText replaced, kept as the oracle of
// the tests: Arrow's CSV reader (encoding/csv underneath, every column read
// as strings, 64Ki rows per record batch), the cells converted by sink.add,
// and problems placed by reading the file again with encoding/csv.
func readTextArrow(ctx context.Context, spec Spec, comma rune) (*Table, error) {
	header, err := textHeader(spec.Path, comma)
	if err != nil {
		return nil, err
	}
	idx, err := findColumns(spec.Path, header, spec.Columns)
	if err != nil {
		return nil, err
	}

	f, err := os.Open(spec.Path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	hc := &hashCounter{h: sha256.New()}
	br := bufio.NewReaderSize(io.TeeReader(f, hc), 1<<16)
	skipBOM(br)

	// Every column is read as text through an explicit schema. Arrow's
	// projection (WithIncludeColumns) works only with its inferring reader,
	// which panics on a file with no data rows or a bad first row (arrow-go
	// v18.9.0: its record builder is made from the first row).
	fields := make([]arrow.Field, len(header))
	for i, h := range header {
		fields[i] = arrow.Field{Name: h, Type: arrow.BinaryTypes.String}
	}
	rr := arrowcsv.NewReader(br, arrow.NewSchema(fields, nil),
		arrowcsv.WithHeader(true),
		arrowcsv.WithChunk(oracleBatchRows),
		arrowcsv.WithComma(comma),
		arrowcsv.WithLazyQuotes(false),
	)
	defer rr.Release()

	missing := make(map[string]bool, len(spec.Missing))
	for _, m := range spec.Missing {
		missing[m] = true
	}
	t := &Table{Path: spec.Path, Columns: make([]Column, len(spec.Columns))}
	sinks := make([]*sink, len(spec.Columns))
	for i, c := range spec.Columns {
		t.Columns[i] = Column{Name: c.Name, Kind: c.Kind}
		sinks[i] = newSink(&t.Columns[i], c, missing)
	}

	rows := 0
	for rr.Next() {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
		}
		rec := rr.RecordBatch()
		n := int(rec.NumRows())
		if rows == 0 && n == oracleBatchRows {
			// Guess the total from the bytes the first batch took, so
			// that the columns grow once rather than by doubling.
			if off := rr.InputOffset(); off > 0 {
				est := float64(st.Size()) / float64(off) * float64(n) * 1.05
				grow(sinks, int(min(est, float64(st.Size()))))
			}
		} else {
			grow(sinks, n)
		}
		// Convert column by column; on a bad cell, later columns are read
		// only up to that row, so the first bad row (and within it the
		// first requested column) is the one reported.
		bad, badCol := n, -1
		var badProblem *cellProblem
		for k, s := range sinks {
			arr := rec.Column(idx[k]).(*array.String)
			for i := 0; i < bad; i++ {
				if p := s.add(arr.Value(i)); p != nil {
					bad, badCol, badProblem = i, k, p
					break
				}
			}
		}
		if badCol >= 0 {
			arr := rec.Column(idx[badCol]).(*array.String)
			row := rows + bad + 1
			line, _ := locateRow(spec.Path, comma, row)
			return nil, &CellError{
				Path: spec.Path, Row: row, Line: line,
				Column: spec.Columns[badCol].Name, Value: arr.Value(bad),
				Reason: badProblem.reason, Hint: badProblem.hint,
			}
		}
		rows += n
	}
	if err := rr.Err(); err != nil {
		return nil, oracleTextError(spec.Path, comma, rows+1, len(header), err)
	}
	// The CSV reader stops at the end of the data; hash anything after it.
	if _, err := io.Copy(io.Discard, br); err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	t.Rows = rows
	t.SHA256 = hex.EncodeToString(hc.h.Sum(nil))
	t.Bytes = hc.n
	return t, nil
}

// grow makes room for n more rows in every sink.
func grow(sinks []*sink, n int) {
	for _, s := range sinks {
		s.grow(n)
	}
}

// oracleTextError turns an error of the CSV reader, met while reading data
// row row, into a *CellError when it is about the row's shape or quoting.
func oracleTextError(path string, comma rune, row, headerFields int, err error) error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		return fmt.Errorf("read dataset %q: row %d: %w", path, row, err)
	}
	_, n := locateRow(path, comma, row)
	return rowError(path, comma, row, headerFields, n, pe)
}

// locateRow re-reads a text file to find the line where data row row
// (1-based, header excluded) starts, and how many fields it has. It returns
// zeros when it cannot tell.
func locateRow(path string, comma rune, row int) (line, fields int) {
	f, err := os.Open(path)
	if err != nil {
		return 0, 0
	}
	defer f.Close()
	br := bufio.NewReader(f)
	skipBOM(br)
	r := csv.NewReader(br)
	r.Comma = comma
	r.FieldsPerRecord = -1
	r.ReuseRecord = true
	for i := 0; i <= row; i++ {
		rec, err := r.Read()
		if err != nil {
			return 0, 0
		}
		if i == row {
			line, _ = r.FieldPos(0)
			return line, len(rec)
		}
	}
	return 0, 0
}
