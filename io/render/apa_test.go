package render

import (
	"math"
	"testing"
)

// The rules below are those of the Publication Manual of the American
// Psychological Association, 7th edition (2020). Section numbers are given
// from memory of the printed manual: §6.36 (Decimal fractions), §6.43
// (Statistics in text), §6.44 with Table 6.5 (Statistical symbols and
// abbreviations), §7.14 (Table notes).

func TestAPANumbers(t *testing.T) {
	apa := Style{Numbers: APA, Digits: 2}
	for _, tc := range []struct {
		rule string
		cell Cell
		want string
	}{
		// §6.36: no zero before the decimal point when the statistic
		// cannot be greater than 1 (correlations, proportions, p).
		{"§6.36 no leading zero for r", Real(0.4236).Bounded(), ".42"},
		{"§6.36 no leading zero for a negative r", Real(-0.4236).Bounded(), "-.42"},
		{"§6.36 no leading zero for p", Prob(0.0312), ".031"},
		{"§6.36 no leading zero in a CI of r", Interval(-0.6633, -0.0853).Bounded(), "[-.66, -.09]"},
		// §6.36: a zero before the decimal point when the number can
		// exceed 1 (a mean, a t statistic): Real cells not marked Bounded.
		{"§6.36 leading zero for numbers that can exceed 1", Real(0.4236), "0.42"},
		{"§6.36 leading zero in an unbounded interval", Interval(-0.25, 0.5), "[-0.25, 0.50]"},
		// §6.36: r = 1 keeps its digit: nothing to drop.
		{"§6.36 a perfect correlation keeps its 1", Real(1).Bounded(), "1.00"},
		{"§6.36 a perfect negative correlation", Real(-1).Bounded(), "-1.00"},
		// §6.36: correlations rounded to two decimals (the table's digits
		// in the APA style default to 2).
		{"§6.36 two decimals for r", Real(0.4251).Bounded(), ".43"},
		{"§6.36 rounding to zero keeps no sign", Real(-0.004).Bounded(), ".00"},
		// §6.36: "report exact p values (e.g., p = .031) to two or three
		// decimal places. However, report p values less than .001 as
		// p < .001."
		{"§6.36 exact p to three decimals", Prob(0.0031), ".003"},
		{"§6.36 exact p, larger", Prob(0.6462), ".646"},
		{"§6.36 p below .001 as < .001", Prob(0.00099), "< .001"},
		{"§6.36 p of exactly .001 is exact", Prob(0.001), ".001"},
		{"§6.36 p rounding up to .001 is exact", Prob(0.0009996), "< .001"},
		{"§6.36 tiny p", Prob(1e-300), "< .001"},
		{"§6.36 p = 1 keeps its digit", Prob(1), "1.000"},
		// The digits of the table do not change the p rule.
		{"§6.36 p ignores the table's digits", Prob(0.04567), ".046"},
	} {
		got := mdCellStyled(tc.cell, apa)
		if got != tc.want {
			t.Errorf("%s: got %q, want %q", tc.rule, got, tc.want)
		}
	}
	// The Plain style keeps leading zeros and the table's digits.
	plain := Style{Numbers: Plain, Digits: 3}
	for _, tc := range []struct {
		cell Cell
		want string
	}{{Real(0.4236).Bounded(), "0.424"}, {Prob(0.0312), "0.031"}, {Prob(0.0004), "< 0.001"}} {
		if got := mdCellStyled(tc.cell, plain); got != tc.want {
			t.Errorf("plain: got %q, want %q", got, tc.want)
		}
	}
}

