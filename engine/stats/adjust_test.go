package stats

import (
	"cmp"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"
)

var allAdjustments = []Adjustment{AdjustNone, Bonferroni, Holm, Hochberg, Hommel, BH, BY}

// TestAdjustAgainstR compares every method with R 4.2.2's p.adjust on the
// families of testdata/ref/adjust_reference.csv (script
// testdata/ref/adjust_reference.R): the Benjamini–Hochberg (1995) example,
// random families of length 1..50 (some rounded, so with ties and zeros),
// and families with ties, NA, 0 and 1. The tolerance is 1e-14 relative:
// both sides multiply and divide the same few numbers, so they differ by a
// few ulps at most (R forms n/i·p where we form (m/j)·p, for instance).
func TestAdjustAgainstR(t *testing.T) {
	cases := readRefFile(t, filepath.Join("..", "..", "testdata", "ref", "adjust_reference.csv"))
	if len(cases) < 60 {
		t.Fatalf("reference file has %d cases, want at least 60", len(cases))
	}
	for _, name := range sortedNames(cases) {
		rc := cases[name]
		t.Run(name, func(t *testing.T) {
			p := rc["p"]
			for _, method := range allAdjustments {
				want := rc["adj_"+method.String()]
				got := Adjust(p, method)
				if len(got) != len(want) {
					t.Fatalf("Adjust(%v): %d values, R has %d", method, len(got), len(want))
				}
				for i := range got {
					if !closeRel(got[i], want[i], 1e-14) {
						t.Errorf("Adjust(p, %v)[%d] = %.17g, R p.adjust gives %.17g (p = %v)", method, i, got[i], want[i], p[i])
					}
				}
			}
		})
	}
}

// TestAdjustBH1995 reproduces the decisions of the worked example of
// Y. Benjamini and Y. Hochberg (1995), Controlling the false discovery
// rate, JRSS B 57(1), 289–300, section 3.2: 15 p-values from a clinical
// trial, of which, at level 0.05, the FDR procedure rejects the 4 smallest
// while Bonferroni rejects 3 (and Hochberg's procedure also 3). The
// p-values and the counts are from memory; R 4.2.2's p.adjust gives the
// same counts (testdata/ref/adjust_reference.csv, case bh1995, checked in
// TestAdjustAgainstR). The adjusted values at the boundary, by hand:
// BH (15/4)·0.0095 = 0.035625 ≤ 0.05 < (15/5)·0.0201 = 0.0603 and
// Bonferroni 15·0.0019 = 0.0285 ≤ 0.05 < 15·0.0095 = 0.1425; the printed
// inputs have 4 decimals, so a tolerance of 1e-15 on these products checks
// our arithmetic only.
func TestAdjustBH1995(t *testing.T) {
	p := []float64{0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344,
		0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000}
	for _, tc := range []struct {
		method Adjustment
		reject int
	}{
		{BH, 4}, {Bonferroni, 3}, {Hochberg, 3},
	} {
		a := Adjust(p, tc.method)
		n := 0
		for i, v := range a {
			if v <= 0.05 {
				n++
				if i >= tc.reject {
					t.Errorf("%v rejects p = %v (adjusted %v), beyond the %d smallest", tc.method, p[i], v, tc.reject)
				}
			}
		}
		if n != tc.reject {
			t.Errorf("%v rejects %d of 15 at 0.05, Benjamini & Hochberg (1995) report %d", tc.method, n, tc.reject)
		}
	}
	bh, bonf := Adjust(p, BH), Adjust(p, Bonferroni)
	for _, c := range []struct {
		what      string
		got, want float64
	}{
		{"BH p(4)", bh[3], 0.035625}, {"BH p(5)", bh[4], 0.0603},
		{"Bonferroni p(3)", bonf[2], 0.0285}, {"Bonferroni p(4)", bonf[3], 0.1425},
	} {
		if !closeRel(c.got, c.want, 1e-15) {
			t.Errorf("%s adjusted = %.17g, want %v", c.what, c.got, c.want)
		}
	}
}

