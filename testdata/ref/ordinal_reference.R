# ordinal_reference.R: reference values for the Kendall-family estimates and
# their asymptotic standard errors in concordat/engine/stats
# (engine/stats/ordinal_ase_test.go, TestOrdinalAgainstR).
#
# R version: 4.2.2; package Hmisc 4.8.0 (Debian bookworm r-cran-hmisc),
# both checked at run time.
# Run from the repository root:
#
#     Rscript testdata/ref/ordinal_reference.R
#
# It writes, overwriting, testdata/ref/ordinal_reference.csv: columns case,
# quantity, value; a value is one number or a space-separated vector printed
# with 17 significant digits; NA where R gives NA/NaN. Random inputs come
# from set.seed below, so a re-run reproduces the file byte for byte.
#
# Quantities per case:
#   x, y, n                the inputs
#   est_<measure>          base R, by brute-force counting of all pairs
#                          (a check of our counting only): kendall_a,
#                          kendall_b, kendall_c, gamma, somers_d_yx,
#                          somers_d_xy
#   cor_kendall            cor(x, y, method = "kendall") (tau-b)
#   ase_<measure>          the published asymptotic standard errors (ASE1),
#                          evaluated in their table form from table(x, y):
#                          cell counts n_ij, A_ij (cells concordant with
#                          cell ij), D_ij (discordant), P = sum n_ij A_ij,
#                          Q = sum n_ij D_ij. Sources: Goodman & Kruskal
#                          (1972), JASA 67(338), 415-421; Brown & Benedetti
#                          (1977), JASA 72(358), 309-315; Stuart (1953),
#                          Biometrika 40, 105-110. This checks our
#                          per-observation arithmetic against the same
#                          formulas in table notation, not the method.
#   hmisc_dxy_xy, hmisc_sd_xy   Hmisc::rcorr.cens(x, y)[c("Dxy", "S.D.")]
#   hmisc_dxy_yx, hmisc_sd_yx   Hmisc::rcorr.cens(y, x)[c("Dxy", "S.D.")]
#
# Hmisc's convention, established by testing and asserted by the checks at
# the end of this script: for numeric, uncensored b, rcorr.cens(a, b) counts
# as "relevant" the ordered pairs untied on b (ties in a count half
# concordant), so its Dxy = (n_c - n_d) / (pairs untied on b): Somers' d
# with a as the dependent variable. rcorr.cens(x, y) is therefore d_xy and
# rcorr.cens(y, x) is d_yx. Its S.D. equals the delta-method ASE1 of that d
# (Goodman & Kruskal 1972; Brown & Benedetti 1977) to about 1e-16 relative
# on every case here, so it is an independent check of our standard error.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
suppressPackageStartupMessages(library(Hmisc))
stopifnot(packageVersion("Hmisc") == "4.8.0")

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))

# Brute-force pair counting: every ordered pair once, halved.
count_pairs <- function(x, y) {
  sx <- sign(outer(x, x, "-"))
  sy <- sign(outer(y, y, "-"))
  n <- length(x)
  list(n = n,
       nc = sum(sx * sy > 0) / 2,
       nd = sum(sx * sy < 0) / 2,
       n0 = n * (n - 1) / 2,
       tx = (sum(sx == 0) - n) / 2,
       ty = (sum(sy == 0) - n) / 2,
       m = min(length(unique(x)), length(unique(y))))
}

estimates <- function(x, y) {
  k <- count_pairs(x, y)
  S <- k$nc - k$nd
  c(kendall_a = S / k$n0,
    kendall_b = S / sqrt((k$n0 - k$tx) * (k$n0 - k$ty)),
    kendall_c = 2 * k$m * S / (k$n^2 * (k$m - 1)),
    gamma = S / (k$nc + k$nd),
    somers_d_yx = S / (k$n0 - k$tx),
    somers_d_xy = S / (k$n0 - k$ty))
}

