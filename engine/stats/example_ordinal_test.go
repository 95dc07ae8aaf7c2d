package stats_test

import (
	"fmt"

	"concordat/engine/stats"
)

// Invented data: the ripeness grade (1–3) of ten orchard rows against the
// sweetness class (1–4) measured at harvest. The printed values agree with
// R 4.2.2 to the digits shown: brute-force pair counting and the table-form
// standard errors of testdata/ref/ordinal_reference.R, qnorm for the
// intervals (the upper end of the γ interval, 1.1664, is clamped to 1).
var (
	ripeness  = []float64{1, 1, 2, 2, 2, 3, 3, 3, 1, 2}
	sweetness = []float64{1, 2, 2, 3, 2, 4, 3, 4, 2, 1}
)

func ExamplePairCounts_TauC() {
	c := stats.CountPairs(ripeness, sweetness)
	fmt.Printf("tau-c %.4f\n", c.TauC())
	// Output: tau-c 0.6900
}

func ExamplePairCounts_Gamma() {
	c := stats.CountPairs(ripeness, sweetness)
	fmt.Println("concordant:", c.Concordant, "discordant:", c.Discordant)
	fmt.Printf("gamma %.4f\n", c.Gamma())
	// Output:
	// concordant: 25 discordant: 2
	// gamma 0.8519
}

func ExamplePairCounts_SomersDYX() {
	c := stats.CountPairs(ripeness, sweetness)
	fmt.Printf("sweetness on ripeness %.4f\n", c.SomersDYX())
	// Output: sweetness on ripeness 0.6970
}

func ExamplePairCounts_SomersDXY() {
	c := stats.CountPairs(ripeness, sweetness)
	fmt.Printf("ripeness on sweetness %.4f\n", c.SomersDXY())
	// Output: ripeness on sweetness 0.6389
}

func ExamplePairCounts_Estimate() {
	c := stats.CountPairs(ripeness, sweetness)
	for _, m := range []stats.Measure{stats.KendallA, stats.KendallB, stats.KendallC} {
		fmt.Printf("%s %.4f\n", m, c.Estimate(m))
	}
	// Output:
	// kendall_a 0.5111
	// kendall_b 0.6673
	// kendall_c 0.6900
}

func ExampleOrdinalSE() {
	est := stats.CountPairs(ripeness, sweetness).Gamma()
	se := stats.OrdinalSE(ripeness, sweetness, stats.Gamma)
	lo, hi := stats.WaldInterval(est, se, 0.95, stats.TwoSided)
	fmt.Printf("gamma %.4f, ASE %.4f, 95%% interval [%.4f, %.4f]\n", est, se, lo, hi)
	// Output: gamma 0.8519, ASE 0.1605, 95% interval [0.5373, 1.0000]
}

func ExampleOrdinalSEs() {
	se := stats.OrdinalSEs(ripeness, sweetness)
	for _, m := range []stats.Measure{stats.SomersDYX, stats.SomersDXY} {
		fmt.Printf("%s ASE %.4f\n", m, se[m])
	}
	// Output:
	// somers_d_yx ASE 0.1644
	// somers_d_xy ASE 0.1445
}

func ExampleWaldInterval() {
	lo, hi := stats.WaldInterval(0.30, 0.10, 0.95, stats.TwoSided)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	lo, hi = stats.WaldInterval(0.30, 0.10, 0.95, stats.Greater)
	fmt.Printf("[%.4f, %.4f]\n", lo, hi)
	// Output:
	// [0.1040, 0.4960]
	// [0.1355, 1.0000]
}

func ExampleParseMeasure() {
	m, ok := stats.ParseMeasure("somers_d_yx")
	fmt.Println(m == stats.SomersDYX, ok)
	_, ok = stats.ParseMeasure("somers_d")
	fmt.Println(ok)
	// Output:
	// true true
	// false
}

func ExampleMeasures() {
	fmt.Println(stats.Measures())
	// Output: [spearman kendall_b pearson kendall_a kendall_c gamma somers_d_yx somers_d_xy]
}
