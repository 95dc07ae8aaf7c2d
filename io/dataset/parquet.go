package dataset

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// openParquet reads the footer of a Parquet file from r and gives an Arrow
// view of its schema. The caller closes r.
func openParquet(path string, r parquet.ReaderAtSeeker) (*file.Reader, *pqarrow.FileReader, error) {
	pf, err := file.NewParquetReader(r)
	if err != nil {
		return nil, nil, fmt.Errorf("read dataset %q: not a readable Parquet file: %w", path, err)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: int64(batchRows)}, memory.DefaultAllocator)
	if err != nil {
		return nil, nil, fmt.Errorf("read dataset %q: %w", path, err)
	}
	return pf, fr, nil
}

// fieldNames returns the top-level column names of a Parquet file.
func fieldNames(fr *pqarrow.FileReader) []string {
	names := make([]string, len(fr.Manifest.Fields))
	for i, f := range fr.Manifest.Fields {
		names[i] = f.Field.Name
	}
	return names
}

func parquetHeader(path string) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", path, err)
	}
	defer f.Close()
	_, fr, err := openParquet(path, f)
	if err != nil {
		return nil, err
	}
	return fieldNames(fr), nil
}

// numericType reports whether an Arrow type can be read as numbers.
func numericType(dt arrow.DataType) bool {
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64,
		arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64,
		arrow.FLOAT32, arrow.FLOAT64,
		arrow.DECIMAL32, arrow.DECIMAL64, arrow.DECIMAL128, arrow.DECIMAL256:
		return true
	}
	return false
}

// integerType reports whether an Arrow type is a signed or unsigned integer.
func integerType(dt arrow.DataType) bool {
	switch dt.ID() {
	case arrow.INT8, arrow.INT16, arrow.INT32, arrow.INT64,
		arrow.UINT8, arrow.UINT16, arrow.UINT32, arrow.UINT64:
		return true
	}
	return false
}

// textType reports whether an Arrow type holds text.
func textType(dt arrow.DataType) bool {
	switch t := dt.(type) {
	case *arrow.StringType, *arrow.LargeStringType:
		return true
	case *arrow.DictionaryType:
		return textType(t.ValueType)
	}
	return false
}

// kindNoun names what a column of kind k is read as, for messages.
func kindNoun(k Kind) string {
	switch k {
	case Numeric:
		return "numbers"
	case Ordinal:
		return "ordinal levels"
	case Label:
		return "labels"
	}
	return k.String()
}

// checkParquetType reports, as a *ColumnError, a column whose stored type
// does not fit the requested kind.
func checkParquetType(path string, cs ColumnSpec, sf pqarrow.SchemaField) error {
	dt := sf.Field.Type
	e := &ColumnError{Path: path, Column: cs.Name}
	switch {
	case !sf.IsLeaf():
		e.Reason = fmt.Sprintf("has the nested type %s, which cannot be read", dt)
		e.Hint = "only top-level columns of numbers or text can be read; write its fields as columns of their own"
		return e
	case cs.Kind == Numeric && numericType(dt):
		return nil
	case cs.Kind == Numeric && textType(dt):
		e.Reason = fmt.Sprintf("holds text (%s), not numbers", dt)
		e.Hint = "declare its levels to read it as ordinal"
		return e
	case cs.Kind != Numeric && (textType(dt) || integerType(dt)):
		return nil
	}
	e.Reason = fmt.Sprintf("has type %s, which cannot be read as %s", dt, kindNoun(cs.Kind))
	switch {
	case dt.ID() == arrow.BOOL:
		e.Hint = "store it as integers 0 and 1, or as text"
	case cs.Kind != Numeric && numericType(dt):
		e.Hint = "only text and integer columns can be read as " + kindNoun(cs.Kind)
	}
	return e
}

// testHookParquetRead, when set by a test, runs after a Parquet file's data
// have been read and before the file is hashed the second time.
var testHookParquetRead func()

