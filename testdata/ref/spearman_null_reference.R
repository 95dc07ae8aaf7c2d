# spearman_null_reference.R: reference values for the null distribution of
# Spearman's rho without ties (engine/stats/spearman_null.go).
#
# R version: 4.2.2 (base package stats), plus SuppDists 1.1-9.7 (Debian
# package r-cran-suppdists 1.1-9.7-1). Run from the repository root:
#
#     Rscript testdata/ref/spearman_null_reference.R
#
# It writes, overwriting, testdata/ref/spearman_null_reference.csv with
# columns source,n,d,rho,alt,value (numbers with 17 significant digits):
#
#   prho_upper  R's internal C routine behind cor.test(method = "spearman",
#               exact = TRUE), called as .Call(stats:::C_pRho, d, n, FALSE):
#               P(D >= d) for D = sum of squared rank differences. R
#               enumerates all n! orderings for n <= 9 and evaluates the
#               Edgeworth series of Best & Roberts (1975), Algorithm AS 89,
#               for n >= 10. Rows: every even d for n = 3..9, every third
#               even d and both far tails for n = 10..18 (see lattice()),
#               201 even d spread over [0, (n^3 - n)/3] for larger n; rho
#               and alt empty.
#   cor_test    cor.test(x, y, method = "spearman", exact = TRUE,
#               alternative = alt)$p.value on invented untied samples;
#               d is the statistic S (= D), rho the estimate.
#   suppdists   SuppDists::pSpearman(rho, n, lower.tail = TRUE), which
#               documents itself as P(rho' <= rho) computed exactly (Kendall &
#               Smith 1939 algorithm) for n <= 100; the d of lattice() for
#               n = 10 and 11. (For n >= 12 this version's values are not
#               exact: against full enumeration they differ by up to 0.015
#               absolute and 77% relative at tails >= 1e-3, so they are not
#               written.)
#
# Inputs come from set.seed below, so a re-run reproduces the file byte for
# byte. R is used as a calculator only.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
suppressPackageStartupMessages(library(SuppDists))
stopifnot(packageVersion("SuppDists") == "1.1.9.7")

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
rows <- character(0)
out <- function(source, n, d, rho, alt, value)
  rows <<- c(rows, paste(source, n, num(d), rho, alt, num(value), sep = ","))

max_d <- function(n) n * (n^2 - 1) / 3

# ---------------------------------------------------------------- prho_upper
prho_upper <- function(d, n) .Call(stats:::C_pRho, d, as.integer(n), FALSE)
# Every even d up to n = 9; for n = 10..18 every third one, and every one
# within 100 of either end (the far tails).
lattice <- function(n) {
  d <- seq(0, max_d(n), by = 2)
  if (n <= 9) d else d[d %% 6 == 0 | d <= 100 | d >= max_d(n) - 100]
}
for (n in 3:18)
  for (d in lattice(n)) out("prho_upper", n, d, "", "", prho_upper(d, n))
for (n in c(19, 20, 21, 22, 23, 25, 26, 30, 40, 50, 75, 100, 150, 200, 300, 500, 1000)) {
  ds <- unique(2 * round(seq(0, max_d(n), length.out = 201) / 2))
  for (d in ds) out("prho_upper", n, d, "", "", prho_upper(d, n))
}

# ---------------------------------------------------------------- cor_test
set.seed(20261203)
for (n in c(3, 4, 5, 6, 7, 8, 9, 10, 12, 15, 18, 19, 25, 40, 100)) {
  for (slope in c(-3, -1, -0.3, 0, 0.3, 1, 3)) {
    x <- rnorm(n)
    y <- slope * x + rnorm(n)
    for (alt in c("two.sided", "greater", "less")) {
      t <- cor.test(x, y, method = "spearman", exact = TRUE, alternative = alt)
      out("cor_test", n, unname(t$statistic), num(unname(t$estimate)), alt, t$p.value)
    }
  }
  for (s in c(1, -1)) { # perfect agreement and perfect reversal
    x <- rnorm(n)
    for (alt in c("two.sided", "greater", "less")) {
      t <- cor.test(x, s * x, method = "spearman", exact = TRUE, alternative = alt)
      out("cor_test", n, unname(t$statistic), num(unname(t$estimate)), alt, t$p.value)
    }
  }
}

# ---------------------------------------------------------------- suppdists
for (n in 10:11)
  for (d in lattice(n)) {
    rho <- 1 - 6 * d / (n^3 - n)
    out("suppdists", n, d, num(rho), "less", pSpearman(rho, n, lower.tail = TRUE))
  }

writeLines(c("source,n,d,rho,alt,value", rows), "testdata/ref/spearman_null_reference.csv")
