package stats

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// BootstrapSpec says how BootstrapInterval resamples and which interval it
// returns.
type BootstrapSpec struct {
	Resamples int         // bootstrap resamples R; must be ≥ 1
	Level     float64     // confidence level in (0, 1), e.g. 0.95
	Alt       Alternative // TwoSided: [lo, hi]; Greater: [lo, 1]; Less: [−1, hi]
	BCa       bool        // false: percentile interval; true: BCa
	Key       StreamKey   // the random stream
	Workers   int         // goroutines; ≤ 0 means 1
	// Progress, when not nil, is called from the workers with the statistic
	// evaluations done so far (resamples, then jackknife deletions for BCa)
	// and their total; it must be cheap and safe for concurrent use, and
	// calls may arrive out of order.
	Progress func(done, total int)
}

// NewStatistic returns a fresh statistic for one worker. The statistic
// computes the estimate from the rows idx of the data (rows may repeat; a
// bootstrap resample of n rows has n indices) and returns NaN when it is
// undefined there. BootstrapInterval calls NewStatistic once per worker, so a
// statistic may keep scratch buffers; it must not keep or modify idx, which
// is reused.
type NewStatistic func() func(idx []int) float64

// ErrBootstrapUndefined is wrapped by the error BootstrapInterval returns
// when the data allow no interval (too many undefined resamples, or a BCa
// correction that is infinite); the caller reports the interval as null and
// the error's text as the reason.
var ErrBootstrapUndefined = errors.New("bootstrap interval undefined")

const (
	// bootBlock is the number of resamples per random block, part of the
	// reproducibility contract like permBlock; small, because a resample
	// costs a whole evaluation of the statistic.
	bootBlock = 64

	// maxUndefinedShare is the largest share of resamples whose statistic
	// may be undefined (NaN or ±Inf); they are dropped, and beyond this
	// share the interval is refused.
	maxUndefinedShare = 0.05

	// exactJackknifeMax is the largest n for the delete-one jackknife; above
	// it the jackknife deletes jackknifeGroups groups of rows.
	exactJackknifeMax = 2000
	jackknifeGroups   = 500

	// bootTieTol: a replicate within this distance of the estimate counts as
	// equal to it in the BCa bias correction. The statistic is a correlation,
	// so this is far below any real difference and far above rounding.
	bootTieTol = 1e-12
)

