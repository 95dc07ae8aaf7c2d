package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Tied grades: the classical formula, which ignores the ties, gives a
// larger coefficient than Spearman's rho computed as the correlation of
// midranks (the data of ExampleSpearmanRho; D = Σd² = 2.5, checked by hand:
// 1 − 6·2.5/(8·63) = 0.97024).
func ExampleSpearmanRhoD() {
	fmt.Printf("rho = %.4f, formula = %.4f\n", stats.SpearmanRho(grade, shade, stats.TieAverage), stats.SpearmanRhoD(grade, shade))
	// Output: rho = 0.9694, formula = 0.9702
}

func ExampleKendallNormalCorrected() {
	c := stats.CountPairs(grade, shade)
	fmt.Printf("p = %.5f, corrected p = %.5f\n", stats.KendallNormal(c, stats.TwoSided), stats.KendallNormalCorrected(c, stats.TwoSided))
	// Output: p = 0.00272, corrected p = 0.00413
}

func ExampleSpearmanTCorrected() {
	fmt.Printf("p = %.4f, corrected p = %.4f\n", stats.CorrelationT(0.5, 12, stats.TwoSided), stats.SpearmanTCorrected(0.5, 12, stats.TwoSided))
	// Output: p = 0.0979, corrected p = 0.1006
}