// readParquet reads the requested columns of a Parquet file in record
// batches, projecting on the requested columns.
//
// A Parquet file is read out of order (the footer first, then each column
// chunk), so its bytes cannot be hashed as they stream past as a text
// file's are. Instead the file is opened once, hashed through that handle,
// parsed through it, and hashed again; if the two hashes differ, the file
// was changed while it was read and the read fails rather than pair a hash
// with bytes that were never analysed. Holding one handle makes a file
// replaced by a rename harmless (the old bytes are read throughout); the
// second hash catches a file rewritten in place. It costs one more read of
// the file, usually from the operating system's cache.
func readParquet(ctx context.Context, spec Spec) (*Table, error) {
	f, err := os.Open(spec.Path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	defer f.Close()
	sum, size, err := hashAt(f)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	t, err := parseParquet(ctx, spec, f)
	if err != nil {
		return nil, err
	}
	if testHookParquetRead != nil {
		testHookParquetRead()
	}
	sum2, size2, err := hashAt(f)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	if sum2 != sum || size2 != size {
		return nil, fmt.Errorf("%s changed while it was being read; read it again once nothing is writing to it", spec.Path)
	}
	t.SHA256, t.Bytes = sum, size
	return t, nil
}

// hashAt returns the lowercase hex SHA-256 of f's bytes and their count,
// reading with ReadAt so that f's offset does not matter.
func hashAt(f *os.File) (string, int64, error) {
	return hashStream(io.NewSectionReader(f, 0, math.MaxInt64))
}

// parseParquet reads the requested columns of the Parquet file behind r.
func parseParquet(ctx context.Context, spec Spec, r parquet.ReaderAtSeeker) (*Table, error) {
	pf, fr, err := openParquet(spec.Path, r)
	if err != nil {
		return nil, err
	}
	idx, err := findColumns(spec.Path, fieldNames(fr), spec.Columns)
	if err != nil {
		return nil, err
	}
	// A column requested with two kinds is read from the file once: leaves
	// lists each distinct leaf once, and pos[k] is the record column that
	// holds requested column k.
	var leaves []int
	pos := make([]int, len(idx))
	at := make(map[int]int, len(idx))
	for k, i := range idx {
		sf := fr.Manifest.Fields[i]
		if err := checkParquetType(spec.Path, spec.Columns[k], sf); err != nil {
			return nil, err
		}
		p, ok := at[sf.ColIndex]
		if !ok {
			p = len(leaves)
			at[sf.ColIndex] = p
			leaves = append(leaves, sf.ColIndex)
		}
		pos[k] = p
	}

	nrows := int(pf.NumRows())
	t := &Table{Path: spec.Path, Columns: make([]Column, len(spec.Columns))}
	sinks := make([]*sink, len(spec.Columns))
	for i, c := range spec.Columns {
		t.Columns[i] = Column{Name: c.Name, Kind: c.Kind}
		sinks[i] = newSink(&t.Columns[i], c, nil)
		sinks[i].grow(nrows)
	}
	if len(spec.Columns) == 0 || nrows == 0 {
		t.Rows = nrows
		return t, nil
	}

	rr, err := fr.GetRecordReader(ctx, leaves, nil)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	defer rr.Release()
	rows := 0
	for rr.Next() {
		if err := ctx.Err(); err != nil {
			return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
		}
		rec := rr.RecordBatch()
		// A bad cell in an earlier column wins over one in a later
		// column only within the same row: keep the smallest row.
		var first *CellError
		for k, s := range sinks {
			if i, p, v := appendArrow(s, rec.Column(pos[k])); p != nil {
				row := rows + i + 1
				if first == nil || row < first.Row {
					first = &CellError{Path: spec.Path, Row: row, Column: spec.Columns[k].Name, Value: v, Reason: p.reason, Hint: p.hint}
				}
			}
		}
		if first != nil {
			return nil, first
		}
		rows += int(rec.NumRows())
	}
	// Older Arrow releases reported a normal end as io.EOF.
	if err := rr.Err(); err != nil && !errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("read dataset %q: after row %d: %w", spec.Path, rows, err)
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	if rows != nrows {
		return nil, fmt.Errorf("read dataset %q: read %d rows but the file declares %d", spec.Path, rows, nrows)
	}
	t.Rows = rows
	return t, nil
}

// appendArrow appends an Arrow array's values to a sink. On a value that
// cannot be read it stops and returns the value's index, the problem and the
// value as text.
func appendArrow(s *sink, arr arrow.Array) (int, *cellProblem, string) {
	switch a := arr.(type) {
	case *array.Float64:
		appendFloats(s, a, a.Float64Values())
	case *array.Float32:
		appendFloats(s, a, a.Float32Values())
	case *array.Int8:
		return appendInts(s, a, a.Int8Values())
	case *array.Int16:
		return appendInts(s, a, a.Int16Values())
	case *array.Int32:
		return appendInts(s, a, a.Int32Values())
	case *array.Int64:
		return appendInts(s, a, a.Int64Values())
	case *array.Uint8:
		return appendInts(s, a, a.Uint8Values())
	case *array.Uint16:
		return appendInts(s, a, a.Uint16Values())
	case *array.Uint32:
		return appendInts(s, a, a.Uint32Values())
	case *array.Uint64:
		return appendInts(s, a, a.Uint64Values())
	case *array.Decimal32:
		appendDecimals(s, a, a.Values(), a.DataType())
	case *array.Decimal64:
		appendDecimals(s, a, a.Values(), a.DataType())
	case *array.Decimal128:
		appendDecimals(s, a, a.Values(), a.DataType())
	case *array.Decimal256:
		appendDecimals(s, a, a.Values(), a.DataType())
	case *array.String:
		return appendText(s, a, a.Value)
	case *array.LargeString:
		return appendText(s, a, a.Value)
	case *array.Dictionary:
		dict, ok := a.Dictionary().(interface{ Value(int) string })
		if !ok {
			panic(fmt.Sprintf("dataset: dictionary of %s passed the type check", a.Dictionary().DataType()))
		}
		return appendText(s, a, func(i int) string { return dict.Value(a.GetValueIndex(i)) })
	default:
		// checkParquetType admits only the types above.
		panic(fmt.Sprintf("dataset: unexpected Arrow type %s", arr.DataType()))
	}
	return 0, nil, ""
}

func appendFloats[T float32 | float64](s *sink, a arrow.Array, vals []T) {
	c := s.col
	nulls := a.NullN() > 0
	for i, v := range vals {
		if nulls && a.IsNull(i) {
			c.Values = append(c.Values, nan)
			continue
		}
		c.Values = append(c.Values, float64(v)) // NaN stays NaN: missing
	}
}

func appendInts[T int8 | int16 | int32 | int64 | uint8 | uint16 | uint32 | uint64](s *sink, a arrow.Array, vals []T) (int, *cellProblem, string) {
	c := s.col
	nulls := a.NullN() > 0
	if c.Kind == Numeric {
		for i, v := range vals {
			if nulls && a.IsNull(i) {
				c.Values = append(c.Values, nan)
				continue
			}
			c.Values = append(c.Values, float64(v))
		}
		return 0, nil, ""
	}
	// Ordinal or Label: match the decimal text.
	var buf []byte
	for i, v := range vals {
		if nulls && a.IsNull(i) {
			s.addMissing()
			continue
		}
		if v < 0 {
			buf = strconv.AppendInt(buf[:0], int64(v), 10)
		} else {
			buf = strconv.AppendUint(buf[:0], uint64(v), 10)
		}
		if p := s.add(string(buf)); p != nil {
			return i, p, string(buf)
		}
	}
	return 0, nil, ""
}

func appendDecimals[T interface{ ToFloat64(int32) float64 }](s *sink, a arrow.Array, vals []T, dt arrow.DataType) {
	scale := dt.(arrow.DecimalType).GetScale()
	c := s.col
	nulls := a.NullN() > 0
	for i, v := range vals {
		if nulls && a.IsNull(i) {
			c.Values = append(c.Values, nan)
			continue
		}
		c.Values = append(c.Values, v.ToFloat64(scale))
	}
}

func appendText(s *sink, a arrow.Array, value func(int) string) (int, *cellProblem, string) {
	nulls := a.NullN() > 0
	for i := range a.Len() {
		if nulls && a.IsNull(i) {
			s.addMissing()
			continue
		}
		if p := s.add(value(i)); p != nil {
			return i, p, value(i)
		}
	}
	return 0, nil, ""
}
