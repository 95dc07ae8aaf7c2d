# make_reference.R: reference values for the tests of concordat/engine/stats
# and for the engine's end-to-end pipeline test.
#
# R version: 4.2.2 (base packages stats, utils and datasets only).
# Run from the repository root:
#
#     Rscript testdata/ref/make_reference.R
#
# It writes, overwriting:
#   testdata/ref/stats_reference.csv    inputs and R's results, one row per
#                                       (case, quantity); columns case,
#                                       quantity, value; a value is one number
#                                       or a space-separated vector, printed
#                                       with 17 significant digits; NA where
#                                       R gives NA/NaN (undefined)
#   testdata/published/anscombe.csv     datasets::anscombe (Anscombe 1973)
#   testdata/ref/pipeline_data.csv      an invented sensor-network table
#   testdata/ref/pipeline_expected.csv  R's results on it, pairwise deletion
#
# Every random input comes from set.seed below, so re-running reproduces the
# files byte for byte. The Bonett-Wright and Fieller intervals are not in base
# R; they are computed here from their published formulas.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
options(warn = -1) # constant columns make cor() warn; NA is the answer we want

num <- function(v) ifelse(is.na(v), "NA", sprintf("%.17g", v))
alts <- c("two.sided", "greater", "less")
goalt <- c(two.sided = "two-sided", greater = "greater", less = "less")

# Interval on the atanh scale with standard error se, back-transformed:
# two-sided uses qnorm((1+level)/2); greater gives [lo, 1], less [-1, hi].
atanh_interval <- function(est, se, level, alt) {
  if (is.na(est) || is.na(se)) return(c(NA, NA))
  z <- atanh(est)
  switch(alt,
    two.sided = tanh(z + c(-1, 1) * qnorm((1 + level) / 2) * se),
    greater   = c(tanh(z - qnorm(level) * se), 1),
    less      = c(-1, tanh(z + qnorm(level) * se)))
}
# Bonett & Wright (2000), Psychometrika 65(1):23-28: se^2 = (1 + rho^2/2)/(n-3).
bonett_wright <- function(rho, n, level, alt)
  if (n <= 3) c(NA, NA) else atanh_interval(rho, sqrt((1 + rho^2 / 2) / (n - 3)), level, alt)
# Fieller, Hartley & Pearson (1957), Biometrika 44:470-481: se^2 = 0.437/(n-4).
fieller <- function(tau, n, level, alt)
  if (n <= 4) c(NA, NA) else atanh_interval(tau, sqrt(0.437 / (n - 4)), level, alt)

safe_test <- function(...) tryCatch(cor.test(...), error = function(e) NULL)
p_of <- function(t) if (is.null(t)) NA else unname(t$p.value)
ci_of <- function(t) if (is.null(t) || is.null(t$conf.int)) c(NA, NA) else as.numeric(t$conf.int)
dense_rank <- function(x) match(x, sort(unique(x)))
tie_share <- function(x) mean(x %in% x[duplicated(x)])

# ---------------------------------------------------------------- cases
set.seed(20261202)
cases <- list()
add <- function(name, x, y) cases[[name]] <<- list(x = x, y = y)

add("no_ties_n10", sample(1:10), sample(1:10))
x <- sample(1:4, 12, replace = TRUE); add("ties_x", x, round(x + rnorm(12), 2))
y <- sample(1:4, 12, replace = TRUE); add("ties_y", round(y + rnorm(12), 2), y)
add("ties_both", sample(1:5, 20, replace = TRUE), sample(1:5, 20, replace = TRUE))
x <- sample(1:6, 25, replace = TRUE); add("negative_ties", x, -x + sample(0:3, 25, replace = TRUE))
add("n3", c(1.5, 0.2, 3.1), c(2, 1, 1))
add("n4", c(4, 1, 3, 2), c(10.5, 9.25, 12, 9.25))
add("n5", c(2, 7, 1, 9, 4), c(3.3, 5.1, 1.2, 4.4, 4.0))
add("const_x", rep(2.5, 8), round(rnorm(8), 3))
add("const_y", round(rnorm(8), 3), rep(0.1, 8))
add("perfect_positive", 1:10, 2 * (1:10) + 1)
add("perfect_negative", c(0.3, 0.1, 0.7, 0.5, 0.9, 1.1), -c(0.3, 0.1, 0.7, 0.5, 0.9, 1.1))
add("independent_n30", round(rnorm(30), 2), round(rnorm(30), 2))
add("decimal_offset", 1e6 + round(runif(40), 1), 1e6 + round(runif(40), 1))
x <- sample(1:7, 500, replace = TRUE)
add("large_heavy_ties", x, pmin(pmax(x + sample(-3:3, 500, replace = TRUE), 1), 7))
x <- rnorm(500); add("large_continuous", x, 0.6 * x + rnorm(500))
for (k in 1:4) add(paste0("anscombe_", k), anscombe[[paste0("x", k)]], anscombe[[paste0("y", k)]])

rows <- character(0)
out <- function(case, quantity, v) rows <<- c(rows, paste(case, quantity, paste(num(v), collapse = " "), sep = ","))

