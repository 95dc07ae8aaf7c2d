package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Invented data: two judges at an orchard show rank ten apple varieties.
// Is their agreement more than chance? The exact p-value counts the
// orderings of ten varieties (all 10! equally likely under independence)
// whose S is at least as large; the normal approximation is shown beside it.
// The printed values agree with R 4.2.2, cor.test(method = "kendall") with
// exact = TRUE, and with exact = FALSE, continuity = FALSE, to the digits
// shown.
func ExampleKendallExactP() {
	judgeA := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	judgeB := []float64{3, 1, 2, 5, 4, 8, 6, 10, 7, 9}
	c := stats.CountPairs(judgeA, judgeB)
	s := c.S()
	fmt.Println("n:", c.N, "S:", s, "concordant:", c.Concordant, "discordant:", c.Discordant)
	fmt.Printf("exact:  greater %.5f, two-sided %.5f\n",
		stats.KendallExactP(s, c.N, stats.Greater), stats.KendallExactP(s, c.N, stats.TwoSided))
	fmt.Printf("normal: greater %.5f, two-sided %.5f\n",
		stats.KendallNormal(c, stats.Greater), stats.KendallNormal(c, stats.TwoSided))
	// A perfect agreement of 200 judges' ranks: 1/200! is below the smallest
	// float64, so the exact p-value is reported as 0.
	fmt.Println(stats.KendallExactP(200*199/2, 200, stats.Greater))
	// Output:
	// n: 10 S: 31 concordant: 38 discordant: 7
	// exact:  greater 0.00234, two-sided 0.00469
	// normal: greater 0.00278, two-sided 0.00556
	// 0
}
