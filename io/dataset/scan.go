package dataset

import (
	"bytes"
	"encoding/binary"
	"math/bits"
)

// recordScanner splits CSV or TSV text into records and fields by the rules
// of encoding/csv's Reader with Comma set to the separator, no comment
// character, LazyQuotes and TrimLeadingSpace off — the reader that the
// previous Arrow-based path used underneath:
//
//   - a record ends at a line feed outside quotes; a carriage return
//     before that line feed is dropped, and so is one at the very end of
//     the file;
//   - lines that are empty (after that) are skipped between records;
//   - a field that starts with a quote is quoted: it ends at the next lone
//     quote, which must be followed by the separator or the end of the
//     line; inside it the separator and line feeds are text, a doubled
//     quote stands for one quote, and CRLF stands for LF;
//   - a quote anywhere in an unquoted field, a closing quote followed by
//     anything else, and a quoted field still open at the end of the file
//     are errors (encoding/csv's ErrBareQuote and ErrQuote).
//
// It exists because reading is the slowest step of a run from a CSV file
// and the Arrow-based ways to read one were measured too slow. Arrow's CSV
// reader is built on encoding/csv and hands every cell over as a string.
// One Arrow reader per chunk of the file on both cores, the approach tried
// first (BenchmarkReadCSVArrowChunks), read 10⁷ rows of two full-precision
// float columns in 3.5 s, allocating 2 GB (1 GB peak heap). Read with this
// scanner took 2.5 s (1.4× faster), allocating 200 MB (190–205 MB peak
// heap, 160 MB of it the columns). On its own the scanner splits the text
// 2.5× faster than encoding/csv (BenchmarkScanRecords), but
// strconv.ParseFloat, which still parses every number (~68 ns each on that
// machine), is over half of Read's CPU time and the SHA-256 of the bytes
// another tenth. (Measured on the shared 2-core development machine, on
// which a second core added at most ~1.3× throughput.) The tests compare
// the scanner, and the whole reader, with encoding/csv and with the
// Arrow-based reader on random files (TestScannerMatchesEncodingCSV,
// TestReadMatchesArrow, FuzzReadCSV).
//
// A scanner only reports that a record's quoting is broken; the reader
// describes the error by reading that record again with encoding/csv, so
// that messages give encoding/csv's lines and columns.
type recordScanner struct {
	sep     byte
	stop    [256]bool // bytes that end an unquoted field: the separator, LF and the quote
	fields  []fieldSpan
	scratch []byte // quoted fields of the current record that had to be unescaped
}

// fieldSpan locates one field of the current record: data[lo:hi] of the
// scanned text, or scratch[lo:hi] when the field was unescaped.
type fieldSpan struct {
	lo, hi  int
	scratch bool
}

// scanResult says what recordScanner.next found.
type scanResult int

const (
	scanRecord scanResult = iota // a record; its fields are in the scanner
	scanEnd                      // no record before the end of the text
	scanMore                     // the text ends inside a record (or its line end) and is not the end of the file
	scanBad                      // the record's quoting is broken
)

func newRecordScanner(sep byte) *recordScanner {
	s := &recordScanner{sep: sep}
	s.stop[sep] = true
	s.stop['\n'] = true
	s.stop['"'] = true
	return s
}

// next skips blank lines from data[pos:] and reads the record that follows.
// eof says that data ends where the file ends. It returns what it found,
// the offset where the record starts (after any blank lines) and, for
// scanRecord, the offset just past the record's line feed (or len(data)).
// Each call costs O(length of the record and the blank lines before it).
func (s *recordScanner) next(data []byte, pos int, eof bool) (res scanResult, start, end int) {
	n := len(data)
blank:
	for pos < n {
		switch c := data[pos]; {
		case c == '\n':
			pos++
		case c == '\r' && pos+1 < n && data[pos+1] == '\n':
			pos += 2
		case c == '\r' && pos+1 == n:
			if !eof {
				return scanMore, pos, pos
			}
			return scanEnd, n, n // a lone CR at the end of the file is dropped
		default:
			break blank
		}
	}
	if pos == n {
		if !eof {
			return scanMore, pos, pos
		}
		return scanEnd, n, n
	}
	start = pos
	s.fields = s.fields[:0]
	s.scratch = s.scratch[:0]
	for {
		if pos < n && data[pos] == '"' {
			lo := pos + 1
			q := lo
			esc := false // the field holds doubled quotes
			for {
				k := bytes.IndexByte(data[q:], '"')
				if k < 0 {
					if !eof {
						return scanMore, start, start
					}
					return scanBad, start, start // never closed
				}
				q += k
				if q+1 == n {
					if !eof {
						return scanMore, start, start
					}
					s.addQuoted(data, lo, q, esc)
					return scanRecord, start, n
				}
				c := data[q+1]
				if c == '"' {
					esc = true
					q += 2
					continue
				}
				if c == s.sep {
					s.addQuoted(data, lo, q, esc)
					pos = q + 2
					break
				}
				switch {
				case c == '\n':
					s.addQuoted(data, lo, q, esc)
					return scanRecord, start, q + 2
				case c == '\r' && q+2 < n && data[q+2] == '\n':
					s.addQuoted(data, lo, q, esc)
					return scanRecord, start, q + 3
				case c == '\r' && q+2 == n:
					if !eof {
						return scanMore, start, start
					}
					s.addQuoted(data, lo, q, esc) // the CR at the end of the file is dropped
					return scanRecord, start, n
				}
				return scanBad, start, start // a closing quote followed by other text
			}
			continue
		}
		i := s.unquotedEnd(data, pos)
		if i == n {
			if !eof {
				return scanMore, start, start
			}
			s.fields = append(s.fields, fieldSpan{lo: pos, hi: trimCR(data, pos, n)})
			return scanRecord, start, n
		}
		switch data[i] {
		case s.sep:
			s.fields = append(s.fields, fieldSpan{lo: pos, hi: i})
			pos = i + 1
		case '\n':
			s.fields = append(s.fields, fieldSpan{lo: pos, hi: trimCR(data, pos, i)})
			return scanRecord, start, i + 1
		default:
			return scanBad, start, start // a quote in an unquoted field
		}
	}
}

