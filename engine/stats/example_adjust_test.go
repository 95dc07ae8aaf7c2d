package stats_test

import (
	"fmt"
	"math"

	"concordat/engine/stats"
)

// Invented p-values: six orchard plots, each tested for an association of
// blossom density with fruit set; plot "e" was not measured (NaN). The
// printed values agree with R 4.2.2's p.adjust (methods "holm", "BH",
// "hommel"), which also counts the 5 non-missing values as the family.
func ExampleAdjust() {
	p := []float64{0.004, 0.031, 0.012, 0.27, math.NaN(), 0.048}
	for _, m := range []stats.Adjustment{stats.Holm, stats.Hommel, stats.BH} {
		fmt.Printf("%-6v %.3f\n", m, stats.Adjust(p, m))
	}
	// Output:
	// holm   [0.020 0.093 0.048 0.270 NaN 0.096]
	// hommel [0.020 0.072 0.048 0.270 NaN 0.096]
	// bh     [0.020 0.052 0.030 0.270 NaN 0.060]
}

func ExampleParseAdjustment() {
	m, ok := stats.ParseAdjustment("hochberg")
	fmt.Println(m, ok)
	_, ok = stats.ParseAdjustment("fdr")
	fmt.Println(ok)
	// Output:
	// hochberg true
	// false
}
