package main

import (
	"bufio"
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strconv"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// generatorVersion names the generators' output. Bump it whenever a change
// moves a single byte of a data set, so that data kept from an earlier run
// (--keep) is generated anew rather than reused.
const generatorVersion = 1

// benchSeed seeds every data set; each set draws from its own PCG stream.
const benchSeed = 20261202

// dataKind names a data set's shape; it picks the generator.
type dataKind int

const (
	_               dataKind = iota
	kindSpearman             // x: a 1–100 score (heavy ties); y: full-precision floats
	kindLikert               // x: 1–5, y: 1–7 (very heavy ties)
	kindDistinct             // x, y: each a permutation of 1…n (no ties at all)
	kindMatrix               // cols columns from a 5-factor model, 4 decimals (some ties)
	kindPermutation          // x, y: 2 decimals (a few ties), weak association
)

// stream is each kind's PCG stream number under benchSeed.
func (k dataKind) stream() uint64 { return uint64(k) }

func (k dataKind) String() string {
	switch k {
	case kindSpearman:
		return "spearman"
	case kindLikert:
		return "likert"
	case kindDistinct:
		return "distinct"
	case kindMatrix:
		return "matrix"
	case kindPermutation:
		return "permutation"
	}
	return fmt.Sprintf("dataKind(%d)", int(k))
}

// dataSet is one generated table: its shape, and the files it is written to.
type dataSet struct {
	kind dataKind
	rows int
	cols int // 2 for every kind but kindMatrix
}

// base is the file name without extension, e.g. "spearman-10000000x2".
func (d dataSet) base() string { return fmt.Sprintf("%s-%dx%d", d.kind, d.rows, d.cols) }

// stamp is written beside the files once they are complete; data whose stamp
// matches is reused instead of generated again.
func (d dataSet) stamp(parquet bool) string {
	return fmt.Sprintf("concordat-bench data v%d seed %d %s rows %d cols %d parquet %t\n",
		generatorVersion, benchSeed, d.kind, d.rows, d.cols, parquet)
}

// generate returns the data set's column names and values. The values are
// exactly those written to both files: every rounding happens here, so the
// CSV text and the Parquet doubles hold the same numbers.
//
// All draws come from one PCG stream seeded with (benchSeed, kind), in a fixed
// order, so the same shape always gives the same bytes (TestGenerateIsDeterministic).
// The associations are weak on purpose (rho of a few thousandths at n = 10⁷)
// so that the asymptotic p-values stay well above the float64 underflow and
// can be compared digit by digit between concordat and R.
func (d dataSet) generate() ([]string, [][]float64) {
	rng := rand.New(rand.NewPCG(benchSeed, d.kind.stream()))
	switch d.kind {
	case kindSpearman:
		x, y := make([]float64, d.rows), make([]float64, d.rows)
		for i := range d.rows {
			u := rng.NormFloat64()
			x[i] = min(max(math.Round(50+15*u), 1), 100)
			y[i] = 0.002*u + rng.NormFloat64()
		}
		return []string{"x", "y"}, [][]float64{x, y}
	case kindLikert:
		// Equiprobable cut points of the standard normal for 5 and 7 levels.
		cut5 := []float64{-0.8416, -0.2533, 0.2533, 0.8416}
		cut7 := []float64{-1.0676, -0.5659, -0.1800, 0.1800, 0.5659, 1.0676}
		x, y := make([]float64, d.rows), make([]float64, d.rows)
		for i := range d.rows {
			u := rng.NormFloat64()
			x[i] = level(u, cut5)
			y[i] = level(0.003*u+rng.NormFloat64(), cut7)
		}
		return []string{"x", "y"}, [][]float64{x, y}
	case kindDistinct:
		u, v := make([]float64, d.rows), make([]float64, d.rows)
		for i := range d.rows {
			u[i] = rng.NormFloat64()
			v[i] = 0.003*u[i] + rng.NormFloat64()
		}
		return []string{"x", "y"}, [][]float64{ordinalRanks(u), ordinalRanks(v)}
	case kindMatrix:
		const factors = 5
		load := make([]float64, d.cols*factors)
		for j := range load {
			load[j] = 0.4 * rng.NormFloat64()
		}
		cols := make([][]float64, d.cols)
		for j := range cols {
			cols[j] = make([]float64, d.rows)
		}
		var f [factors]float64
		for i := range d.rows {
			for m := range f {
				f[m] = rng.NormFloat64()
			}
			for j := range cols {
				v := rng.NormFloat64()
				for m := range f {
					v += load[j*factors+m] * f[m]
				}
				cols[j][i] = round(v, 1e4)
			}
		}
		return d.columnNames(), cols
	case kindPermutation:
		x, y := make([]float64, d.rows), make([]float64, d.rows)
		for i := range d.rows {
			u := rng.NormFloat64()
			x[i] = round(u, 100)
			y[i] = round(0.06*u+rng.NormFloat64(), 100)
		}
		return []string{"x", "y"}, [][]float64{x, y}
	}
	panic(fmt.Sprintf("concordat-bench: unknown data kind %d", int(d.kind)))
}

// level returns 1 + the number of cut points below z.
func level(z float64, cuts []float64) float64 {
	l := 1.0
	for _, c := range cuts {
		if z > c {
			l++
		}
	}
	return l
}

// round rounds v to the nearest multiple of 1/scale. The quotient is the
// double nearest to a decimal with log10(scale) places, so strconv's shortest
// formatting prints exactly that decimal.
func round(v, scale float64) float64 { return math.Round(v*scale) / scale }

// ordinalRanks returns the ranks 1…n of v, ties broken by position, so the
// result is a permutation of 1…n whatever v holds.
func ordinalRanks(v []float64) []float64 {
	type keyed struct {
		v float64
		i int32
	}
	k := make([]keyed, len(v))
	for i, x := range v {
		k[i] = keyed{x, int32(i)}
	}
	slices.SortFunc(k, func(a, b keyed) int {
		return cmp.Or(cmp.Compare(a.v, b.v), cmp.Compare(a.i, b.i))
	})
	r := make([]float64, len(v))
	for rank, e := range k {
		r[e.i] = float64(rank + 1)
	}
	return r
}

// writeData writes the data set as dir/<base>.csv and, when withParquet, as
// dir/<base>.parquet, unless a matching stamp shows that they are already
// there. It reports whether it wrote anything.
func writeData(dir string, d dataSet, withParquet bool) (bool, error) {
	csvPath, pqPath := d.csvPath(dir), d.parquetPath(dir)
	stampPath := filepath.Join(dir, d.base()+".stamp")
	// Data stamped with a Parquet file serves a run that needs only the CSV.
	if got, err := os.ReadFile(stampPath); err == nil && (string(got) == d.stamp(withParquet) || string(got) == d.stamp(true)) {
		withParquet = string(got) == d.stamp(true)
		if _, err := os.Stat(csvPath); err == nil {
			if _, err := os.Stat(pqPath); err == nil || !withParquet {
				return false, nil
			}
		}
	}
	os.Remove(stampPath)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return false, err
	}
	names, cols := d.generate()
	if err := writeCSV(csvPath, names, cols); err != nil {
		return false, err
	}
	if withParquet {
		if err := writeParquet(pqPath, names, cols); err != nil {
			return false, err
		}
	}
	return true, os.WriteFile(stampPath, []byte(d.stamp(withParquet)), 0o644)
}

