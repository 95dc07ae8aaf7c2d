package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Invented data: ten readings of a greenhouse sensor network. Leaf
// temperature and transpiration both follow the air temperature; the
// partial correlation asks what links them once air temperature (and, in
// the second call, the hour of the day) is held fixed. The printed values
// agree with R 4.2.2: cor(resid(lm(leaf ~ air)), resid(lm(transp ~ air)))
// and the same on rank(), 2*pt(-abs(t), n - 2 - k), and the interval
// formulas.
var (
	air    = []float64{18.2, 19.5, 21.0, 22.4, 23.1, 24.8, 25.5, 26.9, 28.3, 29.0}
	leaf   = []float64{17.9, 19.8, 20.6, 22.9, 22.8, 25.1, 25.0, 27.5, 28.1, 29.6}
	transp = []float64{1.1, 1.4, 1.3, 1.9, 1.7, 2.3, 2.0, 2.6, 2.5, 3.0}
	hour   = []float64{7, 8, 9, 10, 11, 12, 13, 14, 15, 16}
)

func ExamplePartialCorrelation() {
	fmt.Printf("r            = %.4f\n", stats.Pearson(leaf, transp))
	fmt.Printf("r given air  = %.4f\n", stats.PartialCorrelation(leaf, transp, [][]float64{air}))
	fmt.Printf("r given both = %.4f\n", stats.PartialCorrelation(leaf, transp, [][]float64{air, hour}))
	// Output:
	// r            = 0.9811
	// r given air  = 0.9461
	// r given both = 0.9500
}

func ExamplePartialSpearman() {
	fmt.Printf("%.4f\n", stats.PartialSpearman(leaf, transp, [][]float64{air}, stats.TieAverage))
	// Output: 0.7028
}

func ExamplePartialT() {
	r := stats.PartialCorrelation(leaf, transp, [][]float64{air})
	fmt.Printf("p = %.3g\n", stats.PartialT(r, len(leaf), 1, stats.TwoSided))
	// Output: p = 0.000114
}

func ExamplePartialFisherInterval() {
	lo, hi := stats.PartialFisherInterval(0.6, 30, 2, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output: [0.2924, 0.7951]
}

func ExamplePartialBonettWrightInterval() {
	lo, hi := stats.PartialBonettWrightInterval(0.6, 30, 2, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output: [0.2611, 0.8072]
}
