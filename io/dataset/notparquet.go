package dataset

import (
	"bytes"
	"fmt"
	"io"
	"unicode/utf8"
)

// parquetMagic opens and closes every Parquet file (Apache Parquet format
// specification, "File Format": "PAR1" at both ends, the footer length
// before the last four bytes).
var parquetMagic = []byte("PAR1")

// notParquet explains why the Parquet reader refused the file at path (err)
// in the user's terms, from the file's first and last bytes: too short to
// be Parquet, not Parquet at all (perhaps text, a CSV file under a
// .parquet name), or a Parquet file cut short (an interrupted copy). Other
// failures keep the reader's own words. err is the reader's error.
func notParquet(path string, r io.ReaderAt, size int64, err error) error {
	head := make([]byte, min(size, 64))
	n, _ := r.ReadAt(head, 0)
	head = head[:n]
	tail := make([]byte, 4)
	var tn int
	if size >= 4 {
		tn, _ = r.ReadAt(tail, size-4)
	}
	tail = tail[:tn]
	switch {
	case size == 0:
		return fmt.Errorf("read dataset %q: the file is empty (0 bytes), not a Parquet file", path)
	case !bytes.HasPrefix(head, parquetMagic):
		what := "its first bytes are not the Parquet marker \"PAR1\""
		if line, ok := textStart(head); ok {
			what += fmt.Sprintf("; it starts like text (%q): if it is CSV or TSV, give it that extension or set format = \"csv\" (or \"tsv\") in the dataset block", line)
		}
		return fmt.Errorf("read dataset %q: not a Parquet file (%d bytes): %s", path, size, what)
	case size < 12 || !bytes.Equal(tail, parquetMagic):
		return fmt.Errorf("read dataset %q: the Parquet file is incomplete (%d bytes): it starts with the marker \"PAR1\" but does not end with it, as a complete file does, so it was cut short (an interrupted copy, or a program still writing it) or has bytes added after its end; copy it again", path, size)
	}
	return fmt.Errorf("read dataset %q: not a readable Parquet file: %w", path, err)
}

// textStart returns the first line of b when b looks like UTF-8 text.
func textStart(b []byte) (string, bool) {
	// The 64 bytes read may end inside a character.
	valid := false
	for cut := 0; cut < utf8.UTFMax && cut < len(b); cut++ {
		if utf8.Valid(b[:len(b)-cut]) {
			b, valid = b[:len(b)-cut], true
			break
		}
	}
	if !valid {
		return "", false
	}
	for _, c := range b {
		if c < 0x20 && c != '\n' && c != '\r' && c != '\t' {
			return "", false
		}
	}
	line, _, _ := bytes.Cut(b, []byte("\n"))
	return string(bytes.TrimRight(line, "\r")), true
}
