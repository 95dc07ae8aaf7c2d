package dataset

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"os"
	"slices"
	"strconv"
)

// ColumnType is what a profiled column holds. The zero value is invalid.
type ColumnType int

const (
	_          ColumnType = iota
	TypeNumber            // every value that is not missing reads as a number
	TypeText              // some value is not a number: labels
	TypeOther             // a Parquet type that concordat does not read (boolean, dates, nested)
	TypeEmpty             // every value is missing
)

// String returns a word for the type: "number", "text", "other", "empty".
func (t ColumnType) String() string {
	switch t {
	case TypeNumber:
		return "number"
	case TypeText:
		return "text"
	case TypeOther:
		return "other"
	case TypeEmpty:
		return "empty"
	}
	return fmt.Sprintf("ColumnType(%d)", int(t))
}

// ColumnProfile describes one column of a file.
type ColumnProfile struct {
	Name     string
	Type     ColumnType
	Stored   string // the Parquet type ("double", "utf8"); "" for CSV and TSV
	N        int    // values that are not missing
	Missing  int
	Distinct int // distinct values among the N
	// TieShare is the share of the N values that equal another value (the
	// ties_x and ties_y of a result); NaN when N is 0.
	TieShare float64
	Min, Max float64  // a number column's range; NaN otherwise
	Labels   []string // a text column's distinct labels, sorted (numbers by value); nil otherwise
	Repeated bool     // the header holds this name more than once; the column is not read
}

// FileProfile describes a data file, column by column, in file order.
type FileProfile struct {
	Path    string
	Format  Format
	Rows    int
	SHA256  string
	Columns []ColumnProfile
}

// Profile reads every column of a file and describes it, for a person who
// is about to write a recipe for it. It reads through Read, so the value
// rules are those of a run: missing are the cells equal to a token of
// missing (CSV and TSV) or null (Parquet), and NaN. A CSV or TSV column is a
// number column when every other cell reads as a number by the rules of a
// Numeric column, and text otherwise; a Parquet column's type is its stored
// type. A name that the header repeats is listed but not read.
func Profile(ctx context.Context, path string, f Format, missing []string) (*FileProfile, error) {
	header, err := Header(path, f)
	if err != nil {
		return nil, err
	}
	count := map[string]int{}
	for _, h := range header {
		count[h]++
	}
	prof := &FileProfile{Path: path, Format: f}
	spec := Spec{Path: path, Format: f, Missing: missing}
	kinds := map[string]Kind{}
	stored := map[string]storedType{}
	if f == Parquet {
		if stored, err = parquetTypes(path); err != nil {
			return nil, err
		}
	}
	for _, h := range header {
		if count[h] > 1 {
			continue
		}
		k := Label
		if f == Parquet {
			if k = stored[h].kind; k == 0 {
				continue // a type concordat does not read
			}
		}
		kinds[h] = k
		spec.Columns = append(spec.Columns, ColumnSpec{Name: h, Kind: k})
	}
	t, err := Read(ctx, spec)
	if err != nil {
		return nil, err
	}
	prof.Rows, prof.SHA256 = t.Rows, t.SHA256
	seen := map[string]bool{}
	for _, h := range header {
		cp := ColumnProfile{Name: h, Stored: stored[h].name, TieShare: math.NaN(), Min: math.NaN(), Max: math.NaN()}
		switch {
		case count[h] > 1:
			if seen[h] {
				continue
			}
			cp.Repeated, cp.Type = true, TypeOther
		case kinds[h] == 0:
			cp.Type = TypeOther
		default:
			c := t.Column(h, kinds[h])
			if c.Kind == Numeric {
				profileNumbers(&cp, c.Values)
			} else {
				profileLabels(&cp, c.Labels, c.Missing, f != Parquet)
			}
		}
		seen[h] = true
		prof.Columns = append(prof.Columns, cp)
	}
	return prof, nil
}

// profileNumbers fills in a number column.
func profileNumbers(cp *ColumnProfile, vs []float64) {
	cp.Type = TypeNumber
	counts := map[float64]int{}
	for _, v := range vs {
		if math.IsNaN(v) {
			cp.Missing++
			continue
		}
		if v == 0 {
			v = 0 // -0 and +0 are one value
		}
		counts[v]++
		cp.N++
		if cp.N == 1 || v < cp.Min {
			cp.Min = v
		}
		if cp.N == 1 || v > cp.Max {
			cp.Max = v
		}
	}
	cp.Distinct = len(counts)
	cp.TieShare = tieShare(cp.N, counts)
	if cp.N == 0 {
		cp.Type = TypeEmpty
	}
}

// profileLabels fills in a text column, and makes it a number column when
// infer is set and every label reads as a number.
func profileLabels(cp *ColumnProfile, labels []string, missing []bool, infer bool) {
	counts := map[string]int{}
	numeric := infer
	var vs []float64
	for i, l := range labels {
		if missing[i] {
			cp.Missing++
			continue
		}
		if numeric {
			v, p := parseNumber(l)
			if p != nil {
				numeric = false
			} else {
				vs = append(vs, v)
			}
		}
		counts[l]++
		cp.N++
	}
	if numeric && cp.N > 0 {
		// Reread as numbers: "1.0" and "1" are one value, and NaN is
		// missing, as in a run.
		miss := cp.Missing
		*cp = ColumnProfile{Name: cp.Name, Stored: cp.Stored}
		profileNumbers(cp, vs)
		cp.Missing += miss
		return
	}
	cp.Type = TypeText
	cp.Distinct = len(counts)
	cp.TieShare = tieShare(cp.N, counts)
	for l := range counts {
		cp.Labels = append(cp.Labels, l)
	}
	sortLabels(cp.Labels)
	if cp.N == 0 {
		cp.Type = TypeEmpty
	}
}

// tieShare is the share of n values whose value occurs more than once.
func tieShare[K comparable](n int, counts map[K]int) float64 {
	if n == 0 {
		return math.NaN()
	}
	tied := 0
	for _, c := range counts {
		if c > 1 {
			tied += c
		}
	}
	return float64(tied) / float64(n)
}

// sortLabels orders labels by their number when they all read as numbers
// (so "2" comes before "10"), else as text.
func sortLabels(ls []string) {
	nums := make(map[string]float64, len(ls))
	for _, l := range ls {
		v, err := strconv.ParseFloat(l, 64)
		if err != nil || math.IsNaN(v) {
			slices.Sort(ls)
			return
		}
		nums[l] = v
	}
	slices.SortFunc(ls, func(a, b string) int { return cmp.Or(cmp.Compare(nums[a], nums[b]), cmp.Compare(a, b)) })
}

// storedType is a Parquet column's Arrow type and the kind it is read as
// (0 when it cannot be read).
type storedType struct {
	name string
	kind Kind
}

// parquetTypes returns the stored type of each top-level column of a
// Parquet file: numbers (integers, floats, decimals) are read as Numeric,
// text as Label; nested columns and other types are not read.
func parquetTypes(path string) (map[string]storedType, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read dataset %q: %w", path, err)
	}
	defer f.Close()
	_, fr, err := openParquet(path, f)
	if err != nil {
		return nil, err
	}
	out := map[string]storedType{}
	for _, sf := range fr.Manifest.Fields {
		dt := sf.Field.Type
		st := storedType{name: dt.String()}
		switch {
		case !sf.IsLeaf():
		case numericType(dt):
			st.kind = Numeric
		case textType(dt):
			st.kind = Label
		}
		out[sf.Field.Name] = st
	}
	return out, nil
}
