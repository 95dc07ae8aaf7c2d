package engine

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"concordat/engine/stats"
	"concordat/io/render"
	"concordat/recipe"
)

// TestMatrixPathMatchesPairByPair: a pairing of many columns takes its
// Spearman and Pearson values from one correlation matrix of shared
// columns; every value must equal the pair-by-pair kernels on the pair's
// own complete rows within 1e-12, under listwise and pairwise deletion,
// with heavy ties and missing cells (pairwise: the columns with missing
// cells fall back to the per-pair path).
func TestMatrixPathMatchesPairByPair(t *testing.T) {
	const n, k = 300, 9 // 36 pairs, above matrixMinPairs
	r := rand.New(rand.NewPCG(17, 4))
	cols := make([][]float64, k)
	names := make([]string, k)
	for j := range cols {
		names[j] = fmt.Sprintf("c%d", j)
		cols[j] = make([]float64, n)
		for i := range cols[j] {
			cols[j][i] = math.Round(r.NormFloat64()*2 + 0.3*float64(j)*r.NormFloat64())
			if j%3 == 0 && r.IntN(40) == 0 {
				cols[j][i] = math.NaN()
			}
		}
	}
	var b strings.Builder
	b.WriteString(strings.Join(names, ",") + "\n")
	for i := 0; i < n; i++ {
		for j := range cols {
			if j > 0 {
				b.WriteString(",")
			}
			if math.IsNaN(cols[j][i]) {
				b.WriteString("NA")
			} else {
				fmt.Fprintf(&b, "%g", cols[j][i])
			}
		}
		b.WriteString("\n")
	}
	quoted := `"` + strings.Join(names, `", "`) + `"`
	for _, missing := range []string{"listwise", "pairwise"} {
		src := fmt.Sprintf(`dataset "d" {
  path = "d.csv"
}
pairing "m" {
  dataset = "d"
  columns = [%s]
  missing = %q
}
test "t" {
  pairing  = "m"
  measures = ["spearman", "pearson"]
  p_value  = "asymptotic"
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`, quoted, missing)
		res := mustCompute(t, plan(t, src, map[string]string{"d.csv": b.String()})).Results
		if len(res) != 2*k*(k-1)/2 {
			t.Fatalf("%s: %d results", missing, len(res))
		}
		for _, got := range res {
			x, y := cols[indexOf(names, got.X)], cols[indexOf(names, got.Y)]
			var cx, cy []float64
			for i := 0; i < n; i++ {
				if math.IsNaN(x[i]) || math.IsNaN(y[i]) {
					continue
				}
				if missing == "listwise" && anyNaNRow(cols, i) {
					continue
				}
				cx, cy = append(cx, x[i]), append(cy, y[i])
			}
			want := stats.Pearson(cx, cy)
			if got.Measure == "spearman" {
				want = stats.SpearmanRho(cx, cy, stats.TieAverage)
			}
			if got.N != len(cx) || math.Abs(got.Estimate-want) > 1e-12 {
				t.Errorf("%s %s %s~%s: n = %d, %v; want n = %d, %v", missing, got.Measure, got.X, got.Y, got.N, got.Estimate, len(cx), want)
			}
		}
	}
}

func indexOf(names []string, name string) int {
	for i, n := range names {
		if n == name {
			return i
		}
	}
	panic(name)
}

func anyNaNRow(cols [][]float64, i int) bool {
	for _, c := range cols {
		if math.IsNaN(c[i]) {
			return true
		}
	}
	return false
}

