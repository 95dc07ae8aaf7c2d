package stats

import (
	"math"
	"testing"
)

// TestCorrelationTEdges checks the documented edge behaviour: NaN for n < 3
// or r NaN; for |r| = 1 a p-value of 0 in the direction of r and 1 against
// it (t = ±∞, by definition).
func TestCorrelationTEdges(t *testing.T) {
	if p := CorrelationT(0.5, 2, TwoSided); !math.IsNaN(p) {
		t.Errorf("n = 2: p = %v, want NaN", p)
	}
	if p := CorrelationT(math.NaN(), 10, TwoSided); !math.IsNaN(p) {
		t.Errorf("r = NaN: p = %v, want NaN", p)
	}
	for _, tc := range []struct {
		r    float64
		alt  Alternative
		want float64
	}{
		{1, TwoSided, 0}, {1, Greater, 0}, {1, Less, 1},
		{-1, TwoSided, 0}, {-1, Greater, 1}, {-1, Less, 0},
		{0, TwoSided, 1}, {0, Greater, 0.5}, {0, Less, 0.5}, // t = 0: the centre of a symmetric law
	} {
		if got := CorrelationT(tc.r, 12, tc.alt); got != tc.want {
			t.Errorf("CorrelationT(%v, 12, %v) = %v, want %v", tc.r, tc.alt, got, tc.want)
		}
	}
	mustPanic(t, "zero alternative", func() { CorrelationT(0.5, 10, 0) })
}

// TestCorrelationTKnown: with n − 2 = 1 degree of freedom Student's t is the
// Cauchy law, P(T > t) = 1/2 − atan(t)/π (a standard identity); r = 1/√2
// gives t = 1 and a one-sided p of exactly 1/4.
func TestCorrelationTKnown(t *testing.T) {
	r := 1 / math.Sqrt2
	if got := CorrelationT(r, 3, Greater); math.Abs(got-0.25) > 1e-15 {
		t.Errorf("CorrelationT(1/√2, 3, greater) = %.17g, want 0.25", got)
	}
	if got := CorrelationT(r, 3, TwoSided); math.Abs(got-0.5) > 1e-15 {
		t.Errorf("CorrelationT(1/√2, 3, two-sided) = %.17g, want 0.5", got)
	}
}

// TestKendallNormalTail checks the far tail, where 1 − CDF would lose every
// digit: x = y = 1..200 gives S = 19900, Var(S) = 200·199·405/18 (Kendall
// 1938), z = 19900/√895500 ≈ 21.03, and P(Z ≥ z) ≈ 1.7e-98. The reference
// is the normal tail written with math.Erfc, P(Z ≥ z) = erfc(z/√2)/2 (a
// standard identity), an independent route to the same number.
func TestKendallNormalTail(t *testing.T) {
	x := make([]float64, 200)
	for i := range x {
		x[i] = float64(i + 1)
	}
	c := CountPairs(x, x)
	z := 19900 / math.Sqrt(200*199*405/18.0)
	want := math.Erfc(z/math.Sqrt2) / 2
	if got := KendallNormal(c, Greater); !closeRel(got, want, 1e-12) || got == 0 {
		t.Errorf("KendallNormal(greater) = %.17g, want %.17g", got, want)
	}
	if got := KendallNormal(c, TwoSided); !closeRel(got, 2*want, 1e-12) {
		t.Errorf("KendallNormal(two-sided) = %.17g, want %.17g", got, 2*want)
	}
	if got := KendallNormal(c, Less); !closeRel(got, 1, 1e-15) {
		t.Errorf("KendallNormal(less) = %.17g, want 1", got)
	}
}

// TestPKinds: the PMethod words are the contract's p_method values
// (DESIGN.md, "The result record").
func TestPKinds(t *testing.T) {
	want := map[PMethod]string{PExact: "exact", PEdgeworth: "edgeworth", PT: "t", PNormal: "normal", PPermutation: "permutation"}
	for m, w := range want {
		if m.String() != w {
			t.Errorf("%d.String() = %q, want %q", int(m), m.String(), w)
		}
	}
	if got := PMethod(0).String(); got != "PMethod(0)" {
		t.Errorf("zero PMethod prints %q", got)
	}
	if PearsonR.String() != "pearson" || Spearman.String() != "spearman" || KendallB.String() != "kendall_b" {
		t.Errorf("measure words changed")
	}
}
