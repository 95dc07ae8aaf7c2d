package dataset

import (
	"context"
	"errors"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/decimal128"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// writeOrchardParquet writes an invented orchard table of 7 rows to a
// Parquet file, in row groups of rowGroup rows, and returns its path. The
// tests expect exactly the values written here.
func writeOrchardParquet(t testing.TB, rowGroup int64) string {
	t.Helper()
	mem := memory.DefaultAllocator
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "plot", Type: arrow.BinaryTypes.String},
		{Name: "block", Type: arrow.PrimitiveTypes.Int32},
		{Name: "yield_kg", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "grade", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "trees", Type: arrow.PrimitiveTypes.Uint8},
		{Name: "netted", Type: arrow.FixedWidthTypes.Boolean},
		{Name: "price", Type: &arrow.Decimal128Type{Precision: 9, Scale: 2}, Nullable: true},
		{Name: "variety", Type: &arrow.DictionaryType{IndexType: arrow.PrimitiveTypes.Int16, ValueType: arrow.BinaryTypes.String}},
		{Name: "ratio", Type: arrow.PrimitiveTypes.Float32},
		{Name: "site", Type: arrow.StructOf(arrow.Field{Name: "lat", Type: arrow.PrimitiveTypes.Float64})},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	valid := []bool{true, true, false, true, true, true, true}
	b.Field(0).(*array.StringBuilder).AppendValues([]string{"P1", "P2", "P3", "P4", "P5", "P6", "P7"}, nil)
	b.Field(1).(*array.Int32Builder).AppendValues([]int32{1, 1, 2, 2, 3, -1, 3}, nil)
	b.Field(2).(*array.Float64Builder).AppendValues([]float64{10.5, math.NaN(), 0, math.Inf(1), -2.25, 7, 1e300}, valid)
	b.Field(3).(*array.StringBuilder).AppendValues([]string{"fancy", "cull", "", "extra fancy", "standard", "fancy", "cull"}, []bool{true, true, true, false, true, true, true})
	b.Field(4).(*array.Uint8Builder).AppendValues([]uint8{4, 5, 6, 250, 0, 1, 2}, nil)
	b.Field(5).(*array.BooleanBuilder).AppendValues([]bool{true, false, true, false, true, false, true}, nil)
	pb := b.Field(6).(*array.Decimal128Builder)
	for i, c := range []int64{125, -50, 0, 99999, 1, 10, 300} {
		if i == 2 {
			pb.AppendNull()
			continue
		}
		pb.Append(decimal128.FromI64(c))
	}
	vb := b.Field(7).(*array.BinaryDictionaryBuilder)
	for _, v := range []string{"gala", "fuji", "gala", "braeburn", "fuji", "gala", "gala"} {
		if err := vb.AppendString(v); err != nil {
			t.Fatal(err)
		}
	}
	b.Field(8).(*array.Float32Builder).AppendValues([]float32{0.5, 0.25, 1, 2, 4, 8, 16}, nil)
	sb := b.Field(9).(*array.StructBuilder)
	for i := range 7 {
		sb.Append(true)
		sb.FieldBuilder(0).(*array.Float64Builder).Append(float64(i))
	}
	rec := b.NewRecordBatch()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.RecordBatch{rec})
	defer tbl.Release()

	p := filepath.Join(t.TempDir(), "orchard.parquet")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	props := parquet.NewWriterProperties(parquet.WithAllocator(mem))
	if err := pqarrow.WriteTable(tbl, f, rowGroup, props, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema())); err != nil {
		t.Fatal(err)
	}
	_ = f.Close() // WriteTable has closed it already
	return p
}

