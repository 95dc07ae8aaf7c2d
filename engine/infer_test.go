package engine

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"concordat/engine/stats"
)

// pairCSV writes x and y (and any extra columns) as a CSV table.
func pairCSV(x, y []float64, extra map[string][]float64) string {
	var names []string
	for k := range extra {
		names = append(names, k)
	}
	slices.Sort(names)
	var b strings.Builder
	b.WriteString("x,y")
	for _, k := range names {
		b.WriteString("," + k)
	}
	b.WriteString("\n")
	for i := range x {
		fmt.Fprintf(&b, "%g,%g", x[i], y[i])
		for _, k := range names {
			if v := extra[k][i]; math.IsNaN(v) {
				b.WriteString(",NA")
			} else {
				fmt.Fprintf(&b, ",%g", v)
			}
		}
		b.WriteString("\n")
	}
	return b.String()
}

// testRecipe is a one-test recipe over d.csv's x and y; body goes into the
// test block.
func testRecipe(body string) string {
	return `seed = 7
dataset "d" {
  path = "d.csv"
}
pairing "p" {
  dataset = "d"
  x = ["x"]
  y = ["y"]
}
test "t" {
  pairing = "p"
  ` + body + `
}
table "out" {
  tests = ["t"]
  path  = "out.json"
}
`
}

// noisy returns n pairs with a moderate monotone relation, rounded to
// digits decimals (0 digits makes ties).
func noisy(n, digits int, seed uint64) (x, y []float64) {
	r := rand.New(rand.NewPCG(seed, 1))
	scale := math.Pow10(digits)
	for i := 0; i < n; i++ {
		a := r.NormFloat64()
		b := 0.5*a + r.NormFloat64()
		x = append(x, math.Round(a*scale*3)/scale)
		y = append(y, math.Round(b*scale*3)/scale)
	}
	return x, y
}

func computeOne(t *testing.T, body string, data string) []Result {
	t.Helper()
	p := plan(t, testRecipe(body), map[string]string{"d.csv": data})
	return mustCompute(t, p).Results
}

// TestAutoPicksTheMostAccurateMethod checks the p-value route of each kind
// of sample under p_value = "auto" and "exact", and that the record names it.
func TestAutoPicksTheMostAccurateMethod(t *testing.T) {
	untied := func(n int) string { x, y := noisy(n, 6, uint64(n)); return pairCSV(x, y, nil) }
	tied := func(n int) string { x, y := noisy(n, 0, uint64(n)); return pairCSV(x, y, nil) }
	for _, tc := range []struct {
		name, body, data string
		want             []string // p_method per measure
		note             string   // a substring among the warnings, or ""
	}{
		{"untied small: exact nulls", `measures = ["spearman", "kendall_b", "pearson"]`, untied(12),
			[]string{"exact", "exact", "t"}, ""},
		{"untied mid: edgeworth for rho", `measures = ["spearman", "kendall_b"]`, untied(stats.SpearmanExactMaxN + 1),
			[]string{"edgeworth", "exact"}, ""},
		{"untied large: t and normal", `measures = ["spearman", "gamma"]`, untied(max(stats.SpearmanEdgeworthMaxN, stats.KendallExactMaxN) + 1),
			[]string{"t", "normal"}, ""},
		{"tied small: every arrangement", `measures = ["spearman", "kendall_b", "somers_d"]`, tied(8),
			[]string{"exact", "exact", "exact", "exact"}, "the p-value is exact, but the test has little power"},
		{"tied mid: permutations", `measures = ["spearman", "kendall_b"]`, tied(40),
			[]string{"permutation", "permutation"}, ""},
		{"tied large: asymptotic", `measures = ["spearman", "kendall_b"]`, tied(autoPermutationMaxN + 1),
			[]string{"t", "normal"}, ""},
		{"permutation asked, few arrangements: enumerated", `measures = ["spearman"]
  p_value = "permutation"`, untied(7),
			[]string{"exact"}, "all of them were enumerated and the p-value is exact"},
		{"tied mid, exact asked: permutations", `measures = ["spearman"]
  p_value = "exact"
  permutations = 2000`, tied(40),
			[]string{"permutation"}, "estimated from 2000 random permutations"},
		{"permutation asked", `measures = ["kendall_c", "pearson"]
  p_value = "permutation"
  permutations = 999`, untied(30),
			[]string{"permutation", "permutation"}, ""},
		{"asymptotic asked", `measures = ["spearman", "kendall_a"]
  p_value = "asymptotic"`, untied(12),
			[]string{"t", "normal"}, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			res := computeOne(t, tc.body, tc.data)
			var got []string
			var notes []string
			for _, r := range res {
				got = append(got, r.PMethod)
				notes = append(notes, r.Warnings...)
				if !(r.PValue > 0 && r.PValue <= 1) {
					t.Errorf("%s: p = %v, want in (0, 1]", r.Measure, r.PValue)
				}
			}
			if !reflect.DeepEqual(got, tc.want) {
				t.Errorf("p_method = %v, want %v", got, tc.want)
			}
			if tc.note != "" && !slices.ContainsFunc(notes, func(w string) bool { return strings.Contains(w, tc.note) }) {
				t.Errorf("no note containing %q among %q", tc.note, notes)
			}
		})
	}
}

