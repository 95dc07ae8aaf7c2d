package filter

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/hashicorp/hcl/v2"
	"github.com/hashicorp/hcl/v2/hclsyntax"
)

// benchRows is the table size of the filter benchmarks.
const benchRows = 1_000_000

// benchTable is an age column (0–90, 5% missing) and a site column (four
// labels, 2% missing), as a cohort file would give them.
func benchTable() (age []float64, site []string, miss []bool) {
	rng := rand.New(rand.NewPCG(1, 2))
	age, site, miss = make([]float64, benchRows), make([]string, benchRows), make([]bool, benchRows)
	sites := []string{"A", "B", "C", "D"}
	for i := range benchRows {
		age[i] = float64(rng.IntN(91))
		if rng.IntN(20) == 0 {
			age[i] = math.NaN()
		}
		site[i] = sites[rng.IntN(len(sites))]
		if rng.IntN(50) == 0 {
			site[i], miss[i] = "", true
		}
	}
	return age, site, miss
}

func benchFilter(b *testing.B, src string, reference bool) *Filter {
	b.Helper()
	expr, diags := hclsyntax.ParseExpression([]byte(src), "where.hcl", hcl.Pos{Line: 1, Column: 1})
	if diags.HasErrors() {
		b.Fatal(diags)
	}
	e, diags := Analyze(expr, []byte(src), Env{})
	if diags.HasErrors() {
		b.Fatal(diags)
	}
	age, site, miss := benchTable()
	var data []Data
	for _, c := range e.Columns {
		if c.Name == "age" {
			data = append(data, Data{Values: age})
		} else {
			data = append(data, Data{Labels: site, Missing: miss})
		}
	}
	f, err := e.Compile(benchRows, data)
	if err != nil {
		b.Fatal(err)
	}
	f.reference = reference
	return f
}

func runFilter(b *testing.B, f *Filter, workers int) {
	b.ReportAllocs()
	b.ResetTimer()
	var kept int
	for b.Loop() {
		rows, err := f.Rows(context.Background(), workers)
		if err != nil {
			b.Fatal(err)
		}
		kept = len(rows)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
	b.ReportMetric(float64(kept), "kept")
}

const benchWhere = `age >= 18 && site != "B"`

// BenchmarkWhereCompiled runs the example through the compiled
// closures on one goroutine.
func BenchmarkWhereCompiled(b *testing.B) { runFilter(b, benchFilter(b, benchWhere, false), 1) }

// BenchmarkWhereCompiledTwoWorkers is the same on two goroutines.
func BenchmarkWhereCompiledTwoWorkers(b *testing.B) {
	runFilter(b, benchFilter(b, benchWhere, false), 2)
}

// BenchmarkWhereHCL is the baseline the compiled path replaces: HCL's
// evaluation of the whole expression at every row (run it with
// -benchtime 1x: one operation takes seconds).
func BenchmarkWhereHCL(b *testing.B) { runFilter(b, benchFilter(b, benchWhere, true), 1) }

// BenchmarkWhereMixed has an HCL leaf behind a compiled condition: the
// division is evaluated only for the rows of site A (about a quarter).
func BenchmarkWhereMixed(b *testing.B) {
	runFilter(b, benchFilter(b, `site == "A" && age / 2 >= 9`, false), 1)
}

// BenchmarkWhereLoop is the floor: the same filter written by hand as one
// Go loop over the two columns, with the same missing-value rule.
func BenchmarkWhereLoop(b *testing.B) {
	age, site, miss := benchTable()
	b.ReportAllocs()
	b.ResetTimer()
	var kept int
	for b.Loop() {
		keep := make([]bool, benchRows)
		for i := range benchRows {
			a := age[i]
			keep[i] = a == a && a >= 18 && !miss[i] && site[i] != "B"
		}
		out := make([]int, 0, benchRows)
		for i, k := range keep {
			if k {
				out = append(out, i)
			}
		}
		kept = len(out)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/benchRows, "ns/row")
	b.ReportMetric(float64(kept), "kept")
}
