package dataset

import (
	"bufio"
	"bytes"
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

// batchRows is the number of rows per Arrow record batch, for CSV and
// Parquet alike. Arrow's CSV reader defaults to one row per batch, which is
// about four times slower. Tests lower it to cross batch boundaries.
var batchRows = 1 << 16

// utf8BOM is the byte order mark that some programs write at the start of a
// UTF-8 text file.
var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// skipBOM drops a UTF-8 byte order mark at the start of br.
func skipBOM(br *bufio.Reader) {
	if b, err := br.Peek(len(utf8BOM)); err == nil && bytes.Equal(b, utf8BOM) {
		_, _ = br.Discard(len(utf8BOM))
	}
}

// separator returns the field separator of a text format.
func separator(f Format) rune {
	if f == TSV {
		return '\t'
	}
	return ','
}

// textHeader reads the first record of a CSV or TSV file.
func textHeader(path string, comma rune) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", path, err)
	}
	defer f.Close()
	br := bufio.NewReader(f)
	skipBOM(br)
	r := csv.NewReader(br)
	r.Comma = comma
	r.FieldsPerRecord = -1
	rec, err := r.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("read dataset %q: the file is empty; its first line must name the columns", path)
	}
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: header line: %w", path, err)
	}
	return rec, nil
}

// hashCounter hashes and counts the bytes written to it.
type hashCounter struct {
	h hash.Hash
	n int64
}

func (c *hashCounter) Write(p []byte) (int, error) {
	c.n += int64(len(p))
	return c.h.Write(p)
}

// readText reads a CSV or TSV file with Arrow's CSV reader, hashing the
// bytes as they stream past.
func readText(ctx context.Context, spec Spec, comma rune) (*Table, error) {
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
		arrowcsv.WithChunk(batchRows),
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
		if rows == 0 && n == batchRows {
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
		return nil, textError(spec.Path, comma, rows+1, len(header), err)
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

// textError turns an error of the CSV reader, met while reading data row
// row, into a *CellError when it is about the row's shape or quoting.
func textError(path string, comma rune, row, headerFields int, err error) error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		return fmt.Errorf("read dataset %q: row %d: %w", path, row, err)
	}
	e := &CellError{Path: path, Row: row, Line: pe.StartLine}
	switch {
	case errors.Is(pe.Err, csv.ErrFieldCount):
		_, n := locateRow(path, comma, row)
		e.Reason = fmt.Sprintf("has %s but the header has %d", fieldCount(n), headerFields)
		if n > headerFields && comma == ',' {
			e.Hint = "a field holding a comma must be quoted"
		}
	case errors.Is(pe.Err, csv.ErrBareQuote):
		e.Reason = fmt.Sprintf("has a stray quote (line %d, column %d)", pe.Line, pe.Column)
		e.Hint = `a field that holds a quote must be quoted as a whole, with the inner quote doubled: "say ""hi"""`
	case errors.Is(pe.Err, csv.ErrQuote):
		e.Reason = fmt.Sprintf("has a quoted field that is badly closed or never closed (line %d, column %d)", pe.Line, pe.Column)
		e.Hint = "a quoted field ends with a quote followed by the separator or the end of the line"
	default:
		e.Reason = fmt.Sprintf("cannot be parsed: %v", pe.Err)
	}
	return e
}

// locateRow re-reads a text file to find the line where data row row
// (1-based, header excluded) starts, and how many fields it has. It is used
// only to describe an error, so it returns zeros when it cannot tell.
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

// fieldCount says "1 field" or "n fields".
func fieldCount(n int) string {
	if n == 1 {
		return "1 field"
	}
	return fmt.Sprintf("%d fields", n)
}
