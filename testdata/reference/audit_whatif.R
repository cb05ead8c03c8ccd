# Check values for compare/qa_whatif_test.go: one review end to end from
# arm data (3 published studies, 1 registry-only trial, 1 eligible trial
# without results, enrolment 400), lower is better.
# Base R only (R 4.2.2): mean differences and SEs from the arms, REML tau²
# as the root of the restricted score (uniroot), the HKSJ interval with its
# scale factor floored at 1 (t on k - 1 df), the pooled SD of the published
# arms, the oriented overstatement -1 · (published - augmented) / SD, and
# the null what-if: the missing trial imputed as effect 0 with
# SE = SD · sqrt(4 / n), re-pooled the same way.
# Run: Rscript testdata/reference/audit_whatif.R
options(digits = 17)
reml <- function(y, s) {
  score <- function(t) { w <- 1 / (s^2 + t); mu <- sum(w * y) / sum(w)
    0.5 * (sum(w^2 * (y - mu)^2) - sum(w) + sum(w^2) / sum(w)) }
  if (score(0) <= 0) return(0)
  uniroot(score, c(0, 1e5), tol = 1e-15)$root
}
hksj <- function(name, y, s) {
  k <- length(y); t2 <- reml(y, s); w <- 1 / (s^2 + t2); mu <- sum(w * y) / sum(w)
  q <- sum(w * (y - mu)^2) / (k - 1); se <- sqrt(max(1, q) / sum(w)); tq <- qt(0.975, k - 1)
  cat(name, "tau2", t2, "estimate", mu, "se", se, "ci", mu - tq * se, mu + tq * se, "p", 2 * pt(-abs(mu / se), k - 1), "\n")
  mu
}
tm <- c(28, 29, 27.5, 31); cm <- c(33, 32.5, 33, 32); sd <- 10; n <- c(40, 60, 40, 40)
y <- tm - cm; s <- sqrt(sd^2 / n + sd^2 / n)
pub <- hksj("published", y[1:3], s[1:3])
aug <- hksj("augmented", y, s)
pooled_sd <- sqrt(sum((2 * n[1:3] - 2) * sd^2) / sum(2 * n[1:3] - 2))
cat("pooled_sd", pooled_sd, "overstatement_sd", -1 * (pub - aug) / pooled_sd, "\n")
invisible(hksj("what_if", c(y, 0), c(s, pooled_sd * sqrt(4 / 400))))
cat(R.version.string, "\n")
