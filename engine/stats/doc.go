// Package stats computes the numbers behind a concordat table: ranks under a
// declared tie rule, rank and product-moment correlations, their asymptotic
// p-values and confidence intervals.
//
// Functions take flat float64 slices of equal length with no missing values
// (the engine removes them first) and return float64 results. A result that
// is undefined for the input (a constant column, too few observations) is
// NaN; callers report it as null together with the reason. A panic inside a
// kernel means a bug in the caller, never a user error.
//
// The pieces:
//
//   - CorrelationMatrix, SpearmanMatrix: the k×k matrix of r or ρ among k
//     columns (each ranked once for ρ), as the Gram matrix of the centred
//     unit-length columns, blocked for the cache and tiled over workers
//     with gonum's Dgemv inside; each element agrees with the pairwise
//     kernel to rounding and does not depend on the worker count.
//   - Argsort: a stable LSD radix argsort of float64 values on
//     order-preserving bit patterns (8-bit digits, constant digits
//     skipped), O(n); −0 ties with +0, ±Inf are ordinary, NaN panics.
//   - RankTies, Rank and TieShare: ranking under a TieRule by one radix
//     argsort and one walk over the sorted order, which also gives the tie
//     groups (Ranking); O(n).
//   - Pearson, SpearmanRho, SpearmanRanks: product-moment r, and ρ as r on
//     ranks (the two columns ranked concurrently for large n, bit for bit
//     the same result); SpearmanRanks for ranks already held.
//   - CountPairs: one O(n log n) pass (Knight 1966) that classifies every
//     pair as concordant, discordant or tied and keeps the tie-group sums,
//     on radix argsorts of both columns, with discordant pairs counted by a
//     Fenwick tree over the codes of the column with fewer distinct values
//     (heavy ties) or as inversions by a two-ended merge sort;
//     its methods give τ_a, τ_b, Stuart's τ_c, Goodman and Kruskal's γ,
//     Somers' d in both directions (Estimate dispatches by Measure), S and
//     the tie-corrected Var(S). KendallTauB is the shortcut.
//   - OrdinalSE, OrdinalSEs: the non-null asymptotic standard errors of
//     those six measures by the delta method (Goodman and Kruskal 1972,
//     Brown and Benedetti 1977), from per-observation concordant and
//     discordant counts found in O(n log n); WaldInterval turns an estimate
//     and its standard error into est ∓ z·se on the original scale.
//   - CorrelationT, KendallNormal: asymptotic p-values, one function per
//     reference distribution; PMethod names the method for the result
//     table, so exact and permutation p-values slot in beside them.
//   - KendallExactP: the exact null distribution of Kendall's S without
//     ties (Mahonian numbers), n ≤ KendallExactMaxN, with full relative
//     accuracy in the far tails and a per-n cache for repeated calls.
//   - SpearmanExactP, SpearmanEdgeworthP: p-values of ρ without ties from
//     its null distribution, exact (a dynamic programme over sets of ranks,
//     cached per n) for n ≤ SpearmanExactMaxN, and by the Edgeworth series
//     of Best & Roberts (AS 89) above; SpearmanEdgeworthMaxN is where the
//     engine hands over to CorrelationT.
//   - FisherInterval, BonettWrightInterval, FiellerInterval: intervals on
//     the atanh scale, each with its published standard error.
//   - PartialCorrelation, PartialSpearman: the correlation of x and y after
//     least-squares removal of control columns (on ranks for Spearman), by
//     reorthogonalized Gram–Schmidt; PartialT, PartialFisherInterval and
//     PartialBonettWrightInterval are their p-value and intervals with the
//     degrees of freedom reduced by the number of controls (Fisher 1924).
//   - Adjust: multiplicity-adjusted p-values for one family (Bonferroni,
//     Holm, Hochberg, Hommel, Benjamini–Hochberg, Benjamini–Yekutieli),
//     NaN entries outside the family; Adjustment names the method.
//   - CheckMonotone, Isotonic: a warning for U and inverted-U relations,
//     which a rank correlation near zero would hide: the group means of the
//     ranks against their best monotone (isotonic, pool-adjacent-violators)
//     fit, with a conservative test of the bend, in O(n log n).
//   - CorrelationPower, CorrelationSampleSize: planning on the Fisher-z
//     scale with the same standard errors as the intervals.
//   - StreamKey, NewStreamKey: independent random streams named by the
//     seed and labels (SHA-256), cut into fixed blocks with one ChaCha8
//     generator each, so results never depend on the worker count.
//   - PermutationTest, ExactPermutationTest, Arrangements: conditional
//     permutation tests of every measure, by Monte Carlo ((b+1)/(m+1)) or by
//     enumerating the distinct arrangements (up to MaxEnumeration).
//   - BootstrapInterval: percentile and BCa intervals from paired
//     resampling of rows, for any statistic given as a NewStatistic.
package stats
