package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

func ExampleArgsort() {
	x := []float64{2.5, -1, 7, 2.5, 0}
	o := stats.Argsort(x)
	fmt.Println(o) // ties (the two 2.5) keep their order of appearance
	for _, i := range o {
		fmt.Print(x[i], " ")
	}
	fmt.Println()
	// Output:
	// [1 4 0 3 2]
	// -1 0 2.5 2.5 7
}

func ExampleRankTies() {
	// Severity grades of eight plots (as in the package's other examples):
	// 1, 2 and 3 occur more than once.
	rk := stats.RankTies([]float64{1, 2, 2, 3, 1, 4, 3, 2}, stats.TieAverage)
	fmt.Println("ranks:", rk.Ranks)
	fmt.Println("distinct values:", rk.Ties.Distinct, "tied values:", rk.Tied)
	fmt.Println("Σt(t−1):", rk.Ties.SumT1) // groups of 2, 3 and 2: 2 + 6 + 2
	// Output:
	// ranks: [1.5 4 4 6.5 1.5 8 6.5 4]
	// distinct values: 4 tied values: 7
	// Σt(t−1): 10
}

func ExampleSpearmanRanks() {
	// Rank each column once and reuse the ranks for several pairs.
	grade := stats.RankTies([]float64{1, 2, 2, 3, 1, 4, 3, 2}, stats.TieAverage).Ranks
	shade := stats.RankTies([]float64{12, 30, 25, 41, 18, 66, 35, 30}, stats.TieAverage).Ranks
	fmt.Printf("%.4f\n", stats.SpearmanRanks(grade, shade))
	// Output: 0.9694
}