// closureOracle returns the adjusted p-values of the closed testing
// procedure (Marcus, Peritz and Gabriel 1976, Biometrika 63, 655–660) with
// the local test local: for hypothesis i, the largest local p-value over
// all subsets containing i. Full enumeration, O(2^m · m log m); test-only.
// With the Bonferroni local test |I|·min p it is Holm's procedure (Holm
// 1979), with Simes' test min |I|·p₍ₖ₎/k it is Hommel's (Hommel 1988).
func closureOracle(p []float64, local func(sorted []float64) float64) []float64 {
	m := len(p)
	adj := make([]float64, m)
	sub := make([]float64, 0, m)
	for mask := 1; mask < 1<<m; mask++ {
		sub = sub[:0]
		for i := range m {
			if mask&(1<<i) != 0 {
				sub = append(sub, p[i])
			}
		}
		slices.Sort(sub)
		lp := local(sub)
		for i := range m {
			if mask&(1<<i) != 0 {
				adj[i] = math.Max(adj[i], lp)
			}
		}
	}
	for i := range adj {
		adj[i] = math.Min(1, adj[i])
	}
	return adj
}

func bonferroniLocal(s []float64) float64 { return float64(len(s)) * s[0] }

func simesLocal(s []float64) float64 {
	v := math.Inf(1)
	for k, q := range s {
		v = math.Min(v, float64(len(s))*q/float64(k+1))
	}
	return v
}

// randomFamily draws m p-values with a fixed generator: skewed towards 0,
// and with kind 1 rounded to 2 decimals (ties, zeros), kind 2 with a few
// ones and NaN.
func randomFamily(rng *rand.Rand, m, kind int) []float64 {
	p := make([]float64, m)
	for i := range p {
		u := rng.Float64()
		p[i] = u * u * u
		switch kind {
		case 1:
			p[i] = math.Round(p[i]*100) / 100
		case 2:
			switch rng.IntN(8) {
			case 0:
				p[i] = 1
			case 1:
				p[i] = math.NaN()
			}
		}
	}
	return p
}

// TestAdjustClosureOracle checks Holm and Hommel against the closed testing
// procedure evaluated over every subset (m ≤ 10), on random families with
// ties, ones and NaN (NaN entries are dropped before the oracle, as they
// are not part of the family). Both sides form the same products in a
// different order, hence 1e-14 relative.
func TestAdjustClosureOracle(t *testing.T) {
	rng := rand.New(rand.NewPCG(1979, 1988))
	for trial := range 600 {
		p := randomFamily(rng, 1+rng.IntN(10), trial%3)
		var fam []float64
		var at []int
		for i, v := range p {
			if !math.IsNaN(v) {
				fam = append(fam, v)
				at = append(at, i)
			}
		}
		for _, c := range []struct {
			method Adjustment
			local  func([]float64) float64
		}{
			{Holm, bonferroniLocal}, {Hommel, simesLocal},
		} {
			got := Adjust(p, c.method)
			want := closureOracle(fam, c.local)
			for j, i := range at {
				if !closeRel(got[i], want[j], 1e-14) {
					t.Fatalf("trial %d: %v[%d] = %.17g, closure over all subsets gives %.17g\np = %v", trial, c.method, i, got[i], want[j], p)
				}
			}
		}
	}
}

