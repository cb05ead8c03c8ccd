# Check values for analysis.Pool from base R (stats only, no packages).
#
#   Rscript testdata/reference/pool_reml.R > testdata/reference/pool_reml.txt
#
# Reads pool_datasets.csv (written by pool_statsmodels.py) and prints Go
# struct literals pasted into analysis/pool_reml_test.go. Every formula is
# written out here by hand:
#   * REML tau2: maximiser of the restricted log-likelihood by stats::optimize
#   * HKSJ interval and prediction interval at the DerSimonian-Laird tau2
#     (closed form, so the comparison is exact up to rounding)
#   * Q-profile CI of tau2 by stats::uniroot on the generalized Q statistic
args <- commandArgs(trailingOnly = FALSE)
here <- dirname(sub("^--file=", "", args[grep("^--file=", args)]))
d <- read.csv(file.path(here, "pool_datasets.csv"), colClasses = c("character", "numeric", "numeric"))

fmt <- function(x) {
  if (is.nan(x) || is.na(x)) return("math.NaN()")
  sprintf("%.17g", x)
}

genq <- function(t, y, v) {
  w <- 1 / (v + t)
  mu <- sum(w * y) / sum(w)
  sum(w * (y - mu)^2)
}

# Restricted log-likelihood without its constant.
reml_ll <- function(t, y, v) {
  w <- 1 / (v + t)
  mu <- sum(w * y) / sum(w)
  -0.5 * (sum(log(v + t)) + log(sum(w)) + sum(w * (y - mu)^2))
}

level <- 0.95
cat("// ", R.version.string, "\n", sep = "")
for (name in unique(d$dataset)) {
  y <- d$effect[d$dataset == name]
  v <- d$se_effect[d$dataset == name]^2
  k <- length(y)
  vbar <- mean(v)

  # REML by one-dimensional maximisation.
  up <- max(v)
  while (genq(up, y, v) > 0.1) up <- 2 * up
  opt <- optimize(reml_ll, c(0, up), y = y, v = v, maximum = TRUE, tol = 1e-13 * vbar)
  t_reml <- opt$maximum
  w <- 1 / (v + t_reml)
  mu_reml <- sum(w * y) / sum(w)
  se_reml <- sqrt(1 / sum(w))

  # DerSimonian-Laird tau2, floored at 0.
  w0 <- 1 / v
  mu0 <- sum(w0 * y) / sum(w0)
  q <- sum(w0 * (y - mu0)^2)
  t_dl <- max(0, (q - (k - 1)) / (sum(w0) - sum(w0^2) / sum(w0)))
  w <- 1 / (v + t_dl)
  mu_dl <- sum(w * y) / sum(w)
  se_dl <- sqrt(1 / sum(w))
  p <- 1 - (1 - level) / 2
  scale <- sum(w * (y - mu_dl)^2) / (k - 1)
  hk <- mu_dl + c(-1, 1) * qt(p, k - 1) * sqrt(scale) * se_dl
  pi <- if (k >= 3) mu_dl + c(-1, 1) * qt(p, k - 2) * sqrt(t_dl + se_dl^2) else c(NaN, NaN)

  # Q-profile interval.
  qbound <- function(target) {
    if (genq(0, y, v) <= target) return(0)
    hi <- max(v)
    while (genq(hi, y, v) > target) hi <- 2 * hi
    uniroot(function(t) genq(t, y, v) - target, c(0, hi), tol = 1e-15 * vbar)$root
  }
  qp <- c(qbound(qchisq(p, k - 1)), qbound(qchisq(1 - p, k - 1)))

  cat("{\n")
  cat(sprintf("\tname: \"%s\",\n", name))
  cat(sprintf("\treml: [4]float64{%s, %s, %s, %s},\n", fmt(t_reml), fmt(opt$objective), fmt(mu_reml), fmt(se_reml)))
  cat(sprintf("\tdlHKSJ: [3]float64{%s, %s, %s},\n", fmt(scale), fmt(hk[1]), fmt(hk[2])))
  cat(sprintf("\tdlPI: [2]float64{%s, %s},\n", fmt(pi[1]), fmt(pi[2])))
  cat(sprintf("\ttau2CI: [2]float64{%s, %s},\n", fmt(qp[1]), fmt(qp[2])))
  cat("},\n")
}
