package dataset

import (
	"bufio"
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

const benchRows = 1_000_000

// writeBenchCSV writes benchRows rows of two full-precision float columns
// (an invented sensor log; fixed seed) and returns the path.
func writeBenchCSV(b *testing.B) string {
	b.Helper()
	p := filepath.Join(b.TempDir(), "sensors.csv")
	f, err := os.Create(p)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	rng := rand.New(rand.NewPCG(20261202, 1))
	fmt.Fprintln(w, "temp_c,humidity_pct")
	var buf []byte
	for range benchRows {
		buf = strconv.AppendFloat(buf[:0], rng.NormFloat64()*8+12, 'g', -1, 64)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, rng.Float64()*100, 'g', -1, 64)
		buf = append(buf, '\n')
		w.Write(buf)
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	f.Close()
	return p
}

// BenchmarkReadCSV reads the two columns with Read (hash included).
func BenchmarkReadCSV(b *testing.B) {
	p := writeBenchCSV(b)
	spec := Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "temp_c", Kind: Numeric}, {Name: "humidity_pct", Kind: Numeric}}}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		tab, err := Read(context.Background(), spec)
		if err != nil || tab.Rows != benchRows {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(benchRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// BenchmarkReadCSVBaseline reads the same file with encoding/csv and
// strconv.ParseFloat, without hashing: the ratio of the two figures is the
// cost of going through Arrow and of the checks Read makes.
func BenchmarkReadCSVBaseline(b *testing.B) {
	p := writeBenchCSV(b)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		f, err := os.Open(p)
		if err != nil {
			b.Fatal(err)
		}
		r := csv.NewReader(bufio.NewReaderSize(f, 1<<16))
		r.ReuseRecord = true
		if _, err := r.Read(); err != nil {
			b.Fatal(err)
		}
		x := make([]float64, 0, benchRows)
		y := make([]float64, 0, benchRows)
		for {
			rec, err := r.Read()
			if err == io.EOF {
				break
			}
			if err != nil {
				b.Fatal(err)
			}
			u, err1 := strconv.ParseFloat(rec[0], 64)
			v, err2 := strconv.ParseFloat(rec[1], 64)
			if err1 != nil || err2 != nil {
				b.Fatal(err1, err2)
			}
			x, y = append(x, u), append(y, v)
		}
		f.Close()
		if len(x) != benchRows || len(y) != benchRows {
			b.Fatal(len(x))
		}
	}
	b.ReportMetric(float64(benchRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}

// BenchmarkReadParquet reads two float64 columns of benchRows rows (default
// writer properties, row groups of 128Ki rows) out of three.
func BenchmarkReadParquet(b *testing.B) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
		{Name: "station", Type: arrow.BinaryTypes.String},
		{Name: "humidity_pct", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	bld := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	rng := rand.New(rand.NewPCG(20261202, 2))
	for i := range benchRows {
		bld.Field(0).(*array.Float64Builder).Append(rng.NormFloat64()*8 + 12)
		bld.Field(1).(*array.StringBuilder).Append("station-" + strconv.Itoa(i%50))
		bld.Field(2).(*array.Float64Builder).Append(rng.Float64() * 100)
	}
	rec := bld.NewRecordBatch()
	bld.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.RecordBatch{rec})
	rec.Release()
	p := filepath.Join(b.TempDir(), "sensors.parquet")
	f, err := os.Create(p)
	if err != nil {
		b.Fatal(err)
	}
	if err := pqarrow.WriteTable(tbl, f, 1<<17, nil, pqarrow.DefaultWriterProps()); err != nil {
		b.Fatal(err)
	}
	tbl.Release()

	spec := Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "temp_c", Kind: Numeric}, {Name: "humidity_pct", Kind: Numeric}}}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		tab, err := Read(context.Background(), spec)
		if err != nil || tab.Rows != benchRows {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(benchRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}
