package render

import (
	"bufio"
	"bytes"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Parquet column types, by cell kind:
//
//	Text      string (utf8), null for NoText
//	Int       int64, never null
//	Real      float64, null when NaN (±Inf are kept)
//	Prob      float64, null when NaN
//	Interval  struct<low: float64, high: float64>, null when a bound is NaN
//	List      list<string>, never null (empty when there are no items)
//	Report    string: the statement as plain text, null when undefined
//
// Every field is nullable except Int and List, so that a reader's schema
// says which values can be missing.
func parquetType(k Kind) (arrow.DataType, bool) {
	switch k {
	case KindText, KindReport:
		return arrow.BinaryTypes.String, true
	case KindInt:
		return arrow.PrimitiveTypes.Int64, false
	case KindReal, KindProb:
		return arrow.PrimitiveTypes.Float64, true
	case KindInterval:
		return arrow.StructOf(
			arrow.Field{Name: "low", Type: arrow.PrimitiveTypes.Float64},
			arrow.Field{Name: "high", Type: arrow.PrimitiveTypes.Float64},
		), true
	case KindList:
		return arrow.ListOfNonNullable(arrow.BinaryTypes.String), false
	}
	panic("render: cell of invalid kind " + k.String()) // Write checked the table
}

// parquetCreatedBy is the writer named in the file's metadata. It is ours,
// not the library's version string, so the bytes do not change with an
// Arrow upgrade that writes the same data.
const parquetCreatedBy = "concordat"

// encodeParquet writes t as an Apache Parquet file of one row group, with
// one typed column per table column (see parquetType), Snappy-compressed.
// The column kinds come from t.Kinds, or from the first row when Kinds is
// nil (a table with neither writes every column as a string). The file
// also stores the Arrow schema, so Arrow readers get the types back exactly.
// Title and Notes are not written. The same table always gives the same
// bytes.
func encodeParquet(w *bufio.Writer, t *Table) error {
	if t.Kinds == nil && t.RowFunc != nil {
		// The kinds come from the first row: make the rows first.
		m, err := t.materialized()
		if err != nil {
			return err
		}
		t = m
	}
	kinds := t.Kinds
	if kinds == nil {
		kinds = make([]Kind, len(t.Columns))
		for c := range kinds {
			kinds[c] = KindText
			if len(t.Rows) > 0 {
				kinds[c] = t.Rows[0][c].kind
			}
		}
	}
	if t.Kinds == nil {
		for r, row := range t.Rows {
			for c, cell := range row {
				if cell.kind != kinds[c] && !(cell.kind == KindText && cell.none) {
					return fmt.Errorf("row %d, column %q: %s cell in a %s column", r+1, t.Columns[c], cell.kind, kinds[c])
				}
			}
		}
	}
	fields := make([]arrow.Field, len(t.Columns))
	for c, name := range t.Columns {
		dt, nullable := parquetType(kinds[c])
		fields[c] = arrow.Field{Name: name, Type: dt, Nullable: nullable}
	}
	schema := arrow.NewSchema(fields, nil)
	mem := memory.NewGoAllocator()
	rb := array.NewRecordBuilder(mem, schema)
	defer rb.Release()
	// With Kinds, each checks every cell against its column's kind.
	err := t.each(func(_ int, row []Cell) error {
		for c, cell := range row {
			appendParquet(rb.Field(c), cell)
		}
		return nil
	})
	if err != nil {
		return err
	}
	rec := rb.NewRecordBatch()
	defer rec.Release()

	var buf bytes.Buffer
	props := parquet.NewWriterProperties(
		parquet.WithCompression(compress.Codecs.Snappy),
		parquet.WithCreatedBy(parquetCreatedBy),
		parquet.WithAllocator(mem),
	)
	fw, err := pqarrow.NewFileWriter(schema, &buf, props, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema()))
	if err != nil {
		return err
	}
	if err := fw.Write(rec); err != nil {
		fw.Close()
		return err
	}
	if err := fw.Close(); err != nil {
		return err
	}
	_, err = w.Write(buf.Bytes())
	return err
}

// appendParquet appends one cell to its column's builder.
func appendParquet(b array.Builder, c Cell) {
	if c.kind == KindText && c.none {
		b.AppendNull()
		return
	}
	switch c.kind {
	case KindText:
		b.(*array.StringBuilder).Append(c.text)
	case KindReport:
		if c.null() {
			b.AppendNull()
			return
		}
		b.(*array.StringBuilder).Append(c.report.plainText())
	case KindInt:
		b.(*array.Int64Builder).Append(c.i)
	case KindReal, KindProb:
		if math.IsNaN(c.f) {
			b.AppendNull()
			return
		}
		b.(*array.Float64Builder).Append(c.f)
	case KindInterval:
		sb := b.(*array.StructBuilder)
		if c.null() {
			sb.AppendNull()
			return
		}
		sb.Append(true)
		sb.FieldBuilder(0).(*array.Float64Builder).Append(c.f)
		sb.FieldBuilder(1).(*array.Float64Builder).Append(c.hi)
	case KindList:
		lb := b.(*array.ListBuilder)
		lb.Append(true)
		vb := lb.ValueBuilder().(*array.StringBuilder)
		for _, s := range c.items {
			vb.Append(s)
		}
	default:
		panic("render: cell of invalid kind " + c.kind.String()) // Write checked the table
	}
}
