package dataset

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// openParquet opens a Parquet file with an Arrow view of its schema. The
// caller closes the returned *file.Reader.
func openParquet(path string) (*file.Reader, *pqarrow.FileReader, error) {
	pf, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, nil, fmt.Errorf("read dataset %q: not a readable Parquet file: %w", path, err)
	}
	fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: int64(batchRows)}, memory.DefaultAllocator)
	if err != nil {
		pf.Close()
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
	pf, fr, err := openParquet(path)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
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

// checkParquetType reports a column whose stored type does not fit the
// requested kind.
func checkParquetType(path string, cs ColumnSpec, dt arrow.DataType) error {
	switch cs.Kind {
	case Numeric:
		if numericType(dt) {
			return nil
		}
		if textType(dt) {
			return fmt.Errorf("read dataset %q: column %q holds text (%s), not numbers; declare its levels to read it as ordinal", path, cs.Name, dt)
		}
	case Ordinal, Label:
		if textType(dt) || integerType(dt) {
			return nil
		}
	}
	return fmt.Errorf("read dataset %q: column %q has type %s, which cannot be read as %s", path, cs.Name, dt, cs.Kind)
}

// readParquet reads the requested columns of a Parquet file in record
// batches, projecting on the requested columns.
func readParquet(ctx context.Context, spec Spec) (*Table, error) {
	sum, size, err := HashFile(spec.Path)
	if err != nil {
		return nil, err
	}
	pf, fr, err := openParquet(spec.Path)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	idx, err := findColumns(spec.Path, fieldNames(fr), spec.Columns)
	if err != nil {
		return nil, err
	}
	leaves := make([]int, len(idx))
	for k, i := range idx {
		sf := fr.Manifest.Fields[i]
		if !sf.IsLeaf() {
			return nil, fmt.Errorf("read dataset %q: column %q has the nested type %s, which cannot be read", spec.Path, spec.Columns[k].Name, sf.Field.Type)
		}
		if err := checkParquetType(spec.Path, spec.Columns[k], sf.Field.Type); err != nil {
			return nil, err
		}
		leaves[k] = sf.ColIndex
	}

	nrows := int(pf.NumRows())
	t := &Table{Path: spec.Path, SHA256: sum, Bytes: size, Columns: make([]Column, len(spec.Columns))}
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
			if i, p, v := appendArrow(s, rec.Column(k)); p != nil {
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