// TestExactPValuesInTheRecord checks exact p-values end to end against
// values counted by hand: for rho = 1 at n = 5 without ties, exactly one of
// the 5! = 120 orderings reaches it, so the one-sided p is 1/120 and the
// two-sided 2/120 (by counting permutations; also Zar 1972, Table 1, whose
// smallest one-sided level at n = 5 is 0.0083 for rho = 1.0).
func TestExactPValuesInTheRecord(t *testing.T) {
	data := pairCSV([]float64{1, 2, 3, 4, 5}, []float64{10, 20, 30, 40, 50}, nil)
	for alt, want := range map[string]float64{"two-sided": 2.0 / 120, "greater": 1.0 / 120, "less": 1} {
		res := computeOne(t, `measures = ["spearman", "kendall_b"]
  alternative = "`+alt+`"`, data)
		for _, r := range res {
			if r.PMethod != "exact" || math.Abs(r.PValue-want) > 1e-15 {
				t.Errorf("%s %s: p = %v (%s), want %v exact", alt, r.Measure, r.PValue, r.PMethod, want)
			}
		}
	}
}

// TestResamplingIgnoresWorkerCount runs permutation p-values and bootstrap
// intervals with 1 and 4 workers: every number must be identical, because
// each cell's randomness comes only from the seed and its labels.
func TestResamplingIgnoresWorkerCount(t *testing.T) {
	x, y := noisy(60, 0, 3)
	g := make([]float64, len(x))
	for i := range g {
		g[i] = float64(i % 3)
	}
	data := pairCSV(x, y, map[string][]float64{"g": g})
	src := strings.Replace(testRecipe(`measures = ["spearman", "kendall_b", "gamma"]
  p_value = "permutation"
  permutations = 3000
  interval {
    method    = "bca"
    resamples = 500
  }`), `y = ["y"]`, `y = ["y"]
  by = "g"`, 1)
	p := plan(t, src, map[string]string{"d.csv": data})
	var runs [][]Result
	for _, jobs := range []int{1, 4} {
		comp, err := Compute(context.Background(), p, Options{Jobs: jobs})
		if err != nil {
			t.Fatal(err)
		}
		runs = append(runs, comp.Results)
	}
	if !reflect.DeepEqual(runs[0], runs[1]) {
		t.Fatalf("results differ between 1 and 4 workers:\n%+v\n%+v", runs[0], runs[1])
	}
	for _, r := range runs[0] {
		if r.PMethod != "permutation" || !(r.PValue > 0) || !(r.CILow <= r.Estimate && r.Estimate <= r.CIHigh) {
			t.Errorf("%s %s: p = %v (%s), interval [%v, %v] around %v", r.Group, r.Measure, r.PValue, r.PMethod, r.CILow, r.CIHigh, r.Estimate)
		}
	}
}

