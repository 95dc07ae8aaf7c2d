package dataset

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"
	"time"
	"unsafe"
)

// csvGen writes random CSV or TSV files for comparing Read with the Arrow
// oracle: numbers in many spellings with heavy ties, ordinal labels,
// free text with separators, quotes and line breaks, missing tokens, CRLF
// and LF mixed, blank lines, a byte order mark, and (when faults is set)
// bad cells and broken records.
type csvGen struct {
	rng    *rand.Rand
	sep    byte
	faults bool
}

var genLevels = []string{"low", "mid", "high", "very high"}

// quote writes s as a quoted field.
func quoteField(s string) string {
	return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
}

// field returns s as a field: quoted when it must be, and sometimes when it
// need not be.
func (g *csvGen) field(s string) string {
	if strings.ContainsAny(s, "\"\r\n"+string(g.sep)) || g.rng.IntN(10) == 0 {
		return quoteField(s)
	}
	return s
}

func (g *csvGen) bad() bool { return g.faults && g.rng.IntN(150) == 0 }

func (g *csvGen) number() string {
	r := g.rng
	if g.bad() {
		return []string{"abc", "1e400", quoteField("3" + string(g.sep) + "5"), "12 kg", "-"}[r.IntN(5)]
	}
	switch r.IntN(12) {
	case 0:
		return []string{"", "NA", "n/a", "?"}[r.IntN(4)]
	case 1:
		return []string{"NaN", "nan", "Inf", "-infinity", "+Inf"}[r.IntN(5)]
	case 2:
		return " " + strconv.Itoa(r.IntN(5)) + ".5\t"
	case 3:
		return quoteField(strconv.FormatFloat(r.NormFloat64(), 'e', 3, 64))
	case 4:
		return strconv.FormatFloat(r.NormFloat64()*1e6, 'f', 2, 64)
	case 5:
		return strconv.FormatFloat(r.NormFloat64(), 'g', -1, 64)
	}
	return strconv.Itoa(r.IntN(6)) // heavy ties
}

func (g *csvGen) level() string {
	r := g.rng
	if g.bad() {
		return []string{"Mid", " low", "", "medium"}[r.IntN(4)]
	}
	if r.IntN(10) == 0 {
		return []string{"NA", ""}[r.IntN(2)]
	}
	return g.field(genLevels[r.IntN(len(genLevels))])
}

func (g *csvGen) label() string {
	texts := []string{"north", "south", "a,b", "x\ty", `say "hi"`, "two\nlines", "cr\r\nlf", "", "NA", "é", " padded ", "\"", "\r"}
	return g.field(texts[g.rng.IntN(len(texts))])
}

// file returns the text of a file with the given header and rows rows. The
// columns named num*, ord*, lab* hold numbers, levels and labels; others
// hold junk that only an unrequested column may hold.
func (g *csvGen) file(header []string, rows int) string {
	r := g.rng
	var b strings.Builder
	if r.IntN(4) == 0 {
		b.Write(utf8BOM)
	}
	eol := func() string {
		if r.IntN(3) == 0 {
			return "\r\n"
		}
		return "\n"
	}
	for i, h := range header {
		if i > 0 {
			b.WriteByte(g.sep)
		}
		b.WriteString(g.field(h))
	}
	b.WriteString(eol())
	for row := range rows {
		if r.IntN(20) == 0 {
			b.WriteString(eol()) // a blank line
		}
		fields := make([]string, len(header))
		for i, h := range header {
			switch {
			case strings.HasPrefix(h, "num"):
				fields[i] = g.number()
			case strings.HasPrefix(h, "ord"):
				fields[i] = g.level()
			case strings.HasPrefix(h, "lab"):
				fields[i] = g.label()
			default:
				fields[i] = g.field([]string{"x", "1,5", `"q"`, "junk\nline"}[r.IntN(4)])
			}
		}
		if g.bad() {
			switch r.IntN(4) {
			case 0:
				fields = append(fields, "extra")
			case 1:
				fields = fields[:len(fields)-1]
			case 2:
				fields[r.IntN(len(fields))] = `st"ray`
			case 3:
				fields[r.IntN(len(fields))] = `"closed"late`
			}
		}
		b.WriteString(strings.Join(fields, string(g.sep)))
		if row < rows-1 || r.IntN(3) > 0 {
			b.WriteString(eol())
		}
	}
	switch r.IntN(12) {
	case 0:
		b.WriteString("\n\r\n")
	case 1:
		b.WriteString("\r")
	case 2:
		if g.faults {
			b.WriteString(`"never closed`)
		}
	}
	return b.String()
}

