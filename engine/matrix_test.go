package engine

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"concordat/engine/stats"
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
