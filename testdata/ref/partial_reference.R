# partial_reference.R: reference values for the partial correlations of
# engine/stats/partial.go.
#
# R version: 4.2.2 (base package stats only: lm, resid, cor, rank, pt,
# qnorm).
# Run from the repository root:
#
#     Rscript testdata/ref/partial_reference.R
#
# It writes, overwriting, testdata/ref/partial_reference.csv with columns
# case,quantity,value (the layout of stats_reference.csv): a value is one
# number or a space-separated vector printed with sprintf("%.17g").
#
# Per case (n observations, k = 1, 2 or 3 controls):
#   x, y, z1 .. zk, n, k     the inputs
#   partial_r                cor(resid(lm(x ~ Z)), resid(lm(y ~ Z))), on
#                            centred columns (see partial_r below)
#   partial_rho_<rule>       the same on rank(v, ties.method = rule) of x, y
#                            and every control; rule average or min
#   partial_p_<alt>          Student's t on n - 2 - k df of partial_r,
#                            t = r sqrt((n-2-k)/(1-r^2)): two-sided
#                            2*pt(-abs(t), df), greater pt(t, df, lower.tail
#                            = FALSE), less pt(t, df)
#   fisher_ci_<alt>_<level>  formula: tanh(atanh r -/+ q se), se = 1/sqrt(n-3-k)
#   bonett_wright_ci_<alt>_<level>
#                            formula on partial_rho_average:
#                            se^2 = (1 + rho^2/2)/(n-3-k)
# <alt> is two-sided, greater or less; <level> 0.95 or 0.8; two-sided
# intervals use q = qnorm((1+level)/2), greater gives [lo, 1] and less
# [-1, hi] with q = qnorm(level). The interval rows check our arithmetic
# against the same formula, not a published method.
#
# As a check inside R, every partial_r is also computed from the inverse of
# the correlation matrix of (x, y, Z), -P[1,2]/sqrt(P[1,1] P[2,2]), and must
# agree within 1e-10 (where that matrix is not singular).
#
# Cases: n in 10, 30, 100, 200 with k = 1, 2, 3, continuous (normal, x and y
# depending on the controls and on each other) and with ties (the same
# rounded to integers); the smallest n = k + 3 for each k; the 4-point
# example of the Wikipedia article "Partial correlation" (recalled from
# memory); a case with a large offset (1e6). set.seed below makes re-runs
# reproduce the file byte for byte. engine/stats/partial_test.go compares
# within 1e-12 absolute (estimates, intervals) and 1e-9 relative (p-values).

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
alts <- c("two-sided", "greater", "less")

# The columns are centred before lm(), which leaves the partial correlation
# unchanged in exact arithmetic; without it the intercept column and the
# controls of "offset_1e6" are nearly collinear (condition number ~1e6) and
# lm() loses about 1e-10 of r.
#
# When x or y is a linear function of the controls (its residual sum of
# squares below (1e-7)^2 of its centred sum of squares), cor() of the
# residuals would correlate rounding noise; such a value is meaningless, and
# NA is written instead (concordat returns NaN there). This happens for the
# ranks in "nmin_k1", where x and z1 have the same order.
partial_r <- function(x, y, Z) {
  ctr <- function(v) v - mean(v)
  ex <- resid(lm(ctr(x) ~ apply(Z, 2, ctr)))
  ey <- resid(lm(ctr(y) ~ apply(Z, 2, ctr)))
  if (sum(ex^2) < 1e-14 * sum(ctr(x)^2) || sum(ey^2) < 1e-14 * sum(ctr(y)^2)) return(NA)
  r <- cor(ex, ey)
  # Skipped when the correlation matrix is singular (ranks of x equal to
  # ranks of y in "wikipedia", where the residuals coincide and r = 1).
  P <- tryCatch(solve(cor(cbind(x, y, Z))), error = function(e) NULL)
  stopifnot(is.null(P) || abs(r + P[1, 2] / sqrt(P[1, 1] * P[2, 2])) < 1e-10)
  r
}
t_p <- function(r, n, k, alt) {
  df <- n - 2 - k
  t <- r * sqrt(df / (1 - r^2))
  switch(alt,
    "two-sided" = 2 * pt(-abs(t), df),
    greater = pt(t, df, lower.tail = FALSE),
    less = pt(t, df))
}
atanh_interval <- function(est, se, level, alt) {
  if (is.na(est)) return(c(NA, NA))
  z <- atanh(est)
  switch(alt,
    "two-sided" = tanh(z + c(-1, 1) * qnorm((1 + level) / 2) * se),
    greater = c(tanh(z - qnorm(level) * se), 1),
    less = c(-1, tanh(z + qnorm(level) * se)))
}

cases <- list()
add <- function(name, x, y, Z) cases[[name]] <<- list(x = x, y = y, Z = as.matrix(Z))

set.seed(19241924)
for (n in c(10, 30, 100, 200)) for (k in 1:3) {
  Z <- matrix(rnorm(n * k), n, k)
  x <- drop(Z %*% runif(k, -1, 1)) + rnorm(n)
  y <- drop(Z %*% runif(k, -1, 1)) + 0.4 * x + rnorm(n)
  add(sprintf("n%d_k%d", n, k), x, y, Z)
  add(sprintf("n%d_k%d_ties", n, k), round(2 * x), round(2 * y), round(Z))
}
for (k in 1:3) {
  n <- k + 3
  add(sprintf("nmin_k%d", k), rnorm(n), rnorm(n), matrix(rnorm(n * k), n, k))
}
add("wikipedia", c(2, 4, 15, 20), c(1, 2, 3, 4), c(0, 0, 1, 1))
Z <- matrix(rnorm(60), 30, 2)
add("offset_1e6", 1e6 + Z[, 1] + rnorm(30), 1e6 + Z[, 2] + rnorm(30), 1e6 + Z)

rows <- character(0)
out <- function(case, quantity, v) rows <<- c(rows, paste(case, quantity, paste(num(v), collapse = " "), sep = ","))
for (name in names(cases)) {
  x <- cases[[name]]$x; y <- cases[[name]]$y; Z <- cases[[name]]$Z
  n <- length(x); k <- ncol(Z)
  out(name, "x", x); out(name, "y", y)
  for (j in 1:k) out(name, paste0("z", j), Z[, j])
  out(name, "n", n); out(name, "k", k)
  r <- partial_r(x, y, Z)
  out(name, "partial_r", r)
  rho <- NA
  for (rule in c("average", "min")) {
    rz <- apply(Z, 2, rank, ties.method = rule)
    v <- partial_r(rank(x, ties.method = rule), rank(y, ties.method = rule), rz)
    out(name, paste0("partial_rho_", rule), v)
    if (rule == "average") rho <- v
  }
  for (a in alts) {
    out(name, paste0("partial_p_", a), t_p(r, n, k, a))
    for (level in c(0.95, 0.8)) {
      lv <- sprintf("%g", level)
      if (n - 3 - k > 0) {
        fi <- atanh_interval(r, 1 / sqrt(n - 3 - k), level, a)
        bw <- atanh_interval(rho, sqrt((1 + rho^2 / 2) / (n - 3 - k)), level, a)
      } else {
        fi <- bw <- c(NA, NA)
      }
      out(name, paste0("fisher_ci_", a, "_", lv), fi)
      out(name, paste0("bonett_wright_ci_", a, "_", lv), bw)
    }
  }
}
writeLines(c("case,quantity,value", rows), "testdata/ref/partial_reference.csv")