// TestAdjustmentFormsFamiliesPerMeasure: each test's results of one measure
// (every pair and group) form the family; the adjusted values are what
// stats.Adjust gives on that family.
func TestAdjustmentFormsFamiliesPerMeasure(t *testing.T) {
	x, y := noisy(50, 2, 11)
	z, w := noisy(50, 2, 12)
	data := pairCSV(x, y, map[string][]float64{"z": z, "w": w})
	src := strings.Replace(testRecipe(`measures = ["spearman", "kendall_b"]
  adjust = "holm"`), `x = ["x"]
  y = ["y"]`, `x = ["x", "z"]
  y = ["y", "w"]`, 1)
	res := mustCompute(t, plan(t, src, map[string]string{"d.csv": data})).Results
	for _, m := range []string{"spearman", "kendall_b"} {
		var p, got []float64
		for _, r := range res {
			if r.Measure == m {
				p = append(p, r.PValue)
				got = append(got, r.PAdjusted)
				if r.AdjustMethod != "holm" {
					t.Errorf("adjust_method = %q", r.AdjustMethod)
				}
			}
		}
		if len(p) != 4 {
			t.Fatalf("%s: family of %d, want 4", m, len(p))
		}
		if want := stats.Adjust(p, stats.Holm); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: p_adjusted = %v, want %v", m, got, want)
		}
	}
}

// TestControlsGivePartialCorrelations: with controls, spearman and pearson
// are partial correlations on the rows complete in x, y and every control,
// tested with n − 2 − k degrees of freedom.
func TestControlsGivePartialCorrelations(t *testing.T) {
	x, y := noisy(40, 3, 21)
	age, _ := noisy(40, 1, 22)
	age[3], age[17] = math.NaN(), math.NaN()
	data := pairCSV(x, y, map[string][]float64{"age": age})
	res := computeOne(t, `measures = ["spearman", "pearson"]
  controls = ["age"]`, data)
	var cx, cy, ca []float64
	for i := range x {
		if !math.IsNaN(age[i]) {
			cx, cy, ca = append(cx, x[i]), append(cy, y[i]), append(ca, age[i])
		}
	}
	want := map[string]float64{
		"spearman": stats.PartialSpearman(cx, cy, [][]float64{ca}, stats.TieAverage),
		"pearson":  stats.PartialCorrelation(cx, cy, [][]float64{ca}),
	}
	for _, r := range res {
		if r.N != 38 || r.NDropped != 2 || !reflect.DeepEqual(r.Controls, []string{"age"}) {
			t.Errorf("%s: n = %d, dropped %d, controls %v", r.Measure, r.N, r.NDropped, r.Controls)
		}
		if r.Estimate != want[r.Measure] {
			t.Errorf("%s: estimate %v, want %v", r.Measure, r.Estimate, want[r.Measure])
		}
		if p := stats.PartialT(r.Estimate, 38, 1, stats.TwoSided); r.PValue != p || r.PMethod != "t" {
			t.Errorf("%s: p = %v (%s), want %v (t)", r.Measure, r.PValue, r.PMethod, p)
		}
		if !slices.ContainsFunc(r.Warnings, func(w string) bool { return strings.Contains(w, "2 missing a control (age)") }) {
			t.Errorf("%s: no deletion note in %q", r.Measure, r.Warnings)
		}
	}
}

// TestUnknownControlPointsAtTheRecipe: a control the data lacks is reported
// where the recipe names it, like any other column.
func TestUnknownControlPointsAtTheRecipe(t *testing.T) {
	data := pairCSV([]float64{1, 2, 3, 4}, []float64{1, 3, 2, 4}, map[string][]float64{"age": {1, 2, 3, 4}})
	p := plan(t, testRecipe(`controls = ["agee"]`), map[string]string{"d.csv": data})
	diags := Check(p)
	if len(diags) != 1 || !strings.Contains(diags[0].Detail, `control column "agee" is not a column`) ||
		!strings.Contains(diags[0].Detail, `Did you mean "age"?`) || diags[0].Subject.Start.Line != 12 {
		t.Errorf("diagnostics = %v", diags)
	}
}

