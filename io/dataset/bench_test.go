package dataset

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"runtime/metrics"
	"strconv"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	arrowcsv "github.com/apache/arrow-go/v18/arrow/csv"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// The benchmarks read an invented sensor log with two full-precision float
// columns, temp_c and humidity_pct (and, in the Parquet file, a station
// name between them), of 10⁶ and 10⁷ rows; the 10⁷ sizes are skipped with
// -short. The files are written once per run (fixed seeds) to a temporary
// folder that TestMain removes. Each benchmark reports, besides time and
// allocations:
//
//   - rows/s;
//   - cpu-s/op: user + system CPU time of the process per read, which the
//     machine's other load disturbs less than the wall time (with two cores
//     shared with other work, a parallel read may get no more than one);
//   - peak-heap-MiB: the largest heap in use (objects and the free space
//     of their spans: MemStats.HeapInuse) seen by a sampler every 5 ms,
//     minus the heap in use before the loop;
//   - alloc-MiB/op: MemStats.TotalAlloc per read.
//
// Compare each figure with its baseline in the same run:
//
//	go test -run '^$' -bench . -count 5 ./io/dataset

var benchSizes = []int{1_000_000, 10_000_000}

var (
	benchMu    sync.Mutex
	benchDir   string
	benchFiles = map[string]string{}
)

func TestMain(m *testing.M) {
	code := m.Run()
	if benchDir != "" {
		os.RemoveAll(benchDir)
	}
	os.Exit(code)
}

// benchFile returns the path of the benchmark file name, writing it with
// write the first time.
func benchFile(b *testing.B, name string, write func(path string) error) string {
	b.Helper()
	benchMu.Lock()
	defer benchMu.Unlock()
	if p, ok := benchFiles[name]; ok {
		return p
	}
	if benchDir == "" {
		d, err := os.MkdirTemp("", "concordat-dataset-bench-")
		if err != nil {
			b.Fatal(err)
		}
		benchDir = d
	}
	p := filepath.Join(benchDir, name)
	if err := write(p); err != nil {
		b.Fatal(err)
	}
	benchFiles[name] = p
	return p
}

// benchCSV returns a CSV file of n rows: temp_c,humidity_pct written with
// the shortest representation that reads back exactly (~17 digits).
func benchCSV(b *testing.B, n int) string {
	return benchFile(b, fmt.Sprintf("sensors_%d.csv", n), func(p string) error {
		f, err := os.Create(p)
		if err != nil {
			return err
		}
		w := bufio.NewWriterSize(f, 1<<16)
		rng := rand.New(rand.NewPCG(20261202, 1))
		w.WriteString("temp_c,humidity_pct\n")
		var buf []byte
		for range n {
			buf = strconv.AppendFloat(buf[:0], rng.NormFloat64()*8+12, 'g', -1, 64)
			buf = append(buf, ',')
			buf = strconv.AppendFloat(buf, rng.Float64()*100, 'g', -1, 64)
			buf = append(buf, '\n')
			w.Write(buf)
		}
		if err := w.Flush(); err != nil {
			return err
		}
		return f.Close()
	})
}