func TestReadParquet(t *testing.T) {
	defer func(n int) { batchRows = n }(batchRows)
	for _, c := range []struct {
		rowGroup int64
		batch    int
	}{{1024, 1 << 16}, {3, 2}, {2, 5}} {
		batchRows = c.batch
		p := writeOrchardParquet(t, c.rowGroup)
		tab := mustRead(t, Spec{
			Path:    p,
			Format:  Parquet,
			Missing: []string{"P3"}, // ignored for Parquet
			Columns: []ColumnSpec{
				// Row 3 holds "", listed here as the lowest level.
				{Name: "grade", Kind: Ordinal, Levels: append([]string{""}, grades...)},
				{Name: "yield_kg", Kind: Numeric},
				{Name: "plot", Kind: Label},
				{Name: "block", Kind: Label},
				{Name: "trees", Kind: Numeric},
				{Name: "price", Kind: Numeric},
				{Name: "variety", Kind: Label},
				{Name: "ratio", Kind: Numeric},
			},
		})
		if tab.Rows != 7 {
			t.Fatalf("row groups of %d, batches of %d: Rows = %d", c.rowGroup, c.batch, tab.Rows)
		}
		want := map[string][]float64{
			"grade":    {4, 2, 1, nan, 3, 4, 2}, // row 4 is null
			"yield_kg": {10.5, nan, nan, inf, -2.25, 7, 1e300},
			"trees":    {4, 5, 6, 250, 0, 1, 2},
			"price":    {1.25, -0.5, nan, 999.99, 0.01, 0.1, 3},
			"ratio":    {0.5, 0.25, 1, 2, 4, 8, 16},
		}
		for name, w := range want {
			kind := Numeric
			if name == "grade" {
				kind = Ordinal
			}
			if got := tab.Column(name, kind).Values; !sameFloats(got, w) {
				t.Errorf("%s = %v, want %v", name, got, w)
			}
		}
		if got := tab.Column("plot", Label).Labels; !slices.Equal(got, []string{"P1", "P2", "P3", "P4", "P5", "P6", "P7"}) {
			t.Errorf("plot = %q", got)
		}
		if got := tab.Column("block", Label).Labels; !slices.Equal(got, []string{"1", "1", "2", "2", "3", "-1", "3"}) {
			t.Errorf("block = %q", got)
		}
		if got := tab.Column("variety", Label).Labels; !slices.Equal(got, []string{"gala", "fuji", "gala", "braeburn", "fuji", "gala", "gala"}) {
			t.Errorf("variety = %q", got)
		}
		sum, n, err := HashFile(p)
		if err != nil || tab.SHA256 != sum || tab.Bytes != n {
			t.Errorf("SHA256, Bytes = %s, %d; HashFile gives %s, %d, %v", tab.SHA256, tab.Bytes, sum, n, err)
		}
		if tab.Column("grade", Label) != nil || tab.Column("nope", Numeric) != nil {
			t.Error("Column found a (name, kind) that was not requested")
		}
	}
}

func TestReadParquetGradeErrors(t *testing.T) {
	p := writeOrchardParquet(t, 3)
	// Row 3 holds "", which is not a level; row 4 is null, hence missing.
	_, err := Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "plot", Kind: Label},
		{Name: "grade", Kind: Ordinal, Levels: grades},
	}})
	want := p + `: row 3, column "grade": value "" is not one of the declared levels "cull", "standard", "fancy", "extra fancy" (hint: if empty cells mean "no value", add "" to the dataset's missing tokens)`
	var ce *CellError
	if !errors.As(err, &ce) || err.Error() != want || ce.Line != 0 {
		t.Errorf("err\n got %v\nwant %s", err, want)
	}
	// An integer column read as ordinal matches its decimal text.
	_, err = Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "block", Kind: Ordinal, Levels: []string{"1", "2", "3"}},
	}})
	if !errors.As(err, &ce) || ce.Row != 6 || ce.Value != "-1" || ce.Column != "block" {
		t.Errorf("block as ordinal: err = %v, want row 6 value -1", err)
	}
}

