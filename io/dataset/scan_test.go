package dataset

import (
	"encoding/csv"
	"errors"
	"io"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// scanAll reads every record of text with a recordScanner. bad reports
// that it stopped at a record with broken quoting.
func scanAll(text string, sep byte) (recs [][]string, bad bool) {
	sc := newRecordScanner(sep)
	data := []byte(text)
	pos := 0
	for {
		res, _, end := sc.next(data, pos, true)
		switch res {
		case scanEnd:
			return recs, false
		case scanBad:
			return recs, true
		case scanMore:
			panic("scanMore at the end of the file")
		}
		rec := make([]string, len(sc.fields))
		for i := range rec {
			rec[i] = string(sc.field(data, i))
		}
		recs = append(recs, rec)
		pos = end
	}
}

// csvAll reads every record of text with encoding/csv, as the reader used to
// (no field count check here). err is the first error other than io.EOF.
func csvAll(text string, sep byte) (recs [][]string, err error) {
	r := csv.NewReader(strings.NewReader(text))
	r.Comma = rune(sep)
	r.FieldsPerRecord = -1
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			return recs, nil
		}
		if err != nil {
			return recs, err
		}
		recs = append(recs, rec)
	}
}

// randomText draws n pieces from an alphabet rich in the characters that
// matter to CSV: separators, quotes, CR and LF in every combination.
func randomText(rng *rand.Rand, n int) string {
	pieces := []string{"a", "7", "2.5", ",", ",", "\t", `"`, `"`, `""`, "\n", "\n", "\r", "\r\n", " ", "é", "NA", "12.345678901234567", "abcdefg"}
	var b strings.Builder
	for range n {
		b.WriteString(pieces[rng.IntN(len(pieces))])
	}
	return b.String()
}

// The scanner must split every text into the records and fields that
// encoding/csv finds (with Comma set, LazyQuotes off), and stop where
// encoding/csv reports a quoting error. Fixed seed; 40 000 texts of up to 40
// pieces, for both separators.
func TestScannerMatchesEncodingCSV(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 7))
	fixed := []string{
		"", "\n", "\r", "\r\n", "\r\r", "\r\r\n", "a\r", "a,\r", "a\r\r\n", `"a"` + "\r", `"a"` + "\r\n", `"a"` + "\rb",
		`"a""b",c`, `"a` + "\r\n" + `b"`, `"unterminated`, `a"b`, `"a"b`, `"a",`, "a,b,\n", ",\n,", "\n\na\n\n",
	}
	texts := slices.Clone(fixed)
	for range 40_000 {
		texts = append(texts, randomText(rng, rng.IntN(40)))
	}
	for _, text := range texts {
		for _, sep := range []byte{',', '\t'} {
			want, werr := csvAll(text, sep)
			got, bad := scanAll(text, sep)
			if bad != (werr != nil) || !slices.EqualFunc(got, want, slices.Equal) {
				t.Fatalf("sep %q, text %q:\nscanner %q (bad %v)\nencoding/csv %q (err %v)", sep, text, got, bad, want, werr)
			}
		}
	}
}

// Fed a growing prefix of a text (eof false), the scanner either asks for
// more or returns what the whole text gives for its first record: the
// header is read that way.
func TestScannerPrefixes(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 8))
	for range 5_000 {
		text := randomText(rng, rng.IntN(30))
		whole := newRecordScanner(',')
		wres, _, wend := whole.next([]byte(text), 0, true)
		var wrec []string
		for i := range whole.fields {
			wrec = append(wrec, string(whole.field([]byte(text), i)))
		}
		for l := 0; l <= len(text); l++ {
			data := []byte(text[:l])
			sc := newRecordScanner(',')
			res, _, end := sc.next(data, 0, l == len(text))
			if res == scanMore {
				if l == len(text) {
					t.Fatalf("%q: scanMore at the end", text)
				}
				continue
			}
			if res != wres || (res == scanRecord && end != wend) {
				t.Fatalf("%q, prefix %d: %v ending at %d; the whole text gives %v ending at %d", text, l, res, end, wres, wend)
			}
			if res == scanRecord {
				for i := range sc.fields {
					if string(sc.field(data, i)) != wrec[i] {
						t.Fatalf("%q, prefix %d: field %d = %q, want %q", text, l, i, sc.field(data, i), wrec[i])
					}
				}
			}
			break
		}
	}
}

// lastBoundary finds record boundaries: in well-formed text, the offsets it
// returns for every block split are exactly offsets where encoding/csv
// starts a record (or the end), and it finds the last such offset in the
// block.
func TestLastBoundary(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 9))
	cells := []string{"1", "x", `"a,b"`, `"two` + "\n" + `lines"`, `"say ""hi"""`, `""`, "", `"` + "\r\n" + `"`}
	for range 2_000 {
		var b strings.Builder
		var ends []int // offsets just past each record's line feed
		for range 1 + rng.IntN(8) {
			for j := range 3 {
				if j > 0 {
					b.WriteByte(',')
				}
				b.WriteString(cells[rng.IntN(len(cells))])
			}
			if rng.IntN(2) == 0 {
				b.WriteString("\r\n")
			} else {
				b.WriteString("\n")
			}
			ends = append(ends, b.Len())
		}
		text := []byte(b.String())
		for range 50 {
			from := rng.IntN(len(text))
			to := from + 1 + rng.IntN(len(text)-from)
			{
				// parity of the quotes before from
				parity := strings.Count(string(text[:from]), `"`) & 1
				got := lastBoundary(text[:to], from, &parity)
				want := -1
				for _, e := range ends {
					if e > from && e <= to {
						want = e
					}
				}
				if got != want {
					t.Fatalf("%q [%d:%d]: boundary %d, want %d", text, from, to, got, want)
				}
				if parity != strings.Count(string(text[:to]), `"`)&1 {
					t.Fatalf("parity not updated")
				}
			}
		}
	}
}
