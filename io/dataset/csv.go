package dataset

import (
	"bufio"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"runtime"
	"sync"

	"concordat/engine/bigmem"
)

// textBlock is the number of bytes a text file is read in. Each block, less
// the partial record at its end (carried into the next), is one chunk of
// work. Tests lower it so that records straddle blocks.
var textBlock = 1 << 21

// utf8BOM is the byte order mark that some programs write at the start of a
// UTF-8 text file.
var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// skipBOM drops a UTF-8 byte order mark at the start of br.
func skipBOM(br *bufio.Reader) {
	if b, err := br.Peek(len(utf8BOM)); err == nil && bytes.Equal(b, utf8BOM) {
		_, _ = br.Discard(len(utf8BOM))
	}
}

// separator returns the field separator of a text format.
func separator(f Format) rune {
	if f == TSV {
		return '\t'
	}
	return ','
}

// textHeader reads the first record of a CSV or TSV file.
func textHeader(path string, comma rune) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", path, err)
	}
	defer f.Close()
	br := bufio.NewReader(f)
	skipBOM(br)
	return headerRecord(br, path, comma)
}

// headerRecord reads the first record of text that follows any byte order
// mark, with encoding/csv.
func headerRecord(r io.Reader, path string, comma rune) ([]string, error) {
	cr := csv.NewReader(r)
	cr.Comma = comma
	cr.FieldsPerRecord = -1
	rec, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("read dataset %q: the file is empty; its first line must name the columns", path)
	}
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: header line: %w", path, err)
	}
	return rec, nil
}

// readText reads a CSV or TSV file: it reads the header, then GOMAXPROCS
// workers (at most 8) take turns to read the file in blocks, hash them and
// cut them into chunks of whole records, parse the chunks in parallel
// (fields with recordScanner, numbers with strconv.ParseFloat), and append
// the chunks' columns in file order (see run). The result does not depend
// on the number of workers or on the block size. The work is O(bytes), and
// each byte is read from the file once.
//
// Memory: the columns asked for (grown to an estimate of the row count, so
// usually once), plus a bounded number of chunks in flight, each one block
// of text and its parsed columns. A record longer than a block makes its
// chunk longer, up to the whole file for a quoted field never closed.
//
// The first problem in file order is reported: a record with broken
// quoting or the wrong number of fields, or else the first cell that cannot
// be read (the first requested column within a row).
func readText(ctx context.Context, spec Spec, comma rune) (*Table, error) {
	f, err := os.Open(spec.Path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", spec.Path, err)
	}
	rd := &textReader{
		path: spec.Path, comma: comma, f: f, size: st.Size(),
		hash: sha256.New(),
	}
	header, rest, err := rd.readHeader()
	if err != nil {
		return nil, err
	}
	idx, err := findColumns(spec.Path, header, spec.Columns)
	if err != nil {
		return nil, err
	}
	p := newTextParser(comma, len(header), spec, idx)
	t := &Table{Path: spec.Path, Columns: make([]Column, len(spec.Columns))}
	for i, c := range spec.Columns {
		t.Columns[i] = Column{Name: c.Name, Kind: c.Kind}
	}
	if err := rd.run(ctx, p, rest, t); err != nil {
		return nil, err
	}
	return t, nil
}

// textReader holds the state of one read of a text file.
type textReader struct {
	path  string
	comma rune
	f     *os.File
	size  int64

	hash  hash.Hash // of every byte read so far
	bytes int64     // bytes read so far

	dataStart int64 // file offset of the first byte after the header record
	lineBase  int   // line feeds before dataStart
}