// BootstrapInterval returns a bootstrap confidence interval for a statistic
// of n paired rows (Efron 1979). It draws spec.Resamples resamples of n row
// indices with replacement from the stream spec.Key, in blocks of 64
// resamples, block b drawing from spec.Key.Block(b), and stores each
// replicate at its resample's position, so the interval does not depend on
// spec.Workers.
//
// Resamples whose statistic is undefined (NaN or ±Inf, e.g. a resample in
// which one column is constant) are dropped, and the interval is computed
// from the remaining R replicates; when more than 5% are undefined it
// returns NaN, NaN and an error wrapping ErrBootstrapUndefined.
//
// Quantiles: the quantile at probability α of the R sorted replicates
// t₍₁₎ ≤ … ≤ t₍R₎ is t₍k₎ when k = (R + 1)α is an integer; otherwise, with
// k = ⌊(R + 1)α⌋, it interpolates between t₍k₎ and t₍k+1₎ linearly on the
// normal scale,
//
//	t₍k₎ + [Φ⁻¹(α) − Φ⁻¹(k/(R+1))] / [Φ⁻¹((k+1)/(R+1)) − Φ⁻¹(k/(R+1))] · (t₍k+1₎ − t₍k₎),
//
// and it is t₍₁₎ when k = 0 and t₍R₎ when k = R (Davison and Hinkley 1997,
// ch. 5; the definition used by R's package boot).
//
// Percentile interval (spec.BCa false): the quantiles at (1 − level)/2 and
// (1 + level)/2; one-sided, the quantile at 1 − level (Greater, [lo, 1]) or
// at level (Less, [−1, hi]).
//
// BCa interval (Efron 1987): the quantiles at the adjusted probabilities
//
//	α' = Φ(z₀ + (z₀ + z_α) / (1 − a(z₀ + z_α))),  z_α = Φ⁻¹(α),
//
// with the bias correction z₀ = Φ⁻¹((#{t* < t̂} + ½#{t* = t̂}) / R), ties with
// the estimate t̂ counted half (within 1e-12), and the acceleration
//
//	a = Σ Lᵢ³ / (6 (Σ Lᵢ²)^{3/2}),  Lᵢ = t̄₍.₎ − t₍₋ᵢ₎,
//
// from the jackknife values t₍₋ᵢ₎ (the statistic without row i) and their
// mean t̄₍.₎ (Efron and Tibshirani 1993, ch. 14). When all jackknife values
// are equal, a = 0. For n ≤ 2000 this is the delete-one jackknife, n
// evaluations; beyond, the rows are split into 500 groups of nearly equal
// size, at random from a sub-stream of spec.Key (so the split is
// deterministic yet unrelated to the row order, which may be sorted), and
// t₍₋ᵢ₎ deletes group i: the delete-d jackknife of Efron and Tibshirani
// (1993), ch. 11. The sums in a scale alike in numerator and denominator, so
// the grouped values estimate the same skewness with 500 evaluations. The
// BCa interval is undefined (NaN, NaN and an error wrapping
// ErrBootstrapUndefined) when a jackknife value is undefined, when every
// replicate lies on one side of the estimate (z₀ infinite), or when
// 1 − a(z₀ + z_α) ≤ 0.
//
// R's package boot (boot.ci, version 1.3-28) counts the bias correction as
// #{t* < t̂}/R, without ties; the intervals agree whenever no replicate
// equals the estimate (TestBootstrapAgainstR).
//
// It returns NaN, NaN and no error when n < 2 or the estimate on all rows
// is undefined, and ctx.Err() when ctx ends (checked between blocks). It
// panics when spec.Resamples < 1, spec.Level is outside (0, 1), or
// spec.Alt is unknown.
//
// References: B. Efron (1979), Bootstrap methods: another look at the
// jackknife, Annals of Statistics 7(1), 1–26; B. Efron (1987), Better
// bootstrap confidence intervals, Journal of the American Statistical
// Association 82(397), 171–185; B. Efron and R. J. Tibshirani (1993), An
// Introduction to the Bootstrap (Chapman & Hall), ch. 11, 13 and 14;
// A. C. Davison and D. V. Hinkley (1997), Bootstrap Methods and their
// Application (Cambridge University Press), ch. 5.
func BootstrapInterval(ctx context.Context, n int, stat NewStatistic, spec BootstrapSpec) (lo, hi float64, err error) {
	mustInterval(spec.Level, spec.Alt)
	if spec.Resamples < 1 {
		panic(fmt.Sprintf("stats: BootstrapInterval: %d resamples", spec.Resamples))
	}
	nan := math.NaN()
	if n < 2 {
		return nan, nan, nil
	}
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	t0 := stat()(all)
	if math.IsNaN(t0) || math.IsInf(t0, 0) {
		return nan, nan, nil
	}
	groups := jackknifeUnits(n)
	total := spec.Resamples
	if spec.BCa {
		total += groups
	}
	progress := func(offset int) func(int, int) {
		if spec.Progress == nil {
			return nil
		}
		return func(done, _ int) { spec.Progress(offset+done, total) }
	}
	t, err := bootstrapReplicates(ctx, n, stat, spec.Resamples, spec.Key, spec.Workers, progress(0))
	if err != nil {
		return nan, nan, err
	}
	var jack []float64
	if spec.BCa {
		jack, err = jackknife(ctx, n, stat, groups, spec.Key, spec.Workers, progress(spec.Resamples))
		if err != nil {
			return nan, nan, err
		}
	}
	return bootstrapEnds(t0, t, jack, spec.Level, spec.Alt, spec.BCa)
}