func TestReadParquetTypeErrors(t *testing.T) {
	p := writeOrchardParquet(t, 1024)
	for _, c := range []struct {
		col          ColumnSpec
		reason, hint string
	}{
		{ColumnSpec{Name: "grade", Kind: Numeric}, "holds text (utf8), not numbers", "declare its levels to read it as ordinal"},
		{ColumnSpec{Name: "variety", Kind: Numeric}, "holds text (dictionary<values=utf8, indices=int16, ordered=false>), not numbers", "declare its levels to read it as ordinal"},
		{ColumnSpec{Name: "netted", Kind: Numeric}, "has type bool, which cannot be read as numbers", "store it as integers 0 and 1, or as text"},
		{ColumnSpec{Name: "netted", Kind: Label}, "has type bool, which cannot be read as labels", "store it as integers 0 and 1, or as text"},
		{ColumnSpec{Name: "yield_kg", Kind: Label}, "has type float64, which cannot be read as labels", "only text and integer columns can be read as labels"},
		{ColumnSpec{Name: "price", Kind: Ordinal, Levels: []string{"1.25"}}, "has type decimal(9, 2), which cannot be read as ordinal levels", "only text and integer columns can be read as ordinal levels"},
		{ColumnSpec{Name: "site", Kind: Numeric}, "has the nested type struct<lat: float64>, which cannot be read", "only top-level columns of numbers or text can be read; write its fields as columns of their own"},
		{ColumnSpec{Name: "site", Kind: Label}, "has the nested type struct<lat: float64>, which cannot be read", "only top-level columns of numbers or text can be read; write its fields as columns of their own"},
	} {
		// The bad column comes second, after a good one.
		_, err := Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "plot", Kind: Label}, c.col}})
		var ce *ColumnError
		if !errors.As(err, &ce) {
			t.Errorf("%s as %s: err = %v, want a *ColumnError", c.col.Name, c.col.Kind, err)
			continue
		}
		if ce.Path != p || ce.Column != c.col.Name || ce.Reason != c.reason || ce.Hint != c.hint {
			t.Errorf("%s as %s: %+v\nwant reason %q, hint %q", c.col.Name, c.col.Kind, *ce, c.reason, c.hint)
		}
	}
	_, err := Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "netted", Kind: Numeric}}})
	want := p + `: column "netted" has type bool, which cannot be read as numbers (hint: store it as integers 0 and 1, or as text)`
	if err == nil || err.Error() != want {
		t.Errorf("message\n got %v\nwant %s", err, want)
	}
	_, err = Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "yeild_kg", Kind: Numeric}}})
	var me *MissingColumnError
	if !errors.As(err, &me) || me.Suggest != "yield_kg" {
		t.Errorf("err = %v, want a MissingColumnError suggesting yield_kg", err)
	}
	// A CSV file is not a Parquet file.
	if _, err := Read(context.Background(), Spec{Path: "testdata/orchard_harvest.csv", Format: Parquet}); err == nil || !strings.Contains(err.Error(), "not a Parquet file") {
		t.Errorf("CSV as Parquet: err = %v", err)
	}
}