// TestPatternViewsMatchPairByPair: under pairwise deletion, pairs whose
// columns miss nested sets of rows take views of per-pattern shared
// columns (and their matrices); every result must be what the pair's own
// copy gives: the same n, rows dropped and notes, estimates within 1e-12,
// p-values and interval bounds within 1e-9 relative. The columns are
// complete, share a skipped block, nest inside it, or miss rows at random
// (incomparable patterns, copied pair by pair); two groups; heavy ties.
func TestPatternViewsMatchPairByPair(t *testing.T) {
	const n, k = 240, 12
	r := rand.New(rand.NewPCG(20261202, 11))
	names := make([]string, k)
	var b strings.Builder
	for j := range names {
		names[j] = fmt.Sprintf("v%d", j)
	}
	b.WriteString("site," + strings.Join(names, ",") + "\n")
	for i := 0; i < n; i++ {
		fmt.Fprintf(&b, "%c", "AB"[i%2])
		block := i%10 < 3 // a section some respondents skipped
		for j := range k {
			v := fmt.Sprint(math.Round(r.NormFloat64()*1.5 + 0.2*float64(j)*r.NormFloat64()))
			switch {
			case j >= 2 && j <= 4 && block: // one shared pattern
				v = "NA"
			case j == 5 && block && i%10 == 0: // nested inside it
				v = "NA"
			case j >= 7 && j <= 9 && r.IntN(12) == 0: // incomparable patterns
				v = "NA"
			}
			b.WriteString("," + v)
		}
		b.WriteString("\n")
	}
	src := fmt.Sprintf(`dataset "d" {
  path = "d.csv"
}
pairing "m" {
  dataset = "d"
  columns = ["%s"]
  missing = "pairwise"
  by      = "site"
}
test "t" {
  pairing  = "m"
  measures = ["spearman", "kendall_b", "pearson"]
  p_value  = "auto"
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`, strings.Join(names, `", "`))
	files := map[string]string{"d.csv": b.String()}
	pl := plan(t, src, files)
	// The views are as designed: the skipped block serves the pairs among
	// v2–v4, with v5 and with the five complete columns (21 pairs: a
	// matrix); incomparable pairs have none.
	tables, _, err := loadDatasets(context.Background(), pl)
	if err != nil {
		t.Fatal(err)
	}
	test := pl.Tests[0]
	groups, diags := groupRows(tables["d"], test.Pairing, nil)
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	cs := newCellSource(test, tables["d"], groups[0])
	block := cs.viewOf[recipe.Pair{X: "v2", Y: "v3"}]
	if block == nil || block.pairs != 21 || cs.viewOf[recipe.Pair{X: "v3", Y: "v5"}] != block || cs.viewOf[recipe.Pair{X: "v0", Y: "v4"}] != block {
		t.Fatalf("the skipped block's view is %+v", block)
	}
	if cs.viewOf[recipe.Pair{X: "v7", Y: "v8"}] != nil {
		t.Errorf("v7~v8 (incomparable patterns) has a view")
	}
	fast := mustCompute(t, pl).Results
	patternViewsOn = false
	slow := mustCompute(t, plan(t, src, files)).Results
	patternViewsOn = true
	if len(fast) != len(slow) || len(fast) != 3*3*k*(k-1)/2 {
		t.Fatalf("%d and %d results", len(fast), len(slow))
	}
	near := func(a, b, tol float64) bool {
		return (math.IsNaN(a) && math.IsNaN(b)) || math.Abs(a-b) <= tol*math.Max(1, math.Abs(b))
	}
	viewed := 0
	for i, f := range fast {
		s := slow[i]
		if f.X != s.X || f.Y != s.Y || f.Group != s.Group || f.Measure != s.Measure || f.N != s.N || f.NDropped != s.NDropped ||
			!slices.Equal(f.Warnings, s.Warnings) || !near(f.Estimate, s.Estimate, 1e-12) ||
			!near(f.PValue, s.PValue, 1e-9) || !near(f.CILow, s.CILow, 1e-9) || !near(f.CIHigh, s.CIHigh, 1e-9) || f.PMethod != s.PMethod {
			t.Errorf("%s~%s %s %s:\nviews     %+v\npair copy %+v", f.X, f.Y, f.Group, f.Measure, f, s)
		}
		if f.NDropped > 0 {
			viewed++
		}
	}
	if viewed == 0 {
		t.Fatal("no result dropped rows: the test exercises nothing")
	}
}

// TestResultHashIsTheTableText: the result hash, streamed into sha256 row
// by row, is the hash of the one JSON text of the whole table, short or
// long (rows made by RowFunc as they are written).
func TestResultHashIsTheTableText(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	for _, n := range []int{1, 32768, 32769, 50000} {
		res := make([]Result, n)
		for i := range res {
			res[i] = Result{Test: "t", X: fmt.Sprint("v", i%7), Y: "w", Group: "all", Measure: "spearman",
				N: 100 + i%5, Estimate: r.NormFloat64(), Alternative: "two-sided", PValue: r.Float64(),
				CILow: math.NaN(), CIHigh: math.NaN(), CILevel: math.NaN(), PAdjusted: r.Float64(),
				AdjustMethod: "none", TiesX: 0.5, TiesY: 0, Warnings: []string{}, Controls: []string{}}
			if i%3 == 0 {
				res[i].Warnings = []string{"a \"quoted\" note", "ünïcode"}
			}
		}
		var buf bytes.Buffer
		if err := render.Encode(&buf, fullTable("", res), render.JSON, -1); err != nil {
			t.Fatal(err)
		}
		sum := sha256.Sum256(buf.Bytes())
		got, err := resultHash(res)
		if err != nil || got != hex.EncodeToString(sum[:]) {
			t.Errorf("n = %d: resultHash = %s, %v; the whole table hashes to %x", n, got, err, sum)
		}
	}
}