// read reads up to textBlock more bytes of the file onto buf, hashing them.
// eof reports that the file has ended.
func (rd *textReader) read(buf []byte) (_ []byte, eof bool, err error) {
	// Ask for one byte more than the file should still hold, to meet its
	// end without another call.
	want := textBlock
	if rem := rd.size - rd.bytes; rem >= 0 && rem < int64(textBlock) {
		want = int(rem) + 1
	}
	if cap(buf)-len(buf) < want {
		nb := make([]byte, len(buf), max(len(buf)+want, min(2*cap(buf), len(buf)+2*textBlock)))
		copy(nb, buf)
		buf = nb
	}
	n, err := io.ReadFull(rd.f, buf[len(buf):len(buf)+want])
	rd.hash.Write(buf[len(buf) : len(buf)+n])
	rd.bytes += int64(n)
	buf = buf[:len(buf)+n]
	if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
		return buf, true, nil
	}
	if err != nil {
		return buf, false, fmt.Errorf("read dataset %q: %w", rd.path, err)
	}
	return buf, false, nil
}

// readHeader reads blocks until the header record is complete and returns
// its fields and the bytes read after it.
func (rd *textReader) readHeader() (header []string, rest []byte, err error) {
	sc := newRecordScanner(byte(rd.comma))
	var buf []byte
	bom := -1
	for {
		var eof bool
		if buf, eof, err = rd.read(buf); err != nil {
			return nil, nil, err
		}
		if bom < 0 && (len(buf) >= len(utf8BOM) || eof) {
			bom = 0
			if bytes.HasPrefix(buf, utf8BOM) {
				bom = len(utf8BOM)
			}
		}
		if bom < 0 {
			continue
		}
		res, _, end := sc.next(buf, bom, eof)
		switch res {
		case scanMore:
			if eof {
				panic("dataset: the record scanner asks for more at the end of the file")
			}
			continue
		case scanEnd:
			return nil, nil, fmt.Errorf("read dataset %q: the file is empty; its first line must name the columns", rd.path)
		case scanBad:
			// Let encoding/csv describe the problem, as Header does.
			if _, err := headerRecord(bytes.NewReader(buf[bom:]), rd.path, rd.comma); err != nil {
				return nil, nil, err
			}
			return nil, nil, fmt.Errorf("read dataset %q: header line cannot be parsed", rd.path)
		}
		header = make([]string, len(sc.fields))
		for i := range header {
			header[i] = string(sc.field(buf, i))
		}
		rd.dataStart = int64(end)
		rd.lineBase = bytes.Count(buf[:end], newline)
		return header, buf[end:], nil
	}
}

var newline = []byte{'\n'}

// textChunk is one unit of work: whole records of the file, and what a
// worker made of them.
type textChunk struct {
	seq  int
	buf  []byte // the chunk's own buffer, reused
	data []byte // whole records: a prefix of buf
	off  int64  // file offset of data[0]
	last bool   // data runs to the end of the file
	err  error  // the reader failed or was cancelled instead

	// Filled by a worker.
	rows  int
	lines int // line feeds in data
	cols  []chunkColumn
	fail  *rowFailure

	// Set on the last chunk: the file's hash and size.
	sum  string
	size int64
}

// chunkColumn holds one requested column's values for one chunk.
type chunkColumn struct {
	values []float64 // Numeric and Ordinal
	codes  []int32   // Label: index into dict, or -1 when missing
	dict   []string  // Label: the chunk's distinct labels, in order of appearance
	index  map[string]int32
}

// rowFailure is the first problem a worker met in its chunk.
type rowFailure struct {
	row     int // 0-based within the chunk
	at      int // offset of the record within the chunk's data
	column  int // requested column, or -1 when the record itself is broken
	value   string
	problem *cellProblem
}

// textParser turns chunks of records into columns. It is shared by the
// workers and read-only; each worker has its own recordScanner.
type textParser struct {
	sep     byte
	nfields int
	cols    []textColumn
	missing []string        // few missing tokens: compared one by one
	missSet map[string]bool // many
}

// textColumn says how to read one requested column.
type textColumn struct {
	field  int // index of the field in a record
	kind   Kind
	levels map[string]float64 // Ordinal
	spec   ColumnSpec
}

