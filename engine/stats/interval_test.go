package stats

import (
	"math"
	"testing"
)

// TestIntervalsUndefined: the documented NaN cases (n too small for the
// standard error, or no estimate).
func TestIntervalsUndefined(t *testing.T) {
	type interval func(float64, int, float64, Alternative) (float64, float64)
	for _, tc := range []struct {
		name string
		f    interval
		est  float64
		n    int
		alt  Alternative
	}{
		{"fisher n=3", FisherInterval, 0.5, 3, TwoSided},
		{"fisher NaN", FisherInterval, math.NaN(), 30, Greater},
		{"bonett-wright n=3", BonettWrightInterval, 0.5, 3, TwoSided},
		{"fieller n=4", FiellerInterval, 0.5, 4, Less},
		{"fieller NaN", FiellerInterval, math.NaN(), 40, TwoSided},
	} {
		if lo, hi := tc.f(tc.est, tc.n, 0.95, tc.alt); !math.IsNaN(lo) || !math.IsNaN(hi) {
			t.Errorf("%s: [%v, %v], want [NaN, NaN]", tc.name, lo, hi)
		}
	}
}

// TestIntervalsPerfect: an estimate of ±1 gives the point interval [±1, ±1]
// two-sided, and one-sided intervals keep their fixed end (documented
// behaviour: atanh(±1) = ±∞).
func TestIntervalsPerfect(t *testing.T) {
	for _, f := range []func(float64, int, float64, Alternative) (float64, float64){
		FisherInterval, BonettWrightInterval, FiellerInterval,
	} {
		if lo, hi := f(1, 20, 0.95, TwoSided); lo != 1 || hi != 1 {
			t.Errorf("r = 1, two-sided: [%v, %v], want [1, 1]", lo, hi)
		}
		if lo, hi := f(-1, 20, 0.95, TwoSided); lo != -1 || hi != -1 {
			t.Errorf("r = −1, two-sided: [%v, %v], want [−1, −1]", lo, hi)
		}
		if lo, hi := f(1, 20, 0.95, Greater); lo != 1 || hi != 1 {
			t.Errorf("r = 1, greater: [%v, %v], want [1, 1]", lo, hi)
		}
		if lo, hi := f(-1, 20, 0.95, Greater); lo != -1 || hi != 1 {
			t.Errorf("r = −1, greater: [%v, %v], want [−1, 1]", lo, hi)
		}
	}
}

// TestFisherIntervalByHand: r = 0, n = 4 gives z = 0, se = 1, and the 95%
// two-sided interval tanh(±1.959963984540054) = ±0.96100… The normal quantile
// Φ⁻¹(0.975) = 1.959963984540054 is the well-known value (from memory;
// confirmed with R 4.2.2, qnorm(0.975) = 1.959963984540054).
func TestFisherIntervalByHand(t *testing.T) {
	want := math.Tanh(1.959963984540054)
	lo, hi := FisherInterval(0, 4, 0.95, TwoSided)
	if math.Abs(hi-want) > 1e-14 || math.Abs(lo+want) > 1e-14 {
		t.Errorf("FisherInterval(0, 4, 0.95) = [%.17g, %.17g], want ±%.17g", lo, hi, want)
	}
}

func TestIntervalPanics(t *testing.T) {
	mustPanic(t, "level 0", func() { FisherInterval(0.5, 30, 0, TwoSided) })
	mustPanic(t, "level 1", func() { BonettWrightInterval(0.5, 30, 1, TwoSided) })
	mustPanic(t, "level NaN", func() { FiellerInterval(0.5, 30, math.NaN(), TwoSided) })
	mustPanic(t, "alternative", func() { FiellerInterval(0.5, 30, 0.9, Alternative(9)) })
	mustPanic(t, "level, even when n is too small", func() { FiellerInterval(0.5, 2, 2, TwoSided) })
}
