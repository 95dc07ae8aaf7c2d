package stats_test

import (
	"context"
	"fmt"

	"concordat/engine/stats"
)

// Invented data: hours of sunshine logged by twelve weather stations in one
// week and the ripeness grade (1–5) of the apricots in the orchard beside
// each.
var (
	sunshine     = []float64{31.5, 28.0, 40.2, 35.1, 22.4, 38.8, 30.0, 26.7, 44.0, 33.3, 29.1, 36.9}
	apricotGrade = []float64{3, 2, 4, 2, 1, 3, 4, 3, 5, 2, 3, 4}
)

func ExampleNewStreamKey() {
	// One stream per (test, x, y, group, purpose), whatever runs when.
	a := stats.NewStreamKey(20261202, "sun_ripe", "sunshine", "ripeness", "all", "permutation")
	b := stats.NewStreamKey(20261202, "sun_ripe", "sunshine", "ripeness", "north", "permutation")
	fmt.Println(a == b)
	// Block 3 of a stream is the same generator every time it is asked for.
	fmt.Println(a.Block(3).Uint64() == a.Block(3).Uint64())
	// Output:
	// false
	// true
}

func ExampleArrangements() {
	// Ripeness has tie groups of sizes 1, 3, 4, 3, 1: 12!/(3!·4!·3!)
	// distinct orders, far fewer than the 12! of the untied sunshine hours.
	fmt.Printf("%.0f\n", stats.Arrangements(sunshine, apricotGrade))
	// Output: 554400
}

func ExampleExactPermutationTest() {
	res, err := stats.ExactPermutationTest(context.Background(), sunshine, apricotGrade, stats.PermutationSpec{
		Measures: []stats.Measure{stats.Spearman, stats.KendallB, stats.Gamma},
		Rule:     stats.TieAverage,
		Alt:      stats.Greater,
		Workers:  2,
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("arrangements:", res.Draws, "exact:", res.Exact)
	fmt.Printf("spearman p = %.6f\nkendall_b p = %.6f\ngamma p = %.6f\n", res.P[0], res.P[1], res.P[2])
	// Output:
	// arrangements: 554400 exact: true
	// spearman p = 0.018580
	// kendall_b p = 0.017983
	// gamma p = 0.017983
}

func ExamplePermutationTest() {
	res, err := stats.PermutationTest(context.Background(), sunshine, apricotGrade, stats.PermutationSpec{
		Measures: []stats.Measure{stats.Spearman, stats.KendallB},
		Rule:     stats.TieAverage,
		Alt:      stats.TwoSided,
		Draws:    9999,
		Key:      stats.NewStreamKey(20261202, "sun_ripe", "sunshine", "ripeness", "all", "permutation"),
		Workers:  4, // any count gives the same p-values
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("spearman p = %.4f\nkendall_b p = %.4f\n", res.P[0], res.P[1])
	// Output:
	// spearman p = 0.0386
	// kendall_b p = 0.0363
}

func ExampleBootstrapInterval() {
	// The statistic gathers the resampled rows into per-worker buffers.
	spearman := func() func(idx []int) float64 {
		x, y := make([]float64, len(sunshine)), make([]float64, len(apricotGrade))
		return func(idx []int) float64 {
			x, y := x[:len(idx)], y[:len(idx)]
			for j, i := range idx {
				x[j], y[j] = sunshine[i], apricotGrade[i]
			}
			return stats.SpearmanRho(x, y, stats.TieAverage)
		}
	}
	for _, bca := range []bool{false, true} {
		lo, hi, err := stats.BootstrapInterval(context.Background(), len(sunshine), spearman, stats.BootstrapSpec{
			Resamples: 4999,
			Level:     0.95,
			Alt:       stats.TwoSided,
			BCa:       bca,
			Key:       stats.NewStreamKey(20261202, "sun_ripe", "sunshine", "ripeness", "all", "bootstrap"),
			Workers:   2,
		})
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("bca=%v [%.3f, %.3f]\n", bca, lo, hi)
	}
	// Output:
	// bca=false [0.000, 0.933]
	// bca=true [-0.019, 0.924]
}