func newTextParser(comma rune, nfields int, spec Spec, idx []int) *textParser {
	p := &textParser{sep: byte(comma), nfields: nfields, cols: make([]textColumn, len(spec.Columns))}
	if len(spec.Missing) > 8 {
		p.missSet = make(map[string]bool, len(spec.Missing))
		for _, m := range spec.Missing {
			p.missSet[m] = true
		}
	} else {
		p.missing = spec.Missing
	}
	for k, cs := range spec.Columns {
		c := textColumn{field: idx[k], kind: cs.Kind, spec: cs}
		if cs.Kind == Ordinal {
			c.levels = make(map[string]float64, len(cs.Levels))
			for i, l := range cs.Levels {
				c.levels[l] = float64(i + 1)
			}
		}
		p.cols[k] = c
	}
	return p
}

// isMissing reports whether a cell is one of the missing tokens.
func (p *textParser) isMissing(cell []byte) bool {
	if p.missSet != nil {
		return p.missSet[string(cell)]
	}
	for _, m := range p.missing {
		if string(cell) == m {
			return true
		}
	}
	return false
}

// parse reads chunk c's records into its columns, stopping at the first
// problem. It allocates only for a Label column's new labels (and for the
// columns' buffers while they grow to a chunk's size).
func (p *textParser) parse(sc *recordScanner, c *textChunk) {
	if len(c.cols) != len(p.cols) {
		c.cols = make([]chunkColumn, len(p.cols))
	}
	for k := range c.cols {
		cc := &c.cols[k]
		cc.values, cc.codes, cc.dict = cc.values[:0], cc.codes[:0], cc.dict[:0]
		if p.cols[k].kind == Label {
			if cc.index == nil {
				cc.index = make(map[string]int32)
			}
			clear(cc.index)
		}
	}
	c.rows, c.fail = 0, nil
	c.lines = bytes.Count(c.data, newline)
	data := c.data
	pos := 0
	for {
		res, start, end := sc.next(data, pos, true)
		if res == scanEnd {
			return
		}
		if res != scanRecord || len(sc.fields) != p.nfields {
			c.fail = &rowFailure{row: c.rows, at: start, column: -1}
			return
		}
		for k := range p.cols {
			if prob := p.cell(&c.cols[k], &p.cols[k], sc.field(data, p.cols[k].field)); prob != nil {
				cell := sc.field(data, p.cols[k].field)
				c.fail = &rowFailure{row: c.rows, at: start, column: k, value: string(cell), problem: prob}
				return
			}
		}
		c.rows++
		pos = end
	}
}

// cell stores one cell in cc; a non-nil cellProblem says why it cannot be
// read. The value rules are those of sink.add.
func (p *textParser) cell(cc *chunkColumn, col *textColumn, cell []byte) *cellProblem {
	if p.isMissing(cell) {
		if col.kind == Label {
			cc.codes = append(cc.codes, -1)
		} else {
			cc.values = append(cc.values, nan)
		}
		return nil
	}
	switch col.kind {
	case Numeric:
		v, prob := parseNumber(string(cell))
		if prob != nil {
			return prob
		}
		cc.values = append(cc.values, v)
	case Ordinal:
		v, ok := col.levels[string(cell)]
		if !ok {
			return levelProblem(string(cell), col.spec.Levels)
		}
		cc.values = append(cc.values, v)
	case Label:
		code, ok := cc.index[string(cell)]
		if !ok {
			if p := labelProblem(string(cell)); p != nil { // table.go
				return p
			}
			l := string(cell)
			code = int32(len(cc.dict))
			cc.dict = append(cc.dict, l)
			cc.index[l] = code
		}
		cc.codes = append(cc.codes, code)
	}
	return nil
}

