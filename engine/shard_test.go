package engine

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"concordat/engine/ledger"
	"concordat/recipe"
)

// matrixRecipe is a matrix of 9 columns (36 pairs: the correlation-matrix
// route) in two groups, with missing cells under pairwise deletion (the
// missing-pattern views), a permutation test, a bootstrap interval and a
// Holm adjustment over every cell of each measure.
const matrixRecipe = `
seed = 7
dataset "d" { path = "m.csv" }
pairing "all" {
  dataset = "d"
  columns = ["c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9"]
  by      = "site"
}
test "m" {
  pairing  = "all"
  measures = ["spearman", "pearson"]
  adjust   = "holm"
}
test "perm" {
  pairing      = "all"
  measures     = ["kendall_b"]
  p_value      = "permutation"
  permutations = 200
  adjust       = "bh"
  interval {
    method    = "bootstrap"
    resamples = 200
  }
}
table "t" {
  tests = ["m", "perm"]
  path  = "out/m.json"
}
table "grid" {
  tests  = ["m"]
  path   = "out/m.md"
  layout = "matrix"
}
`

// matrixData is 60 rows of 9 related columns with ties and missing cells,
// drawn with a fixed seed.
func matrixData() string {
	r := rand.New(rand.NewPCG(1, 2))
	var b strings.Builder
	b.WriteString("site,c1,c2,c3,c4,c5,c6,c7,c8,c9\n")
	for i := range 60 {
		base := r.NormFloat64()
		fmt.Fprintf(&b, "%s", []string{"north", "south"}[i%2])
		for j := range 9 {
			if r.IntN(12) == 0 && j%3 == 1 {
				b.WriteString(",NA")
				continue
			}
			v := base*float64(j%4) + r.NormFloat64()
			if j%2 == 0 {
				v = math.Round(v) // ties
			}
			fmt.Fprintf(&b, ",%g", v)
		}
		b.WriteString("\n")
	}
	return b.String()
}

// TestShardsMergeToTheSingleRun splits the demo recipes and a matrix into
// N = 1, 2, 3 and 5 shards, writes and reads each shard file, merges them,
// and compares every table's bytes and the whole ledger record (hence the
// run hash) with those of one unsharded computation. Shards use different
// worker counts, so a number that depended on the worker, the shard or the
// order of the cells would show.
func TestShardsMergeToTheSingleRun(t *testing.T) {
	fixed := func() time.Time { return time.Date(2026, 12, 2, 0, 0, 0, 0, time.UTC) }
	matrix := plan(t, matrixRecipe, map[string]string{"m.csv": matrixData()})
	plans := map[string]*recipe.Plan{"matrix": matrix}
	for _, name := range []string{"orchard", "school_survey"} {
		p, diags := recipe.Load(filepath.Join("..", "recipes", name+".hcl"))
		if diags.HasErrors() {
			t.Fatal(diags)
		}
		plans[name] = p
	}
	dir := t.TempDir()
	for _, name := range []string{"orchard", "school_survey", "matrix"} {
		p := plans[name]
		opts := Options{Jobs: 2, Now: fixed, Version: "test"}
		single, err := Compute(context.Background(), p, opts)
		if err != nil {
			t.Fatal(err)
		}
		want, err := single.Record(p, opts)
		if err != nil {
			t.Fatal(err)
		}
		for _, n := range []int{1, 2, 3, 5} {
			var files []*ShardFile
			cells := 0
			// Shards in reverse order: the merge puts them in order.
			for k := n; k >= 1; k-- {
				f, err := ComputeShard(context.Background(), p, Shard{K: k, N: n}, Options{Jobs: 1 + k%3, Version: "test"})
				if err != nil {
					t.Fatal(err)
				}
				path := filepath.Join(dir, fmt.Sprintf("%s-%d-of-%d.json", name, k, n))
				if err := WriteShardFile(path, f); err != nil {
					t.Fatal(err)
				}
				back, err := ReadShardFile(path)
				if err != nil {
					t.Fatal(err)
				}
				cells += back.CellCount()
				files = append(files, back)
			}
			if cells != files[0].Cells {
				t.Errorf("%s, %d shards: %d cells computed, the run has %d", name, n, cells, files[0].Cells)
			}
			merged, err := ComputeMerge(context.Background(), p, files, opts)
			if err != nil {
				t.Fatalf("%s, %d shards: %v", name, n, err)
			}
			got, err := merged.Record(p, opts)
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got, want) {
				g, _ := json.Marshal(got)
				w, _ := json.Marshal(want)
				t.Errorf("%s, %d shards: the merged record differs:\n got %s\nwant %s", name, n, g, w)
			}
			wantTables, gotTables := single.Tables(), merged.Tables()
			if len(gotTables) != len(wantTables) {
				t.Fatalf("%s, %d shards: %d tables, want %d", name, n, len(gotTables), len(wantTables))
			}
			for i := range wantTables {
				if !bytes.Equal(gotTables[i].Data, wantTables[i].Data) {
					t.Errorf("%s, %d shards: table %s differs from the single run's", name, n, wantTables[i].Name)
				}
			}
		}
		h, err := ledger.RunHash(want)
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: %d results, run hash %s, the same from every split", name, len(single.Results), h[:12])
	}
}

