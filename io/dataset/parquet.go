package dataset

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strconv"
	"sync"
	"sync/atomic"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"

	"concordat/engine/bigmem"
)

// batchRows is the number of rows per Arrow record batch when reading
// Parquet. Tests lower it to cross batch boundaries.
var batchRows = 1 << 16

// openParquet reads the footer of a Parquet file from r and gives an Arrow
// view of its schema. The caller closes r.
func openParquet(path string, r parquet.ReaderAtSeeker) (*file.Reader, *pqarrow.FileReader, error) {
	pf, err := file.NewParquetReader(r)
	if err != nil {
		size, _ := r.Seek(0, io.SeekEnd)
		return nil, nil, notParquet(path, r, size, err) // notparquet.go
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

// readParquet reads the requested columns of a Parquet file, and only
// those, with parseParquet.
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
	t, err := parseParquet(ctx, spec, f, size)
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

// parseParquet reads the requested columns of the Parquet file f, size
// bytes long, in parallel: the work is cut into items, each one leaf column
// of one row group, and GOMAXPROCS workers, each with its own reader over
// f, write the items' values straight into the preallocated columns at the
// row group's offset, so the result does not depend on the number of
// workers. A leaf that is also read as a Label column is one item over all
// row groups in order, so that its labels are interned as they come.
//
// A float64 or float32 leaf (Parquet DOUBLE or FLOAT) is decoded by
// Parquet's column chunk reader directly into the column, in batches of
// batchRows values; other leaves go through pqarrow record batches of
// batchRows rows and the sinks. On the 10⁷-row benchmark file the direct
// path took 1.5× less CPU than record batches and allocated 2.3× less
// (BenchmarkReadParquet and BenchmarkReadParquetRecordBatches).
//
// Memory: the requested columns, plus per worker one batch and the column
// chunk being read, streamed in buffers of 1 MiB rather than read whole.
//
// The first problem in row order is reported, and within a row the first
// requested column's.
func parseParquet(ctx context.Context, spec Spec, f *os.File, size int64) (*Table, error) {
	props := parquet.NewReaderProperties(memory.DefaultAllocator)
	props.BufferedStreamEnabled = true
	props.BufferSize = 1 << 20
	open := func(opts ...file.ReadOption) (*file.Reader, *pqarrow.FileReader, error) {
		pf, err := file.NewParquetReader(io.NewSectionReader(f, 0, size), append(opts, file.WithReadProps(props))...)
		if err != nil {
			return nil, nil, notParquet(spec.Path, f, size, err) // notparquet.go
		}
		fr, err := pqarrow.NewFileReader(pf, pqarrow.ArrowReadProperties{BatchSize: int64(batchRows)}, memory.DefaultAllocator)
		if err != nil {
			return nil, nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
		}
		return pf, fr, nil
	}
	pf, fr, err := open()
	if err != nil {
		return nil, err
	}
	idx, err := findColumns(spec.Path, fieldNames(fr), spec.Columns)
	if err != nil {
		return nil, err
	}
	nrows := int(pf.NumRows())
	t := &Table{Path: spec.Path, Rows: nrows, Columns: make([]Column, len(spec.Columns))}
	// A column requested with two kinds is read from the file once: each
	// distinct leaf is one entry of leaves, with the requested columns it
	// feeds.
	var leaves []*pqLeaf
	byCol := make(map[int]*pqLeaf, len(idx))
	for k, i := range idx {
		cs := spec.Columns[k]
		sf := fr.Manifest.Fields[i]
		if err := checkParquetType(spec.Path, cs, sf); err != nil {
			return nil, err
		}
		l := byCol[sf.ColIndex]
		if l == nil {
			d := pf.MetaData().Schema.Column(sf.ColIndex)
			l = &pqLeaf{col: sf.ColIndex, maxDef: d.MaxDefinitionLevel()}
			if parquetDirect && d.MaxRepetitionLevel() == 0 && d.MaxDefinitionLevel() <= 1 {
				switch {
				case d.PhysicalType() == parquet.Types.Double && sf.Field.Type.ID() == arrow.FLOAT64,
					d.PhysicalType() == parquet.Types.Float && sf.Field.Type.ID() == arrow.FLOAT32:
					l.direct = true
				}
			}
			byCol[sf.ColIndex] = l
			leaves = append(leaves, l)
		}
		l.cols = append(l.cols, k)
		if cs.Kind == Label {
			l.labels = true
		}
		c := Column{Name: cs.Name, Kind: cs.Kind}
		if cs.Kind == Label {
			c.Labels = make([]string, 0, nrows)
			c.Missing = make([]bool, 0, nrows)
		} else {
			c.Values = bigmem.Make[float64](nrows, nrows)
		}
		t.Columns[k] = c
	}
	if len(spec.Columns) == 0 || nrows == 0 {
		return t, nil
	}

	// Row group r holds rows starts[r] to starts[r+1].
	starts := make([]int, pf.NumRowGroups()+1)
	for r := range pf.NumRowGroups() {
		starts[r+1] = starts[r] + int(pf.RowGroup(r).NumRows())
	}
	if starts[len(starts)-1] != nrows {
		return nil, fmt.Errorf("read dataset %q: its row groups hold %d rows but the file declares %d", spec.Path, starts[len(starts)-1], nrows)
	}
	var items []pqItem
	for _, l := range leaves {
		if l.labels {
			items = append(items, pqItem{leaf: l, rg: -1, start: 0, end: nrows})
		}
	}
	for r := range pf.NumRowGroups() {
		for _, l := range leaves {
			if !l.labels && starts[r+1] > starts[r] {
				items = append(items, pqItem{leaf: l, rg: r, start: starts[r], end: starts[r+1]})
			}
		}
	}

	run := &pqRun{spec: spec, t: t, items: items, errs: make([]*pqError, len(items))}
	run.stopRow.Store(math.MaxInt64)
	var wg sync.WaitGroup
	var next atomic.Int64
	workers := min(runtime.GOMAXPROCS(0), len(items))
	openErrs := make([]error, workers)
	for w := range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			pf, fr, err := open(file.WithMetadata(pf.MetaData()))
			if err != nil {
				openErrs[w] = err
				return
			}
			pw := &pqWorker{run: run, pf: pf, fr: fr}
			for {
				i := int(next.Add(1)) - 1
				if i >= len(items) {
					return
				}
				run.errs[i] = pw.read(ctx, &items[i])
			}
		}()
	}
	wg.Wait()
	if err := errors.Join(openErrs...); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	var first *pqError
	for _, e := range run.errs {
		if e != nil && (first == nil || e.row < first.row || (e.row == first.row && e.order < first.order)) {
			first = e
		}
	}
	if first != nil {
		return nil, first.err
	}
	return t, nil
}

