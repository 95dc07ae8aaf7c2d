package stats

import (
	"fmt"
	"math"
	"slices"
)

// Adjustment is a multiplicity adjustment method for a family of p-values.
// The zero value is invalid, so a forgotten setting is caught rather than
// silently defaulted.
type Adjustment int

const (
	_          Adjustment = iota
	AdjustNone            // no adjustment: the raw p-values
	Bonferroni            // family-wise error rate, single step
	Holm                  // family-wise error rate, step-down
	Hochberg              // family-wise error rate, step-up (independence or positive dependence)
	Hommel                // family-wise error rate, closed Simes tests
	BH                    // false discovery rate, Benjamini–Hochberg step-up
	BY                    // false discovery rate under any dependence, Benjamini–Yekutieli
)

// String returns the recipe word for the method.
func (a Adjustment) String() string {
	switch a {
	case AdjustNone:
		return "none"
	case Bonferroni:
		return "bonferroni"
	case Holm:
		return "holm"
	case Hochberg:
		return "hochberg"
	case Hommel:
		return "hommel"
	case BH:
		return "bh"
	case BY:
		return "by"
	}
	return fmt.Sprintf("Adjustment(%d)", int(a))
}

// ParseAdjustment returns the method whose String is s ("none",
// "bonferroni", "holm", "hochberg", "hommel", "bh", "by"; exact lower-case
// match) and true, or 0 and false for any other word.
func ParseAdjustment(s string) (Adjustment, bool) {
	for a := AdjustNone; a <= BY; a++ {
		if a.String() == s {
			return a, true
		}
	}
	return 0, false
}

// Adjust returns the adjusted p-values of one family p, in the input order.
// The adjusted p-value of a hypothesis is the smallest family-wise level
// (error rate, or false discovery rate for BH and BY) at which the method
// rejects it, so rejecting where adjusted ≤ α carries out the method at
// level α.
//
// NaN entries are not part of the family: the family size m counts the
// non-NaN p-values, and NaN entries stay NaN in the result. With
// p₍₁₎ ≤ … ≤ p₍ₘ₎ the non-NaN values in ascending order, the adjusted value
// of p₍ᵢ₎ is
//
//	AdjustNone  p₍ᵢ₎
//	Bonferroni  m·p₍ᵢ₎
//	Holm        max over j ≤ i of (m − j + 1)·p₍ⱼ₎
//	Hochberg    min over j ≥ i of (m − j + 1)·p₍ⱼ₎
//	Hommel      max over the subsets I ∋ i of the Simes p-value of I (below)
//	BH          min over j ≥ i of (m/j)·p₍ⱼ₎
//	BY          min over j ≥ i of (m/j)·c(m)·p₍ⱼ₎,  c(m) = 1 + 1/2 + … + 1/m
//
// each capped at 1. Tied p-values receive equal adjusted values, so
// permuting the input permutes the output. Every adjusted value is at least
// its raw p-value, and the adjusted values keep the order of the raw ones.
// Every method runs in O(m log m) time and O(m) memory, except Hommel,
// which takes O(m²) time in the worst case (evenly spaced p-values; about
// 40 ms at m = 10 000, see hommel).
//
// Hommel's procedure is the closed test (every intersection hypothesis
// tested at level α) built on Simes' test, whose p-value for a set I of size
// s is min over k of s·p₍ₖ₎:I / k, p₍ₖ₎:I the k-th smallest p-value in I.
// Since that p-value grows with each of its arguments, the worst set of size
// s containing hypothesis i is i together with the s − 1 largest other
// p-values; this is the evaluation of Wright (1992).
//
// Adjust panics when method is unknown or a p-value lies outside [0, 1].
//
// References:
//   - Bonferroni: C. E. Bonferroni (1936), Teoria statistica delle classi e
//     calcolo delle probabilità, Pubblicazioni del R. Istituto Superiore di
//     Scienze Economiche e Commerciali di Firenze 8, 3–62.
//   - S. Holm (1979), A simple sequentially rejective multiple test
//     procedure, Scandinavian Journal of Statistics 6(2), 65–70.
//   - Y. Hochberg (1988), A sharper Bonferroni procedure for multiple tests
//     of significance, Biometrika 75(4), 800–802.
//   - G. Hommel (1988), A stagewise rejective multiple test procedure based
//     on a modified Bonferroni test, Biometrika 75(2), 383–386; adjusted
//     p-values after S. P. Wright (1992), Adjusted p-values for
//     simultaneous inference, Biometrics 48(4), 1005–1013.
//   - R. J. Simes (1986), An improved Bonferroni procedure for multiple
//     tests of significance, Biometrika 73(3), 751–754.
//   - Y. Benjamini and Y. Hochberg (1995), Controlling the false discovery
//     rate: a practical and powerful approach to multiple testing, Journal
//     of the Royal Statistical Society B 57(1), 289–300.
//   - Y. Benjamini and D. Yekutieli (2001), The control of the false
//     discovery rate in multiple testing under dependency, Annals of
//     Statistics 29(4), 1165–1188.
func Adjust(p []float64, method Adjustment) []float64 {
	if method < AdjustNone || method > BY {
		panic(fmt.Sprintf("stats: unknown adjustment %v", method))
	}
	// The family, sorted ascending; ties keep their input order.
	fam := make([]valueIndex, 0, len(p))
	for i, v := range p {
		if math.IsNaN(v) {
			continue
		}
		if v < 0 || v > 1 {
			panic(fmt.Sprintf("stats: Adjust: p-value %v at index %d outside [0, 1]", v, i))
		}
		fam = append(fam, valueIndex{v: v, i: i})
	}
	out := make([]float64, len(p))
	for i := range out {
		out[i] = math.NaN()
	}
	m := len(fam)
	if m == 0 {
		return out
	}
	slices.SortFunc(fam, compareValueIndex)
	s := make([]float64, m) // s[j] is p₍ⱼ₊₁₎
	for j, f := range fam {
		s[j] = f.v
	}

	a := make([]float64, m) // a[j] is the adjusted value of s[j]
	fm := float64(m)
	switch method {
	case AdjustNone:
		copy(a, s)
	case Bonferroni:
		for j, v := range s {
			a[j] = math.Min(1, fm*v)
		}
	case Holm: // step-down: a running maximum from the smallest p-value
		run := 0.0
		for j, v := range s {
			run = math.Max(run, math.Min(1, float64(m-j)*v))
			a[j] = run
		}
	case Hochberg: // step-up: a running minimum from the largest p-value
		run := 1.0
		for j := m - 1; j >= 0; j-- {
			run = math.Min(run, float64(m-j)*s[j])
			a[j] = run
		}
	case BH:
		stepUpRate(a, s, 1)
	case BY:
		var c float64
		for k := 1; k <= m; k++ {
			c += 1 / float64(k)
		}
		stepUpRate(a, s, c)
	case Hommel:
		hommel(a, s)
	}
	for j, f := range fam {
		out[f.i] = a[j]
	}
	return out
}