for (name in names(cases)) {
  x <- cases[[name]]$x; y <- cases[[name]]$y; n <- length(x)
  out(name, "x", x); out(name, "y", y); out(name, "n", n)
  for (m in c("average", "min", "max", "first")) {
    out(name, paste0("rank_x_", m), rank(x, ties.method = m))
    out(name, paste0("rank_y_", m), rank(y, ties.method = m))
  }
  out(name, "rank_x_dense", dense_rank(x)); out(name, "rank_y_dense", dense_rank(y))
  out(name, "tie_share_x", tie_share(x)); out(name, "tie_share_y", tie_share(y))

  r <- cor(x, y); rho <- cor(x, y, method = "spearman"); tau <- cor(x, y, method = "kendall")
  out(name, "pearson_r", r); out(name, "spearman_rho", rho); out(name, "kendall_tau_b", tau)
  for (a in alts) {
    ga <- goalt[[a]]
    out(name, paste0("pearson_p_", ga), p_of(safe_test(x, y, alternative = a)))
    out(name, paste0("spearman_p_", ga), p_of(safe_test(x, y, alternative = a, method = "spearman", exact = FALSE)))
    out(name, paste0("kendall_p_", ga), p_of(safe_test(x, y, alternative = a, method = "kendall", exact = FALSE, continuity = FALSE)))
    for (level in c(0.95, 0.8)) {
      lv <- sprintf("%g", level)
      out(name, paste0("fisher_ci_", ga, "_", lv), ci_of(safe_test(x, y, alternative = a, conf.level = level)))
      out(name, paste0("bonett_wright_ci_", ga, "_", lv), bonett_wright(rho, n, level, a))
      out(name, paste0("fieller_ci_", ga, "_", lv), fieller(tau, n, level, a))
    }
  }
}

# Ranks with infinities and signed zeros (rank() only: cor() has no value here).
x <- c(3, Inf, -Inf, 3, 0, Inf, -0, 0, -2.5)
out("ranks_with_inf", "x", x)
for (m in c("average", "min", "max", "first")) out("ranks_with_inf", paste0("rank_x_", m), rank(x, ties.method = m))
out("ranks_with_inf", "rank_x_dense", dense_rank(x))
out("ranks_with_inf", "tie_share_x", tie_share(x))

writeLines(c("case,quantity,value", rows), "testdata/ref/stats_reference.csv")

write.csv(anscombe, "testdata/published/anscombe.csv", row.names = FALSE)

# ---------------------------------------------------------------- pipeline
# An invented sensor network: 40 readings from two stations.
set.seed(4711)
n <- 40
station <- sample(rep(c("north", "south"), each = 20))
temp_c <- round(rnorm(n, 14, 4) * 2) / 2 # half degrees: ties
humidity <- round(85 - 1.4 * temp_c + rnorm(n, 0, 6), 1)
noise_db <- round(rnorm(n, 52, 4) + ifelse(station == "north", 3, 0), 1)
score <- temp_c + rnorm(n, 0, 3)
levels_alarm <- c("low", "medium", "high", "severe")
alarm_level <- levels_alarm[findInterval(score, c(-Inf, 11, 15, 18, Inf))]
load_rank <- sample(1:30, n, replace = TRUE)
temp_c[c(5, 17, 31)] <- NA
humidity[c(9, 26)] <- NA
alarm_level[22] <- NA

data_lines <- paste(station,
  ifelse(is.na(temp_c), "NA", sprintf("%.1f", temp_c)),
  ifelse(is.na(humidity), "", sprintf("%.1f", humidity)),
  sprintf("%.1f", noise_db),
  ifelse(is.na(alarm_level), "NA", alarm_level),
  load_rank, sep = ",")
writeLines(c("station,temp_c,humidity,noise_db,alarm_level,load_rank", data_lines),
  "testdata/ref/pipeline_data.csv")

# Read the file back, so the expected values come from the bytes on disk.
d <- read.csv("testdata/ref/pipeline_data.csv", na.strings = c("", "NA"), stringsAsFactors = FALSE)
d$alarm_level <- match(d$alarm_level, levels_alarm)
pairs <- list(c("temp_c", "alarm_level"), c("humidity", "alarm_level"),
  c("temp_c", "humidity"), c("load_rank", "temp_c"))
exp_rows <- character(0)
for (p in pairs) for (g in c("all", "north", "south")) {
  sub <- if (g == "all") d else d[d$station == g, ]
  ok <- !is.na(sub[[p[1]]]) & !is.na(sub[[p[2]]]) # pairwise deletion
  x <- sub[[p[1]]][ok]; y <- sub[[p[2]]][ok]; m <- length(x)
  est <- cor(x, y); t <- safe_test(x, y)
  res <- list(pearson = c(est, p_of(t), ci_of(t)))
  est <- cor(x, y, method = "spearman")
  res$spearman <- c(est, p_of(safe_test(x, y, method = "spearman", exact = FALSE)), bonett_wright(est, m, 0.95, "two.sided"))
  est <- cor(x, y, method = "kendall")
  res$kendall_b <- c(est, p_of(safe_test(x, y, method = "kendall", exact = FALSE, continuity = FALSE)), fieller(est, m, 0.95, "two.sided"))
  for (meas in c("spearman", "kendall_b", "pearson")) {
    exp_rows <- c(exp_rows, paste(p[1], p[2], g, meas, m, paste(num(res[[meas]]), collapse = ","), sep = ","))
  }
}
writeLines(c("x,y,group,measure,n,estimate,p_value,ci_low,ci_high", exp_rows),
  "testdata/ref/pipeline_expected.csv")
