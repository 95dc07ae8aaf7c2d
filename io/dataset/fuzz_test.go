package dataset

import (
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// FuzzReadCSV reads arbitrary bytes as a CSV file. Read must never panic;
// when it succeeds, encoding/csv (the oracle) must agree on the number of
// rows, and every cell must be what the value rules say: NaN for a missing
// token or NaN, else strconv.ParseFloat of the trimmed cell for the first
// column (read as Numeric), and the text itself for the others (Label).
// Read must also give the same table, or the same error, as the Arrow-based
// reader it replaced, with its default block size and with blocks of a few
// bytes, and so must a read of the same bytes as TSV.
func FuzzReadCSV(f *testing.F) {
	defer func(n, o int) { textBlock = n; oracleBatchRows = o }(textBlock, oracleBatchRows)
	oracleBatchRows = 3
	for _, name := range []string{"orchard_harvest.csv", "school_survey.csv", "header_only.csv", "sensors.tsv"} {
		b, err := os.ReadFile(filepath.Join("testdata", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte("x,y\n1,a\n\"2\",\"b,\nc\"\r\nNA,\n"))
	f.Add([]byte("x\n1e400\n"))
	f.Add([]byte("x,y\n1\n"))
	f.Add([]byte("x\n\"unterminated\n"))
	f.Add([]byte("\xef\xbb\xbfx,x\n+Inf,1\n"))
	missing := []string{"", "NA"}
	f.Fuzz(func(t *testing.T, data []byte) {
		p := filepath.Join(t.TempDir(), "fuzz.csv")
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
		header, err := Header(p, CSV)
		if err != nil {
			if _, err := Read(context.Background(), Spec{Path: p, Format: CSV}); err == nil {
				t.Fatalf("Header failed (%v) but Read succeeded", err)
			}
			return
		}
		cols, at := fuzzColumns(header)
		for _, block := range []int{1 << 21, 1 + len(data)%5} {
			textBlock = block
			sameRead(t, Spec{Path: p, Format: CSV, Missing: missing, Columns: cols}, fmt.Sprintf("CSV, block %d, %q", block, data))
			if th, err := Header(p, TSV); err == nil {
				tc, _ := fuzzColumns(th)
				sameRead(t, Spec{Path: p, Format: TSV, Missing: missing, Columns: tc}, fmt.Sprintf("TSV, block %d, %q", block, data))
			}
		}
		textBlock = 1 << 21
		tab, err := Read(context.Background(), Spec{Path: p, Format: CSV, Missing: missing, Columns: cols})

		r := csv.NewReader(bytes.NewReader(bytes.TrimPrefix(data, utf8BOM)))
		recs, oerr := r.ReadAll()
		if err != nil {
			var ce *CellError
			if errors.As(err, &ce) && (ce.Row < 1 || ce.Path != p) {
				t.Fatalf("bad position in %v", err)
			}
			return
		}
		if oerr != nil {
			t.Fatalf("Read succeeded but encoding/csv fails: %v", oerr)
		}
		rows := recs[1:]
		if tab.Rows != len(rows) {
			t.Fatalf("Rows = %d, encoding/csv counts %d", tab.Rows, len(rows))
		}
		for k, c := range tab.Columns {
			for i, rec := range rows {
				cell := rec[at[k]]
				isMissing := cell == "" || cell == "NA"
				if c.Kind == Label {
					if c.Labels[i] != cell && !(isMissing && c.Labels[i] == "" && c.Missing[i]) {
						t.Fatalf("row %d, %q: label %q, cell %q", i+1, c.Name, c.Labels[i], cell)
					}
					continue
				}
				got := c.Values[i]
				if isMissing {
					if !math.IsNaN(got) {
						t.Fatalf("row %d: missing token %q read as %v", i+1, cell, got)
					}
					continue
				}
				want, err := strconv.ParseFloat(trimBlanks(cell), 64)
				if err != nil {
					t.Fatalf("row %d: %q accepted as %v but ParseFloat says %v", i+1, cell, got, err)
				}
				if got != want && !(math.IsNaN(got) && math.IsNaN(want)) {
					t.Fatalf("row %d: %q read as %v, ParseFloat gives %v", i+1, cell, got, want)
				}
			}
		}
	})
}

// fuzzColumns requests each column named once in the header: the first as
// Numeric, the rest as Label. at gives each one's field index.
func fuzzColumns(header []string) (cols []ColumnSpec, at []int) {
	count := map[string]int{}
	for _, h := range header {
		count[h]++
	}
	for i, h := range header {
		if count[h] != 1 {
			continue
		}
		k := Label
		if len(cols) == 0 {
			k = Numeric
		}
		cols = append(cols, ColumnSpec{Name: h, Kind: k})
		at = append(at, i)
	}
	return cols, at
}

// FuzzReadNumber checks the numeric cell rules against strconv.ParseFloat.
func FuzzReadNumber(f *testing.F) {
	for _, s := range []string{"1", " 2.5 ", "NaN", "-Inf", "Infinity", "1e400", "3,5", "", "0x1p-3", "1_000", "4.9e-324"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, p := parseNumber(s)
		want, err := strconv.ParseFloat(trimBlanks(s), 64)
		switch {
		case p == nil && err != nil:
			t.Fatalf("%q accepted as %v; ParseFloat: %v", s, got, err)
		case p != nil && err == nil:
			t.Fatalf("%q rejected (%s); ParseFloat gives %v", s, p.reason, want)
		case p == nil && got != want && !(math.IsNaN(got) && math.IsNaN(want)):
			t.Fatalf("%q read as %v, ParseFloat gives %v", s, got, want)
		case p != nil && p.reason == "":
			t.Fatalf("%q rejected without a reason", s)
		}
	})
}