// Every cell of a run is in exactly one shard, whatever N, and a test too
// small to split goes to different shards for different tests.
func TestShardBlocksCoverEveryCellOnce(t *testing.T) {
	p := &recipe.Plan{}
	var tc testCounts
	for i, c := range []int{0, 1, 1, 1, 7, 100, 3} {
		p.Tests = append(p.Tests, &recipe.Test{Name: fmt.Sprintf("t%d", i)})
		tc.cells = append(tc.cells, c)
		tc.measures = append(tc.measures, 1+i%3)
	}
	total := 0
	for i, c := range tc.cells {
		total += c * tc.measures[i]
	}
	for n := 1; n <= 12; n++ {
		seen := make([]int, total)
		for k := 1; k <= n; k++ {
			for _, b := range tc.blocks(p, Shard{K: k, N: n}) {
				for i := b.FirstResult; i < b.FirstResult+b.ResultCount; i++ {
					seen[i]++
				}
			}
		}
		for i, s := range seen {
			if s != 1 {
				t.Fatalf("N = %d: result %d is in %d shards", n, i, s)
			}
		}
	}
	// The three one-cell tests t1, t2, t3 land on three different shards of 3.
	owner := map[string]int{}
	for k := 1; k <= 3; k++ {
		for _, b := range tc.blocks(p, Shard{K: k, N: 3}) {
			if b.CellCount == 1 && tc.cells[slices.IndexFunc(p.Tests, func(x *recipe.Test) bool { return x.Name == b.Test })] == 1 {
				owner[b.Test] = k
			}
		}
	}
	if len(owner) != 3 || owner["t1"] == owner["t2"] || owner["t2"] == owner["t3"] || owner["t1"] == owner["t3"] {
		t.Errorf("one-cell tests by shard: %v", owner)
	}
}

// A merge refuses a set of shards that is not one run: a shard missing or
// given twice, shards of different splits, another recipe, other data.
func TestMergeRefusesMismatchedShards(t *testing.T) {
	src := strings.Replace(matrixRecipe, `layout = "matrix"`, `layout = "long"`, 1)
	p := plan(t, src, map[string]string{"m.csv": matrixData()})
	shard := func(p *recipe.Plan, k, n int) *ShardFile {
		f, err := ComputeShard(context.Background(), p, Shard{K: k, N: n}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		return f
	}
	s1, s2, s3 := shard(p, 1, 3), shard(p, 2, 3), shard(p, 3, 3)
	other := plan(t, strings.Replace(src, "seed = 7", "seed = 8", 1), map[string]string{"m.csv": matrixData()})
	o2 := shard(other, 2, 3)
	changed := plan(t, src, map[string]string{"m.csv": strings.Replace(matrixData(), "north", "east", 1)})
	c2 := shard(changed, 2, 3)
	for _, c := range []struct {
		name  string
		files []*ShardFile
		want  string
	}{
		{"missing", []*ShardFile{s1, s3}, "shard 2 of 3 is missing"},
		{"twice", []*ShardFile{s1, s2, s2, s3}, "shard 2/3 is given twice"},
		{"other split", []*ShardFile{s1, s2, shard(p, 2, 2)}, "shards of different splits"},
		{"other recipe", []*ShardFile{s1, o2, s3}, "shard 2/3 was computed from other recipe bytes"},
		{"other data", []*ShardFile{s1, c2, s3}, `the data differ from those shard 2/3 read: dataset "d" (m.csv) was sha256`},
		{"none", nil, "no shard files"},
	} {
		_, err := ComputeMerge(context.Background(), p, c.files, Options{})
		var se *ShardSetError
		if !errors.As(err, &se) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v\nwant a ShardSetError saying %q", c.name, err, c.want)
		}
	}
	if _, err := ComputeMerge(context.Background(), p, []*ShardFile{s3, s1, s2}, Options{}); err != nil {
		t.Errorf("shards in any order: %v", err)
	}
}