// TestAdjustProperties checks, on random families with ties, zeros, ones
// and NaN, what every method must satisfy by its definition: NaN stays NaN
// and the rest lies in [p, 1]; the adjusted values keep the order of the
// raw ones (equal raw values, equal adjusted values); permuting the input
// permutes the output exactly; and the known orderings between methods:
// Hommel ≤ Hochberg ≤ Holm ≤ Bonferroni (Hommel 1989, Biometrika 76,
// 624–625; Hochberg 1988), BH ≤ Hochberg (m/j ≤ m − j + 1) and BH ≤ BY.
// The orderings that compare different formulas allow one part in 1e14 for
// rounding.
func TestAdjustProperties(t *testing.T) {
	rng := rand.New(rand.NewPCG(1995, 2001))
	for trial := range 400 {
		m := 1 + rng.IntN(60)
		if trial%50 == 0 {
			m = 1000 + rng.IntN(1000)
		}
		p := randomFamily(rng, m, trial%3)
		perm := rng.Perm(m)
		q := make([]float64, m)
		for i, j := range perm {
			q[i] = p[j]
		}
		var order []int // indices of the non-NaN p, ascending
		for i, v := range p {
			if !math.IsNaN(v) {
				order = append(order, i)
			}
		}
		slices.SortFunc(order, func(i, j int) int { return cmp.Compare(p[i], p[j]) })
		all := map[Adjustment][]float64{}
		for _, method := range allAdjustments {
			a := Adjust(p, method)
			all[method] = a
			for i := range a {
				if math.IsNaN(p[i]) != math.IsNaN(a[i]) {
					t.Fatalf("trial %d %v: p[%d] = %v adjusted to %v", trial, method, i, p[i], a[i])
				}
				if !math.IsNaN(p[i]) && !(a[i] >= p[i] && a[i] <= 1) {
					t.Fatalf("trial %d %v: p[%d] = %v adjusted to %v, outside [p, 1]", trial, method, i, p[i], a[i])
				}
			}
			for k := 1; k < len(order); k++ { // neighbours in the raw order
				i, j := order[k-1], order[k]
				if p[i] < p[j] && !(a[i] <= a[j]) || p[i] == p[j] && a[i] != a[j] {
					t.Fatalf("trial %d %v: p = %v, %v adjusted to %v, %v", trial, method, p[i], p[j], a[i], a[j])
				}
			}
			b := Adjust(q, method)
			for i, j := range perm {
				if !(b[i] == a[j] || math.IsNaN(b[i]) && math.IsNaN(a[j])) {
					t.Fatalf("trial %d %v: permuted input gives %v at %d, original %v", trial, method, b[i], i, a[j])
				}
			}
		}
		for _, c := range [][2]Adjustment{
			{Hommel, Hochberg}, {Hochberg, Holm}, {Holm, Bonferroni}, {BH, Hochberg}, {BH, BY}, {AdjustNone, BH},
		} {
			lo, hi := all[c[0]], all[c[1]]
			for i := range lo {
				if lo[i] > hi[i]*(1+1e-14) {
					t.Fatalf("trial %d: %v %.17g > %v %.17g at p = %v", trial, c[0], lo[i], c[1], hi[i], p[i])
				}
			}
		}
	}
}

// TestAdjustEdges: an empty family, a family of NaN only, and a single
// p-value, which every method leaves as it is (m = 1).
func TestAdjustEdges(t *testing.T) {
	for _, method := range allAdjustments {
		if got := Adjust(nil, method); len(got) != 0 {
			t.Errorf("Adjust(nil, %v) = %v, want empty", method, got)
		}
		if got := Adjust([]float64{math.NaN(), math.NaN()}, method); len(got) != 2 || !math.IsNaN(got[0]) || !math.IsNaN(got[1]) {
			t.Errorf("Adjust(NaN, NaN; %v) = %v, want [NaN NaN]", method, got)
		}
		if got := Adjust([]float64{math.NaN(), 0.37}, method); !math.IsNaN(got[0]) || got[1] != 0.37 {
			t.Errorf("Adjust(NaN, 0.37; %v) = %v, want [NaN 0.37]", method, got)
		}
	}
	p := []float64{0.5, 0.1}
	a := Adjust(p, Holm)
	if p[0] != 0.5 || p[1] != 0.1 || &a[0] == &p[0] {
		t.Errorf("Adjust changed or reused its input")
	}
}

func TestAdjustPanics(t *testing.T) {
	mustPanic(t, "zero method", func() { Adjust([]float64{0.1}, 0) })
	mustPanic(t, "method past BY", func() { Adjust([]float64{0.1}, BY+1) })
	mustPanic(t, "negative p", func() { Adjust([]float64{0.1, -0.01}, BH) })
	mustPanic(t, "p above 1", func() { Adjust([]float64{1.0000001}, Holm) })
	mustPanic(t, "infinite p", func() { Adjust([]float64{math.Inf(1)}, AdjustNone) })
}

