package dataset

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/decimal128"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// parseParquetSequential is the reader that parseParquet replaced, kept as
// the oracle of the tests: one pqarrow record reader over all the requested
// leaves and all row groups, in batches of batchRows rows, appending to the
// sinks.
func parseParquetSequential(ctx context.Context, spec Spec, r parquet.ReaderAtSeeker) (*Table, error) {
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

// readParquetOracle hashes a Parquet file and reads it with
// parseParquetSequential.
func readParquetOracle(ctx context.Context, spec Spec) (*Table, error) {
	f, err := os.Open(spec.Path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	sum, size, err := hashAt(f)
	if err != nil {
		return nil, err
	}
	t, err := parseParquetSequential(ctx, spec, f)
	if err != nil {
		return nil, err
	}
	t.SHA256, t.Bytes = sum, size
	return t, nil
}

// writeRandomParquet writes rows random rows, in row groups of rowGroup
// rows and data pages of about pageBytes bytes, of every column type the
// reader accepts, with nulls, NaN, ±Inf and heavy ties.
func writeRandomParquet(t *testing.T, rng *rand.Rand, path string, rows int, rowGroup int64, pageBytes int64, codec compress.Compression) {
	t.Helper()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "f64", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "f64req", Type: arrow.PrimitiveTypes.Float64},
		{Name: "f32", Type: arrow.PrimitiveTypes.Float32, Nullable: true},
		{Name: "i32", Type: arrow.PrimitiveTypes.Int32, Nullable: true},
		{Name: "u8", Type: arrow.PrimitiveTypes.Uint8},
		{Name: "i64", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		{Name: "dec", Type: &arrow.Decimal128Type{Precision: 9, Scale: 2}, Nullable: true},
		{Name: "str", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "dict", Type: &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	null := func() bool { return rng.IntN(8) == 0 }
	floats := []float64{0, 1, 1, 2.5, -3, math.NaN(), math.Inf(1), math.Inf(-1)}
	words := []string{"low", "mid", "high", "very high", "", "Mid"}
	for range rows {
		if null() {
			b.Field(0).AppendNull()
		} else {
			b.Field(0).(*array.Float64Builder).Append(floats[rng.IntN(len(floats))] + float64(rng.IntN(2))*rng.Float64())
		}
		b.Field(1).(*array.Float64Builder).Append(rng.NormFloat64())
		if null() {
			b.Field(2).AppendNull()
		} else {
			b.Field(2).(*array.Float32Builder).Append(float32(floats[rng.IntN(len(floats))]))
		}
		if null() {
			b.Field(3).AppendNull()
		} else {
			b.Field(3).(*array.Int32Builder).Append(int32(rng.IntN(8) - 2))
		}
		b.Field(4).(*array.Uint8Builder).Append(uint8(rng.IntN(256)))
		if null() {
			b.Field(5).AppendNull()
		} else {
			b.Field(5).(*array.Int64Builder).Append(int64(rng.IntN(5)))
		}
		if null() {
			b.Field(6).AppendNull()
		} else {
			b.Field(6).(*array.Decimal128Builder).Append(decimal128.FromI64(int64(rng.IntN(100000) - 50000)))
		}
		if null() {
			b.Field(7).AppendNull()
		} else {
			w := words[rng.IntN(4)]
			if rng.IntN(300) == 0 {
				w = words[4+rng.IntN(2)] // not a level
			}
			b.Field(7).(*array.StringBuilder).Append(w)
		}
		if err := b.Field(8).(*array.BinaryDictionaryBuilder).AppendString(words[rng.IntN(4)]); err != nil {
			t.Fatal(err)
		}
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.RecordBatch{rec})
	defer tbl.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	props := parquet.NewWriterProperties(parquet.WithCompression(codec), parquet.WithDataPageSize(pageBytes), parquet.WithMaxRowGroupLength(rowGroup))
	if err := pqarrow.WriteTable(tbl, f, rowGroup, props, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema())); err != nil {
		t.Fatal(err)
	}
}

// TestReadParquetMatchesSequential compares the parallel Parquet reader with
// the sequential one it replaced, on random files (fixed seed) of every
// column type, with nulls, in many row groups and pages, with several batch
// sizes and worker counts, and with requests that hit bad ordinal labels.
func TestReadParquetMatchesSequential(t *testing.T) {
	defer func(n, p int) { batchRows = n; runtime.GOMAXPROCS(p) }(batchRows, runtime.GOMAXPROCS(0))
	rng := rand.New(rand.NewPCG(20261202, 12))
	levels := []string{"low", "mid", "high", "very high"}
	ints := []string{"-2", "-1", "0", "1", "2", "3", "4", "5"}
	dir := t.TempDir()
	errs := 0
	for i := range 30 {
		rows := rng.IntN(2000)
		if i%10 == 0 {
			rows = rng.IntN(3)
		}
		p := filepath.Join(dir, fmt.Sprintf("r%d.parquet", i))
		codec := []compress.Compression{compress.Codecs.Uncompressed, compress.Codecs.Snappy}[i%2]
		writeRandomParquet(t, rng, p, rows, int64(1+rng.IntN(1500)), int64(64+rng.IntN(4096)), codec)
		for range 4 {
			batchRows = []int{1 << 16, 100, 7}[rng.IntN(3)]
			runtime.GOMAXPROCS(1 + rng.IntN(3))
			var cols []ColumnSpec
			for _, name := range []string{"f64", "f64req", "f32", "i32", "u8", "i64", "dec", "str", "dict"}[:] {
				if rng.IntN(3) == 0 {
					continue
				}
				switch name {
				case "str", "dict":
					if rng.IntN(2) == 0 {
						cols = append(cols, ColumnSpec{Name: name, Kind: Ordinal, Levels: levels})
					}
					cols = append(cols, ColumnSpec{Name: name, Kind: Label})
				case "i32", "i64":
					if rng.IntN(2) == 0 {
						cols = append(cols, ColumnSpec{Name: name, Kind: Label})
					}
					if rng.IntN(2) == 0 {
						cols = append(cols, ColumnSpec{Name: name, Kind: Ordinal, Levels: ints[:4+rng.IntN(5)]})
					} else {
						cols = append(cols, ColumnSpec{Name: name, Kind: Numeric})
					}
				default:
					cols = append(cols, ColumnSpec{Name: name, Kind: Numeric})
				}
			}
			rng.Shuffle(len(cols), func(a, b int) { cols[a], cols[b] = cols[b], cols[a] })
			spec := Spec{Path: p, Format: Parquet, Columns: cols}
			what := fmt.Sprintf("file %d (%d rows), batch %d, procs %d, columns %v", i, rows, batchRows, runtime.GOMAXPROCS(0), cols)
			got, gerr := Read(context.Background(), spec)
			want, werr := readParquetOracle(context.Background(), spec)
			if gerr != nil || werr != nil {
				var gc, wc *CellError
				if gerr == nil || werr == nil || gerr.Error() != werr.Error() || errors.As(gerr, &gc) != errors.As(werr, &wc) || (gc != nil && *gc != *wc) {
					t.Fatalf("%s:\n got error %v\nwant error %v", what, gerr, werr)
				}
				errs++
				continue
			}
			if got.Rows != want.Rows || got.SHA256 != want.SHA256 || got.Bytes != want.Bytes {
				t.Fatalf("%s: rows %d, sha %s; want %d, %s", what, got.Rows, got.SHA256, want.Rows, want.SHA256)
			}
			for k := range cols {
				g, w := got.Columns[k], want.Columns[k]
				if g.Name != w.Name || g.Kind != w.Kind || !sameFloats(g.Values, w.Values) || !slices.Equal(g.Labels, w.Labels) || !slices.Equal(g.Missing, w.Missing) {
					t.Fatalf("%s: column %d\n got %+v\nwant %+v", what, k, g, w)
				}
			}
		}
	}
	// Both outcomes must be exercised.
	if errs < 10 || errs > 100 {
		t.Errorf("%d of 120 reads failed; the test wants between 10 and 100", errs)
	}
}

// grow makes room for n more rows.
func (s *sink) grow(n int) {
	c := s.col
	if c.Kind == Label {
		if cap(c.Labels)-len(c.Labels) < n {
			c.Labels = growTo(c.Labels, len(c.Labels)+n)
			c.Missing = growTo(c.Missing, len(c.Labels)+n)
		}
		return
	}
	if cap(c.Values)-len(c.Values) < n {
		c.Values = growTo(c.Values, len(c.Values)+n)
	}
}

// growTo returns s with capacity at least n, doubling to keep appends
// amortised.
func growTo[T any](s []T, n int) []T {
	if cap(s) >= n {
		return s
	}
	nc := max(n, 2*cap(s))
	t := make([]T, len(s), nc)
	copy(t, s)
	return t
}

// A Parquet read cancelled midway fails with context.Canceled (or, when
// the cancellation comes after the last check, succeeds) and leaves no
// goroutine behind.
func TestReadParquetCancelledMidway(t *testing.T) {
	defer func(n int) { batchRows = n }(batchRows)
	batchRows = 7
	p := filepath.Join(t.TempDir(), "c.parquet")
	writeRandomParquet(t, rand.New(rand.NewPCG(1, 2)), p, 3000, 100, 512, compress.Codecs.Snappy)
	before := runtime.NumGoroutine()
	cancelled := 0
	for n := int32(1); n < 40; n += 3 {
		ctx := &cancelAfter{Context: context.Background()}
		ctx.n.Store(n)
		_, err := Read(ctx, Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "f64", Kind: Numeric}, {Name: "dict", Kind: Label}, {Name: "i32", Kind: Numeric}}})
		if err != nil && !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled at call %d: err = %v, want context.Canceled", n, err)
		}
		if err != nil {
			cancelled++
		}
	}
	if cancelled == 0 {
		t.Error("no read was cancelled")
	}
	for range 100 {
		if runtime.NumGoroutine() <= before {
			return
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Errorf("%d goroutines left, %d before", runtime.NumGoroutine(), before)
}
