# adjust_reference.R: reference values for stats.Adjust (engine/stats/adjust.go).
#
# R version: 4.2.2 (base package stats only: p.adjust).
# Run from the repository root:
#
#     Rscript testdata/ref/adjust_reference.R
#
# It writes, overwriting, testdata/ref/adjust_reference.csv with columns
# case,quantity,value (the layout of stats_reference.csv): a value is a
# space-separated vector printed with sprintf("%.17g"), NA where R gives NA.
#
# Per case:
#   p                 the family (NA = not part of it)
#   adj_<method>      p.adjust(p, method = <R method>), default n, which R
#                     takes as the number of non-NA p-values
# with <method> the Go name: none, bonferroni, holm, hochberg, hommel, bh
# (R "BH") and by (R "BY").
#
# Cases: the 15 p-values of Benjamini & Hochberg (1995, section 3.2; values
# recalled from memory); random families of every length 1..50 (set.seed
# below; p = u^3 for uniform u, so that small p-values are common; every
# third family rounded to 2 decimals, which makes ties and zeros); hand-made
# families with ties, NA entries, p = 0 and p = 1. Re-running reproduces the
# file byte for byte. engine/stats/adjust_test.go compares within 1e-14
# relative.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
methods <- c(none = "none", bonferroni = "bonferroni", holm = "holm",
             hochberg = "hochberg", hommel = "hommel", bh = "BH", by = "BY")

cases <- list()
add <- function(name, p) cases[[name]] <<- p

add("bh1995", c(0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344,
                0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.000))
set.seed(19951995)
for (n in 1:50) {
  p <- runif(n)^3
  if (n %% 3 == 0) p <- round(p, 2)
  add(sprintf("random_n%02d", n), p)
}
add("ties", c(0.02, 0.01, 0.02, 0.5, 0.01, 0.02, 0.5, 0.04))
add("with_na", c(0.03, NA, 0.001, 0.2, NA, 0.04, 0.04, 0.9))
add("zeros_and_ones", c(0, 1, 0.5, 0, 1, 0.02))
add("all_ones", rep(1, 5))
add("all_zeros", rep(0, 4))
add("all_na", c(NA_real_, NA_real_))
add("single", 0.3)
add("single_with_na", c(NA, 0.3, NA))
add("equal_small", rep(0.001, 12))
add("descending", c(0.9, 0.5, 0.04, 0.03, 0.02, 0.011, 0.01))

rows <- character(0)
out <- function(case, quantity, v) rows <<- c(rows, paste(case, quantity, paste(num(v), collapse = " "), sep = ","))
for (name in names(cases)) {
  p <- cases[[name]]
  out(name, "p", p)
  for (m in names(methods)) out(name, paste0("adj_", m), p.adjust(p, method = methods[[m]]))
}
writeLines(c("case,quantity,value", rows), "testdata/ref/adjust_reference.csv")
