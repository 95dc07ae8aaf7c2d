package engine

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"concordat/engine/stats"
	"concordat/io/render"
	"concordat/recipe"
)

// findValue returns the reproduced value of the row printed for (x, y,
// measure) and the value name, failing the test when there is none.
func findValue(t *testing.T, rp *Reproduction, x, y, measure, value string) ReproducedValue {
	t.Helper()
	for _, v := range rp.Values {
		if v.Row.X == x && v.Row.Y == y && v.Row.Measure.String() == measure && v.Value == value {
			return v
		}
	}
	t.Fatalf("no %s of %s ~ %s (%s)", value, x, y, measure)
	return ReproducedValue{}
}

// The worked scenario (recipes/school_replication.hcl): an invented
// "published" table whose values were computed outside the engine (from the
// CSV file with encoding/csv and the stats kernels: SpearmanRho, Pearson,
// CountPairs, SpearmanRhoD, CorrelationT), some under other conventions
// than the recipe's. The diagnosis must name each convention.
func TestReproduceScenario(t *testing.T) {
	p, diags := recipe.Load("../recipes/school_replication.hcl")
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	comp := mustCompute(t, p)
	if len(comp.Reproductions) != 1 {
		t.Fatalf("%d reproductions", len(comp.Reproductions))
	}
	rp := comp.Reproductions[0]
	if m, n := rp.Counts(); m != 28 || n != 38 || rp.Complete() {
		t.Errorf("counts %d of %d", m, n)
	}
	if got := rp.Summary(); got != "28 of 38 printed values reproduced" {
		t.Errorf("summary %q", got)
	}
	for _, c := range []struct {
		x, y, measure, value string
		reason               string // in the first convention named; "" for none
	}{
		{"sleep_hours", "feels_rested", "spearman", "estimate", "listwise deletion (0.7042, n = 235) — reproduces the whole row"},
		{"sleep_hours", "feels_rested", "spearman", "n", "listwise deletion (n = 235)"},
		{"sleep_hours", "enjoys_reading", "spearman", "estimate", "the no-ties formula"},
		{"sleep_hours", "enjoys_reading", "spearman", "p_value", "the no-ties formula"},
		{"sleep_hours", "homework_hours", "spearman", "p_value", "a one-sided p-value (p = 0.4160)"},
		{"screen_time_min", "enjoys_reading", "kendall_b", "estimate", "Kendall's tau-a instead of Kendall's tau-b (-0.1811)"},
		{"screen_time_min", "feels_rested", "kendall_b", "estimate", "truncation instead of rounding"},
		{"screen_time_min", "feels_rested", "spearman", "n", "n counted before deletion (n = 240)"},
		{"sleep_hours", "homework_hours", "kendall_b", "estimate", ""},
	} {
		v := findValue(t, rp, c.x, c.y, c.measure, c.value)
		if v.Outcome != NotMatched {
			t.Errorf("%s ~ %s %s %s: %v", c.x, c.y, c.measure, c.value, v.Outcome)
			continue
		}
		switch {
		case c.reason == "" && (len(v.Reproduces) != 0 || v.Tried == 0):
			t.Errorf("%s ~ %s %s %s: reproduces with %q after %d tries; want none", c.x, c.y, c.measure, c.value, v.Reproduces, v.Tried)
		case c.reason != "" && (len(v.Reproduces) == 0 || !strings.Contains(v.Reproduces[0], c.reason)):
			t.Errorf("%s ~ %s %s %s: reproduces with %q; want first %q", c.x, c.y, c.measure, c.value, v.Reproduces, c.reason)
		}
	}
	// Pearson's r printed as rho: named (the "dense" tie rule happens to
	// reproduce the two printed digits too, and is named first, as tie
	// rules are tried before measures).
	v := findValue(t, rp, "screen_time_min", "enjoys_reading", "spearman", "estimate")
	if !strings.Contains(strings.Join(v.Reproduces, "; "), "Pearson's r instead of Spearman's rho (-0.2889)") {
		t.Errorf("Pearson not named: %q", v.Reproduces)
	}
	// Values computed as the recipe computes them match, marks and "ns"
	// included.
	for _, c := range [][4]string{
		{"sleep_hours", "feels_rested", "kendall_b", "estimate"},
		{"sleep_hours", "feels_rested", "kendall_b", "stars"},
		{"sleep_hours", "feels_rested", "spearman", "p_value"},
		{"sleep_hours", "homework_hours", "kendall_b", "p_value"},
		{"sleep_hours", "homework_hours", "kendall_b", "stars"},
		{"screen_time_min", "homework_hours", "spearman", "estimate"},
	} {
		if v := findValue(t, rp, c[0], c[1], c[2], c[3]); v.Outcome != Matched || v.Tried != 0 || len(v.Reproduces) != 0 {
			t.Errorf("%v: %+v", c, v)
		}
	}
}