// jackknifeUnits returns the number of jackknife deletions for n rows.
func jackknifeUnits(n int) int {
	if n <= exactJackknifeMax {
		return n
	}
	return jackknifeGroups
}

// bootstrapReplicates returns the statistic on each of r resamples, in
// resample order.
func bootstrapReplicates(ctx context.Context, n int, stat NewStatistic, r int, key StreamKey, workers int,
	progress func(int, int)) ([]float64, error) {
	t := make([]float64, r)
	blocks := (r + bootBlock - 1) / bootBlock
	size := func(b int) int { return min(bootBlock, r-b*bootBlock) }
	workers = max(1, min(workers, blocks))
	type state struct {
		f   func([]int) float64
		idx []int
		rng blockRNG
	}
	ws := make([]*state, workers)
	err := runBlocks(ctx, blocks, workers, size, r, progress, func(w, b int) {
		if ws[w] == nil {
			ws[w] = &state{f: stat(), idx: make([]int, n)}
		}
		s := ws[w]
		s.rng.reset(key, uint64(b))
		for j := range size(b) {
			for i := range s.idx {
				s.idx[i] = int(s.rng.below(uint64(n)))
			}
			t[b*bootBlock+j] = s.f(s.idx)
		}
	})
	return t, err
}

// jackknifeBlock is the number of deletions per scheduled block.
const jackknifeBlock = 16

// jackknife returns the statistic with each of units groups of rows
// deleted (see jackknifeGroupsOf).
func jackknife(ctx context.Context, n int, stat NewStatistic, units int, key StreamKey, workers int,
	progress func(int, int)) ([]float64, error) {
	group := jackknifeGroupsOf(n, units, key)
	jack := make([]float64, units)
	blocks := (units + jackknifeBlock - 1) / jackknifeBlock
	size := func(b int) int { return min(jackknifeBlock, units-b*jackknifeBlock) }
	workers = max(1, min(workers, blocks))
	type state struct {
		f   func([]int) float64
		idx []int
	}
	ws := make([]*state, workers)
	err := runBlocks(ctx, blocks, workers, size, units, progress, func(w, b int) {
		if ws[w] == nil {
			ws[w] = &state{f: stat(), idx: make([]int, 0, n)}
		}
		s := ws[w]
		for g := b * jackknifeBlock; g < b*jackknifeBlock+size(b); g++ {
			s.idx = s.idx[:0]
			for i, gi := range group {
				if int(gi) != g {
					s.idx = append(s.idx, i)
				}
			}
			jack[g] = s.f(s.idx)
		}
	})
	return jack, err
}

// jackknifeGroupsOf returns, for each row, the jackknife deletion that
// removes it: row i alone when units = n; otherwise group g holds the rows
// at positions ⌊gn/units⌋ to ⌊(g+1)n/units⌋ − 1 of a random permutation of
// the rows drawn from the sub-stream "jackknife groups" of key (block 0).
func jackknifeGroupsOf(n, units int, key StreamKey) []int32 {
	group := make([]int32, n)
	if units == n {
		for i := range group {
			group[i] = int32(i)
		}
		return group
	}
	perm := make([]int32, n)
	for i := range perm {
		perm[i] = int32(i)
	}
	var rng blockRNG
	rng.reset(key.derive("jackknife groups"), 0)
	rng.shuffle(perm)
	for g := range units {
		for _, row := range perm[g*n/units : (g+1)*n/units] {
			group[row] = int32(g)
		}
	}
	return group
}

