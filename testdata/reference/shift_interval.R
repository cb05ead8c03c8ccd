# Check values for analysis.ShiftInterval (analysis/shift_test.go).
# Base R only, computed another way than the Go code:
# - each printed analysis (published studies only; all studies) gets its
#   REML tau2 by maximising the restricted log-likelihood
#   -1/2 [sum log(s^2 + t2) + log sum w + sum w (y - mu)^2] with optimize()
#   (golden section, not the Go code's Newton steps on the score), and its
#   pooled mean from lm(y ~ 1, weights = w);
# - the printed shift D = augmented mean - published mean, and the
#   contrast weights c of D as a linear function of y, read off by
#   applying the two fits to unit vectors (so sum(c * y) = D is a check);
# - the subgroup model: tau2 pooled within the subgroups by the method of
#   moments (Borenstein et al. 2009, ch. 19), its Knapp-Hartung factor as
#   the residual variance summary(lm(y ~ g, weights = 1/(s^2 + tau2)))$sigma^2;
# - SE = sqrt(max(1, q) * sum(c^2 * (s^2 + tau2))), t from qt on k - 2 df.
# Run: Rscript testdata/reference/shift_interval.R
options(digits = 15)

reml_tau2 <- function(y, s) {
  if (length(y) < 2) return(0)
  nll <- function(t2) {
    w <- 1 / (s^2 + t2)
    mu <- sum(w * y) / sum(w)
    0.5 * (sum(log(s^2 + t2)) + log(sum(w)) + sum(w * (y - mu)^2))
  }
  upper <- 10 * (var(y) + max(s^2))
  t2 <- optimize(nll, c(0, upper), tol = 1e-14)$minimum
  # the boundary: optimize never returns exactly 0
  if (nll(0) <= nll(t2)) 0 else t2
}
pooled_mean <- function(y, s, t2) unname(coef(lm(y ~ 1, weights = 1 / (s^2 + t2)))[1])

mom_within <- function(y, s, g) {
  num <- 0; den <- 0
  for (lev in unique(g)) {
    yy <- y[g == lev]; ss <- s[g == lev]
    w <- 1 / ss^2
    m <- sum(w * yy) / sum(w)
    num <- num + sum(w * (yy - m)^2) - (length(yy) - 1)
    den <- den + sum(w) - sum(w^2) / sum(w)
  }
  if (den > 0 && num > 0) num / den else 0
}

shift_ci <- function(name, y, s, kpub, level = 0.95) {
  k <- length(y)
  pub <- seq_len(kpub)
  g <- c(rep(0, kpub), rep(1, k - kpub))
  t2p <- reml_tau2(y[pub], s[pub])
  t2a <- reml_tau2(y, s)
  shift <- function(yy) pooled_mean(yy, s, t2a) - pooled_mean(yy[pub], s[pub], t2p)
  D <- shift(y)
  cc <- sapply(seq_len(k), function(i) { e <- rep(0, k); e[i] <- 1; shift(e) })
  stopifnot(abs(sum(cc * y) - D) < 1e-12, abs(sum(cc)) < 1e-12)
  t2w <- mom_within(y, s, g)
  fit <- lm(y ~ g, weights = 1 / (s^2 + t2w))
  q <- summary(fit)$sigma^2
  se <- sqrt(max(1, q) * sum(cc^2 * (s^2 + t2w)))
  tq <- qt(1 - (1 - level) / 2, k - 2)
  cat(sprintf('\t{name: "%s", kPub: %d,\n\t\ty: []float64{%s},\n\t\tse: []float64{%s},\n\t\ttau2Pub: %.15g, tau2Aug: %.15g, tau2Within: %.15g, estimate: %.15g, seShift: %.15g, low: %.15g, high: %.15g, scale: %.15g},\n',
              name, kpub, paste(y, collapse = ", "), paste(s, collapse = ", "),
              t2p, t2a, t2w, D, se, D - tq * se, D + tq * se, q))
}

cat("//", R.version.string, "\n")
shift_ci("heterogeneous, two added", c(0.62, 0.41, 0.35, 0.80, 0.15, 0.52, 0.05, -0.10), c(0.12, 0.20, 0.15, 0.25, 0.10, 0.18, 0.14, 0.22), 6)
shift_ci("homogeneous, one added", c(0.45, 0.47, 0.43, 0.46, 0.44, 0.00), c(0.10, 0.12, 0.09, 0.15, 0.11, 0.10), 5)
shift_ci("one published, three added", c(0.9, 0.1, -0.2, 0.3), c(0.3, 0.15, 0.2, 0.25), 1)
shift_ci("example: five published, two added", c(0.52, 0.41, 0.47, 0.60, 0.38, 0.05, 0.12), c(0.12, 0.15, 0.10, 0.20, 0.14, 0.13, 0.16), 5)
