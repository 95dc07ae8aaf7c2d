# power_reference.R: reference values for CorrelationPower and
# CorrelationSampleSize in concordat/engine/stats (engine/stats/power_test.go).
#
# R version: 4.2.2; package pwr 1.3-0 (Debian r-cran-pwr 1.3-0+dfsg-1).
# Run from the repository root:
#
#     Rscript testdata/ref/power_reference.R
#
# It writes, overwriting, testdata/ref/power_reference.csv with columns
#   kind         "power" or "sample_size"
#   measure      pearson, spearman or kendall_b
#   alternative  two-sided, greater or less
#   rho, alpha   the population value and the level
#   n            the sample size (power rows: given; sample_size rows: the
#                smallest n whose power reaches the target)
#   power        power rows: the power; sample_size rows: the target
#   pwr          Pearson only, else NA. Power rows: pwr.r.test(n, r,
#                sig.level, power = NULL, alternative)$power. Sample-size
#                rows: ceiling(pwr.r.test(r, sig.level, power)$n).
# Numbers are printed with 17 significant digits.
#
# The "power" and "n" columns come from the Fisher-z formula as documented
# for CorrelationPower, written out here independently:
#   zeta = atanh(rho), se0 = sqrt(c0/(n - off)), se1 = sqrt(c1/(n - off)),
#   greater: pnorm((zeta - q se0)/se1), less: pnorm((-zeta - q se0)/se1),
#   two-sided: the sum of both with q at alpha/2,
# with (c1, c0, off) = (1, 1, 3) for Pearson (Fisher 1921), (1 + rho^2/2, 1, 3)
# for Spearman (Bonett & Wright 2000, Psychometrika 65(1):23-28) and
# (0.437, 0.437, 4) for Kendall (Fieller, Hartley & Pearson 1957, Biometrika
# 44:470-481). The smallest n is found by evaluating every n from off + 1 up.
# These rows check our arithmetic and search, not the approximation itself.
#
# pwr.r.test (pwr 1.3-0) differs from the pure formula in two ways: its
# critical value is the critical r of the t test with n - 2 df, transformed
# by atanh, and it adds the bias correction r/(2(n - 1)) to atanh(r). The Go
# test therefore compares with pwr within a stated tolerance only.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
suppressPackageStartupMessages(library(pwr))
stopifnot(packageVersion("pwr") == "1.3.0")

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
consts <- function(measure, rho) switch(measure,
  pearson   = c(c1 = 1, c0 = 1, off = 3),
  spearman  = c(c1 = 1 + rho^2 / 2, c0 = 1, off = 3),
  kendall_b = c(c1 = 0.437, c0 = 0.437, off = 4))
fisher_power <- function(measure, rho, n, alpha, alt) {
  k <- consts(measure, rho)
  se0 <- sqrt(k[["c0"]] / (n - k[["off"]]))
  se1 <- sqrt(k[["c1"]] / (n - k[["off"]]))
  zeta <- atanh(rho)
  switch(alt,
    greater     = pnorm((zeta - qnorm(alpha, lower.tail = FALSE) * se0) / se1),
    less        = pnorm((-zeta - qnorm(alpha, lower.tail = FALSE) * se0) / se1),
    "two-sided" = {
      q <- qnorm(alpha / 2, lower.tail = FALSE)
      pnorm((zeta - q * se0) / se1) + pnorm((-zeta - q * se0) / se1)
    })
}
pwr_alt <- c("two-sided" = "two.sided", greater = "greater", less = "less")

rows <- list()
emit <- function(kind, measure, alt, rho, alpha, n, power, pwr)
  rows[[length(rows) + 1]] <<- data.frame(kind = kind, measure = measure,
    alternative = alt, rho = num(rho), alpha = num(alpha), n = n,
    power = num(power), pwr = num(pwr))

measures <- c("pearson", "spearman", "kendall_b")
alts <- c("two-sided", "greater", "less")
for (m in measures) for (alt in alts) for (alpha in c(0.05, 0.01)) {
  for (rho in c(-0.5, -0.1, 0, 0.1, 0.3, 0.5, 0.8, 0.95)) {
    for (n in c(5, 10, 30, 85, 200, 1000)) {
      p <- fisher_power(m, rho, n, alpha, alt)
      q <- if (m == "pearson")
        pwr.r.test(n = n, r = rho, sig.level = alpha, power = NULL,
                   alternative = pwr_alt[[alt]])$power else NA
      emit("power", m, alt, rho, alpha, n, p, q)
    }
  }
  for (rho in c(-0.3, 0.1, 0.3, 0.5, 0.7)) for (target in c(0.8, 0.9)) {
    # Against a one-sided alternative of the other sign the power never
    # reaches the target; those combinations are left out.
    if ((alt == "greater" && rho < 0) || (alt == "less" && rho > 0)) next
    off <- consts(m, rho)[["off"]]
    ns <- (off + 1):100000
    n <- ns[which(fisher_power(m, rho, ns, alpha, alt) >= target)[1]]
    q <- if (m == "pearson")
      ceiling(pwr.r.test(r = rho, sig.level = alpha, power = target,
                         alternative = pwr_alt[[alt]])$n) else NA
    emit("sample_size", m, alt, rho, alpha, n, target, q)
  }
}

out <- do.call(rbind, rows)
write.csv(out, "testdata/ref/power_reference.csv", row.names = FALSE, quote = FALSE)
