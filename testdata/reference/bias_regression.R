# Check values for the regression-based publication-bias methods in
# analysis/bias (weighted Egger regression, PET, PEESE, the sample-size
# based x variant) and for the unadjusted random-effects maximum-likelihood
# fit that the step-function selection model reduces to when every weight is 1.
#
# Uses base R only (stats: lm, confint, optim, pt). Run with
#   Rscript testdata/reference/bias_regression.R
# Values in analysis/bias/*_test.go were produced by R 4.2.2 (Debian).
# The data sets are invented for testing; they describe no real studies.

options(digits = 17)
p17 <- function(x) formatC(x, digits = 17, format = "g")

sets <- list(
  asym10 = list(
    y  = c(0.82, 0.55, 0.61, 0.30, 0.45, 0.12, 0.25, 0.95, 0.40, 0.18),
    se = c(0.40, 0.25, 0.30, 0.12, 0.20, 0.08, 0.10, 0.45, 0.18, 0.09)),
  negmd7 = list(
    y  = c(-4.1, -2.5, -6.0, -1.2, -3.3, -0.8, -5.1),
    se = c(1.9, 1.1, 2.6, 0.6, 1.5, 0.5, 2.2)),
  sym12 = list(
    y  = c(0.10, -0.05, 0.22, 0.15, -0.12, 0.30, 0.02, 0.08, -0.20, 0.18, 0.05, 0.12),
    se = c(0.15, 0.11, 0.21, 0.09, 0.17, 0.25, 0.07, 0.13, 0.22, 0.19, 0.06, 0.10)),
  small5 = list(
    y  = c(1.5, 2.8, 0.9, 3.6, 2.1),
    se = c(0.7, 1.2, 0.5, 1.6, 0.9)),
  ties8 = list(
    y  = c(0.5, 0.3, 0.5, 0.2, 0.7, 0.3, 0.4, 0.6),
    se = c(0.2, 0.1, 0.2, 0.1, 0.3, 0.15, 0.15, 0.25))
)

# Standardized mean differences with arm sizes; the SE of d uses the usual
# large-sample variance (n1+n2)/(n1 n2) + d^2/(2 (n1+n2)).
n1 <- c(20, 35, 15, 60, 42, 25, 80, 18, 30, 50, 22, 100, 40, 28, 65)
n2 <- c(22, 33, 15, 58, 40, 27, 85, 20, 30, 48, 20, 98, 45, 30, 60)
d  <- c(0.62, 0.41, 0.85, 0.22, 0.30, 0.55, 0.18, 0.71, 0.38, 0.25, 0.66, 0.12, 0.33, 0.49, 0.20)
sets$smd15 <- list(y = d, se = sqrt((n1 + n2) / (n1 * n2) + d^2 / (2 * (n1 + n2))))
w_smd <- sqrt((n1 + n2) / (n1 * n2))

report <- function(name, fit, coefname) {
  s <- summary(fit)
  ci <- confint(fit, level = 0.95)
  cat(sprintf("%s: intercept=%s seIntercept=%s ciLow=%s ciHigh=%s tIntercept=%s pIntercept=%s\n",
    name, p17(coef(fit)[1]), p17(s$coefficients[1, 2]), p17(ci[1, 1]), p17(ci[1, 2]),
    p17(s$coefficients[1, 3]), p17(s$coefficients[1, 4])))
  cat(sprintf("%s: slope=%s seSlope=%s tSlope=%s pSlope=%s df=%d dispersion=%s\n",
    name, p17(coef(fit)[2]), p17(s$coefficients[2, 2]), p17(s$coefficients[2, 3]),
    p17(s$coefficients[2, 4]), fit$df.residual, p17(s$sigma^2)))
}

for (nm in names(sets)) {
  y <- sets[[nm]]$y; se <- sets[[nm]]$se
  cat("== ", nm, "\n", sep = "")
  cat("se=", paste(p17(se), collapse = ", "), "\n")
  # Egger (weighted form) and PET: lm(y ~ se, weights = 1/se^2)
  report("egger/pet", lm(y ~ se, weights = 1 / se^2))
  # PEESE: lm(y ~ I(se^2), weights = 1/se^2)
  report("peese", lm(y ~ I(se^2), weights = 1 / se^2))
  # t quantile used for the limit-effect confidence interval
  cat(sprintf("qt975=%s\n", p17(qt(0.975, length(y) - 2))))
  # One-sided p of the PET intercept in the positive and negative direction
  fit <- lm(y ~ se, weights = 1 / se^2)
  tI <- summary(fit)$coefficients[1, 3]
  cat(sprintf("pet one-sided p (dir +1)=%s (dir -1)=%s\n",
    p17(pt(tI, length(y) - 2, lower.tail = FALSE)), p17(pt(tI, length(y) - 2))))
}

cat("== smd15 regressed on sqrt(1/n1+1/n2)\n")
cat("w=", paste(p17(w_smd), collapse = ", "), "\n")
report("egger-n", lm(d ~ w_smd, weights = 1 / w_smd^2))

# Unadjusted random-effects maximum likelihood: minimise the negative
# log-likelihood sum(log(tau2 + v) + (y - mu)^2 / (tau2 + v))/2 + k/2 log(2 pi)
# over (mu, log tau2) with optim's BFGS, tight tolerance.
cat("== random-effects ML via optim\n")
for (nm in c("asym10", "negmd7", "sym12", "smd15")) {
  y <- sets[[nm]]$y; v <- sets[[nm]]$se^2
  nll <- function(p) {
    t2 <- exp(p[2])
    0.5 * sum(log(2 * pi * (t2 + v)) + (y - p[1])^2 / (t2 + v))
  }
  fit <- optim(c(mean(y), log(var(y))), nll, method = "BFGS",
               control = list(reltol = 1e-14, maxit = 10000))
  cat(sprintf("%s: mu=%s tau2=%s loglik=%s convergence=%d\n",
    nm, p17(fit$par[1]), p17(exp(fit$par[2])), p17(-fit$value), fit$convergence))
}