// The shard file stores every field of a Result, NaN, infinities and -0
// included, bit for bit.
func TestShardRecordsAreLossless(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	special := []float64{math.NaN(), math.Inf(1), math.Inf(-1), math.Copysign(0, -1), 0, 5e-324, math.MaxFloat64, 0.1, 1.0 / 3}
	typ := reflect.TypeFor[Result]()
	for range 200 {
		var res Result
		v := reflect.ValueOf(&res).Elem()
		for i := range typ.NumField() {
			f := v.Field(i)
			if !f.CanSet() { // pFamily
				continue
			}
			switch f.Kind() {
			case reflect.String:
				f.SetString(fmt.Sprintf("s%d\n\"é", r.IntN(100)))
			case reflect.Int:
				f.SetInt(int64(r.IntN(1 << 40)))
			case reflect.Float64:
				if r.IntN(2) == 0 {
					f.SetFloat(special[r.IntN(len(special))])
				} else {
					f.SetFloat(r.NormFloat64() * math.Pow(10, float64(r.IntN(600)-300)))
				}
			case reflect.Slice:
				f.Set(reflect.ValueOf([]string{"a", fmt.Sprint(r.IntN(9))}[:r.IntN(3)]))
			default:
				t.Fatalf("Result field %s of kind %s: teach the shard file to store it", typ.Field(i).Name, f.Kind())
			}
		}
		res.pFamily = special[r.IntN(len(special))]
		data, err := json.Marshal(wireResult(res))
		if err != nil {
			t.Fatal(err)
		}
		var w shardResult
		if err := json.Unmarshal(data, &w); err != nil {
			t.Fatal(err)
		}
		back, err := w.result()
		if err != nil {
			t.Fatal(err)
		}
		bv := reflect.ValueOf(back)
		for i := range typ.NumField() {
			a, b := v.Field(i), bv.Field(i)
			if a.Kind() == reflect.Float64 {
				if math.Float64bits(a.Float()) != math.Float64bits(b.Float()) && !(math.IsNaN(a.Float()) && math.IsNaN(b.Float())) {
					t.Fatalf("%s: %v came back as %v (%s)", typ.Field(i).Name, a.Float(), b.Float(), data)
				}
				continue
			}
			if typ.Field(i).IsExported() && !reflect.DeepEqual(a.Interface(), b.Interface()) && !(a.Len() == 0 && b.Len() == 0) {
				t.Fatalf("%s: %v came back as %v", typ.Field(i).Name, a, b)
			}
		}
	}
	// shardResult has exactly Result's fields, plus p_family.
	if got, want := reflect.TypeFor[shardResult]().NumField(), typ.NumField(); got != want {
		t.Errorf("shardResult has %d fields, Result %d: a field was added to one only", got, want)
	}
}

func TestParseShard(t *testing.T) {
	for in, want := range map[string]Shard{"1/1": {1, 1}, "3/8": {3, 8}, " 8 / 8 ": {8, 8}} {
		if got, err := ParseShard(in); err != nil || got != want {
			t.Errorf("ParseShard(%q) = %v, %v; want %v", in, got, err, want)
		}
	}
	for in, want := range map[string]string{
		"0/4": "K must be from 1 to N (4); a Slurm array for N shards is --array=1-4",
		"5/4": "K must be from 1 to N", "3": "write it as K/N", "a/b": "write it as K/N",
		"1/0": "N must be from 1", "-1/3": "K must be", "1/9999999": "N must be from 1 to 1000000",
	} {
		if _, err := ParseShard(in); err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("ParseShard(%q): %v, want an error saying %q", in, err, want)
		}
	}
}

// A shard file that is damaged is refused when read.
func TestReadShardFileRefusesDamage(t *testing.T) {
	p := plan(t, matrixRecipe, map[string]string{"m.csv": matrixData()})
	f, err := ComputeShard(context.Background(), p, Shard{K: 2, N: 3}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := f.Encode(&buf); err != nil {
		t.Fatal(err)
	}
	good := buf.Bytes()
	if _, err := DecodeShardFile(good); err != nil {
		t.Fatal(err)
	}
	for name, data := range map[string][]byte{
		"truncated":   good[:len(good)*2/3],
		"other file":  []byte(`{"format":"concordat-ledger/1"}`),
		"bad shard":   bytes.Replace(good, []byte(`"shard":{"k":2,"n":3}`), []byte(`"shard":{"k":4,"n":3}`), 1),
		"extra field": bytes.Replace(good, []byte(`"format"`), []byte(`"surprise":1,"format"`), 1),
		"lost record": bytes.Replace(good, []byte("\n{"), []byte("\n"), 1),
	} {
		if _, err := DecodeShardFile(data); err == nil {
			t.Errorf("%s: read without error", name)
		}
	}
}
