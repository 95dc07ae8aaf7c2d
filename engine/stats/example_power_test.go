package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

func ExampleCorrelationPower() {
	// A survey of 60 beekeepers plans to relate hive density to honey
	// yield; how likely is a two-sided test at α = 0.05 to detect a
	// population Spearman's ρ of 0.3, and a Kendall's τ of 0.2? (The
	// formula evaluated in R 4.2.2 gives 0.6438 and 0.6312.)
	fmt.Printf("%.3f\n", stats.CorrelationPower(stats.Spearman, 0.3, 60, 0.05, stats.TwoSided))
	fmt.Printf("%.3f\n", stats.CorrelationPower(stats.KendallB, 0.2, 60, 0.05, stats.TwoSided))
	// Output:
	// 0.644
	// 0.631
}

func ExampleCorrelationSampleSize() {
	// How many stations does a sensor network need to detect a Pearson r of
	// 0.3 with power 0.8 (Cohen's classic 85), and a Spearman's ρ of 0.3?
	fmt.Println(stats.CorrelationSampleSize(stats.PearsonR, 0.3, 0.8, 0.05, stats.TwoSided))
	fmt.Println(stats.CorrelationSampleSize(stats.Spearman, 0.3, 0.8, 0.05, stats.TwoSided))
	// Output:
	// 85
	// 87
}