// randomSpec asks for a random selection of the header's columns, with a
// Label twin now and then.
func (g *csvGen) spec(path string, format Format, header []string) Spec {
	r := g.rng
	missing := [][]string{nil, {""}, {"NA"}, {"", "NA"}, {"", "NA", "n/a", "?", "-", ".", "NULL", "null", "none", "missing"}}[r.IntN(5)]
	var cols []ColumnSpec
	for _, h := range r.Perm(len(header)) {
		name := header[h]
		if r.IntN(4) == 0 {
			continue
		}
		switch {
		case strings.HasPrefix(name, "num"):
			cols = append(cols, ColumnSpec{Name: name, Kind: Numeric})
		case strings.HasPrefix(name, "ord"):
			cols = append(cols, ColumnSpec{Name: name, Kind: Ordinal, Levels: genLevels})
		case strings.HasPrefix(name, "lab"):
			cols = append(cols, ColumnSpec{Name: name, Kind: Label})
			continue
		default:
			continue
		}
		if r.IntN(4) == 0 {
			cols = append(cols, ColumnSpec{Name: name, Kind: Label})
		}
	}
	return Spec{Path: path, Format: format, Missing: missing, Columns: cols}
}

// sameRead fails the test unless Read and the oracle agree on spec: the
// same table, or the same error.
func sameRead(t *testing.T, spec Spec, what string) {
	t.Helper()
	got, gerr := Read(context.Background(), spec)
	want, werr := readTextArrow(context.Background(), spec, separator(spec.Format))
	if gerr != nil || werr != nil {
		if gerr == nil || werr == nil || gerr.Error() != werr.Error() {
			t.Fatalf("%s:\n got error %v\nwant error %v", what, gerr, werr)
		}
		var gc, wc *CellError
		if errors.As(gerr, &gc) != errors.As(werr, &wc) || (gc != nil && *gc != *wc) {
			t.Fatalf("%s: CellError %+v, want %+v", what, gc, wc)
		}
		return
	}
	if got.Rows != want.Rows || got.SHA256 != want.SHA256 || got.Bytes != want.Bytes || got.Path != want.Path {
		t.Fatalf("%s: rows %d, sha256 %s, bytes %d; want %d, %s, %d", what, got.Rows, got.SHA256, got.Bytes, want.Rows, want.SHA256, want.Bytes)
	}
	for k := range want.Columns {
		g, w := got.Columns[k], want.Columns[k]
		if g.Name != w.Name || g.Kind != w.Kind || !sameFloats(g.Values, w.Values) || (g.Values == nil) != (w.Values == nil) ||
			!slices.Equal(g.Labels, w.Labels) || !slices.Equal(g.Missing, w.Missing) || (g.Labels == nil) != (w.Labels == nil) {
			t.Fatalf("%s: column %d\n got %+v\nwant %+v", what, k, g, w)
		}
		// Repeated labels share one string.
		first := map[string]*byte{}
		for _, l := range g.Labels {
			if l == "" {
				continue
			}
			if p, ok := first[l]; ok && p != unsafe.StringData(l) {
				t.Fatalf("%s: column %q: label %q is stored twice", what, g.Name, l)
			}
			first[l] = unsafe.StringData(l)
		}
	}
}

// TestReadMatchesArrow compares Read with the Arrow-based reader it
// replaced on random files (fixed seed), clean and faulty, CSV and TSV,
// with blocks small enough that records straddle them, and with one and
// several workers.
func TestReadMatchesArrow(t *testing.T) {
	defer func(n, p, o int) { textBlock = n; runtime.GOMAXPROCS(p); oracleBatchRows = o }(textBlock, runtime.GOMAXPROCS(0), oracleBatchRows)
	oracleBatchRows = 64
	rng := rand.New(rand.NewPCG(20261202, 10))
	dir := t.TempDir()
	headers := [][]string{
		{"num"},
		{"num", "ord", "lab"},
		{"lab", "other", "num", "num2", "ord"},
		{"other", "ord", "num", "lab", "num2", "lab2", "ord2"},
	}
	cases := 0
	for _, faults := range []bool{false, true} {
		for _, format := range []Format{CSV, TSV} {
			for i := range 60 {
				g := &csvGen{rng: rng, sep: byte(separator(format)), faults: faults}
				header := headers[i%len(headers)]
				rows := rng.IntN(40)
				if i%15 == 0 {
					rows = 2000
				}
				p := filepath.Join(dir, fmt.Sprintf("f%d.%s", cases, format))
				content := g.file(header, rows)
				if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
					t.Fatal(err)
				}
				for _, block := range []int{1 << 21, 4096, 61, 7, 1} {
					if block == 1 && rows > 100 {
						continue
					}
					textBlock = block
					runtime.GOMAXPROCS(1 + i%3)
					spec := g.spec(p, format, header)
					sameRead(t, spec, fmt.Sprintf("faults %v, %s, file %d, block %d, spec %+v\n%q", faults, format, cases, block, spec, content[:min(len(content), 2000)]))
				}
				cases++
			}
		}
	}
}