// parquetDirect enables the direct decoding of float leaves; a benchmark
// turns it off to measure what it gains.
var parquetDirect = true

// pqLeaf is one leaf column of a Parquet file that feeds requested columns.
type pqLeaf struct {
	col    int   // leaf index
	cols   []int // the requested columns it feeds
	labels bool  // one of them is a Label column
	direct bool  // a flat float64 or float32 leaf, decoded into the column
	maxDef int16
}

// pqItem is one unit of Parquet work: a leaf over one row group (rg), or
// over all row groups (rg -1), which hold rows start to end.
type pqItem struct {
	leaf       *pqLeaf
	rg         int
	start, end int
}

// pqError is an item's problem, placed for choosing the first one: row is
// the 1-based row of a cell, or the row after the last one read for other
// failures; order breaks ties between columns.
type pqError struct {
	row, order int
	err        error
}

// pqRun is the shared state of one parallel Parquet read.
type pqRun struct {
	spec    Spec
	t       *Table
	items   []pqItem
	errs    []*pqError
	stopRow atomic.Int64 // the smallest row of a problem found so far
}

// pqWorker reads items with its own readers.
type pqWorker struct {
	run  *pqRun
	pf   *file.Reader
	fr   *pqarrow.FileReader
	defs []int16
	f32  []float32
}

// failed records a problem at row, keeping stopRow the smallest such row.
func (r *pqRun) failed(row, order int, err error) *pqError {
	for {
		cur := r.stopRow.Load()
		if int64(row) >= cur || r.stopRow.CompareAndSwap(cur, int64(row)) {
			break
		}
	}
	return &pqError{row: row, order: order, err: err}
}