// unquotedEnd returns the index of the first separator, line feed or quote
// in data[i:], or len(data). It tests eight bytes at a time: a byte of w
// equals b exactly when the same byte of w^(b·0x01…01) is zero, and
// (x−0x01…01) &^ x & 0x80…80 marks the lowest zero byte of x exactly
// (higher marks may be false, but only the lowest is used). Fields of
// numbers are 10 to 20 bytes long, so this halves the time of the byte
// loop it replaces.
func (s *recordScanner) unquotedEnd(data []byte, i int) int {
	const ones, highs = 0x0101010101010101, 0x8080808080808080
	sep := uint64(s.sep) * ones
	for ; i+8 <= len(data); i += 8 {
		w := binary.LittleEndian.Uint64(data[i:])
		x, y, z := w^sep, w^('\n'*ones), w^('"'*ones)
		if m := ((x - ones) &^ x) | ((y - ones) &^ y) | ((z - ones) &^ z); m&highs != 0 {
			return i + bits.TrailingZeros64(m&highs)>>3
		}
	}
	for i < len(data) && !s.stop[data[i]] {
		i++
	}
	return i
}

// trimCR returns hi, less one when data[lo:hi] ends with a carriage return.
func trimCR(data []byte, lo, hi int) int {
	if hi > lo && data[hi-1] == '\r' {
		return hi - 1
	}
	return hi
}

// addQuoted adds the quoted field whose text (between the quotes) is
// data[lo:hi], unescaping it into the scratch buffer when it holds doubled
// quotes or CRLF.
func (s *recordScanner) addQuoted(data []byte, lo, hi int, esc bool) {
	f := data[lo:hi]
	if !esc && bytes.IndexByte(f, '\r') < 0 {
		s.fields = append(s.fields, fieldSpan{lo: lo, hi: hi})
		return
	}
	from := len(s.scratch)
	for i := 0; i < len(f); i++ {
		switch {
		case f[i] == '"':
			i++ // the first of a doubled quote: keep the second
		case f[i] == '\r' && i+1 < len(f) && f[i+1] == '\n':
			continue
		}
		s.scratch = append(s.scratch, f[i])
	}
	s.fields = append(s.fields, fieldSpan{lo: from, hi: len(s.scratch), scratch: true})
}

// field returns field i of the current record, which was scanned from data.
// The bytes are valid until the next call of next.
func (s *recordScanner) field(data []byte, i int) []byte {
	f := s.fields[i]
	if f.scratch {
		return s.scratch[f.lo:f.hi]
	}
	return data[f.lo:f.hi]
}

// lastBoundary returns the offset just past the last line feed of
// b[from:] that lies outside quotes, or -1 when there is none. parity is
// the parity of the number of quotes in the text before b[from:] (counted
// from the first data row); it is updated to the parity at the end of b.
//
// In well-formed text a line feed is outside quotes exactly when the
// number of quotes before it is even (a doubled quote counts twice), so
// the offset returned starts a record. In broken text the count can be
// wrong only after the first quoting error, which the record scanner meets
// before any record that the wrong count would misplace; and a wrong count
// that never finds a boundary only makes one chunk larger.
func lastBoundary(b []byte, from int, parity *int) int {
	q := bytes.Count(b[from:], quote)
	*parity ^= q & 1
	if q == 0 {
		if *parity == 1 {
			return -1 // the whole block is inside a quoted field
		}
		if i := bytes.LastIndexByte(b[from:], '\n'); i >= 0 {
			return from + i + 1
		}
		return -1
	}
	p := *parity
	for i := len(b) - 1; i >= from; i-- {
		switch b[i] {
		case '"':
			p ^= 1
		case '\n':
			if p == 0 {
				return i + 1
			}
		}
	}
	return -1
}

var quote = []byte{'"'}
