package stats

import "fmt"

// valueIndex is one observation and its position in the input. Sorting these
// pairs directly is about three times faster than sorting an index slice by
// indirection, because the comparison never leaves the cache line.
type valueIndex struct {
	v float64
	i int
}

// compareValueIndex orders by value, then by position, so that equal values
// keep their order of appearance (the order TieFirst needs) without the cost
// of a stable sort. The comparisons are written out: cmp.Compare also
// orders NaN, which never reaches here, and measured ~30% slower when Rank
// sorted these pairs.
func compareValueIndex(a, b valueIndex) int {
	switch {
	case a.v < b.v:
		return -1
	case a.v > b.v:
		return 1
	case a.i < b.i:
		return -1
	case a.i > b.i:
		return 1
	}
	return 0
}

// Ranking is a column's ranks together with its tie groups, as RankTies
// finds them in one pass over the sorted values.
type Ranking struct {
	Ranks []float64 // 1-based ranks under the tie rule, in input order
	Ties  TieGroups // the groups of equal values, as CountPairs reports them
	Tied  int       // number of values equal to at least one other value
}

// RankTies returns the 1-based ranks of x under rule together with its tie
// groups. Tied values (equal under ==, so −0 ties with +0) share a rank as
// the rule says:
//
//	x          = 20, 10, 30, 10
//	TieAverage = 3, 1.5, 4, 1.5   (midranks: the mean of the positions)
//	TieMin     = 3, 1, 4, 1
//	TieMax     = 3, 2, 4, 2
//	TieDense   = 2, 1, 3, 1       (ranks of the distinct values)
//	TieFirst   = 3, 1, 4, 2       (ties broken by order of appearance)
//
// ±Inf are ordinary extreme values. It sorts the values with a stable LSD
// radix sort (see Argsort) and walks the sorted order once, so it runs in
// O(n) time with 24 bytes of scratch per value (reused between calls) and
// 8 for the ranks; its cost is one argsort plus one scattered write per
// value. Tied/len(x) is TieShare(x), and Ties.Distinct the number of
// distinct values; the sums in Ties are accumulated over the groups in
// ascending order of value, as CountPairs does.
//
// RankTies panics if x contains NaN (the engine removes missing values
// first), has 2³¹ or more values, or if rule is not one of the declared tie
// rules.
func RankTies(x []float64, rule TieRule) Ranking {
	return RankTiesInto(x, rule, nil)
}

// RankTiesInto is RankTies writing the ranks into dst, which must hold
// len(x) values (nil: new memory), and returns them as Ranks. A correlation
// matrix ranks its columns into one block of memory this way.
func RankTiesInto(x []float64, rule TieRule, dst []float64) Ranking {
	checkRule(rule)
	n := len(x)
	if dst != nil && len(dst) != n {
		panic(fmt.Sprintf("stats: RankTiesInto: %d values and room for %d ranks", n, len(dst)))
	}
	s := getRadixScratch(n)
	s.sort(x, "Rank")
	if dst == nil {
		dst = s.spareAsFloats()
	}
	rk := Ranking{Ranks: dst}
	rk.Ties, rk.Tied = rankSorted(s.keys(), s.idx(), rule, rk.Ranks)
	putRadixScratch(s)
	return rk
}

// Rank returns the 1-based ranks of x under rule: RankTies(x, rule).Ranks.
// Tied values (equal under ==, so −0 ties with +0) share a rank as the rule
// says:
//
//	x          = 20, 10, 30, 10
//	TieAverage = 3, 1.5, 4, 1.5   (midranks: the mean of the positions)
//	TieMin     = 3, 1, 4, 1
//	TieMax     = 3, 2, 4, 2
//	TieDense   = 2, 1, 3, 1       (ranks of the distinct values)
//	TieFirst   = 3, 1, 4, 2       (ties broken by order of appearance)
//
// ±Inf are ordinary extreme values. It runs in O(n) time (a radix sort; see
// RankTies).
//
// Rank panics if x contains NaN (the engine removes missing values first),
// has 2³¹ or more values, or if rule is not one of the declared tie rules.
func Rank(x []float64, rule TieRule) []float64 {
	return RankTies(x, rule).Ranks
}

// checkRule panics unless rule is one of the declared tie rules.
func checkRule(rule TieRule) {
	switch rule {
	case TieAverage, TieMin, TieMax, TieDense, TieFirst:
	default:
		panic(fmt.Sprintf("stats: unknown tie rule %v", rule))
	}
}

