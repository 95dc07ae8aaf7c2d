package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

func ExampleIsotonic() {
	// Invented data: a sensor's readings at six dial settings, which should
	// not fall as the dial turns up; the third setting was read twice as
	// often, so it weighs double. By hand: 2.2 and 1.6 (weight 2) pool to
	// (2.2 + 3.2)/3 = 1.8, and 2.5 and 2.3 to 2.4.
	readings := []float64{1.0, 2.2, 1.6, 2.5, 2.3, 3.1}
	weights := []float64{1, 1, 2, 1, 1, 1}
	fmt.Printf("%.2f\n", stats.Isotonic(readings, weights))
	// Output: [1.00 1.80 1.80 2.40 2.40 3.10]
}

func ExampleCheckMonotone() {
	// Invented data: weekly irrigation (mm) of 40 orchard rows and their
	// yield. Too little and too much water both cost yield, so Spearman's ρ
	// is near zero although the relation is strong. (R 4.2.2 gives the same
	// ρ, 0.0051.)
	irrigation, yield := make([]float64, 40), make([]float64, 40)
	for i := range irrigation {
		irrigation[i] = float64(10 + 2*i)
		d := irrigation[i] - 49
		yield[i] = 30 - d*d/40 + float64((i*7)%5-2)*0.8
	}
	fmt.Printf("rho = %.2f\n", stats.SpearmanRho(irrigation, yield, stats.TieAverage))
	c := stats.CheckMonotone(irrigation, yield)
	fmt.Printf("bins %d, R2 monotone %.2f, R2 free %.2f, P %.1e, non-monotone %v\n",
		c.Bins, c.R2Monotone, c.R2Free, c.P, c.NonMonotone)
	// Output:
	// rho = 0.01
	// bins 5, R2 monotone 0.26, R2 free 0.84, P 3.8e-11, non-monotone true
}
