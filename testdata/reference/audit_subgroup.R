# Check values for compare.Subgroup (compare/subgroup_test.go).
# Base R 4.2.2 only: each subgroup pooled by random effects with its own
# tau² (DerSimonian-Laird closed form; REML as the root of the restricted
# score), Wald SEs, then the difference registry - published, its SE, the
# 95% CI and the Q-between test with 1 df.
# Run: Rscript testdata/reference/audit_subgroup.R
options(digits = 17)

dl <- function(y, s) {
  w <- 1 / s^2
  mu <- sum(w * y) / sum(w)
  q <- sum(w * (y - mu)^2)
  max(0, (q - (length(y) - 1)) / (sum(w) - sum(w^2) / sum(w)))
}
reml <- function(y, s) {
  if (length(y) == 1) return(0)
  score <- function(t) {
    w <- 1 / (s^2 + t)
    mu <- sum(w * y) / sum(w)
    0.5 * (sum(w^2 * (y - mu)^2) - sum(w) + sum(w^2) / sum(w))
  }
  if (score(0) <= 0) return(0)
  uniroot(score, c(0, 1e4), tol = 1e-15)$root
}
pool <- function(y, s, t) {
  w <- 1 / (s^2 + t)
  c(mu = sum(w * y) / sum(w), se = 1 / sqrt(sum(w)), tau2 = t)
}
subgroup <- function(name, yp, sp, yr, sr, est) {
  p <- pool(yp, sp, est(yp, sp))
  r <- pool(yr, sr, est(yr, sr))
  d <- r[["mu"]] - p[["mu"]]
  se <- sqrt(p[["se"]]^2 + r[["se"]]^2)
  z <- qnorm(0.975)
  # Q-between written out: sum over subgroups of w_g (mu_g - mu_.)^2
  w <- 1 / c(p[["se"]], r[["se"]])^2
  m <- c(p[["mu"]], r[["mu"]])
  qb <- sum(w * (m - sum(w * m) / sum(w))^2)
  cat(sprintf("%s: published %.17g se %.17g tau2 %.17g; registry %.17g se %.17g tau2 %.17g\n",
              name, p[["mu"]], p[["se"]], p[["tau2"]], r[["mu"]], r[["se"]], r[["tau2"]]))
  cat(sprintf("%s: difference %.17g se %.17g ci %.17g %.17g q_between %.17g p %.17g\n",
              name, d, se, d - z * se, d + z * se, qb, pchisq(qb, 1, lower.tail = FALSE)))
}

# The audit fixture of compare/audit_test.go: four published studies and two
# registry trials (MD -1, SE 2; MD -2, SE 1.8).
yp <- c(-8, -6, -10, -4); sp <- c(2, 2.5, 3, 1.5)
yr <- c(-1, -2); sr <- c(2, 1.8)
subgroup("fixture dl", yp, sp, yr, sr, dl)
subgroup("fixture reml", yp, sp, yr, sr, reml)
# One registry trial: the registry subgroup is that trial.
subgroup("single reml", yp, sp, -1, 2, reml)