// rankSorted writes into r the ranks under rule of the values whose sorted
// keys and positions are keys and idx, and returns their tie groups and the
// number of tied values. Sorted positions start..end−1 holding one key form
// a tie group, whose 1-based positions are start+1..end; a singleton's rank
// is its position under every rule but TieDense.
//
// From rankSplitMin values on, the sorted positions are cut in two at the
// first change of key from the middle on, and the halves are ranked on two
// goroutines (one after the other on a single CPU); the tie sums are the
// first half's plus the second half's. The cut depends on the keys alone,
// never on the machine, so the result is the same everywhere.
func rankSorted(keys []uint64, idx []int32, rule TieRule, r []float64) (TieGroups, int) {
	n := len(keys)
	idx = idx[:n]
	if n < rankSplitMin {
		return rankRange(keys, idx, 0, n, 0, rule, r)
	}
	cut := n / 2
	for cut < n && keys[cut] == keys[cut-1] {
		cut++
	}
	if cut == n {
		return rankRange(keys, idx, 0, n, 0, rule, r)
	}
	dense := 0 // distinct keys before the cut, for TieDense
	if rule == TieDense {
		dense = 1
		for m := 1; m < cut; m++ {
			if keys[m] != keys[m-1] {
				dense++
			}
		}
	}
	var g0, g1 TieGroups
	var t0, t1 int
	both(parallel(n),
		func() { g0, t0 = rankRange(keys, idx, 0, cut, 0, rule, r) },
		func() { g1, t1 = rankRange(keys, idx, cut, n, dense, rule, r) })
	return TieGroups{
		Distinct: g0.Distinct + g1.Distinct,
		SumT1:    g0.SumT1 + g1.SumT1,
		SumT2:    g0.SumT2 + g1.SumT2,
		SumT25:   g0.SumT25 + g1.SumT25,
	}, t0 + t1
}

// rankSplitMin is the length from which rankSorted ranks two halves.
const rankSplitMin = 1 << 16

// rankRange is rankSorted for the sorted positions lo..hi−1, which start
// with a new key; dense is the number of distinct keys before lo. The tie
// groups it returns count only its own keys.
func rankRange(keys []uint64, idx []int32, lo, hi, dense int, rule TieRule, r []float64) (TieGroups, int) {
	n := hi
	var g TieGroups
	tied, first := 0, dense
	for start := lo; start < n; {
		key := keys[start]
		end := start + 1
		for end < n && keys[end] == key {
			end++
		}
		dense++
		if end == start+1 {
			if rule == TieDense {
				r[idx[start]] = float64(dense)
			} else {
				r[idx[start]] = float64(end)
			}
			start = end
			continue
		}
		g.addTied(end - start)
		tied += end - start
		var shared float64
		switch rule {
		case TieAverage:
			shared = float64(start+1+end) / 2 // exact: an integer over 2
		case TieMin:
			shared = float64(start + 1)
		case TieMax:
			shared = float64(end)
		case TieDense:
			shared = float64(dense)
		case TieFirst:
			for k := start; k < end; k++ {
				r[idx[k]] = float64(k + 1)
			}
			start = end
			continue
		}
		for _, i := range idx[start:end] {
			r[i] = shared
		}
		start = end
	}
	g.Distinct = dense - first
	return g, tied
}

// TieShare returns the share, between 0 and 1, of the values in x that are
// equal to at least one other value in x: for 1, 2, 2, 3, 3, 3 it is 5/6.
// It returns 0 when x has fewer than two values. NaN is never equal to
// anything, so it counts as untied. It sorts the values once (Argsort's
// radix sort), in O(n).
func TieShare(x []float64) float64 {
	n := len(x)
	if n < 2 {
		return 0
	}
	clean := x
	for i, v := range x {
		if v != v { // rare: copy the values other than NaN
			clean = make([]float64, i, n)
			copy(clean, x[:i])
			for _, w := range x[i+1:] {
				if w == w {
					clean = append(clean, w)
				}
			}
			break
		}
	}
	s := getRadixScratch(len(clean))
	s.sort(clean, "TieShare")
	keys := s.keys()
	m, tied := len(keys), 0
	for start := 0; start < m; {
		end := start + 1
		for end < m && keys[end] == keys[start] {
			end++
		}
		if end-start > 1 {
			tied += end - start
		}
		start = end
	}
	putRadixScratch(s)
	return float64(tied) / float64(n)
}