// run reads the data records that follow the header (rest holds the bytes
// already read after it) into t's columns, and sets t's rows and hash.
//
// The workers share the work without handing it to each other: each one
// in turn takes a free chunk, reads the next block into it under readMu
// (reading, hashing and cutting are sequential by nature, and quick),
// parses it on its own, and delivers it under asmMu, where whichever worker
// completes the next chunk in file order appends it and any that were
// waiting behind it. No goroutine waits for another to pass it work, which
// keeps a read going when the machine's cores are busy with other
// programs (a pipeline of reader, workers and assembler goroutines, tried
// first, took 1.2–1.3× as long on the busy development machine).
func (rd *textReader) run(ctx context.Context, p *textParser, rest []byte, t *Table) error {
	// Beyond about eight workers the reading and hashing of every byte
	// (SHA-256 at ~1 GB/s) would hold them back, and the chunks in flight
	// would only cost memory.
	workers := min(runtime.GOMAXPROCS(0), 8)
	r := &textRun{
		rd: rd, p: p, ctx: ctx,
		carry: bytes.Clone(rest), off: rd.dataStart, unscanned: true,
		asm: newAssembler(t, rd.size-rd.dataStart), lines: rd.lineBase,
		pending: make(map[int]*textChunk),
	}
	r.cond = sync.NewCond(&r.asmMu)
	for range 2*workers + 2 {
		r.free = append(r.free, &textChunk{})
	}
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			r.work()
		}()
	}
	r.work()
	wg.Wait()
	if r.err != nil {
		return r.err
	}
	t.SHA256, t.Bytes = r.sum, r.size
	return nil
}

// textRun is the state that the workers of one read share.
type textRun struct {
	rd  *textReader
	p   *textParser
	ctx context.Context

	// Reading, under readMu.
	readMu    sync.Mutex
	carry     []byte // the partial record after the last chunk cut
	off       int64  // file offset of carry[0]
	parity    int    // of the quotes since the first data row
	seq       int    // the next chunk's number
	unscanned bool   // carry (the rest of the header block) has not been scanned for boundaries
	finished  bool   // the last chunk, or a failure, has been handed out

	// Delivering, under asmMu; cond signals a chunk set free or the end.
	asmMu   sync.Mutex
	cond    *sync.Cond
	free    []*textChunk
	pending map[int]*textChunk // parsed chunks waiting for earlier ones
	next    int                // the number of the next chunk to append
	asm     *assembler
	lines   int   // line feeds before chunk next
	done    bool  // the last chunk is appended, or the read failed
	err     error // why the read failed
	sum     string
	size    int64
}

// work reads, parses and delivers chunks until there are none left.
func (r *textRun) work() {
	sc := newRecordScanner(r.p.sep)
	for {
		c := r.take()
		if c == nil || !r.fill(c) {
			if c != nil {
				r.asmMu.Lock()
				r.free = append(r.free, c)
				r.asmMu.Unlock()
			}
			return
		}
		if c.err == nil {
			r.p.parse(sc, c)
		}
		r.deliver(c)
	}
}

// take returns a free chunk, waiting for one if need be, or nil when the
// read is over.
func (r *textRun) take() *textChunk {
	r.asmMu.Lock()
	defer r.asmMu.Unlock()
	for len(r.free) == 0 && !r.done {
		r.cond.Wait()
	}
	if r.done {
		return nil
	}
	c := r.free[len(r.free)-1]
	r.free = r.free[:len(r.free)-1]
	return c
}