func TestParquetHeaderAndEmpty(t *testing.T) {
	p := writeOrchardParquet(t, 1024)
	h, err := Header(p, Parquet)
	if err != nil {
		t.Fatal(err)
	}
	if want := []string{"plot", "block", "yield_kg", "grade", "trees", "netted", "price", "variety", "ratio", "site"}; !slices.Equal(h, want) {
		t.Errorf("Header = %q, want %q", h, want)
	}

	// A table with a schema and no rows.
	schema := arrow.NewSchema([]arrow.Field{{Name: "x", Type: arrow.PrimitiveTypes.Float64}}, nil)
	tbl := array.NewTableFromRecords(schema, nil)
	defer tbl.Release()
	q := filepath.Join(t.TempDir(), "empty.parquet")
	f, err := os.Create(q)
	if err != nil {
		t.Fatal(err)
	}
	if err := pqarrow.WriteTable(tbl, f, 1024, nil, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	f.Close()
	tab := mustRead(t, Spec{Path: q, Format: Parquet, Columns: []ColumnSpec{{Name: "x", Kind: Numeric}}})
	if tab.Rows != 0 || len(tab.Columns[0].Values) != 0 {
		t.Errorf("empty Parquet: %+v", tab)
	}
}

// A Parquet column requested with two kinds is read once from the file and
// stored both ways.
func TestReadParquetColumnTwoKinds(t *testing.T) {
	defer func(n int) { batchRows = n }(batchRows)
	batchRows = 3
	p := writeOrchardParquet(t, 2)
	tab := mustRead(t, Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "block", Kind: Label},
		{Name: "yield_kg", Kind: Numeric},
		{Name: "block", Kind: Numeric},
		{Name: "grade", Kind: Ordinal, Levels: append([]string{""}, grades...)},
		{Name: "grade", Kind: Label},
	}})
	if b := tab.Column("block", Numeric); !sameFloats(b.Values, []float64{1, 1, 2, 2, 3, -1, 3}) {
		t.Errorf("block as numbers = %v", b.Values)
	}
	if b := tab.Column("block", Label); !slices.Equal(b.Labels, []string{"1", "1", "2", "2", "3", "-1", "3"}) {
		t.Errorf("block as labels = %q", b.Labels)
	}
	if y := tab.Column("yield_kg", Numeric); !sameFloats(y.Values, []float64{10.5, nan, nan, inf, -2.25, 7, 1e300}) {
		t.Errorf("yield_kg = %v", y.Values)
	}
	if g := tab.Column("grade", Ordinal); !sameFloats(g.Values, []float64{4, 2, 1, nan, 3, 4, 2}) {
		t.Errorf("grade as ordinal = %v", g.Values)
	}
	g := tab.Column("grade", Label)
	if !slices.Equal(g.Labels, []string{"fancy", "cull", "", "", "standard", "fancy", "cull"}) || !slices.Equal(g.Missing, []bool{false, false, false, true, false, false, false}) {
		t.Errorf("grade as labels = %q, missing %v", g.Labels, g.Missing)
	}

	// A value that does not fit is still reported: -1 is not a level.
	_, err := Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "block", Kind: Label},
		{Name: "block", Kind: Ordinal, Levels: []string{"1", "2", "3"}},
	}})
	var ce *CellError
	if !errors.As(err, &ce) || ce.Row != 6 || ce.Column != "block" || ce.Value != "-1" {
		t.Errorf("block as labels and levels: err = %v, want row 6 value -1", err)
	}
	// A text column cannot be read as numbers, even when it is read as
	// labels too.
	_, err = Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "plot", Kind: Label},
		{Name: "plot", Kind: Numeric},
	}})
	var col *ColumnError
	if !errors.As(err, &col) || col.Column != "plot" || col.Reason != "holds text (utf8), not numbers" {
		t.Errorf("plot as labels and numbers: err = %v, want a *ColumnError", err)
	}
}

// The hash of a Parquet file is that of its bytes, as coreutils computes it.
func TestReadParquetHash(t *testing.T) {
	sha256sum, err := exec.LookPath("sha256sum")
	if err != nil {
		t.Skip("coreutils sha256sum is not installed")
	}
	p := writeOrchardParquet(t, 3)
	out, err := exec.Command(sha256sum, p).Output()
	if err != nil {
		t.Fatal(err)
	}
	want, _, _ := strings.Cut(string(out), " ")
	st, err := os.Stat(p)
	if err != nil {
		t.Fatal(err)
	}
	tab := mustRead(t, Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "ratio", Kind: Numeric}}})
	if tab.SHA256 != want || tab.Bytes != st.Size() {
		t.Errorf("SHA256, Bytes = %s, %d; sha256sum gives %s, the file has %d bytes", tab.SHA256, tab.Bytes, want, st.Size())
	}
}

