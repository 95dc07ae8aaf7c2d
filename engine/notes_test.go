package engine

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// TestNotesTellTheReaderWhatToDistrust checks, case by case, the notes a
// reader sees beside a result and the values they qualify. The floors
// 2/4! = 0.083 and 2/5! = 0.0167 are the smallest two-sided exact p-values
// of untied rank correlations at n = 4 and 5 (by counting permutations; also
// R 4.2.2: cor.test(1:4, 1:4, method = "spearman") prints p = 0.08333).
func TestNotesTellTheReaderWhatToDistrust(t *testing.T) {
	for _, tc := range []struct {
		name     string
		test     string // body of the test block after `pairing = "p"`
		data     string
		measure  string
		want     []string // substrings that must appear among the warnings
		absent   []string // substrings that must not
		pNull    bool     // the p-value must be withheld
		estimate float64  // NaN: do not check
		ordinal  bool     // y holds the labels poor < fair < good
	}{
		{
			name: "perfect_n4_spearman", measure: "spearman", test: `p_value = "asymptotic"`,
			data:  "x,y\n1,10\n2,20\n3,30\n4,40\n",
			want:  []string{"perfect association", "zero width here (the sample association is perfect)", "below 0.083", "withheld"},
			pNull: true, estimate: 1,
		},
		{
			name: "perfect_n4_kendall", measure: "kendall_b", test: `measures = ["kendall_b"]
  p_value = "asymptotic"`,
			data:   "x,y\n1,10\n2,20\n3,30\n4,40\n",
			want:   []string{"perfect association", "normal approximation gives p = 0.042", "withheld", "too few for the fieller interval"},
			absent: []string{"limit, 0", "collapses"},
			pNull:  true, estimate: 1,
		},
		{
			name: "perfect_n3_no_interval", measure: "spearman", test: `p_value = "asymptotic"`,
			data:   "x,y\n1,10\n2,20\n3,30\n",
			want:   []string{"perfect association", "too few for the bonett-wright interval"},
			absent: []string{"collapses"},
			pNull:  true, estimate: 1,
		},
		{
			// The exact p of rho = 1 at n = 4 is 2/4! = 0.0833 (counting
			// permutations); auto computes it instead of withholding t's 0.
			name: "perfect_n4_auto_is_exact", measure: "spearman",
			data:     "x,y\n1,10\n2,20\n3,30\n4,40\n",
			want:     []string{"perfect association", "with n = 4 no test of these data can reach p < 0.05: the smallest attainable p-value is 0.083"},
			absent:   []string{"withheld", "limit, 0"},
			estimate: 1,
		},
		{
			name: "small_n_kept", measure: "spearman", test: `p_value = "asymptotic"`,
			data:     "x,y\n1,2\n2,1\n3,4\n4,3\n5,6\n6,5\n7,8\n",
			want:     []string{"n = 7 is small"},
			absent:   []string{"withheld", "perfect"},
			estimate: math.NaN(),
		},
		{
			name: "min_rule_with_ties", measure: "spearman", test: `ties = "low"`,
			data:     "x,y\n1,2\n1,1\n3,4\n4,3\n5,6\n6,5\n7,8\n8,7\n9,9\n10,11\n11,10\n",
			want:     []string{`"min" tie rule`, "its p-value permutes these ranks, but its interval assumes average ranks"},
			estimate: math.NaN(),
		},
		{
			name: "min_rule_with_ties_asymptotic", measure: "spearman", test: `ties = "low"
  p_value = "asymptotic"`,
			data:     "x,y\n1,2\n1,1\n3,4\n4,3\n5,6\n6,5\n7,8\n8,7\n9,9\n10,11\n11,10\n",
			want:     []string{`"min" tie rule`, "its p-value and interval assume average ranks"},
			estimate: math.NaN(),
		},
		{
			name: "min_rule_without_ties", measure: "spearman", test: `ties = "low"`,
			data:     "x,y\n1,2\n2,1\n3,4\n4,3\n5,6\n6,5\n7,8\n8,7\n9,9\n10,11\n11,10\n",
			absent:   []string{"tie rule"},
			estimate: math.NaN(),
		},
		{
			name: "ties_suggest_tau_b", measure: "spearman",
			data:     "x,y\n1,1\n1,2\n1,3\n2,4\n2,5\n2,6\n3,7\n3,8\n3,9\n4,10\n4,11\n",
			want:     []string{"11 of 11 x values (100%) equal another value", "Kendall's tau-b is often preferred"},
			estimate: math.NaN(),
		},
		{
			name: "ties_no_suggestion_when_tau_b_reported", measure: "spearman", test: `measures = ["spearman", "kendall_b"]`,
			data:     "x,y\n1,1\n1,2\n1,3\n2,4\n2,5\n2,6\n3,7\n3,8\n3,9\n4,10\n5,11\n",
			want:     []string{"9 of 11 x values (81%) equal another value"},
			absent:   []string{"often preferred"},
			estimate: math.NaN(),
		},
		{
			name: "constant_ordinal_shows_label", measure: "spearman",
			data:     "x,y\n1,fair\n2,fair\n3,fair\n4,fair\n",
			want:     []string{`all 4 values are "fair"`},
			pNull:    true,
			estimate: math.NaN(),
			ordinal:  true,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			levels := ""
			if tc.ordinal {
				levels = `column "y" { levels = ["poor", "fair", "good"] }`
			}
			p := plan(t, `
dataset "d" {
  path = "d.csv"
  `+levels+`
}
ties "low" { rank = "min" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing = "p"
  `+tc.test+`
}
table "o" {
  tests = ["t"]
  path  = "o.json"
}
`, map[string]string{"d.csv": tc.data})
			comp := mustCompute(t, p)
			i := slices.IndexFunc(comp.Results, func(r Result) bool { return r.Measure == tc.measure })
			if i < 0 {
				t.Fatalf("no %s result", tc.measure)
			}
			r := comp.Results[i]
			all := strings.Join(r.Warnings, "\n")
			for _, w := range tc.want {
				if !strings.Contains(all, w) {
					t.Errorf("warnings lack %q:\n%s", w, all)
				}
			}
			for _, w := range tc.absent {
				if strings.Contains(all, w) {
					t.Errorf("warnings contain %q:\n%s", w, all)
				}
			}
			if tc.pNull != math.IsNaN(r.PValue) {
				t.Errorf("p = %v, withheld wanted: %v", r.PValue, tc.pNull)
			}
			if !math.IsNaN(tc.estimate) && r.Estimate != tc.estimate {
				t.Errorf("estimate = %v, want %v", r.Estimate, tc.estimate)
			}
		})
	}
}

// TestGroupsSortNumericallyWhenAllLabelsAreNumbers: "10" after "2"; text
// labels in text order.
func TestGroupsSortNumericallyWhenAllLabelsAreNumbers(t *testing.T) {
	for _, tc := range []struct{ in, want []string }{
		{[]string{"10", "2", "1", "-3", "2.5"}, []string{"-3", "1", "2", "2.5", "10"}},
		{[]string{"10", "2", "b", "a"}, []string{"10", "2", "a", "b"}},
	} {
		got := slices.Clone(tc.in)
		sortLabels(got)
		if !slices.Equal(got, tc.want) {
			t.Errorf("sortLabels(%v) = %v, want %v", tc.in, got, tc.want)
		}
	}
}
