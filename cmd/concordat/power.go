package main

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"concordat/engine/stats"
)

// powerMeasures are the measures whose power the command computes: those
// with a published large-sample variance on the Fisher z scale.
var powerMeasures = map[string]stats.Measure{
	"spearman": stats.Spearman, "kendall_b": stats.KendallB, "pearson": stats.PearsonR,
}

func cmdPower(args []string, stdout, stderr io.Writer) int {
	cmd := newCommand("power", `Power of the test of no association for a population correlation rho, or
the smallest n that reaches a target power. Give --n to get the power, or
--power to get n; both accept lists (--rho 0.2,0.3 --n 30,60,120) and print
one row per combination. The approximation is on the Fisher z scale with the
measure's published variance: 1/(n-3) for pearson, (1 + rho²/2)/(n-3) for
spearman (Bonett & Wright 2000), 0.437/(n-4) for kendall_b (Fieller, Hartley
& Pearson 1957); rho is the measure's own population value.`)
	cmd.args = ""
	measure := cmd.fs.String("measure", "spearman", "spearman, kendall_b or pearson")
	rhoFlag := cmd.fs.String("rho", "", "population `values` of the measure, comma-separated, in (-1, 1), not 0 (required)")
	nFlag := cmd.fs.String("n", "", "sample `sizes`, comma-separated: print the power")
	powerFlag := cmd.fs.String("power", "", "target `powers`, comma-separated, in (alpha, 1): print the n needed")
	alpha := cmd.fs.Float64("alpha", 0.05, "significance level of the test")
	alt := cmd.fs.String("alternative", "two-sided", "two-sided, greater or less")
	if code := cmd.parse(args, stdout, stderr); code >= 0 {
		return code
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "concordat: error: power: "+format+"\n", a...)
		cmd.usage(stderr)
		return exitUsage
	}
	rhos, err := floatList("--rho", *rhoFlag)
	if err != nil {
		return fail("%v", err)
	}
	powers, err := floatList("--power", *powerFlag)
	if err != nil {
		return fail("%v", err)
	}
	nf, err := floatList("--n", *nFlag)
	if err != nil {
		return fail("%v", err)
	}
	var ns []int
	for _, v := range nf {
		if v != math.Trunc(v) || v > 1e9 {
			return fail("--n must be whole numbers, got %g", v)
		}
		ns = append(ns, int(v))
	}
	m, ok := powerMeasures[*measure]
	if !ok {
		return fail("unknown measure %q; choose spearman, kendall_b or pearson", *measure)
	}
	a, ok := map[string]stats.Alternative{"two-sided": stats.TwoSided, "greater": stats.Greater, "less": stats.Less}[*alt]
	if !ok {
		return fail("unknown alternative %q; choose two-sided, greater or less", *alt)
	}
	switch {
	case len(rhos) == 0:
		return fail("--rho is required")
	case (len(ns) == 0) == (len(powers) == 0):
		return fail("give either --n (to get the power) or --power (to get n), not both")
	case !(*alpha > 0 && *alpha < 1):
		return fail("--alpha must be in (0, 1), got %g", *alpha)
	}
	for _, r := range rhos {
		if !(r > -1 && r < 1) || r == 0 {
			return fail("--rho must be in (-1, 1) and not 0, got %g", r)
		}
		if (a == stats.Greater && r < 0) || (a == stats.Less && r > 0) {
			return fail("rho = %g lies on the other side of the %s alternative: the test has (almost) no power there", r, *alt)
		}
	}
	for _, p := range powers {
		if !(p > *alpha && p < 1) {
			return fail("--power must be in (alpha, 1), got %g", p)
		}
	}
	minN := 4
	if m == stats.KendallB {
		minN = 5
	}
	for _, n := range ns {
		if n < minN {
			return fail("--n must be at least %d for %s, got %d", minN, *measure, n)
		}
	}

	// The measure's own symbol heads the column: tau for Kendall.
	sym := "rho"
	if m == stats.KendallB {
		sym = "tau"
	}
	// An exact test of a rank correlation cannot give p below 1/n!
	// (2/n! two-sided): below that n the Fisher z approximation would
	// promise power where there is none.
	unreachable := func(n int) bool {
		if m == stats.PearsonR {
			return false
		}
		least := 1 / math.Gamma(float64(n)+1)
		if a == stats.TwoSided {
			least *= 2
		}
		return least > *alpha
	}
	var footnotes []string
	tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	sides := "two-sided"
	if a != stats.TwoSided {
		sides = "one-sided (" + *alt + ")"
	}
	fmt.Fprintf(stdout, "%s, %s test at alpha = %g (Fisher z approximation)\n", *measure, sides, *alpha)
	if len(ns) > 0 {
		fmt.Fprintf(tw, "%s\tn\tpower\t\n", sym)
		for _, r := range rhos {
			for _, n := range ns {
				if unreachable(n) {
					fmt.Fprintf(tw, "%g\t%d\t0 *\t\n", r, n)
					footnotes = append(footnotes, fmt.Sprintf("* with n = %d no exact test can reach p < %g, so the power is 0", n, *alpha))
					continue
				}
				fmt.Fprintf(tw, "%g\t%d\t%.3f\t\n", r, n, stats.CorrelationPower(m, r, n, *alpha, a))
			}
		}
	} else {
		fmt.Fprintf(tw, "%s\tpower\tn needed\t\n", sym)
		for _, r := range rhos {
			for _, p := range powers {
				n := stats.CorrelationSampleSize(m, r, p, *alpha, a)
				for n > 0 && unreachable(n) {
					n++
				}
				cell := strconv.Itoa(n)
				if n <= 0 {
					cell = "unreachable *"
					footnotes = append(footnotes, fmt.Sprintf("* %s = %g is too close to 0: no n up to the search limit reaches power %g", sym, r, p))
				}
				fmt.Fprintf(tw, "%g\t%g\t%s\t\n", r, p, cell)
			}
		}
	}
	tw.Flush()
	for _, f := range slices.Compact(footnotes) {
		fmt.Fprintln(stdout, f)
	}
	small := false
	for _, r := range rhos {
		for _, n := range ns {
			small = small || (n < 10 && !unreachable(n))
		}
		for _, p := range powers {
			n := stats.CorrelationSampleSize(m, r, p, *alpha, a)
			small = small || (n > 0 && n < 10)
		}
	}
	if small && m != stats.PearsonR {
		fmt.Fprintln(stdout, "note: below n = 10 the Fisher z approximation is rough for rank correlations; the exact test's power can be much lower")
	}
	return exitOK
}

// floatList parses a comma-separated list of numbers; "" is an empty list.
func floatList(flag, s string) ([]float64, error) {
	if strings.TrimSpace(s) == "" {
		return nil, nil
	}
	var out []float64
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s: %q is not a number", flag, strings.TrimSpace(f))
		}
		out = append(out, v)
	}
	return out, nil
}
