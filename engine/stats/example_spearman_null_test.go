package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Invented data: the day on which each of twelve apple trees in an orchard
// came into blossom, and its harvest in kilograms. Early trees yielded
// more. The exact p-values come from the full null distribution of the
// 12! orderings; for comparison, R 4.2.2's cor.test(exact = TRUE) gives the
// AS 89 series at n = 12, 0.0004433 two-sided, and cor.test(exact = FALSE)
// the t approximation, 0.0002598 as below.
func ExampleSpearmanExactP() {
	blossomDay := []float64{3, 7, 1, 12, 5, 9, 2, 11, 4, 8, 6, 10}
	harvestKg := []float64{41.2, 35.0, 47.9, 28.4, 33.3, 30.1, 44.0, 31.7, 36.2, 39.8, 42.5, 29.9}
	n := len(blossomDay)
	rho := stats.SpearmanRho(blossomDay, harvestKg, stats.TieAverage)
	fmt.Printf("rho = %.4f\n", rho)
	fmt.Printf("exact, two-sided: p = %.4g\n", stats.SpearmanExactP(rho, n, stats.TwoSided))
	fmt.Printf("exact, less:      p = %.4g\n", stats.SpearmanExactP(rho, n, stats.Less))
	fmt.Printf("t, two-sided:     p = %.4g\n", stats.CorrelationT(rho, n, stats.TwoSided))
	fmt.Printf("perfect order:    p = %.4g (1/12!)\n", stats.SpearmanExactP(1, n, stats.Greater))
	// Output:
	// rho = -0.8671
	// exact, two-sided: p = 0.0005228
	// exact, less:      p = 0.0002614
	// t, two-sided:     p = 0.0002598
	// perfect order:    p = 2.088e-09 (1/12!)
}

// Invented data: 25 hourly readings of two humidity sensors on a greenhouse
// bench. The values agree with R 4.2.2's cor.test(method = "spearman",
// exact = TRUE) to the digits shown.
func ExampleSpearmanEdgeworthP() {
	a := []float64{61.2, 58.4, 63.9, 55.1, 59.8, 66.3, 60.5, 57.2, 64.8, 62.0, 56.3, 65.1, 59.1,
		61.9, 54.6, 63.2, 58.9, 60.1, 67.4, 57.8, 62.7, 55.9, 64.1, 60.9, 59.4}
	b := []float64{59.0, 60.2, 62.8, 57.9, 57.1, 63.0, 61.7, 58.3, 61.1, 64.4, 55.2, 62.2, 60.8,
		58.6, 56.4, 59.7, 61.4, 57.5, 64.9, 59.3, 60.0, 56.9, 63.6, 58.0, 62.5}
	n := len(a)
	rho := stats.SpearmanRho(a, b, stats.TieAverage)
	fmt.Printf("rho = %.4f\n", rho)
	fmt.Printf("Edgeworth, two-sided: p = %.4g\n", stats.SpearmanEdgeworthP(rho, n, stats.TwoSided))
	fmt.Printf("Edgeworth, greater:   p = %.4g\n", stats.SpearmanEdgeworthP(rho, n, stats.Greater))
	fmt.Printf("t, two-sided:         p = %.4g\n", stats.CorrelationT(rho, n, stats.TwoSided))
	// Output:
	// rho = 0.7092
	// Edgeworth, two-sided: p = 0.0001101
	// Edgeworth, greater:   p = 5.505e-05
	// t, two-sided:         p = 7.207e-05
}