func TestAPAStatement(t *testing.T) {
	nan := math.NaN()
	base := func() Statement {
		return Statement{Symbol: "r", Sub: "s", DF: 48, N: 50, Estimate: 0.4213, Digits: 2,
			Lo: nan, Hi: nan, Level: 0.95, P: 0.0031, Adjusted: nan}
	}
	for _, tc := range []struct {
		rule string
		edit func(*Statement)
		want string
	}{
		// §6.43: the statistic, its degrees of freedom in parentheses,
		// its value and p: the issue's own example, rₛ(48) = .42, p = .003;
		// for r and rho the t test has n − 2 degrees of freedom.
		{"§6.43 Spearman with df", func(*Statement) {}, "rₛ(48) = .42, p = .003"},
		{"§6.43 Pearson's r has no subscript", func(s *Statement) { s.Sub = "" }, "r(48) = .42, p = .003"},
		{"§6.36 negative r without leading zero, true minus", func(s *Statement) { s.Estimate = -0.4213 }, "rₛ(48) = −.42, p = .003"},
		{"§6.36 p < .001 written with <", func(s *Statement) { s.P = 2e-7 }, "rₛ(48) = .42, p < .001"},
		// §6.43: a confidence interval follows the value, its level named:
		// "95% CI [.16, .62]".
		{"§6.43 confidence interval", func(s *Statement) { s.Lo, s.Hi = 0.1612, 0.6203 }, "rₛ(48) = .42, 95% CI [.16, .62], p = .003"},
		{"§6.43 interval across zero", func(s *Statement) { s.Lo, s.Hi = -0.05, 0.6203 }, "rₛ(48) = .42, 95% CI [−.05, .62], p = .003"},
		// τ has no degrees of freedom (its test uses S, exact or normal):
		// the sample size takes the parentheses, as in χ²(4, N = 90), and
		// Table 6.5: N for the whole sample, n for a subsample.
		{"§6.43/Table 6.5 tau-b with N", func(s *Statement) { s.Symbol, s.Sub, s.DF, s.N = "τ", "b", -1, 351 }, "τ_b(N = 351) = .42, p = .003"},
		{"Table 6.5 n for a subsample", func(s *Statement) { s.Symbol, s.Sub, s.DF, s.N, s.Subsample = "τ", "b", -1, 116, true }, "τ_b(n = 116) = .42, p = .003"},
		{"§6.43 gamma", func(s *Statement) { s.Symbol, s.Sub, s.DF, s.N = "γ", "", -1, 40 }, "γ(N = 40) = .42, p = .003"},
		// An adjusted p is named by its method after the raw one.
		{"adjusted p named", func(s *Statement) { s.Adjusted, s.Method = 0.0124, "Holm" }, "rₛ(48) = .42, p = .003; Holm-adjusted p = .012"},
		{"one-sided p said", func(s *Statement) { s.OneSided = true }, "rₛ(48) = .42, p = .003, one-sided"},
		{"no p-value", func(s *Statement) { s.P = nan }, "rₛ(48) = .42"},
		{"three decimals asked", func(s *Statement) { s.Digits = 3 }, "rₛ(48) = .421, p = .003"},
	} {
		st := base()
		tc.edit(&st)
		if got := st.String(); got != tc.want {
			t.Errorf("%s: got %q, want %q", tc.rule, got, tc.want)
		}
	}
	// LaTeX and HTML set the symbols in italics with real subscripts.
	st := base()
	st.Estimate = -0.4213
	if got, want := latexStatement(&st), `$r_{s}$(48) = $-$.42, $p$ = .003`; got != want {
		t.Errorf("LaTeX: got %q, want %q", got, want)
	}
	if got, want := htmlStatement(&st), `<i>r</i><sub>s</sub>(48) = −.42, <i>p</i> = .003`; got != want {
		t.Errorf("HTML: got %q, want %q", got, want)
	}
	tau := Statement{Symbol: "τ", Sub: "b", DF: -1, N: 30, Estimate: 0.3, Digits: 2, Lo: nan, Hi: nan, P: 0.0004, Adjusted: nan}
	if got, want := latexStatement(&tau), `$\tau_{b}$($N$ = 30) = .30, $p$ \textless{} .001`; got != want {
		t.Errorf("LaTeX tau: got %q, want %q", got, want)
	}
	// An undefined estimate makes the whole statement undefined.
	und := Report(Statement{Symbol: "r", Estimate: nan})
	if got := mdCellStyled(und, Style{Numbers: APA, Digits: 2}); got != mdNull {
		t.Errorf("undefined statement: %q", got)
	}
}
