package engine

import (
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"concordat/engine/stats"
	"concordat/recipe"
)

const benchRows = 200_000

// benchData writes an invented two-column sensor table with heavy ties in
// x (integers 0..99) and returns its columns as read.
func benchData(b *testing.B) (string, []float64, []float64) {
	b.Helper()
	r := rand.New(rand.NewPCG(1, 2))
	x, y := make([]float64, benchRows), make([]float64, benchRows)
	var sb strings.Builder
	sb.WriteString("x,y\n")
	for i := range x {
		x[i] = float64(r.IntN(100))
		y[i] = float64(int((x[i]+20*r.NormFloat64())*1000)) / 1000
		sb.WriteString(strconv.FormatFloat(x[i], 'f', -1, 64))
		sb.WriteByte(',')
		sb.WriteString(strconv.FormatFloat(y[i], 'f', -1, 64))
		sb.WriteByte('\n')
	}
	dir := b.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "d.csv"), []byte(sb.String()), 0o644); err != nil {
		b.Fatal(err)
	}
	src := `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing  = "p"
  measures = ["spearman", "kendall_b"]
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`
	path := filepath.Join(dir, "r.hcl")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		b.Fatal(err)
	}
	return path, x, y
}

// BenchmarkCompute: the whole computation from a CSV file: read through
// Arrow, pair, rank, Spearman and Kendall tau-b with p-values and intervals.
func BenchmarkCompute(b *testing.B) {
	path, _, _ := benchData(b)
	p, diags := recipe.Load(path)
	if diags.HasErrors() {
		b.Fatal(diags)
	}
	b.ResetTimer()
	for b.Loop() {
		if _, err := Compute(context.Background(), p, Options{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(benchRows), "rows/op")
}

// BenchmarkComputeKernelsOnly is the baseline for BenchmarkCompute: the same
// statistics on slices already in memory.
func BenchmarkComputeKernelsOnly(b *testing.B) {
	_, x, y := benchData(b)
	b.ResetTimer()
	for b.Loop() {
		rho := stats.SpearmanRho(x, y, stats.TieAverage)
		c := stats.CountPairs(x, y)
		_ = stats.CorrelationT(rho, len(x), stats.TwoSided)
		_ = stats.KendallNormal(c, stats.TwoSided)
		if rho == 2 {
			b.Fatal(fmt.Sprint(rho))
		}
	}
	b.ReportMetric(float64(benchRows), "rows/op")
}
