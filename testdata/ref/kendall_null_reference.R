# kendall_null_reference.R: reference p-values of the exact null distribution
# of Kendall's S without ties, for engine/stats/kendall_null_test.go.
#
# R version: 4.2.2 (base package stats) and SuppDists 1.1-9.7 (Debian
# package r-cran-suppdists 1.1-9.7-1). Run from the repository root:
#
#     Rscript testdata/ref/kendall_null_reference.R
#
# It writes, overwriting, testdata/ref/kendall_null_reference.csv with
# columns
#
#   n            number of untied pairs, 3..49
#   inversions   I, the number of discordant pairs of the constructed sample
#   S            Kendall's S = n_c - n_d = N - 2I, N = n(n-1)/2
#   alternative  two-sided, greater or less (concordat's words)
#   p_cortest    cor.test(x, y, method = "kendall", exact = TRUE,
#                alternative = ...)$p.value
#   p_suppdists  SuppDists::pKendall, exact for n < 13 (Edgeworth beyond, so
#                NA there): less = pKendall(tau, n) = P(tau <= tau_obs);
#                greater = pKendall(-tau, n), the same lower tail by
#                symmetry (its upper tail is computed as 1 - lower and is
#                not used); two-sided = min(1, 2 * min(greater, less))
#
# Numbers are printed with 17 significant digits. Without ties and n < 50,
# cor.test uses the exact distribution of T = n_c (its statistic; it checks
# here that T = N - I). Its "greater" p-value is 1 - P(T <= T_obs - 1), and
# its two-sided one min(1, 2 * min(P(T <= t), P(T >= t))) with the upper
# tail likewise 1 - P(T <= t - 1): those lose relative accuracy below about
# 1e-15, which the Go test allows for. The samples are built, not drawn: for
# each inversion count I the script constructs y with exactly I inversions
# against x = 1..n (no randomness), so re-running reproduces the file.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
library(SuppDists)

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
alts <- c("two.sided", "greater", "less")
goalt <- c(two.sided = "two-sided", greater = "greater", less = "less")

# A permutation of 1..n with exactly I inversions: inserting value k into
# the permutation of 1..k-1 with d_k of the smaller values after it adds d_k
# inversions, 0 <= d_k <= k-1; take the d_k greedily from k = n down.
with_inversions <- function(n, I) {
  d <- integer(n)
  left <- I
  for (k in n:1) {
    d[k] <- min(k - 1, left)
    left <- left - d[k]
  }
  stopifnot(left == 0)
  y <- integer(0)
  for (k in 1:n) y <- append(y, k, after = k - 1 - d[k])
  y
}

inversions <- function(y) {
  n <- length(y)
  sum(outer(seq_len(n), seq_len(n), "<") & outer(y, y, ">"))
}

rows <- list()
for (n in c(3:12, 13, 15, 20, 25, 30, 40, 49)) {
  N <- n * (n - 1) / 2
  if (n <= 8) {
    counts <- 0:N
  } else {
    low <- unique(c(0:5, 10, 20, round(N * c(0.1, 0.2, 0.3, 0.4, 0.45, 0.49)),
                    floor(N / 2)))
    counts <- sort(unique(c(low, N - low)))
  }
  for (I in counts) {
    x <- seq_len(n)
    y <- with_inversions(n, I)
    stopifnot(inversions(y) == I)
    S <- N - 2 * I
    tau <- S / N
    sd_less <- if (n < 13) pKendall(tau, N = n) else NA
    sd_greater <- if (n < 13) pKendall(-tau, N = n) else NA
    sd <- c(two.sided = min(1, 2 * min(sd_less, sd_greater)),
            greater = sd_greater, less = sd_less)
    for (alt in alts) {
      ct <- cor.test(x, y, method = "kendall", exact = TRUE, alternative = alt)
      stopifnot(ct$statistic == N - I)
      rows[[length(rows) + 1]] <- c(n, I, S, goalt[[alt]], num(ct$p.value),
                                    num(sd[[alt]]))
    }
  }
}

out <- do.call(rbind, rows)
colnames(out) <- c("n", "inversions", "S", "alternative", "p_cortest",
                   "p_suppdists")
write.csv(out, "testdata/ref/kendall_null_reference.csv", row.names = FALSE,
          quote = FALSE)