// stepUpRate fills a with min over j' ≥ j of min(1, c·(m/(j'+1))·s[j']), the
// Benjamini–Hochberg adjustment scaled by c (c = 1 for BH, the harmonic sum
// for BY). s is sorted ascending.
func stepUpRate(a, s []float64, c float64) {
	m := len(s)
	fm := float64(m)
	run := 1.0
	for j := m - 1; j >= 0; j-- {
		run = math.Min(run, c*(fm/float64(j+1))*s[j])
		a[j] = run
	}
}

// hommel fills a with Hommel's adjusted p-values of the ascending s, by the
// closure argument in Adjust's doc comment. For each set size k from m down
// to 2 let d = m − k, so that s[d:] are the k largest p-values, and let
//
//	c(k) = k · min over t = 1..k of s[d+t−1]/t,
//
// the Simes p-value of s[d:]. A hypothesis inside s[d:] has c(k) as its
// worst Simes p-value over sets of size k; one outside, at position j < d,
// has min(c(k), k·s[j]) (its own Simes term k·s[j] replaces the term
// k·s[d], which is never smaller). The adjusted value is the largest of
// these over k, and at least s[j] (the set of size one).
//
// Since s ascends, k·s[j] ≤ c(k) exactly for the positions below some
// split jc(k) ≤ d: set size k raises a[:jc] to k·s[j] and a[jc:] to c(k).
// Recording, per split point, the largest c(k) and the largest k, two
// sweeps then apply every set size at once, so the updates cost O(m log m)
// in all (a binary search per k) and give the same floating-point values
// as updating every position for every k. Computing c(k) scans s[d:] and
// stops as soon as no later term can be smaller; it takes m²/2 steps in
// the worst case (evenly spaced p-values), far fewer on typical families.
// The divisions by t are multiplications by a table of 1/t, which can move
// c(k) by an ulp.
//
// TODO: R. J. Meijer, T. J. P. Krebs and J. J. Goeman (2019), Hommel's
// procedure in linear time, Biometrical Journal 61(1), 73–82, give an
// O(m) algorithm after sorting; adopt it if families far beyond 10⁴ occur.
func hommel(a, s []float64) {
	m := len(s)
	inv := make([]float64, m) // inv[t] = 1/(t+1); inv[0] = 1 exactly
	for t := range inv {
		inv[t] = 1 / float64(t+1)
	}
	cAt := make([]float64, m+1) // cAt[j]: largest c(k) with jc(k) = j
	kAt := make([]int, m)       // kAt[j]: largest k with jc(k) = j + 1
	for k := m; k >= 2; k-- {
		d := m - k
		// least = min over t of s[d+t]/(t+1). Every term after s[d+t] is
		// at least s[d+t]/k, also after rounding (rounding is monotone);
		// once that bound reaches least, no later term can lower it, so
		// stopping there changes nothing. least ≤ s[d] exactly.
		least := s[d]
		bound := inv[k-1]
		for t := 1; t < k; t++ {
			v := s[d+t]
			if q := v * inv[t]; q < least {
				least = q
			} else if v*bound >= least {
				break
			}
		}
		fk := float64(k)
		c := fk * least
		// jc = the first j < d with k·s[j] > c, or d.
		lo, hi := 0, d
		for lo < hi {
			mid := int(uint(lo+hi) >> 1)
			if fk*s[mid] > c {
				hi = mid
			} else {
				lo = mid + 1
			}
		}
		cAt[lo] = max(cAt[lo], c)
		if lo > 0 {
			kAt[lo-1] = max(kAt[lo-1], k)
		}
	}
	run := 0.0 // the largest c(k) whose split lies at or before j
	for j := range m {
		run = max(run, cAt[j])
		a[j] = max(s[j], run)
	}
	kr := 0 // the largest k whose split lies after j
	for j := m - 1; j >= 0; j-- {
		kr = max(kr, kAt[j])
		if kr > 0 {
			a[j] = max(a[j], float64(kr)*s[j])
		}
	}
	for j := range a {
		a[j] = min(1, a[j])
	}
}