// TestReadFixedCases runs the comparison with the oracle on hand-written
// files whose trouble sits at the edges: empty and header-only files, a
// byte order mark alone, blank lines and CRs at the end, quoted header
// names, and broken quoting in the header or the last record.
func TestReadFixedCases(t *testing.T) {
	defer func(n, o int) { textBlock = n; oracleBatchRows = o }(textBlock, oracleBatchRows)
	oracleBatchRows = 64
	files := []string{
		"", "\n", "\r\n", "\xef\xbb\xbf", "\xef\xbb", "x", "x\n", "x\r", "x\r\n\r\n", "\n\nx\n1\n",
		"x,y\n1,2", "x,y\n1,2\r", "x,y\r\n1,2\r\n\r\n", `"x","y"` + "\n1,2\n", `"x""",y` + "\n1,2\n",
		`"x,y` + "\n1,2\n", `x"y,z` + "\n1,2\n", "x,y\n1,\"2\n", "x,y\n1,2\n3\n", "x,y\n1,2,3\n",
		"x,y\n\"1\"\"\",2\n", "x,y\n1,2\n\"3\"x,4\n", "x,y\n1,NA\nNA,\n,\n", "x,y\n1e400,2\n", "x,y\n\"3,5\",2\n",
		"x\n" + strings.Repeat("1\n", 1000) + "oops\n", "x,y\n1,\"a\nb\nc\"\n2,\"d\"\n", "\xef\xbb\xbfx,y\r\n1,2\r\n",
	}
	for i, content := range files {
		p := writeTemp(t, fmt.Sprintf("fixed%d.csv", i), content)
		for _, block := range []int{1 << 21, 5, 1} {
			textBlock = block
			for _, cols := range [][]ColumnSpec{nil, {{Name: "x", Kind: Numeric}}, {{Name: "y", Kind: Label}, {Name: "x", Kind: Numeric}}} {
				spec := Spec{Path: p, Format: CSV, Missing: []string{"NA"}, Columns: cols}
				sameRead(t, spec, fmt.Sprintf("file %q, block %d, columns %v", content, block, cols))
			}
		}
	}
}

// The result does not depend on the number of workers: one read with one
// worker and one with four give identical tables (compared bit for bit).
func TestReadIgnoresWorkerCount(t *testing.T) {
	defer func(n, p int) { textBlock = n; runtime.GOMAXPROCS(p) }(textBlock, runtime.GOMAXPROCS(0))
	textBlock = 1000
	g := &csvGen{rng: rand.New(rand.NewPCG(20261202, 11)), sep: ','}
	header := []string{"num", "ord", "lab", "num2"}
	p := writeTemp(t, "w.csv", g.file(header, 5000))
	spec := g.spec(p, CSV, header)
	spec.Missing = []string{"", "NA", "n/a", "?"}
	var tabs []*Table
	for _, procs := range []int{1, 4} {
		runtime.GOMAXPROCS(procs)
		tabs = append(tabs, mustRead(t, spec))
	}
	if tabs[0].Rows != tabs[1].Rows || tabs[0].SHA256 != tabs[1].SHA256 {
		t.Fatal("tables differ")
	}
	for k := range tabs[0].Columns {
		a, b := tabs[0].Columns[k], tabs[1].Columns[k]
		if len(a.Values) != len(b.Values) || !slices.Equal(a.Labels, b.Labels) || !slices.Equal(a.Missing, b.Missing) {
			t.Fatalf("column %d differs", k)
		}
		for i := range a.Values {
			if math.Float64bits(a.Values[i]) != math.Float64bits(b.Values[i]) {
				t.Fatalf("column %d, row %d: %v and %v", k, i+1, a.Values[i], b.Values[i])
			}
		}
	}
}

// cancelAfter is a context whose Err reports cancellation from its n-th
// call on, so that a read is cancelled midway without timing.
type cancelAfter struct {
	context.Context
	calls, n atomic.Int32
}

func (c *cancelAfter) Err() error {
	if c.calls.Add(1) >= c.n.Load() {
		return context.Canceled
	}
	return nil
}

// A read cancelled midway, whichever goroutine notices, fails with
// context.Canceled and leaves no goroutine behind.
func TestReadCancelledMidway(t *testing.T) {
	defer func(n int) { textBlock = n }(textBlock)
	textBlock = 64
	p := writeTemp(t, "long.csv", "x,y\n"+strings.Repeat("1.5,2\n", 2000))
	before := runtime.NumGoroutine()
	for n := int32(2); n < 12; n++ {
		ctx := &cancelAfter{Context: context.Background()}
		ctx.n.Store(n)
		_, err := Read(ctx, Spec{Path: p, Format: CSV, Columns: []ColumnSpec{{Name: "x", Kind: Numeric}}})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("cancelled at call %d: err = %v, want context.Canceled", n, err)
		}
	}
	for range 100 {
		if runtime.NumGoroutine() <= before {
			return
		}
		time.Sleep(10 * time.Millisecond)
	}
	t.Errorf("%d goroutines left, %d before", runtime.NumGoroutine(), before)
}