// The reproduction and its diagnosis do not depend on the worker count,
// and it is recorded as a step after the tests'.
func TestReproduceDeterministic(t *testing.T) {
	p, diags := recipe.Load("../recipes/school_replication.hcl")
	if diags.HasErrors() {
		t.Fatal(diags)
	}
	var records [][]byte
	for _, jobs := range []int{1, 4} {
		comp, err := Compute(context.Background(), p, Options{Jobs: jobs})
		if err != nil {
			t.Fatal(err)
		}
		var b bytes.Buffer
		if err := render.Encode(&b, reproductionRecords(comp.Reproductions[0]), render.JSON, -1); err != nil {
			t.Fatal(err)
		}
		records = append(records, b.Bytes())
		if len(comp.steps) != 2 || comp.steps[1].Test != `published "table_2"` || comp.steps[1].Results != 38 {
			t.Errorf("steps %+v", comp.steps)
		}
	}
	if !bytes.Equal(records[0], records[1]) {
		t.Error("records differ between --jobs 1 and --jobs 4")
	}
}

// adjustData is invented: four pairs (two x, two y) of twenty rows with
// moderate associations, so that a multiplicity adjustment moves p-values
// without pushing them to 1.
const adjustData = "a,b,c,d\n" +
	"1,3,2,8\n2,1,4,7\n3,4,1,9\n4,2,6,5\n5,6,3,6\n6,5,8,4\n7,8,5,7\n8,7,9,2\n9,10,7,5\n10,9,11,3\n" +
	"11,12,10,6\n12,11,13,1\n13,14,12,4\n14,13,15,2\n15,16,14,3\n16,15,17,1\n17,18,16,5\n18,17,19,2\n19,20,18,4\n20,19,20,3\n"

// A p-value printed after an adjustment the recipe does not make (or
// without the one it makes) is recognised, with the family of the test's
// results of the measure.
func TestReproduceAdjustment(t *testing.T) {
	head := `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["a", "b"]
  y = ["c", "d"]
}
test "t" {
  pairing = "p"
  p_value = "asymptotic"
  adjust  = "%s"
}
`
	files := map[string]string{"d.csv": adjustData}
	raw := mustCompute(t, plan(t, fmt.Sprintf(head, "none"), files)).Results
	var fam []float64
	for _, r := range raw {
		fam = append(fam, r.PValue)
	}
	// The second result (a ~ d) is third smallest of the four: Holm
	// multiplies it by 2, Bonferroni by 4.
	target := raw[1]
	if target.X != "a" || target.Y != "d" || !(target.PValue > 0.001 && target.PValue < 0.01) {
		t.Fatalf("unexpected data: %+v", target)
	}
	bonf := math.Min(1, 4*target.PValue)
	holm := stats.Adjust(fam, stats.Holm)[1]
	printed := func(p float64) string { return strconv.FormatFloat(p, 'f', 4, 64) }

	for _, c := range []struct {
		adjust, printed, want string
	}{
		{"none", printed(bonf), "the Bonferroni adjustment over the test's 4 spearman results"},
		{"holm", printed(target.PValue), "no multiplicity adjustment"},
		{"none", printed(holm), "the Holm adjustment"},
	} {
		src := fmt.Sprintf(head, c.adjust) + fmt.Sprintf(`
published "x" {
  test = "t"
  row {
    x       = "a"
    y       = "d"
    p_value = %q
  }
}`, c.printed)
		rp := mustCompute(t, plan(t, src, files)).Reproductions[0]
		v := rp.Values[0]
		if v.Outcome != NotMatched || !strings.Contains(strings.Join(v.Reproduces, "; "), c.want) {
			t.Errorf("adjust %s, printed %s: %v, reproduces with %q; want %q", c.adjust, c.printed, v.Outcome, v.Reproduces, c.want)
		}
	}
}

// P-value conventions that the engine does not report: Kendall's normal
// approximation with a continuity correction, and the untied null applied
// to tied data.
func TestReproducePValueVariants(t *testing.T) {
	const data = "x,y\n1,2\n2,1\n2,3\n3,3\n4,5\n4,4\n5,6\n6,5\n6,7\n7,8\n8,6\n8,9\n9,8\n10,10\n"
	src := `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing  = "p"
  measures = ["kendall_b"]
  p_value  = "asymptotic"
}
`
	files := map[string]string{"d.csv": data}
	p := plan(t, src, files)
	r := mustCompute(t, p).Results[0]
	xs := []float64{1, 2, 2, 3, 4, 4, 5, 6, 6, 7, 8, 8, 9, 10}
	ys := []float64{2, 1, 3, 3, 5, 4, 6, 5, 7, 8, 6, 9, 8, 10}
	c := stats.CountPairs(xs, ys)
	if c.TauB() != r.Estimate {
		t.Fatalf("tau-b %v, engine %v", c.TauB(), r.Estimate)
	}
	cc := stats.KendallNormalCorrected(c, stats.TwoSided)
	// S of tied data may fall between the values the untied null takes
	// (N − 2I, N = n(n − 1)/2): its two-sided tail starts at the next
	// one, |S| + 1.
	s := c.S()
	if (int64(c.N*(c.N-1)/2)-s)%2 != 0 {
		s++
	}
	untied := stats.KendallExactP(s, c.N, stats.TwoSided)
	for _, tc := range []struct {
		p    float64
		want string
	}{
		{cc, "a continuity correction"},
		{untied, "the p-value of the untied null distribution, ties ignored"},
	} {
		pub := src + fmt.Sprintf(`
published "x" {
  test = "t"
  row {
    x       = "x"
    y       = "y"
    p_value = %q
  }
}`, "p = "+strconv.FormatFloat(tc.p, 'e', 3, 64))
		v := mustCompute(t, plan(t, pub, files)).Reproductions[0].Values[0]
		if v.Outcome != NotMatched || !strings.Contains(strings.Join(v.Reproduces, "; "), tc.want) {
			t.Errorf("printed %v (engine %v): %v, %q; want %q", tc.p, r.PValue, v.Outcome, v.Reproduces, tc.want)
		}
	}
}