func (d dataSet) csvPath(dir string) string     { return filepath.Join(dir, d.base()+".csv") }
func (d dataSet) parquetPath(dir string) string { return filepath.Join(dir, d.base()+".parquet") }

// writeCSV writes a header and one line per row, each value in strconv's
// shortest decimal form without an exponent ('f', -1), which reads back to
// the same double.
func writeCSV(path string, names []string, cols [][]float64) (err error) {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	w := bufio.NewWriterSize(f, 1<<20)
	for j, n := range names {
		if j > 0 {
			w.WriteByte(',')
		}
		w.WriteString(n)
	}
	w.WriteByte('\n')
	var buf []byte
	rows := 0
	if len(cols) > 0 {
		rows = len(cols[0])
	}
	for i := range rows {
		buf = buf[:0]
		for j := range cols {
			if j > 0 {
				buf = append(buf, ',')
			}
			buf = strconv.AppendFloat(buf, cols[j][i], 'f', -1, 64)
		}
		buf = append(buf, '\n')
		if _, err := w.Write(buf); err != nil {
			return fmt.Errorf("write %s: %w", path, err)
		}
	}
	if err := w.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}

// parquetRowGroup is the rows per row group (and per Arrow record batch) of
// the Parquet files: 1Mi rows, a common writer default.
const parquetRowGroup = 1 << 20

// writeParquet writes the columns as float64, snappy-compressed, one row
// group per parquetRowGroup rows, through arrow-go's pqarrow.
func writeParquet(path string, names []string, cols [][]float64) (err error) {
	fields := make([]arrow.Field, len(names))
	for j, n := range names {
		fields[j] = arrow.Field{Name: n, Type: arrow.PrimitiveTypes.Float64}
	}
	schema := arrow.NewSchema(fields, nil)
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	props := parquet.NewWriterProperties(
		parquet.WithCompression(compress.Codecs.Snappy),
		parquet.WithMaxRowGroupLength(parquetRowGroup),
	)
	// The writer closes a sink that is an io.Closer; a bufio.Writer is not,
	// so the file is closed (and its error seen) here.
	bw := bufio.NewWriterSize(f, 1<<20)
	fw, err := pqarrow.NewFileWriter(schema, bw, props, pqarrow.DefaultWriterProps())
	if err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	bld := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer bld.Release()
	rows := 0
	if len(cols) > 0 {
		rows = len(cols[0])
	}
	for lo := 0; lo < rows; lo += parquetRowGroup {
		hi := min(lo+parquetRowGroup, rows)
		for j := range cols {
			bld.Field(j).(*array.Float64Builder).AppendValues(cols[j][lo:hi], nil)
		}
		rec := bld.NewRecordBatch()
		err := fw.Write(rec)
		rec.Release()
		if err != nil {
			fw.Close()
			return fmt.Errorf("write %s: %w", path, err)
		}
	}
	if err := fw.Close(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("write %s: %w", path, err)
	}
	return nil
}