// TestUShapeIsFlagged: rho near 0 on a clear U shape carries the
// monotonicity note; a monotone relation does not.
func TestUShapeIsFlagged(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 5))
	var x, u, m []float64
	for i := 0; i < 200; i++ {
		v := r.Float64()*4 - 2
		x = append(x, v)
		u = append(u, v*v+0.2*r.NormFloat64())
		m = append(m, v+0.5*r.NormFloat64())
	}
	const note = "the relation is not monotone"
	has := func(res []Result) bool {
		return slices.ContainsFunc(res[0].Warnings, func(w string) bool { return strings.Contains(w, note) })
	}
	if res := computeOne(t, `measures = ["spearman"]`, pairCSV(x, u, nil)); !has(res) {
		t.Errorf("U shape (rho = %.3f) not flagged: %q", res[0].Estimate, res[0].Warnings)
	}
	if res := computeOne(t, `measures = ["spearman"]`, pairCSV(x, m, nil)); has(res) {
		t.Errorf("monotone relation flagged: %q", res[0].Warnings)
	}
}

// TestTextbookExampleThroughTheEngine runs the Hollander & Wolfe (1973,
// Nonparametric Statistical Methods, p. 187) example end to end under
// p_value = "auto": nine untied pairs, so both p-values are exact.
// Kendall: T = 26 concordant pairs, one-sided p = 0.0597 (the book's table of
// the exact null; from memory). R 4.2.2, cor.test(x, y, method = "kendall")
// and method = "spearman" (exact enumeration for n < 10), printed
// 0.05971947 / 0.1194389 (tau) and 0.04839892 / 0.09679784 (rho, = 0.6),
// one- and two-sided; R prints 7 significant digits, so the tolerance is 5e-7 relative.
func TestTextbookExampleThroughTheEngine(t *testing.T) {
	x := []float64{44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1}
	y := []float64{2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8}
	want := map[string]map[string]float64{
		"two-sided": {"kendall_b": 0.1194389, "spearman": 0.09679784},
		"greater":   {"kendall_b": 0.05971947, "spearman": 0.04839892},
	}
	for alt, ps := range want {
		res := computeOne(t, `measures = ["spearman", "kendall_b"]
  alternative = "`+alt+`"`, pairCSV(x, y, nil))
		for _, r := range res {
			w := ps[r.Measure]
			if r.PMethod != "exact" || math.Abs(r.PValue-w) > 5e-7*w {
				t.Errorf("%s %s: p = %.9g (%s), want %.9g (exact)", alt, r.Measure, r.PValue, r.PMethod, w)
			}
		}
	}
}

// TestEdgeworthFarTailIsBounded: beyond the reach of the Edgeworth series
// neither the series nor t can be trusted (t is far too small there), so
// the record carries the series' tail at its edge, an upper bound on the
// exact p-value, with a note; inside the reach it carries the series.
func TestEdgeworthFarTailIsBounded(t *testing.T) {
	n := stats.SpearmanExactMaxN + 2
	var x, near, mid []float64
	for i := 0; i < n; i++ {
		x = append(x, float64(i))
		near = append(near, float64(i^1)) // swap neighbours: rho ≈ 0.99
		mid = append(mid, float64((i*7)%n))
	}
	far := computeOne(t, `measures = ["spearman"]`, pairCSV(x, near, nil))[0]
	_, edgeP := stats.SpearmanEdgeworthReach(far.Estimate, n)
	if far.PMethod != "edgeworth" || far.PValue != 2*edgeP || !slices.ContainsFunc(far.Warnings, func(w string) bool {
		return strings.Contains(w, "beyond the reach of the Edgeworth series") && strings.Contains(w, "an upper bound")
	}) {
		t.Errorf("rho = %.3f: p = %g (%s), want 2 × %g; notes %q", far.Estimate, far.PValue, far.PMethod, edgeP, far.Warnings)
	}
	// The exact two-sided p of these data is at least that of rho = 1,
	// 2/n!; t would give less than that.
	if floor := 2 / math.Gamma(float64(n)+1); !(far.PValue > floor) {
		t.Errorf("p = %g below the exact floor %g", far.PValue, floor)
	}
	if in := computeOne(t, `measures = ["spearman"]`, pairCSV(x, mid, nil))[0]; in.PMethod != "edgeworth" || len(in.Warnings) != 0 {
		t.Errorf("rho = %.3f: p_method %s, notes %q; want edgeworth without notes", in.Estimate, in.PMethod, in.Warnings)
	}
}

