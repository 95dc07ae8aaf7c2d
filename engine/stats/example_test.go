package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Invented data: severity grades (1–4) of eight plots and their shade cover.
// The printed values agree with R 4.2.2 (cor, cor.test with exact = FALSE,
// continuity = FALSE, and the interval formulas) to the digits shown.
var (
	grade = []float64{1, 2, 2, 3, 1, 4, 3, 2}
	shade = []float64{12, 30, 25, 41, 18, 66, 35, 30}
)

func ExampleRank() {
	x := []float64{20, 10, 30, 10}
	for _, rule := range []stats.TieRule{stats.TieAverage, stats.TieMin, stats.TieMax, stats.TieDense, stats.TieFirst} {
		fmt.Println(rule, stats.Rank(x, rule))
	}
	// Output:
	// average [3 1.5 4 1.5]
	// min [3 1 4 1]
	// max [3 2 4 2]
	// dense [2 1 3 1]
	// first [3 1 4 2]
}

func ExampleTieShare() {
	fmt.Printf("%.3f\n", stats.TieShare(grade))
	// Output: 0.875
}

func ExamplePearson() {
	fmt.Printf("%.4f\n", stats.Pearson(grade, shade))
	// Output: 0.9532
}

func ExampleSpearmanRho() {
	fmt.Printf("%.4f\n", stats.SpearmanRho(grade, shade, stats.TieAverage))
	// Output: 0.9694
}

func ExampleCountPairs() {
	c := stats.CountPairs(grade, shade)
	fmt.Println("pairs:", c.Pairs(), "concordant:", c.Concordant, "discordant:", c.Discordant)
	fmt.Println("tied in x:", c.TiedX, "in y:", c.TiedY, "in both:", c.TiedXY)
	fmt.Printf("tau-b %.4f, tau-a %.4f\n", c.TauB(), c.TauA())
	// Output:
	// pairs: 28 concordant: 23 discordant: 0
	// tied in x: 5 in y: 1 in both: 1
	// tau-b 0.9230, tau-a 0.8214
}

func ExampleKendallTauB() {
	fmt.Printf("%.4f\n", stats.KendallTauB(grade, shade))
	// Output: 0.9230
}

func ExampleCorrelationT() {
	rho := stats.SpearmanRho(grade, shade, stats.TieAverage)
	fmt.Printf("two-sided p = %.5f\n", stats.CorrelationT(rho, len(grade), stats.TwoSided))
	fmt.Printf("greater   p = %.5f\n", stats.CorrelationT(rho, len(grade), stats.Greater))
	// Output:
	// two-sided p = 0.00007
	// greater   p = 0.00003
}

func ExampleKendallNormal() {
	c := stats.CountPairs(grade, shade)
	fmt.Printf("S = %d, Var(S) = %.4f, p = %.5f\n", c.S(), c.VarS(), stats.KendallNormal(c, stats.TwoSided))
	// Output: S = 23, Var(S) = 58.8452, p = 0.00272
}

func ExampleFisherInterval() {
	lo, hi := stats.FisherInterval(0.6, 30, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	lo, hi = stats.FisherInterval(0.6, 30, 0.95, stats.Greater)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output:
	// [0.3058, 0.7896]
	// [0.3597, 1.0000]
}

func ExampleBonettWrightInterval() {
	lo, hi := stats.BonettWrightInterval(0.6, 30, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output: [0.2761, 0.8015]
}

func ExampleFiellerInterval() {
	lo, hi := stats.FiellerInterval(0.45, 30, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output: [0.2266, 0.6284]
}