// A Parquet file written to while it is read is reported rather than given
// a hash of bytes that were not analysed; a file replaced by a rename is
// read whole from the old bytes, which are the ones hashed.
func TestReadParquetChanged(t *testing.T) {
	defer func() { testHookParquetRead = nil }()
	spec := func(p string) Spec {
		return Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "ratio", Kind: Numeric}}}
	}

	p := writeOrchardParquet(t, 3)
	testHookParquetRead = func() {
		f, err := os.OpenFile(p, os.O_WRONLY|os.O_APPEND, 0)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		if _, err := f.Write([]byte("x")); err != nil {
			t.Fatal(err)
		}
	}
	_, err := Read(context.Background(), spec(p))
	if err == nil || !strings.Contains(err.Error(), p+" changed while it was being read") {
		t.Errorf("appended to: err = %v, want one saying the file changed", err)
	}

	// Overwritten in place with bytes of the same length.
	p = writeOrchardParquet(t, 3)
	testHookParquetRead = func() {
		f, err := os.OpenFile(p, os.O_WRONLY, 0)
		if err != nil {
			t.Fatal(err)
		}
		defer f.Close()
		if _, err := f.WriteAt([]byte("PAR2"), 0); err != nil {
			t.Fatal(err)
		}
	}
	_, err = Read(context.Background(), spec(p))
	if err == nil || !strings.Contains(err.Error(), "changed while it was being read") {
		t.Errorf("overwritten: err = %v, want one saying the file changed", err)
	}

	if runtime.GOOS == "windows" {
		return // an open file cannot be replaced by a rename there
	}
	p = writeOrchardParquet(t, 3)
	sum, n, err := HashFile(p)
	if err != nil {
		t.Fatal(err)
	}
	testHookParquetRead = func() {
		tmp := p + ".new"
		if err := os.WriteFile(tmp, []byte("not the same file"), 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.Rename(tmp, p); err != nil {
			t.Fatal(err)
		}
	}
	tab, err := Read(context.Background(), spec(p))
	if err != nil || tab.SHA256 != sum || tab.Bytes != n {
		t.Errorf("replaced by a rename: %v; want the hash of the bytes read, %s", err, sum)
	}
}

// A Parquet schema may repeat a top-level name; asking for it is a
// *ColumnError, and Header lists it twice.
func TestParquetDuplicateName(t *testing.T) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		{Name: "y", Type: arrow.PrimitiveTypes.Float64},
		{Name: "x", Type: arrow.PrimitiveTypes.Int64},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).Append(1)
	b.Field(1).(*array.Float64Builder).Append(2)
	b.Field(2).(*array.Int64Builder).Append(3)
	rec := b.NewRecordBatch()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.RecordBatch{rec})
	defer tbl.Release()
	p := filepath.Join(t.TempDir(), "dup.parquet")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	if err := pqarrow.WriteTable(tbl, f, 1024, nil, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	_ = f.Close()

	if h, err := Header(p, Parquet); err != nil || !slices.Equal(h, []string{"x", "y", "x"}) {
		t.Errorf("Header = %q, %v; want x, y, x", h, err)
	}
	_, err = Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "y", Kind: Numeric}, {Name: "x", Kind: Numeric}}})
	want := p + `: column "x" appears more than once in the header (fields 1 and 3) (hint: give each column of the file its own name)`
	var ce *ColumnError
	if !errors.As(err, &ce) || ce.Column != "x" || err.Error() != want {
		t.Errorf("err\n got %v\nwant %s", err, want)
	}
	tab := mustRead(t, Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "y", Kind: Numeric}}})
	if !sameFloats(tab.Columns[0].Values, []float64{2}) {
		t.Errorf("y = %v", tab.Columns[0].Values)
	}
}

// TestTypesWithoutReading: Types reports every requested Parquet column of a
// type that cannot be read as asked, the same ColumnErrors Read gives, and
// nothing for a text file (whose cells carry no type).
func TestTypesWithoutReading(t *testing.T) {
	p := writeOrchardParquet(t, 1024)
	spec := Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{
		{Name: "plot", Kind: Label},
		{Name: "netted", Kind: Numeric},
		{Name: "yield_kg", Kind: Numeric},
		{Name: "grade", Kind: Numeric},
	}}
	err := Types(spec)
	var bad []string
	for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
		var ce *ColumnError
		if !errors.As(e, &ce) {
			t.Fatalf("%v is not a *ColumnError", e)
		}
		bad = append(bad, ce.Column)
	}
	if strings.Join(bad, ",") != "netted,grade" {
		t.Errorf("Types flagged %v, want netted and grade", bad)
	}
	spec.Columns = spec.Columns[:1]
	if err := Types(spec); err != nil {
		t.Errorf("Types on good columns: %v", err)
	}
	if err := Types(Spec{Path: "testdata/orchard_harvest.csv", Format: CSV, Columns: []ColumnSpec{{Name: "grade", Kind: Numeric}}}); err != nil {
		t.Errorf("Types on CSV: %v", err)
	}
}