// benchParquet returns a Snappy-compressed Parquet file of n rows (temp_c,
// station, humidity_pct) in row groups of 2²⁰ rows, the default of
// pyarrow's writer.
func benchParquet(b *testing.B, n int) string {
	return benchFile(b, fmt.Sprintf("sensors_%d.parquet", n), func(p string) error {
		schema := arrow.NewSchema([]arrow.Field{
			{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
			{Name: "station", Type: arrow.BinaryTypes.String},
			{Name: "humidity_pct", Type: arrow.PrimitiveTypes.Float64},
		}, nil)
		f, err := os.Create(p)
		if err != nil {
			return err
		}
		props := parquet.NewWriterProperties(
			parquet.WithCompression(compress.Codecs.Snappy),
			parquet.WithMaxRowGroupLength(1<<20))
		w, err := pqarrow.NewFileWriter(schema, f, props, pqarrow.DefaultWriterProps())
		if err != nil {
			return err
		}
		rng := rand.New(rand.NewPCG(20261202, 2))
		bld := array.NewRecordBuilder(memory.DefaultAllocator, schema)
		defer bld.Release()
		for i := 0; i < n; {
			for j := 0; j < 1<<16 && i < n; j, i = j+1, i+1 {
				bld.Field(0).(*array.Float64Builder).Append(rng.NormFloat64()*8 + 12)
				bld.Field(1).(*array.StringBuilder).Append("station-" + strconv.Itoa(i%50))
				bld.Field(2).(*array.Float64Builder).Append(rng.Float64() * 100)
			}
			rec := bld.NewRecordBatch()
			err := w.WriteBuffered(rec)
			rec.Release()
			if err != nil {
				return err
			}
		}
		return w.Close()
	})
}

var twoColumns = []ColumnSpec{{Name: "temp_c", Kind: Numeric}, {Name: "humidity_pct", Kind: Numeric}}

// benchSizesRun runs f as a sub-benchmark for each size in benchSizes,
// skipping 10⁷ rows with -short.
func benchSizesRun(b *testing.B, f func(b *testing.B, n int)) {
	for _, n := range benchSizes {
		b.Run(fmt.Sprintf("rows=%.0e", float64(n)), func(b *testing.B) {
			if n > 1_000_000 && testing.Short() {
				b.Skip("10⁷ rows skipped with -short")
			}
			f(b, n)
		})
	}
}

// measure runs read b.N times and reports the metrics described above. It
// collects garbage before each read, outside the timer.
func measure(b *testing.B, rows int, read func()) {
	b.Helper()
	runtime.GC()
	sample := []metrics.Sample{
		{Name: "/memory/classes/heap/objects:bytes"},
		{Name: "/memory/classes/heap/unused:bytes"},
	}
	inuse := func() uint64 {
		metrics.Read(sample)
		return sample[0].Value.Uint64() + sample[1].Value.Uint64()
	}
	base := inuse()
	var peak uint64
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		tick := time.NewTicker(5 * time.Millisecond)
		defer tick.Stop()
		for {
			if h := inuse(); h > peak {
				peak = h
			}
			select {
			case <-tick.C:
			case <-stop:
				return
			}
		}
	}()
	var ms0, ms1 runtime.MemStats
	runtime.ReadMemStats(&ms0)
	var cpu time.Duration
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		// Collect the previous read's table, outside the timer, so that
		// each read starts from the same heap as a program's one read.
		b.StopTimer()
		runtime.GC()
		cpu0 := cpuTime()
		b.StartTimer()
		read()
		cpu += cpuTime() - cpu0
	}
	b.StopTimer()
	close(stop)
	wg.Wait()
	runtime.ReadMemStats(&ms1)
	n := float64(b.N)
	b.ReportMetric(float64(rows)*n/b.Elapsed().Seconds(), "rows/s")
	b.ReportMetric(cpu.Seconds()/n, "cpu-s/op")
	b.ReportMetric(float64(peak-min(peak, base))/(1<<20), "peak-heap-MiB")
	b.ReportMetric(float64(ms1.TotalAlloc-ms0.TotalAlloc)/n/(1<<20), "alloc-MiB/op")
}

// cpuTime returns the user and system CPU time of the process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// benchRead measures read on the benchmark file of each size that file
// writes, read as format: the shape every whole-file reader benchmark shares.
func benchRead(b *testing.B, file func(*testing.B, int) string, format Format, read func(context.Context, Spec) (*Table, error)) {
	benchSizesRun(b, func(b *testing.B, n int) {
		spec := Spec{Path: file(b, n), Format: format, Columns: twoColumns}
		measure(b, n, func() {
			tab, err := read(context.Background(), spec)
			if err != nil || tab.Rows != n {
				b.Fatal(err)
			}
		})
	})
}

// BenchmarkReadCSV reads the two columns with Read (hash included).
func BenchmarkReadCSV(b *testing.B) { benchRead(b, benchCSV, CSV, Read) }

// BenchmarkReadCSVBaseline reads the same file with encoding/csv and
// strconv.ParseFloat on one core, without hashing: the plainest reader.
func BenchmarkReadCSVBaseline(b *testing.B) {
	benchSizesRun(b, func(b *testing.B, n int) {
		p := benchCSV(b, n)
		measure(b, n, func() {
			f, err := os.Open(p)
			if err != nil {
				b.Fatal(err)
			}
			defer f.Close()
			r := csv.NewReader(bufio.NewReaderSize(f, 1<<16))
			r.ReuseRecord = true
			if _, err := r.Read(); err != nil {
				b.Fatal(err)
			}
			x := make([]float64, 0, n)
			y := make([]float64, 0, n)
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
			if len(x) != n || len(y) != n {
				b.Fatal(len(x))
			}
		})
	})
}

