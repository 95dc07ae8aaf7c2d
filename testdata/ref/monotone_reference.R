# monotone_reference.R: reference values for Isotonic in concordat/engine/stats
# (engine/stats/monotone_test.go).
#
# R version: 4.2.2 (base package stats only: isoreg, pf).
# Run from the repository root:
#
#     Rscript testdata/ref/monotone_reference.R
#
# It writes, overwriting, testdata/ref/monotone_reference.csv with columns
# case, quantity, value; a value is a space-separated vector printed with 17
# significant digits. Quantities per case:
#   y    the responses, in the order of the predictor
#   w    integer weights (weighted cases only)
#   x    the predictor, unsorted and without ties (case "unsorted_x" only)
#   p    (case "hand_u20" only) an F upper tail, see the end of the script
#   fit  the least-squares non-decreasing fit: isoreg(y)$yf; with x,
#        isoreg(x, y)$yf, which is in the order of sorted x; with weights,
#        isoreg(rep(y, w))$yf at the first copy of each point (a point of
#        integer weight w is w equal points in a row, which the optimal fit
#        keeps at one level)
#
# isoreg computes the fit as the slopes of the greatest convex minorant of
# the cumulative sums (Barlow, Bartholomew, Bremner & Brunk 1972), another
# route than the pool-adjacent-violators loop of the Go code. Random inputs
# come from set.seed below, so a re-run reproduces the file byte for byte.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")

num <- function(v) paste(sprintf("%.17g", v), collapse = " ")
rows <- list()
emit <- function(case, quantity, v)
  rows[[length(rows) + 1]] <<- data.frame(case = case, quantity = quantity, value = num(v))

plain <- function(case, y) {
  emit(case, "y", y)
  emit(case, "fit", isoreg(y)$yf)
}
weighted <- function(case, y, w) {
  stopifnot(all(w == round(w)), all(w >= 1))
  f <- isoreg(rep(y, w))$yf
  first <- cumsum(c(1, head(w, -1)))
  emit(case, "y", y)
  emit(case, "w", w)
  emit(case, "fit", f[first])
}

set.seed(20261203)
# The example of R's help page for isoreg; its fit is worked by hand in
# monotone_test.go too.
plain("r_help_example", c(1, 0, 4, 3, 3, 5, 4, 2, 0))
plain("ties_in_y", c(3, 3, 1, 1, 2, 2, 5, 5, 4, 4))
plain("increasing", 1:8)
plain("decreasing", 8:1)
plain("constant", rep(2, 6))
plain("single", 7)
plain("two_violators", c(2, 1))
plain("zigzag", rep(c(1, 0), 10))
plain("rounded_trend_n50", round(seq(0, 3, length.out = 50) + rnorm(50), 1))
plain("continuous_n1000", sin(seq(0, 6, length.out = 1000)) + rnorm(1000, sd = 0.3))
plain("large_offset", 1e6 + round(rnorm(30), 2))
plain("likert_means", c(2.5, 3.1, 2.9, 3.8, 3.4))
weighted("weighted_small", c(5, 1, 4, 2, 6, 3), c(1, 3, 2, 1, 2, 4))
weighted("weighted_ties", c(1, 1, 0, 2, 2, 1), c(2, 1, 5, 1, 3, 2))
weighted("weighted_random", round(rnorm(40, mean = seq(0, 2, length.out = 40)), 2),
         sample(1:6, 40, replace = TRUE))
x <- runif(30)
y <- x + rnorm(30, sd = 0.3)
emit("unsorted_x", "x", x)
emit("unsorted_x", "y", y)
emit("unsorted_x", "fit", isoreg(x, y)$yf)

# The upper tail of F(4, 15) at 99/5.6, the statistic of the hand-worked
# U-shaped example in monotone_test.go (TestCheckMonotoneHandU).
emit("hand_u20", "p", pf(99 / 5.6, 4, 15, lower.tail = FALSE))

out <- do.call(rbind, rows)
write.csv(out, "testdata/ref/monotone_reference.csv", row.names = FALSE, quote = FALSE)