// read reads one item, unless a problem was already found in an earlier
// row.
func (w *pqWorker) read(ctx context.Context, it *pqItem) *pqError {
	r := w.run
	if int64(it.start) >= r.stopRow.Load() {
		return nil
	}
	if it.leaf.direct {
		return w.readDirect(ctx, it)
	}
	// Sinks over windows of the columns: a Numeric or Ordinal column's
	// values for rows start to end (filled by appending within capacity),
	// or the Label column itself.
	sinks := make([]*sink, len(it.leaf.cols))
	windows := make([]Column, len(it.leaf.cols))
	for j, k := range it.leaf.cols {
		col := &r.t.Columns[k]
		if col.Kind == Label {
			sinks[j] = newSink(col, r.spec.Columns[k], nil)
			continue
		}
		windows[j] = Column{Name: col.Name, Kind: col.Kind, Values: col.Values[it.start:it.start:it.end]}
		sinks[j] = newSink(&windows[j], r.spec.Columns[k], nil)
	}
	var rgs []int
	if it.rg >= 0 {
		rgs = []int{it.rg}
	}
	rr, err := w.fr.GetRecordReader(ctx, []int{it.leaf.col}, rgs)
	if err != nil {
		return r.failed(it.start+1, len(r.spec.Columns), fmt.Errorf("read dataset %q: %w", r.spec.Path, err))
	}
	defer rr.Release()
	rows := it.start
	for rr.Next() {
		if ctx.Err() != nil || int64(rows) >= r.stopRow.Load() {
			return nil
		}
		rec := rr.RecordBatch()
		var first *pqError
		for j, s := range sinks {
			if i, p, v := appendArrow(s, rec.Column(0)); p != nil {
				k := it.leaf.cols[j]
				row := rows + i + 1
				if first == nil || row < first.row || (row == first.row && k < first.order) {
					first = &pqError{row: row, order: k, err: &CellError{Path: r.spec.Path, Row: row, Column: r.spec.Columns[k].Name, Value: v, Reason: p.reason, Hint: p.hint}}
				}
			}
		}
		if first != nil {
			return r.failed(first.row, first.order, first.err)
		}
		rows += int(rec.NumRows())
	}
	// Older Arrow releases reported a normal end as io.EOF.
	if err := rr.Err(); err != nil && !errors.Is(err, io.EOF) {
		return r.failed(rows+1, len(r.spec.Columns), fmt.Errorf("read dataset %q: after row %d: %w", r.spec.Path, rows, err))
	}
	if ctx.Err() != nil {
		return nil
	}
	for j, k := range it.leaf.cols {
		got := len(windows[j].Values)
		if r.t.Columns[k].Kind == Label {
			got = len(r.t.Columns[k].Labels)
		}
		if got != it.end-it.start {
			return r.failed(it.start+1, len(r.spec.Columns), fmt.Errorf("read dataset %q: read %d rows but the file declares %d", r.spec.Path, rows-it.start, it.end-it.start))
		}
	}
	return nil
}

// readDirect decodes a flat float64 or float32 leaf of one row group into
// its column (a float leaf feeds exactly one column: it can be read only
// as Numeric), nulls as NaN.
func (w *pqWorker) readDirect(ctx context.Context, it *pqItem) *pqError {
	r := w.run
	k := it.leaf.cols[0]
	dst := r.t.Columns[k].Values[it.start:it.end]
	fail := func(row int, err error) *pqError {
		return r.failed(row+1, len(r.spec.Columns), fmt.Errorf("read dataset %q: after row %d: %w", r.spec.Path, row, err))
	}
	cr, err := w.pf.RowGroup(it.rg).Column(it.leaf.col)
	if err != nil {
		return fail(it.start, err)
	}
	maxDef := it.leaf.maxDef
	if maxDef > 0 && len(w.defs) < batchRows {
		w.defs = make([]int16, batchRows)
	}
	for done := 0; done < len(dst); {
		if ctx.Err() != nil {
			return nil
		}
		n := min(len(dst)-done, batchRows)
		out := dst[done : done+n]
		var defs []int16
		if maxDef > 0 {
			defs = w.defs[:n]
		}
		var total int64
		var vals int
		switch c := cr.(type) {
		case *file.Float64ColumnChunkReader:
			total, vals, err = c.ReadBatch(int64(n), out, defs, nil)
		case *file.Float32ColumnChunkReader:
			if len(w.f32) < n {
				w.f32 = make([]float32, batchRows)
			}
			total, vals, err = c.ReadBatch(int64(n), w.f32[:n], defs, nil)
			for i, v := range w.f32[:vals] {
				out[i] = float64(v)
			}
		default:
			panic(fmt.Sprintf("dataset: unexpected column reader %T for a float leaf", cr))
		}
		if err == nil && total == 0 {
			err = fmt.Errorf("the row group ends %d rows early", len(dst)-done)
		}
		if err != nil {
			return fail(it.start+done, err)
		}
		if vals < int(total) { // spread the values over the non-null rows, from the end
			j := vals - 1
			for i := int(total) - 1; i >= 0; i-- {
				if defs[i] == maxDef {
					out[i] = out[j]
					j--
				} else {
					out[i] = nan
				}
			}
		}
		done += int(total)
	}
	if cr.HasNext() {
		return fail(it.end, errors.New("the row group holds more rows than it declares"))
	}
	return nil
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