# The table-form ASE1 formulas. Rows of the table are x, columns y.
table_ase <- function(x, y) {
  N <- unclass(table(x, y))
  r <- nrow(N); cc <- ncol(N); n <- sum(N)
  A <- D <- matrix(0, r, cc)
  for (i in seq_len(r)) for (j in seq_len(cc)) {
    lo_i <- seq_len(i - 1); hi_i <- setdiff(seq_len(r), seq_len(i))
    lo_j <- seq_len(j - 1); hi_j <- setdiff(seq_len(cc), seq_len(j))
    A[i, j] <- sum(N[lo_i, lo_j]) + sum(N[hi_i, hi_j])
    D[i, j] <- sum(N[lo_i, hi_j]) + sum(N[hi_i, lo_j])
  }
  P <- sum(N * A); Q <- sum(N * D); d <- A - D
  ni <- rowSums(N); nj <- colSums(N)
  wr <- n^2 - sum(ni^2); wc <- n^2 - sum(nj^2)
  m <- min(r, cc)
  w <- sqrt(wr * wc)
  taub <- (P - Q) / w
  v <- outer(ni, rep(1, cc)) * wc + outer(rep(1, r), nj) * wr
  c(kendall_a = 2 / (n * (n - 1)) * sqrt(sum(N * d^2) - (P - Q)^2 / n),
    kendall_b = 1 / w^2 * sqrt(sum(N * (2 * w * d + taub * v)^2) -
                               n^3 * taub^2 * (wr + wc)^2),
    kendall_c = 2 * m / ((m - 1) * n^2) * sqrt(sum(N * d^2) - (P - Q)^2 / n),
    gamma = 4 / (P + Q)^2 * sqrt(sum(N * (Q * A - P * D)^2)),
    somers_d_yx = 2 / wr^2 * sqrt(sum(N * (wr * d - (P - Q) * (n - outer(ni, rep(1, cc))))^2)),
    somers_d_xy = 2 / wc^2 * sqrt(sum(N * (wc * d - (P - Q) * (n - outer(rep(1, r), nj)))^2)))
}

# Cases.
cases <- list()
# Agresti (2002), Categorical Data Analysis, 2nd ed., Table 2.8: income
# (rows) by job satisfaction (columns), 1996 GSS.
jobsat <- matrix(c(1, 3, 10, 6,
                   2, 3, 10, 7,
                   1, 6, 14, 12,
                   0, 1, 9, 11), 4, byrow = TRUE)
cases$job_satisfaction <- list(x = rep(row(jobsat) - 1, jobsat),
                               y = rep(col(jobsat) - 1, jobsat))
set.seed(1953)
x <- sample(0:3, 12, TRUE); y <- sample(0:2, 12, TRUE) + x %/% 2
cases$tied_n12 <- list(x = x, y = y)
set.seed(1962)
x <- sample(1:4, 60, TRUE); y <- pmin(5, pmax(1, x + sample(-2:2, 60, TRUE)))
cases$tied_4x5_n60 <- list(x = x, y = y)
set.seed(1972)
x <- sample(1:6, 500, TRUE); y <- floor(x / 3 + rnorm(500, 0, 1.6)) %% 8
cases$tied_6x8_n500 <- list(x = x, y = y)
set.seed(1977)
x <- sample(1:5, 200, TRUE); y <- round(-0.4 * x + rnorm(200), 1)
cases$negative_tied_x_n200 <- list(x = x, y = y)
set.seed(2002)
x <- rnorm(50); y <- 0.6 * x + rnorm(50)
cases$continuous_n50 <- list(x = x, y = y)
set.seed(2010)
x <- sample(1:3, 300, TRUE); y <- sample(1:7, 300, TRUE)
cases$independent_3x7_n300 <- list(x = x, y = y)

rows <- list()
add <- function(case, quantity, value)
  rows[[length(rows) + 1]] <<- data.frame(case = case, quantity = quantity,
                                          value = paste(num(value), collapse = " "))
for (name in names(cases)) {
  x <- as.numeric(cases[[name]]$x); y <- as.numeric(cases[[name]]$y)
  add(name, "x", x); add(name, "y", y); add(name, "n", length(x))
  e <- estimates(x, y); a <- table_ase(x, y)
  for (m in names(e)) add(name, paste0("est_", m), e[[m]])
  add(name, "cor_kendall", cor(x, y, method = "kendall"))
  for (m in names(a)) add(name, paste0("ase_", m), a[[m]])
  hxy <- rcorr.cens(x, y); hyx <- rcorr.cens(y, x)
  add(name, "hmisc_dxy_xy", hxy[["Dxy"]]); add(name, "hmisc_sd_xy", hxy[["S.D."]])
  add(name, "hmisc_dxy_yx", hyx[["Dxy"]]); add(name, "hmisc_sd_yx", hyx[["S.D."]])
  # The convention stated in the header.
  close <- function(a, b) isTRUE(all.equal(a, b, tolerance = 1e-12))
  stopifnot(close(hxy[["Dxy"]], e[["somers_d_xy"]]), close(hyx[["Dxy"]], e[["somers_d_yx"]]),
            close(hxy[["S.D."]], a[["somers_d_xy"]]), close(hyx[["S.D."]], a[["somers_d_yx"]]),
            close(e[["kendall_b"]], cor(x, y, method = "kendall")))
}
out <- do.call(rbind, rows)
write.csv(out, "testdata/ref/ordinal_reference.csv", row.names = FALSE, quote = FALSE)