// fill reads the next chunk of whole records into c and numbers it. It
// returns false when every chunk has been handed out. A failure to read, or
// a cancelled ctx, is handed out as a chunk whose err is set.
func (r *textRun) fill(c *textChunk) bool {
	r.readMu.Lock()
	defer r.readMu.Unlock()
	if r.finished {
		return false
	}
	c.seq, c.err, c.last, c.fail, c.rows = r.seq, nil, false, nil, 0
	r.seq++
	if err := r.ctx.Err(); err != nil {
		c.err = fmt.Errorf("read dataset %q: %w", r.rd.path, err)
		r.finished = true
		return true
	}
	buf := append(c.buf[:0], r.carry...)
	from, cut, eof := len(buf), -1, false
	if r.unscanned {
		cut = lastBoundary(buf, 0, &r.parity)
		r.unscanned = false
	}
	for cut < 0 && !eof {
		var err error
		if buf, eof, err = r.rd.read(buf); err != nil {
			c.buf, c.err = buf, err
			r.finished = true
			return true
		}
		cut = lastBoundary(buf, from, &r.parity)
		from = len(buf)
	}
	if eof {
		cut = len(buf)
		c.sum, c.size = hex.EncodeToString(r.rd.hash.Sum(nil)), r.rd.bytes
		r.finished = true
	}
	c.buf, c.data, c.off, c.last = buf, buf[:cut], r.off, eof
	r.carry = append(r.carry[:0], buf[cut:]...)
	r.off += int64(cut)
	return true
}

// deliver hands in parsed chunk c and appends, in file order, every chunk
// whose turn has come. The first failure in file order ends the read.
func (r *textRun) deliver(c *textChunk) {
	r.asmMu.Lock()
	defer r.asmMu.Unlock()
	r.pending[c.seq] = c
	for {
		d, ok := r.pending[r.next]
		if !ok {
			break
		}
		delete(r.pending, r.next)
		r.next++
		switch {
		case r.done:
		case d.err != nil:
			r.err, r.done = d.err, true
		case r.ctx.Err() != nil:
			r.err, r.done = fmt.Errorf("read dataset %q: %w", r.rd.path, r.ctx.Err()), true
		case d.fail != nil:
			r.err, r.done = r.rd.failure(d, r.asm.t.Rows, r.lines, r.p), true
		default:
			r.asm.add(d)
			r.lines += d.lines
			if d.last {
				r.sum, r.size, r.done = d.sum, d.size, true
			}
		}
		r.free = append(r.free, d)
	}
	r.cond.Broadcast()
}

// failure turns the first problem found, in chunk c, into an error. rows
// and lines count the data rows and the line feeds before the chunk.
func (rd *textReader) failure(c *textChunk, rows, lines int, p *textParser) error {
	fl := c.fail
	row := rows + fl.row + 1
	line := lines + bytes.Count(c.data[:fl.at], newline) + 1
	if fl.column < 0 {
		return recordError(rd.path, rd.comma, c.off+int64(fl.at), row, line, p.nfields)
	}
	return &CellError{
		Path: rd.path, Row: row, Line: line,
		Column: p.cols[fl.column].spec.Name, Value: fl.value,
		Reason: fl.problem.reason, Hint: fl.problem.hint,
	}
}

// recordError describes the broken record that starts at byte off of the
// file, data row row and file line line, by reading it again with
// encoding/csv from there, so that the message gives encoding/csv's lines
// and columns.
func recordError(path string, comma rune, off int64, row, line, headerFields int) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("read dataset %q: %w", path, err)
	}
	defer f.Close()
	r := csv.NewReader(bufio.NewReader(io.NewSectionReader(f, off, math.MaxInt64-off)))
	r.Comma = comma
	r.FieldsPerRecord = headerFields
	rec, err := r.Read()
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		// encoding/csv reads the record now: the file has changed.
		return fmt.Errorf("read dataset %q: row %d (line %d) cannot be read; was the file changed while it was read?", path, row, line)
	}
	pe.StartLine += line - 1
	pe.Line += line - 1
	return rowError(path, comma, row, headerFields, len(rec), pe)
}

// assembler appends the chunks' columns to the table in file order.
type assembler struct {
	t      *Table
	size   int64 // bytes of data after the header
	seen   int64 // bytes of data assembled so far
	intern []map[string]string
	labels []string // scratch: a chunk's labels as interned strings
}

func newAssembler(t *Table, size int64) *assembler {
	a := &assembler{t: t, size: size, intern: make([]map[string]string, len(t.Columns))}
	for k, c := range t.Columns {
		if c.Kind == Label {
			a.intern[k] = make(map[string]string)
		}
	}
	return a
}