// BenchmarkReadCSVArrowChunks is the first step the performance issue
// proposed, measured to decide whether recordScanner was needed: the file
// (read whole into memory and hashed alongside) is split at line feeds into
// one chunk per core, and each chunk is read by its own Arrow CSV reader
// with an explicit float64 schema and 64Ki-row batches. The split is valid
// only because this file has no quotes.
func BenchmarkReadCSVArrowChunks(b *testing.B) {
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "temp_c", Type: arrow.PrimitiveTypes.Float64},
		{Name: "humidity_pct", Type: arrow.PrimitiveTypes.Float64},
	}, nil)
	benchSizesRun(b, func(b *testing.B, n int) {
		p := benchCSV(b, n)
		workers := runtime.GOMAXPROCS(0)
		measure(b, n, func() {
			data, err := os.ReadFile(p)
			if err != nil {
				b.Fatal(err)
			}
			var wg sync.WaitGroup
			wg.Add(1)
			go func() { defer wg.Done(); sha256.Sum256(data) }()
			body := data[bytes.IndexByte(data, '\n')+1:]
			cuts := []int{0}
			for k := 1; k < workers; k++ {
				c := len(body) * k / workers
				cuts = append(cuts, c+bytes.IndexByte(body[c:], '\n')+1)
			}
			cuts = append(cuts, len(body))
			cols := make([][2][]float64, workers)
			for k := range workers {
				wg.Add(1)
				go func() {
					defer wg.Done()
					rr := arrowcsv.NewReader(bytes.NewReader(body[cuts[k]:cuts[k+1]]), schema, arrowcsv.WithChunk(1<<16))
					defer rr.Release()
					for rr.Next() {
						rec := rr.RecordBatch()
						for j := range 2 {
							cols[k][j] = append(cols[k][j], rec.Column(j).(*array.Float64).Float64Values()...)
						}
					}
					if err := rr.Err(); err != nil {
						panic(err)
					}
				}()
			}
			wg.Wait()
			x := make([]float64, 0, n)
			for _, c := range cols {
				x = append(x, c[0]...)
			}
			if len(x) != n {
				b.Fatal(len(x))
			}
		})
	})
}

// BenchmarkReadCSVArrow reads the 10⁶-row file with the Arrow-based reader
// that readText replaced (the tests' oracle).
func BenchmarkReadCSVArrow(b *testing.B) {
	n := benchSizes[0]
	spec := Spec{Path: benchCSV(b, n), Format: CSV, Columns: twoColumns}
	measure(b, n, func() {
		tab, err := readTextArrow(context.Background(), spec, ',')
		if err != nil || tab.Rows != n {
			b.Fatal(err)
		}
	})
}

// BenchmarkReadParquet reads two float64 columns of three with Read (both
// hashes included).
func BenchmarkReadParquet(b *testing.B) { benchRead(b, benchParquet, Parquet, Read) }

// BenchmarkReadParquetBaseline reads the same file with the sequential
// reader that parseParquet replaced (one pqarrow record reader over both
// columns, batches of 64Ki rows, appended to the columns), hashing the file
// once rather than twice.
func BenchmarkReadParquetBaseline(b *testing.B) {
	benchRead(b, benchParquet, Parquet, readParquetOracle)
}

// BenchmarkReadParquetRecordBatches is BenchmarkReadParquet with the direct
// decoding of float columns turned off: every column goes through pqarrow
// record batches, still in parallel.
func BenchmarkReadParquetRecordBatches(b *testing.B) {
	defer func() { parquetDirect = true }()
	parquetDirect = false
	BenchmarkReadParquet(b)
}

// BenchmarkScanRecords splits the 10⁶-row file, held in memory, into
// records and fields with recordScanner, on one goroutine and without
// parsing numbers: the tokenizer alone.
func BenchmarkScanRecords(b *testing.B) {
	data, err := os.ReadFile(benchCSV(b, benchSizes[0]))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		sc := newRecordScanner(',')
		fields, pos := 0, 0
		for {
			res, _, end := sc.next(data, pos, true)
			if res != scanRecord {
				break
			}
			fields += len(sc.fields)
			pos = end
		}
		if fields != 2*(benchSizes[0]+1) {
			b.Fatal(fields)
		}
	}
}

// BenchmarkScanRecordsEncodingCSV is BenchmarkScanRecords with
// encoding/csv (ReuseRecord set): the tokenizer recordScanner replaces.
func BenchmarkScanRecordsEncodingCSV(b *testing.B) {
	data, err := os.ReadFile(benchCSV(b, benchSizes[0]))
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		r := csv.NewReader(bytes.NewReader(data))
		r.ReuseRecord = true
		fields := 0
		for {
			rec, err := r.Read()
			if err != nil {
				break
			}
			fields += len(rec)
		}
		if fields != 2*(benchSizes[0]+1) {
			b.Fatal(fields)
		}
	}
}
