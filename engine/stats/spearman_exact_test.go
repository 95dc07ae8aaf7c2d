package stats

import (
	"math"
	"testing"
)

// spearmanDCounts enumerates all n! permutations (Heap's algorithm) and
// returns how many give each value of D = Σ(pᵢ − i)², the sum of squared
// rank differences against the identity. Test-only code.
func spearmanDCounts(n int) []int64 {
	maxD := n * (n*n - 1) / 3
	counts := make([]int64, maxD+1)
	p := make([]int, n)
	for i := range p {
		p[i] = i
	}
	sq := func(a int) int { return a * a }
	d := 0
	counts[0]++
	c := make([]int, n)
	for i := 1; i < n; {
		if c[i] < i {
			j := 0
			if i%2 == 1 {
				j = c[i]
			}
			d -= sq(p[i]-i) + sq(p[j]-j)
			p[i], p[j] = p[j], p[i]
			d += sq(p[i]-i) + sq(p[j]-j)
			counts[d]++
			c[i]++
			i = 1
		} else {
			c[i] = 0
			i++
		}
	}
	return counts
}

// exactSpearmanCritical returns the smallest attainable value c of |ρ| whose
// two-sided exact p-value P(|ρ| ≥ c) under independence (all n! orders
// equally likely, no ties) is at most alpha, and false when none is.
func exactSpearmanCritical(counts []int64, n int, alpha float64) (float64, bool) {
	var total int64
	for _, k := range counts {
		total += k
	}
	nn := float64(n * (n*n - 1))
	maxD := len(counts) - 1
	// ρ = 1 − 6D/(n³ − n) is symmetric: D and maxD − D give ±ρ. Walk D up
	// from 0 (ρ = 1) while ρ > 0, accumulating P(ρ ≥ ρ(D)).
	best, found := 0.0, false
	var upper int64
	for d := 0; 2*d < maxD; d++ {
		upper += counts[d]
		if counts[d] == 0 {
			continue
		}
		if p := 2 * float64(upper) / float64(total); p <= alpha {
			best, found = 1-6*float64(d)/nn, true
		}
	}
	return best, found
}

// TestSpearmanExactCriticalValues checks tabled two-sided critical values of
// Spearman's ρ for n = 5..10 by enumerating all n! permutations. A table
// entry c means: reject independence at level α when |ρ| ≥ c, where c is the
// smallest attainable |ρ| with exact two-sided P(|ρ| ≥ c) ≤ α ("none" when
// even |ρ| = 1 is not rare enough). Values: J. H. Zar (1972), Significance
// testing of the Spearman rank correlation coefficient, JASA 67(339),
// 578–580, Table 1, three decimals; from memory, confirmed by enumeration
// (all twelve entries agree).
//
// The enumeration computes ρ by the untied shortcut 1 − 6D/(n³ − n), which
// is exact for permutations; the package itself never uses it.
func TestSpearmanExactCriticalValues(t *testing.T) {
	table := []struct {
		n        int
		c05, c01 float64 // two-sided α = 0.05 and 0.01; 0 = none
	}{
		{5, 1.000, 0},
		{6, 0.886, 1.000},
		{7, 0.786, 0.929},
		{8, 0.738, 0.881},
		{9, 0.700, 0.833},
		{10, 0.648, 0.794},
	}
	for _, row := range table {
		counts := spearmanDCounts(row.n)
		var total int64
		for _, k := range counts {
			total += k
		}
		want := int64(1)
		for k := 2; k <= row.n; k++ {
			want *= int64(k)
		}
		if total != want {
			t.Fatalf("n = %d: enumerated %d permutations, want %d", row.n, total, want)
		}
		for _, chk := range []struct {
			alpha, tabled float64
		}{{0.05, row.c05}, {0.01, row.c01}} {
			c, ok := exactSpearmanCritical(counts, row.n, chk.alpha)
			if !ok {
				if chk.tabled != 0 {
					t.Errorf("n = %d, α = %v: no attainable critical value, table gives %.3f", row.n, chk.alpha, chk.tabled)
				}
				continue
			}
			if got := math.Round(c*1000) / 1000; got != chk.tabled {
				t.Errorf("n = %d, α = %v: enumeration gives %.6f (→ %.3f), table gives %.3f", row.n, chk.alpha, c, got, chk.tabled)
			}
		}
	}
}

// TestSpearmanRhoOnEveryPermutation ties the package's SpearmanRho to the
// enumeration above: for every ordering of n = 3..7 untied values, Pearson's
// r on ranks equals 1 − 6D/(n³ − n) (the textbook identity for untied
// ranks; Spearman 1904), so the tabled critical values hold for the ρ that
// concordat computes, not only for the test's own shortcut.
func TestSpearmanRhoOnEveryPermutation(t *testing.T) {
	for n := 3; n <= 7; n++ {
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(i + 1)
		}
		p := make([]int, n)
		for i := range p {
			p[i] = i
		}
		var visit func(k int)
		visit = func(k int) {
			if k == n {
				y := make([]float64, n)
				d := 0
				for i, v := range p {
					y[i] = float64(v) * 1.5 // any increasing map of the ranks
					d += (v - i) * (v - i)
				}
				want := 1 - 6*float64(d)/float64(n*(n*n-1))
				if got := SpearmanRho(x, y, TieAverage); math.Abs(got-want) > 1e-15 {
					t.Fatalf("n = %d, order %v: SpearmanRho = %.17g, 1 − 6D/(n³ − n) = %.17g", n, p, got, want)
				}
				return
			}
			for i := k; i < n; i++ {
				p[k], p[i] = p[i], p[k]
				visit(k + 1)
				p[k], p[i] = p[i], p[k]
			}
		}
		visit(0)
	}
}