// add appends chunk c's rows. When a column must grow, it grows to the row
// count that the bytes read so far predict for the whole file, plus 5%, so
// that a column usually grows once.
func (a *assembler) add(c *textChunk) {
	a.seen += int64(len(c.data))
	n := c.rows
	est := 0
	if a.seen > 0 {
		est = int(float64(a.t.Rows+n) * float64(a.size) / float64(a.seen) * 1.05)
	}
	if a.t.Rows == 0 && est > n {
		a.numberBlock(est)
	}
	for k := range a.t.Columns {
		col, cc := &a.t.Columns[k], &c.cols[k]
		if col.Kind != Label {
			col.Values = append(room(col.Values, n, est), cc.values...)
			continue
		}
		a.labels = a.labels[:0]
		for _, l := range cc.dict {
			s, ok := a.intern[k][l]
			if !ok {
				s = l
				a.intern[k][s] = s
			}
			a.labels = append(a.labels, s)
		}
		col.Labels = room(col.Labels, n, est)
		col.Missing = room(col.Missing, n, est)
		for _, code := range cc.codes {
			if code < 0 {
				col.Labels = append(col.Labels, "")
				col.Missing = append(col.Missing, true)
				continue
			}
			col.Labels = append(col.Labels, a.labels[code])
			col.Missing = append(col.Missing, false)
		}
	}
	a.t.Rows += n
}

// numberBlock gives every number column room for rows values in one block
// of memory, which can be mapped in huge pages (engine/bigmem): a table of
// a thousand columns would otherwise fault in a thousand small arrays.
func (a *assembler) numberBlock(rows int) {
	cols := 0
	for _, col := range a.t.Columns {
		if col.Kind != Label {
			cols++
		}
	}
	if cols < 2 {
		return
	}
	block := bigmem.Make[float64](0, rows*cols)
	j := 0
	for k := range a.t.Columns {
		if col := &a.t.Columns[k]; col.Kind != Label {
			col.Values = block[j*rows : j*rows : (j+1)*rows]
			j++
		}
	}
}

// room returns s with room for n more elements. When it must grow, it grows
// to est elements, or by at least an eighth, and never less than needed.
func room[T any](s []T, n, est int) []T {
	if cap(s)-len(s) >= n {
		return s
	}
	c := max(len(s)+n, est, len(s)+len(s)/8)
	t := bigmem.Make[T](len(s), c)
	copy(t, s)
	return t
}

// rowError turns encoding/csv's error about data row row, a record of
// recFields fields, into a *CellError about the row's shape or quoting.
func rowError(path string, comma rune, row, headerFields, recFields int, pe *csv.ParseError) error {
	e := &CellError{Path: path, Row: row, Line: pe.StartLine}
	switch {
	case errors.Is(pe.Err, csv.ErrFieldCount):
		e.Reason = fmt.Sprintf("has %s but the header has %d", fieldCount(recFields), headerFields)
		if recFields > headerFields && comma == ',' {
			e.Hint = "a field holding a comma must be quoted"
		}
	case errors.Is(pe.Err, csv.ErrBareQuote):
		e.Reason = fmt.Sprintf("has a stray quote (line %d, column %d)", pe.Line, pe.Column)
		e.Hint = `a field that holds a quote must be quoted as a whole, with the inner quote doubled: "say ""hi"""`
	case errors.Is(pe.Err, csv.ErrQuote):
		e.Reason = fmt.Sprintf("has a quoted field that is badly closed or never closed (line %d, column %d)", pe.Line, pe.Column)
		e.Hint = "a quoted field ends with a quote followed by the separator or the end of the line"
	default:
		e.Reason = fmt.Sprintf("cannot be parsed: %v", pe.Err)
	}
	return e
}

// fieldCount says "1 field" or "n fields".
func fieldCount(n int) string {
	if n == 1 {
		return "1 field"
	}
	return fmt.Sprintf("%d fields", n)
}
