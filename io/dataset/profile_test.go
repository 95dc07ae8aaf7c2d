package dataset

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"
)

func TestProfileCSV(t *testing.T) {
	// Invented: a number column with a NaN and a missing cell, a column of
	// numbers written two ways, text, a repeated name and an empty column.
	data := "id,score,dose,grade,dup,dup,blank\n" +
		"a,3,1.0,low,x,y,\n" +
		"b,NaN,1,high,x,y,NA\n" +
		"c,1,2,mid,x,y,\n" +
		"d,NA,10,low,x,y,\n" +
		"e,3,2e0,low,x,y,\n"
	p := filepath.Join(t.TempDir(), "t.csv")
	if err := os.WriteFile(p, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
	prof, err := Profile(context.Background(), p, CSV, []string{"", "NA"})
	if err != nil {
		t.Fatal(err)
	}
	if prof.Rows != 5 || len(prof.Columns) != 6 {
		t.Fatalf("rows %d, %d columns: %+v", prof.Rows, len(prof.Columns), prof.Columns)
	}
	byName := map[string]ColumnProfile{}
	for _, c := range prof.Columns {
		byName[c.Name] = c
	}
	check := func(name string, typ ColumnType, n, missing, distinct int, ties float64) ColumnProfile {
		t.Helper()
		c := byName[name]
		if c.Type != typ || c.N != n || c.Missing != missing || c.Distinct != distinct || !(c.TieShare == ties || math.IsNaN(ties) && math.IsNaN(c.TieShare)) {
			t.Errorf("%s: %v n=%d missing=%d distinct=%d ties=%v; want %v %d %d %d %v", name, c.Type, c.N, c.Missing, c.Distinct, c.TieShare, typ, n, missing, distinct, ties)
		}
		return c
	}
	check("id", TypeText, 5, 0, 5, 0)
	// NaN is missing, as in a run; the two 3s are tied: 2 of 3 values.
	if c := check("score", TypeNumber, 3, 2, 2, 2.0/3); c.Min != 1 || c.Max != 3 {
		t.Errorf("score range %v to %v", c.Min, c.Max)
	}
	// "1.0" and "1", "2" and "2e0" are the same numbers.
	if c := check("dose", TypeNumber, 5, 0, 3, 4.0/5); c.Min != 1 || c.Max != 10 {
		t.Errorf("dose range %v to %v", c.Min, c.Max)
	}
	if c := check("grade", TypeText, 5, 0, 3, 3.0/5); !slices.Equal(c.Labels, []string{"high", "low", "mid"}) {
		t.Errorf("grade labels %q", c.Labels)
	}
	if c := byName["dup"]; !c.Repeated || c.Type != TypeOther {
		t.Errorf("dup: %+v", c)
	}
	check("blank", TypeEmpty, 0, 5, 0, math.NaN())
}

func TestProfileParquet(t *testing.T) {
	p := writeOrchardParquet(t, 3)
	prof, err := Profile(context.Background(), p, Parquet, nil)
	if err != nil {
		t.Fatal(err)
	}
	want := []struct {
		name     string
		typ      ColumnType
		stored   string
		n, miss  int
		distinct int
	}{
		{"plot", TypeText, "utf8", 7, 0, 7},
		{"block", TypeNumber, "int32", 7, 0, 4},
		{"yield_kg", TypeNumber, "float64", 5, 2, 5}, // a null and a NaN
		{"grade", TypeText, "utf8", 6, 1, 4},         // "" is a label in Parquet
		{"trees", TypeNumber, "uint8", 7, 0, 7},
		{"netted", TypeOther, "bool", 0, 0, 0},
		{"price", TypeNumber, "decimal(9, 2)", 6, 1, 6},
		{"variety", TypeText, "dictionary<values=utf8, indices=int16, ordered=false>", 7, 0, 3},
		{"ratio", TypeNumber, "float32", 7, 0, 7},
		{"site", TypeOther, "struct<lat: float64>", 0, 0, 0},
	}
	if len(prof.Columns) != len(want) {
		t.Fatalf("%d columns", len(prof.Columns))
	}
	for i, w := range want {
		c := prof.Columns[i]
		if c.Name != w.name || c.Type != w.typ || c.Stored != w.stored || c.N != w.n || c.Missing != w.miss || c.Distinct != w.distinct {
			t.Errorf("column %d: %+v, want %+v", i, c, w)
		}
	}
	if y := prof.Columns[2]; y.Min != -2.25 || !math.IsInf(y.Max, 1) {
		t.Errorf("yield_kg range %v to %v", y.Min, y.Max)
	}
	// block: 1, 1, 2, 2, 3, -1, 3: six of seven values are tied.
	if b := prof.Columns[1]; b.TieShare != 6.0/7 {
		t.Errorf("block tie share %v", b.TieShare)
	}
}