// TestFirstRuleWithTiesRuns: under the "first" rule Spearman's ranks are all
// distinct, a permutation of 1..n, so the untied exact null applies however
// many ties the values hold (and enumeration, were it used, would have n!
// arrangements: the run must not try to enumerate the values' few).
func TestFirstRuleWithTiesRuns(t *testing.T) {
	// Three levels each: few distinct arrangements of the values (at most
	// 12!/(4!4!4!) = 34 650), but 12! orderings of "first" ranks.
	var x, y []float64
	for i := 0; i < 12; i++ {
		x = append(x, float64(i%3))
		y = append(y, float64((i/2)%3))
	}
	src := strings.Replace(testRecipe(`ties = "byorder"
  measures = ["spearman", "kendall_b"]`), `test "t" {`, `ties "byorder" {
  rank = "first"
}
test "t" {`, 1)
	res := mustCompute(t, plan(t, src, map[string]string{"d.csv": pairCSV(x, y, nil)})).Results
	want := stats.SpearmanExactP(res[0].Estimate, 12, stats.TwoSided)
	if res[0].PMethod != "exact" || res[0].PValue != want || res[1].PMethod != "exact" {
		t.Errorf("p = %v (%s), %v (%s); want spearman %v from the untied exact null, exact tau-b",
			res[0].PValue, res[0].PMethod, res[1].PValue, res[1].PMethod, want)
	}
	// Past the exact null's n, p_value = "exact" samples (15! orderings)
	// and says so, rather than enumerating the values' arrangements.
	for i := 0; i < 8; i++ {
		x = append(x, float64(i%3))
		y = append(y, float64((i/2)%3))
	}
	src = strings.Replace(src, `measures = ["spearman", "kendall_b"]`, `measures = ["spearman"]
  p_value = "exact"
  permutations = 999`, 1)
	big := mustCompute(t, plan(t, src, map[string]string{"d.csv": pairCSV(x, y, nil)})).Results[0]
	if big.PMethod != "permutation" || !slices.ContainsFunc(big.Warnings, func(w string) bool { return strings.Contains(w, "not affordable") }) {
		t.Errorf("n = 20, first rule, exact asked: p = %v (%s), notes %q", big.PValue, big.PMethod, big.Warnings)
	}
}

// TestWithheldPValuesStayInTheFamily: an asymptotic p-value withheld at
// small n still counts in the family size, so Bonferroni multiplies the
// others by the full m.
func TestWithheldPValuesStayInTheFamily(t *testing.T) {
	x, y := noisy(60, 2, 4)
	g := make([]float64, len(x))
	for i := range g {
		g[i] = 1
	}
	// Group 0: four perfectly ordered rows, whose t p-value (0) is withheld.
	for i := 0; i < 4; i++ {
		x[i], y[i], g[i] = float64(i), float64(i), 0
	}
	src := strings.Replace(testRecipe(`measures = ["spearman"]
  p_value = "asymptotic"
  adjust = "bonferroni"`), `y = ["y"]`, `y = ["y"]
  by = "g"`, 1)
	res := mustCompute(t, plan(t, src, map[string]string{"d.csv": pairCSV(x, y, map[string][]float64{"g": g})})).Results
	if len(res) != 3 || !math.IsNaN(res[1].PValue) || !math.IsNaN(res[1].PAdjusted) {
		t.Fatalf("group 0 should be withheld: %+v", res)
	}
	for _, r := range []Result{res[0], res[2]} {
		if want := math.Min(1, 3*r.PValue); math.Abs(r.PAdjusted-want) > 1e-15 {
			t.Errorf("group %s: p_adjusted = %v, want 3 × %v", r.Group, r.PAdjusted, r.PValue)
		}
	}
}

