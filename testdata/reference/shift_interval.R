# Check values for analysis.ShiftInterval (analysis/shift_test.go).
# Base R only, computed another way than the Go code: the subgroup model
# y = b0 + b1 * added + error, weights 1/(s^2 + tau2), fitted by matrix
# weighted least squares; tau2 = method of moments pooled within subgroups
# (Borenstein et al. 2009, ch. 19); the shift = share * b1 with
# share = sum of added weights / sum of all weights; its variance
# max(1, q) * share^2 * [(X'WX)^-1]_22 (q the Knapp-Hartung factor,
# residual sum of squares / (k - 2)), plus (b1 * dshare/dtau2)^2 * 2 / sum(w^2)
# with the derivative taken numerically (central difference, one-sided of
# second order at tau2 = 0); t from qt.
# Run: Rscript testdata/reference/shift_interval.R
options(digits = 15)

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
share_at <- function(s, g, t2) { w <- 1 / (s^2 + t2); sum(w[g == 1]) / sum(w) }

shift_ci <- function(name, y, s, kpub, level = 0.95) {
  k <- length(y)
  g <- c(rep(0, kpub), rep(1, k - kpub))
  t2 <- mom_within(y, s, g)
  w <- 1 / (s^2 + t2)
  X <- cbind(1, g)
  W <- diag(w)
  XtWX_inv <- solve(t(X) %*% W %*% X)
  b <- XtWX_inv %*% t(X) %*% W %*% y
  res <- y - X %*% b
  q <- sum(w * res^2) / (k - 2)
  share <- share_at(s, g, t2)
  h <- 1e-6
  dshare <- if (t2 >= h) {
    (share_at(s, g, t2 + h) - share_at(s, g, t2 - h)) / (2 * h)
  } else { # one-sided, second order, at the boundary tau2 = 0
    (-3 * share_at(s, g, t2) + 4 * share_at(s, g, t2 + h) - share_at(s, g, t2 + 2 * h)) / (2 * h)
  }
  v <- max(1, q) * share^2 * XtWX_inv[2, 2] + (b[2] * dshare)^2 * 2 / sum(w^2)
  est <- share * b[2]
  tq <- qt(1 - (1 - level) / 2, k - 2)
  cat(sprintf('\t{name: "%s", kPub: %d,\n\t\ty: []float64{%s},\n\t\tse: []float64{%s},\n\t\ttau2: %.15g, estimate: %.15g, seShift: %.15g, low: %.15g, high: %.15g, scale: %.15g},\n',
              name, kpub, paste(y, collapse = ", "), paste(s, collapse = ", "),
              t2, est, sqrt(v), est - tq * sqrt(v), est + tq * sqrt(v), q))
}

cat(R.version.string, "\n")
shift_ci("heterogeneous, two added", c(0.62, 0.41, 0.35, 0.80, 0.15, 0.52, 0.05, -0.10), c(0.12, 0.20, 0.15, 0.25, 0.10, 0.18, 0.14, 0.22), 6)
shift_ci("homogeneous, one added", c(0.45, 0.47, 0.43, 0.46, 0.44, 0.00), c(0.10, 0.12, 0.09, 0.15, 0.11, 0.10), 5)
shift_ci("one published, three added", c(0.9, 0.1, -0.2, 0.3), c(0.3, 0.15, 0.2, 0.25), 1)
