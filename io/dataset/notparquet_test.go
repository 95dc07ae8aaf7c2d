package dataset

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A file that the Parquet reader refuses is explained from its first and
// last bytes: empty, not Parquet (text is quoted), or incomplete.
func TestNotParquet(t *testing.T) {
	good, err := os.ReadFile(writeOrchardParquet(t, 1024))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"empty", nil, `the file is empty (0 bytes), not a Parquet file`},
		{"csv", []byte("plot,shade\n1,2\n"), `not a Parquet file (15 bytes): its first bytes are not the Parquet marker "PAR1"; it starts like text ("plot,shade"): if it is CSV or TSV`},
		{"binary", []byte{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13}, `not a Parquet file (14 bytes): its first bytes are not the Parquet marker "PAR1"`},
		{"marker only", []byte("PAR1"), `the Parquet file is incomplete (4 bytes)`},
		{"cut short", good[:len(good)/2], `the Parquet file is incomplete`},
		{"bytes after its end", append(append([]byte{}, good...), '\n'), `the Parquet file is incomplete`},
	} {
		p := filepath.Join(dir, strings.ReplaceAll(c.name, " ", "_")+".parquet")
		if err := os.WriteFile(p, c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Read(context.Background(), Spec{Path: p, Format: Parquet, Columns: []ColumnSpec{{Name: "yield_kg", Kind: Numeric}}})
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: Read: %v\nwant it to say %s", c.name, err, c.want)
		}
		if _, err := Header(p, Parquet); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: Header: %v\nwant it to say %s", c.name, err, c.want)
		}
	}
}