// bootstrapEnds computes the interval described at BootstrapInterval from
// the estimate t0, the replicates t (in any order; not modified) and, for
// BCa, the jackknife values.
func bootstrapEnds(t0 float64, t, jack []float64, level float64, alt Alternative, bca bool) (lo, hi float64, err error) {
	nan := math.NaN()
	sorted := make([]float64, 0, len(t))
	for _, v := range t {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			sorted = append(sorted, v)
		}
	}
	if dropped := len(t) - len(sorted); len(sorted) == 0 || float64(dropped) > maxUndefinedShare*float64(len(t)) {
		return nan, nan, fmt.Errorf("stats: bootstrap: the statistic is undefined in %d of %d resamples: %w",
			dropped, len(t), ErrBootstrapUndefined)
	}
	slices.Sort(sorted)

	var alphas []float64 // the probabilities of the finite ends
	switch alt {
	case Greater:
		alphas = []float64{1 - level}
	case Less:
		alphas = []float64{level}
	default:
		alphas = []float64{(1 - level) / 2, (1 + level) / 2}
	}
	if bca {
		z0, err := biasCorrection(t0, sorted)
		if err != nil {
			return nan, nan, err
		}
		a, err := acceleration(jack)
		if err != nil {
			return nan, nan, err
		}
		for i, alpha := range alphas {
			z := z0 + distuv.UnitNormal.Quantile(alpha)
			d := 1 - float64(a*z)
			if !(d > 0) {
				return nan, nan, fmt.Errorf("stats: bootstrap: BCa acceleration %.4g too large for level %v: %w",
					a, level, ErrBootstrapUndefined)
			}
			alphas[i] = distuv.UnitNormal.CDF(z0 + z/d)
		}
	}
	switch alt {
	case Greater:
		return normalScaleQuantile(sorted, alphas[0]), 1, nil
	case Less:
		return -1, normalScaleQuantile(sorted, alphas[0]), nil
	}
	return normalScaleQuantile(sorted, alphas[0]), normalScaleQuantile(sorted, alphas[1]), nil
}

// biasCorrection returns z₀ = Φ⁻¹((#{t < t0} + ½#{t = t0})/R) for sorted
// replicates, ties within bootTieTol.
func biasCorrection(t0 float64, sorted []float64) (float64, error) {
	var below, equal int
	for _, v := range sorted {
		switch {
		case math.Abs(v-t0) <= bootTieTol:
			equal++
		case v < t0:
			below++
		}
	}
	share := (float64(below) + float64(equal)/2) / float64(len(sorted))
	if share <= 0 || share >= 1 {
		return 0, fmt.Errorf("stats: bootstrap: every replicate lies on one side of the estimate, so the BCa bias correction is infinite: %w",
			ErrBootstrapUndefined)
	}
	return distuv.UnitNormal.Quantile(share), nil
}

// acceleration returns a = Σ L³ / (6 (Σ L²)^{3/2}), L = mean − jack; 0 when
// every jackknife value is equal.
func acceleration(jack []float64) (float64, error) {
	var sum float64
	for i, v := range jack {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("stats: bootstrap: the statistic is undefined without jackknife group %d of %d: %w",
				i+1, len(jack), ErrBootstrapUndefined)
		}
		sum += v
	}
	m := sum / float64(len(jack))
	var s2, s3 float64
	for _, v := range jack {
		l := m - v
		l2 := float64(l * l)
		s2 += l2
		s3 += float64(l2 * l)
	}
	if s2 == 0 {
		return 0, nil
	}
	return s3 / (6 * math.Pow(s2, 1.5)), nil
}

// normalScaleQuantile returns the quantile at probability alpha of sorted
// values, by the order-statistic rule with interpolation on the normal scale
// described at BootstrapInterval.
func normalScaleQuantile(sorted []float64, alpha float64) float64 {
	r := len(sorted)
	rk := float64(r+1) * alpha
	kf := math.Trunc(rk)
	k := int(kf)
	switch {
	case k <= 0:
		return sorted[0]
	case k >= r:
		return sorted[r-1]
	case kf == rk:
		return sorted[k-1]
	}
	q := distuv.UnitNormal.Quantile
	zk := q(float64(k) / float64(r+1))
	w := (q(alpha) - zk) / (q(float64(k+1)/float64(r+1)) - zk)
	lo, hi := sorted[k-1], sorted[k]
	return lo + float64(w*(hi-lo))
}