// TestTinyPValuesAreBounded: a t tail that underflows is written as the
// bound 1e-300 with a note, never as 0; a result without a p-value has no
// p_method.
func TestTinyPValuesAreBounded(t *testing.T) {
	var x, y []float64
	for i := 0; i < 300; i++ {
		x = append(x, float64(i))
		y = append(y, float64(i)+1e-4*float64(i%3))
	}
	y[10] = y[11] // one tie keeps it off the exact untied routes
	r := computeOne(t, `measures = ["spearman"]
  p_value = "asymptotic"`, pairCSV(x, y, nil))[0]
	if r.PValue != pFloor || !slices.ContainsFunc(r.Warnings, func(w string) bool { return strings.Contains(w, "the bound 1e-300 is written") }) {
		t.Errorf("p = %v, notes %q", r.PValue, r.Warnings)
	}
	flat := computeOne(t, `measures = ["spearman"]`, pairCSV([]float64{1, 2, 3, 4, 5}, []float64{2, 2, 2, 2, 2}, nil))[0]
	if flat.PMethod != "" || flat.CIMethod != "" {
		t.Errorf("constant column: p_method %q, ci_method %q; want none", flat.PMethod, flat.CIMethod)
	}
}

// TestFewExceedances: when almost no random permutation reaches the
// observed value, auto does not let the draw count cap the p-value (it
// reports the asymptotic one, saying why), and an explicit permutation
// test says that 1/(m + 1) only bounds p.
func TestFewExceedances(t *testing.T) {
	var x, y []float64
	for i := 0; i < 40; i++ {
		x = append(x, float64(i/4)) // ten levels, ties
		y = append(y, float64(i/5)) // eight levels, ties
	}
	data := pairCSV(x, y, nil)
	auto := computeOne(t, `measures = ["spearman", "kendall_b"]
  permutations = 999`, data)
	for _, r := range auto {
		if (r.PMethod != "t" && r.PMethod != "normal") || !(r.PValue < 1e-10) ||
			!slices.ContainsFunc(r.Warnings, func(w string) bool { return strings.Contains(w, "too few to estimate so small a p-value") }) {
			t.Errorf("auto %s: p = %v (%s), notes %q", r.Measure, r.PValue, r.PMethod, r.Warnings)
		}
	}
	perm := computeOne(t, `measures = ["spearman"]
  p_value = "permutation"
  permutations = 999`, data)[0]
	if perm.PMethod != "permutation" || perm.PValue != 1.0/1000 ||
		!slices.ContainsFunc(perm.Warnings, func(w string) bool { return strings.Contains(w, "only bounds the p-value from above") }) {
		t.Errorf("permutation: p = %v (%s), notes %q", perm.PValue, perm.PMethod, perm.Warnings)
	}
}

// TestSmallestAttainableP: with a binary x split 3/3 and perfect
// separation, only 2 of the C(6, 3) = 20 distinct arrangements reach
// |T| = max, so no two-sided test can go below 0.1 (counting
// arrangements by hand); the note says so instead of promising power.
func TestSmallestAttainableP(t *testing.T) {
	data := pairCSV([]float64{0, 0, 0, 1, 1, 1}, []float64{1, 2, 3, 4, 5, 6}, nil)
	r := computeOne(t, `measures = ["kendall_b"]`, data)[0]
	if r.PMethod != "exact" || math.Abs(r.PValue-0.1) > 1e-15 ||
		!slices.ContainsFunc(r.Warnings, func(w string) bool { return strings.Contains(w, "smallest attainable p-value is 0.1") }) {
		t.Errorf("p = %v (%s), notes %q", r.PValue, r.PMethod, r.Warnings)
	}
	perm := computeOne(t, `measures = ["kendall_b"]
  p_value = "permutation"
  permutations = 10`, data)[0]
	if slices.ContainsFunc(perm.Warnings, func(w string) bool { return strings.Contains(w, "is exact") }) && perm.PMethod != "exact" {
		t.Errorf("a Monte Carlo p-value called exact: %q", perm.Warnings)
	}
}