// Conventions of the engine's own settings: an exact p-value where the
// recipe asks for the asymptotic one, and another tie rule for rho.
func TestReproduceEngineConventions(t *testing.T) {
	// Tied (for the tie rule) and untied (for the exact null) invented data.
	const tied = "x,y\n1,2\n2,1\n2,3\n3,3\n4,5\n4,4\n5,6\n6,5\n6,7\n7,8\n8,6\n8,9\n9,8\n10,10\n"
	const untied = "x,y\n1,3\n2,1\n3,4\n4,2\n5,7\n6,5\n7,6\n8,10\n9,8\n10,12\n11,9\n12,11\n"
	src := `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing  = "p"
  p_value  = "%s"
  ties     = "r"
}
ties "r" { rank = "%s" }
`
	exact := mustCompute(t, plan(t, fmt.Sprintf(src, "exact", "average"), map[string]string{"d.csv": untied})).Results[0]
	minRanks := mustCompute(t, plan(t, fmt.Sprintf(src, "asymptotic", "min"), map[string]string{"d.csv": tied})).Results[0]
	if exact.PMethod != "exact" {
		t.Fatalf("p_method %q", exact.PMethod)
	}
	for _, tc := range []struct {
		data, estimate, p, want string
	}{
		{untied, "", "p = " + strconv.FormatFloat(exact.PValue, 'e', 3, 64), "an exact p-value"},
		{tied, strconv.FormatFloat(minRanks.Estimate, 'f', 4, 64), "", `the "min" tie rule`},
	} {
		row := ""
		if tc.estimate != "" {
			row += fmt.Sprintf("estimate = %q\n", tc.estimate)
		}
		if tc.p != "" {
			row += fmt.Sprintf("p_value = %q\n", tc.p)
		}
		pub := fmt.Sprintf(src, "asymptotic", "average") + `
published "x" {
  test = "t"
  row {
    x = "x"
    y = "y"
    ` + row + `
  }
}`
		v := mustCompute(t, plan(t, pub, map[string]string{"d.csv": tc.data})).Reproductions[0].Values[0]
		if v.Outcome != NotMatched || !strings.Contains(strings.Join(v.Reproduces, "; "), tc.want) {
			t.Errorf("%s%s: %v, %q; want %q", tc.estimate, tc.p, v.Outcome, v.Reproduces, tc.want)
		}
	}
}

// A row whose group the data lacks is a diagnostic at the row; an
// undefined estimate is not comparable, with the reason.
func TestReproduceProblems(t *testing.T) {
	const data = "g,x,y,k\na,1,2,5\na,2,1,5\na,3,4,5\nb,4,3,5\nb,5,6,5\nb,6,5,5\n"
	head := `
dataset "d" { path = "d.csv" }
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y", "k"]
  by = "g"
}
test "t" { pairing = "p" }
`
	files := map[string]string{"d.csv": data}
	p := plan(t, head+`
published "x" {
  test = "t"
  row {
    x = "x"
    y = "y"
    group = "c"
    estimate = ".5"
  }
}`, files)
	_, err := Compute(context.Background(), p, Options{})
	var de *DiagnosticsError
	if !errors.As(err, &de) || de.Diags[0].Subject.Start.Line != 13 || !strings.Contains(de.Diags[0].Detail, `Its groups are: "all", "a", "b"`) {
		t.Fatalf("err = %v", err)
	}
	p = plan(t, head+`
published "x" {
  test = "t"
  row {
    x = "x"
    y = "k"
    estimate = ".5"
  }
}`, files)
	v := mustCompute(t, p).Reproductions[0].Values[0]
	if v.Outcome != NotComparable || !strings.Contains(v.Note, "undefined") || !math.IsNaN(v.Recomputed) {
		t.Errorf("%+v", v)
	}
}