func TestParseAdjustment(t *testing.T) {
	for _, method := range allAdjustments {
		got, ok := ParseAdjustment(method.String())
		if !ok || got != method {
			t.Errorf("ParseAdjustment(%q) = %v, %v", method.String(), got, ok)
		}
	}
	for _, s := range []string{"", "BH", "fdr", "Holm", "bonf", "Adjustment(0)"} {
		if got, ok := ParseAdjustment(s); ok {
			t.Errorf("ParseAdjustment(%q) = %v, true; want false", s, got)
		}
	}
	if s := Adjustment(0).String(); s != "Adjustment(0)" {
		t.Errorf("Adjustment(0).String() = %q", s)
	}
}

// Benchmarks at m = 10 000 (a large table of pairs). The baseline is a
// plain slices.Sort of the same p-values, so the figures can be quoted as
// multiples of one sort:
//
//	go test -run '^$' -bench 'Adjust' ./engine/stats/
const benchFamily = 10_000

func benchP() []float64 {
	return randomFamily(rand.New(rand.NewPCG(7, 10_000)), benchFamily, 0)
}

func BenchmarkAdjustSortBaseline(b *testing.B) {
	p := benchP()
	s := make([]float64, len(p))
	for b.Loop() {
		copy(s, p)
		slices.Sort(s)
	}
}

func BenchmarkAdjust(b *testing.B) {
	p := benchP()
	for _, method := range allAdjustments {
		b.Run(method.String(), func(b *testing.B) {
			for b.Loop() {
				Adjust(p, method)
			}
		})
	}
	// Hommel's slowest case: evenly spaced p-values, where the scan for
	// each Simes p-value never stops early.
	even := make([]float64, benchFamily)
	for i := range even {
		even[i] = float64(i+1) / benchFamily
	}
	b.Run("hommel_even", func(b *testing.B) {
		for b.Loop() {
			Adjust(even, Hommel)
		}
	})
}

// hommelDirect is the plain O(m²) evaluation of Hommel's adjusted p-values
// (Wright 1992): for every set size k, update every position. Test-only; a
// second route to hommel's sweeps, exact divisions instead of reciprocals.
func hommelDirect(p []float64) []float64 {
	s := slices.Clone(p)
	slices.Sort(s)
	m := len(s)
	a := slices.Clone(s)
	for k := m; k >= 2; k-- {
		d := m - k
		c := math.Inf(1)
		for t := 1; t <= k; t++ {
			c = math.Min(c, float64(k)*s[d+t-1]/float64(t))
		}
		for j := range m {
			v := c
			if j < d {
				v = math.Min(c, float64(k)*s[j])
			}
			a[j] = math.Max(a[j], v)
		}
	}
	out := make([]float64, m)
	for i, v := range p { // s is sorted: look each p up
		j, _ := slices.BinarySearch(s, v)
		out[i] = math.Min(1, a[j])
	}
	return out
}

// TestHommelDirect compares Adjust(·, Hommel) with hommelDirect on larger
// families than the closure oracle can enumerate (m up to 1000), with ties,
// zeros and ones, and evenly spaced p-values. 1e-14 relative: the two
// differ only in dividing by t or multiplying by 1/t.
func TestHommelDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(1988, 1992))
	for trial := range 30 {
		m := 1 + rng.IntN(1000)
		p := randomFamily(rng, m, trial%2)
		if trial == 0 {
			for i := range p {
				p[i] = float64(i+1) / float64(m)
			}
		}
		got, want := Adjust(p, Hommel), hommelDirect(p)
		for i := range got {
			if !closeRel(got[i], want[i], 1e-14) {
				t.Fatalf("trial %d (m = %d): Hommel[%d] = %.17g, direct evaluation %.17g", trial, m, i, got[i], want[i])
			}
		}
	}
}
