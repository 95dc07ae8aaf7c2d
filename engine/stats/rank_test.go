package stats

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestRankRules checks each tie rule on one small sample. The expected ranks
// are hand-computed and follow the common definitions of the rules (as in R's
// rank(ties.method = ...), which TestAgainstR checks on more data).
func TestRankRules(t *testing.T) {
	x := []float64{20, 10, 30, 10, 20, 20}
	// Sorted: 10 10 | 20 20 20 | 30 at positions 1–2, 3–5, 6.
	for _, tc := range []struct {
		rule TieRule
		want []float64
	}{
		{TieAverage, []float64{4, 1.5, 6, 1.5, 4, 4}}, // midranks (1+2)/2, (3+4+5)/3
		{TieMin, []float64{3, 1, 6, 1, 3, 3}},
		{TieMax, []float64{5, 2, 6, 2, 5, 5}},
		{TieDense, []float64{2, 1, 3, 1, 2, 2}},
		{TieFirst, []float64{3, 1, 6, 2, 4, 5}}, // order of appearance within a tie
	} {
		if got := Rank(x, tc.rule); !slices.Equal(got, tc.want) {
			t.Errorf("Rank(%v, %v) = %v, want %v", x, tc.rule, got, tc.want)
		}
	}
}

// TestRankEdges: no values, one value, infinities and signed zeros
// (hand-computed; −0 == +0, so they tie).
func TestRankEdges(t *testing.T) {
	if got := Rank(nil, TieAverage); len(got) != 0 {
		t.Errorf("Rank(nil) = %v, want empty", got)
	}
	if got := Rank([]float64{7}, TieMax); !slices.Equal(got, []float64{1}) {
		t.Errorf("Rank([7]) = %v, want [1]", got)
	}
	x := []float64{math.Inf(1), 0, math.Copysign(0, -1), math.Inf(-1)}
	if got, want := Rank(x, TieAverage), []float64{4, 2.5, 2.5, 1}; !slices.Equal(got, want) {
		t.Errorf("Rank(%v) = %v, want %v", x, got, want)
	}
}

// TestRankPermutation checks two properties on random tied samples (fixed
// seed): ranking commutes with permuting the input, for every rule but
// TieFirst, which depends on order by definition; and TieFirst is a
// permutation of 1..n that agrees with the order of the values.
func TestRankPermutation(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 500 {
		n := rng.IntN(60)
		x := make([]float64, n)
		for i := range x {
			x[i] = float64(rng.IntN(8)) / 4
		}
		perm := rng.Perm(n)
		px := make([]float64, n)
		for i, j := range perm {
			px[i] = x[j]
		}
		for _, rule := range []TieRule{TieAverage, TieMin, TieMax, TieDense} {
			r, pr := Rank(x, rule), Rank(px, rule)
			for i, j := range perm {
				if pr[i] != r[j] {
					t.Fatalf("%v: rank of permuted x[%d] = %v, want %v (x = %v)", rule, j, pr[i], r[j], x)
				}
			}
		}
		first := Rank(x, TieFirst)
		seen := make([]bool, n+1)
		for i, r := range first {
			k := int(r)
			if float64(k) != r || k < 1 || k > n || seen[k] {
				t.Fatalf("TieFirst ranks %v are not a permutation of 1..%d", first, n)
			}
			seen[k] = true
			for j := range i {
				if (x[j] <= x[i]) != (first[j] < first[i]) {
					t.Fatalf("TieFirst ranks %v disagree with x = %v at %d, %d", first, x, j, i)
				}
			}
		}
		// Midranks sum to n(n+1)/2 whatever the ties (a known identity).
		var sum float64
		for _, r := range Rank(x, TieAverage) {
			sum += r
		}
		if want := float64(n*(n+1)) / 2; sum != want {
			t.Fatalf("midranks sum to %v, want %v", sum, want)
		}
	}
}

func TestRankPanics(t *testing.T) {
	mustPanic(t, "zero rule", func() { Rank([]float64{1}, 0) })
	mustPanic(t, "unknown rule", func() { Rank([]float64{1}, TieFirst+1) })
	mustPanic(t, "NaN", func() { Rank([]float64{1, math.NaN()}, TieAverage) })
}

// TestTieShare: hand-computed shares.
func TestTieShare(t *testing.T) {
	for _, tc := range []struct {
		x    []float64
		want float64
	}{
		{nil, 0},
		{[]float64{5}, 0},
		{[]float64{1, 2, 3}, 0},
		{[]float64{1, 2, 2, 3, 3, 3}, 5.0 / 6},
		{[]float64{4, 4}, 1},
		{[]float64{0, math.Copysign(0, -1), 1}, 2.0 / 3},
	} {
		if got := TieShare(tc.x); got != tc.want {
			t.Errorf("TieShare(%v) = %v, want %v", tc.x, got, tc.want)
		}
	}
}
