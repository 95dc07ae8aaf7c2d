# bootstrap_reference.R: reference bootstrap intervals for the tests of
# concordat/engine/stats (bootstrap.go), computed with R's package boot.
#
# R version: 4.2.2; package boot 1.3-28.1 (Debian r-cran-boot).
# Run from the repository root:
#
#     go test ./engine/stats/ -run TestWriteBootstrapReplicates -args -write
#     Rscript testdata/ref/bootstrap_reference.R
#
# R's generator differs from concordat's, so R is fed the replicates drawn by
# concordat: the first command writes testdata/ref/bootstrap_replicates.csv
# (per case: the statistic's name, the data x and y, concordat's estimate t0,
# its bootstrap replicates t, its jackknife values jack_go and, for a grouped
# jackknife, the group of each row). This script reads that file and writes,
# overwriting:
#
#   testdata/ref/bootstrap_reference.csv   columns case, quantity, value; a
#                                          value is one number or a space-
#                                          separated vector, 17 significant
#                                          digits
#
# Quantities per case:
#   t0                         the statistic on the data, computed by R
#   jack                       R's jackknife: the statistic without each row
#                              (or group of rows), computed by R
#   ties_at_estimate           replicates within 1e-12 of t0
#   dropped                    non-finite replicates (dropped, as boot does)
#   boot_perc_two-sided_<l>    boot.ci(type = "perc", conf = l)
#   boot_bca_two-sided_<l>     boot.ci(type = "bca", conf = l, L = R's L);
#                              boot's bias correction counts t* < t0 only
#   perc_<alt>_<l>             boot:::norm.inter at alpha: two-sided
#                              (1 - l)/2 and (1 + l)/2, greater 1 - l,
#                              less l (the fixed end +1 or -1 added)
#   bca_<alt>_<l>              the same at the BCa-adjusted alphas, with the
#                              bias correction counting ties with t0 (within
#                              1e-12) half, as concordat does:
#                              w = qnorm((#{t < t0} + #{t = t0}/2) / R),
#                              a = sum(L^3) / (6 sum(L^2)^1.5)
# with <alt> two-sided, greater, less and <l> 0.95, 0.8. Every number the Go
# test compares comes from R's computation of the statistic, its jackknife
# and boot's quantile rule; only t0 and t are concordat's.

stopifnot(file.exists("go.mod"))
stopifnot(getRversion() >= "4.2.2")
suppressPackageStartupMessages(library(boot))
stopifnot(packageVersion("boot") == "1.3.28.1")
options(warn = 1)

rep <- read.csv("testdata/ref/bootstrap_replicates.csv", colClasses = "character")
field <- function(case, q) {
  v <- rep$value[rep$case == case & rep$quantity == q]
  if (length(v) == 0) return(NULL)
  v
}
num <- function(s) suppressWarnings(as.numeric(strsplit(s, " ", fixed = TRUE)[[1]]))
fmt <- function(v) paste(ifelse(is.na(v), "NA", sprintf("%.17g", v)), collapse = " ")

# Kendall's tau-a: S over all n(n - 1)/2 pairs.
tau_a <- function(x, y) {
  n <- length(x)
  s <- 0
  for (i in seq_len(n - 1)) {
    j <- (i + 1):n
    s <- s + sum(sign(x[i] - x[j]) * sign(y[i] - y[j]))
  }
  s / (n * (n - 1) / 2)
}
statistics <- list(
  pearson = function(x, y) suppressWarnings(cor(x, y)),
  spearman = function(x, y) suppressWarnings(cor(x, y, method = "spearman")),
  kendall_a = tau_a
)

tie_tol <- 1e-12
out <- list()
emit <- function(case, q, v) out[[length(out) + 1]] <<- data.frame(case = case, quantity = q, value = fmt(v))

for (case in unique(rep$case)) {
  f <- statistics[[field(case, "statistic")]]
  x <- num(field(case, "x"))
  y <- num(field(case, "y"))
  n <- length(x)
  t0 <- num(field(case, "t0"))
  tt <- num(field(case, "t"))
  t0r <- f(x, y)
  stopifnot(abs(t0r - t0) < 1e-12)
  emit(case, "t0", t0r)

  groups <- if (is.null(field(case, "groups"))) seq_len(n) - 1 else num(field(case, "groups"))
  G <- sort(unique(groups))
  jack <- sapply(G, function(g) f(x[groups != g], y[groups != g]))
  emit(case, "jack", jack)
  L <- (length(G) - 1) * (mean(jack) - jack)

  fin <- tt[is.finite(tt)]
  ties <- abs(fin - t0) <= tie_tol
  emit(case, "ties_at_estimate", sum(ties))
  emit(case, "dropped", length(tt) - length(fin))

  bo <- boot(data.frame(x = x, y = y), function(d, i) f(d$x[i], d$y[i]), R = 2)
  bo$t0 <- t0
  bo$t <- matrix(tt, ncol = 1)
  bo$R <- length(tt)

  w <- qnorm((sum(fin < t0 & !ties) + sum(ties) / 2) / length(fin))
  a <- sum(L^3) / (6 * sum(L^2)^1.5)
  adjust <- function(alpha) {
    z <- w + qnorm(alpha)
    pnorm(w + z / (1 - a * z))
  }
  q <- function(alpha) boot:::norm.inter(tt, alpha)[, 2]

  for (level in c(0.95, 0.8)) {
    lv <- format(level)
    ci <- suppressWarnings(boot.ci(bo, conf = level, type = c("perc", "bca"), L = L))
    emit(case, paste0("boot_perc_two-sided_", lv), ci$percent[4:5])
    emit(case, paste0("boot_bca_two-sided_", lv), ci$bca[4:5])

    two <- c((1 - level) / 2, (1 + level) / 2)
    emit(case, paste0("perc_two-sided_", lv), q(two))
    emit(case, paste0("perc_greater_", lv), c(q(1 - level), 1))
    emit(case, paste0("perc_less_", lv), c(-1, q(level)))
    emit(case, paste0("bca_two-sided_", lv), q(adjust(two)))
    emit(case, paste0("bca_greater_", lv), c(q(adjust(1 - level)), 1))
    emit(case, paste0("bca_less_", lv), c(-1, q(adjust(level))))

    # boot.ci's percentile interval is the same quantile rule.
    stopifnot(identical(unname(ci$percent[4:5]), unname(q(two))))
  }
}

res <- do.call(rbind, out)
write.csv(res, "testdata/ref/bootstrap_reference.csv", row.names = FALSE, quote = TRUE)
cat("wrote", nrow(res), "rows to testdata/ref/bootstrap_reference.csv\n")
