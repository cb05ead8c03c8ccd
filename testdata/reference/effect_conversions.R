# Check values for the conversions in package analysis, from base R (stats only).
#
#   Rscript testdata/reference/effect_conversions.R > testdata/reference/effect_conversions.txt
#
# Each handbook formula is written out here by hand with qt/qnorm; the
# combination of groups is checked against sd() of the concatenated raw data.
fmt <- function(x) sprintf("%.17g", x)
cat("// ", R.version.string, "\n", sep = "")

cat("// t quantiles: qt(p, df)\n")
for (df in c(1, 2, 3, 4, 9, 29, 99, 1000)) for (p in c(0.005, 0.1, 0.9, 0.975, 0.995))
  cat(sprintf("{p: %s, df: %s, want: %s},\n", fmt(p), fmt(df), fmt(qt(p, df))))

cat("// chi-square quantiles: qchisq(p, df)\n")
for (df in c(1, 2, 3, 4, 9, 29, 99)) for (p in c(0.005, 0.025, 0.1, 0.9, 0.975, 0.995))
  cat(sprintf("{p: %s, df: %s, want: %s},\n", fmt(p), fmt(df), fmt(qchisq(p, df))))

cat("// SD from CI: sqrt(n) (upper - lower) / (2 qt(1 - (1 - level)/2, n - 1))\n")
for (case in list(c(10.2, 14.6, 30, 0.80), c(10.2, 14.6, 30, 0.90), c(10.2, 14.6, 30, 0.95),
                  c(10.2, 14.6, 30, 0.975), c(10.2, 14.6, 30, 0.99), c(-3, 1, 5, 0.95), c(50, 51, 400, 0.95))) {
  lo <- case[1]; up <- case[2]; n <- case[3]; lev <- case[4]
  cat(sprintf("{lower: %s, upper: %s, n: %d, level: %s, want: %s},\n", fmt(lo), fmt(up), n, fmt(lev),
              fmt(sqrt(n) * (up - lo) / (2 * qt(1 - (1 - lev) / 2, n - 1)))))
}

cat("// median/IQR: mean (0.7 + 0.39/n)(q1+q3)/2 + (0.3 - 0.39/n) m; sd (q3-q1)/(2 qnorm((0.75n - 0.125)/(n + 0.25)))\n")
for (case in list(c(20, 25, 32, 40), c(20, 25, 32, 10), c(1.5, 1.5, 4, 200))) {
  q1 <- case[1]; m <- case[2]; q3 <- case[3]; n <- case[4]
  mean <- (0.7 + 0.39 / n) * (q1 + q3) / 2 + (0.3 - 0.39 / n) * m
  sd <- (q3 - q1) / (2 * qnorm((0.75 * n - 0.125) / (n + 0.25)))
  cat(sprintf("{a: %s, m: %s, b: %s, n: %d, mean: %s, sd: %s},\n", fmt(q1), fmt(m), fmt(q3), n, fmt(mean), fmt(sd)))
}

cat("// median/range: mean 4/(4+n^0.75)(a+b)/2 + n^0.75/(4+n^0.75) m; sd (b-a)/(2 qnorm((n - 0.375)/(n + 0.25)))\n")
for (case in list(c(10, 25, 50, 40), c(10, 25, 50, 15), c(0, 3, 4, 2))) {
  a <- case[1]; m <- case[2]; b <- case[3]; n <- case[4]
  w <- n^0.75
  mean <- 4 / (4 + w) * (a + b) / 2 + w / (4 + w) * m
  sd <- (b - a) / (2 * qnorm((n - 0.375) / (n + 0.25)))
  cat(sprintf("{a: %s, m: %s, b: %s, n: %d, mean: %s, sd: %s},\n", fmt(a), fmt(m), fmt(b), n, fmt(mean), fmt(sd)))
}

cat("// SE from CI: (upper - lower)/(2 q), q = qnorm or qt(., df)\n")
for (case in list(c(-1.5, 3.1, 0.95, 0), c(-1.5, 3.1, 0.95, 18), c(0.2, 0.9, 0.90, 0), c(0.2, 0.9, 0.99, 7))) {
  lo <- case[1]; up <- case[2]; lev <- case[3]; df <- case[4]
  p <- 1 - (1 - lev) / 2
  q <- if (df > 0) qt(p, df) else qnorm(p)
  cat(sprintf("{lower: %s, upper: %s, level: %s, df: %d, want: %s},\n", fmt(lo), fmt(up), fmt(lev), df, fmt((up - lo) / (2 * q))))
}

cat("// SE from p: |est| / q, q = qnorm(1 - p/2) or qt(1 - p/2, df)\n")
for (case in list(c(2.3, 0.04, 0), c(2.3, 0.04, 25), c(-0.8, 0.5, 0), c(1.1, 1e-6, 0))) {
  est <- case[1]; p <- case[2]; df <- case[3]
  q <- if (df > 0) qt(1 - p / 2, df) else qnorm(1 - p / 2)
  cat(sprintf("{estimate: %s, p: %s, df: %d, want: %s},\n", fmt(est), fmt(p), df, fmt(abs(est) / q)))
}

cat("// combining groups: mean() and sd() of the concatenated raw data, set.seed(20240611)\n")
set.seed(20240611)
x <- list(rnorm(12, 10, 2), rnorm(20, 13, 3), rnorm(7, 9, 1.5))
arms <- paste(sapply(x, function(g) sprintf("{Mean: %s, SD: %s, N: %d}", fmt(mean(g)), fmt(sd(g)), length(g))), collapse = ", ")
all <- unlist(x)
cat(sprintf("{arms: []Arm{%s}, mean: %s, sd: %s, n: %d},\n", arms, fmt(mean(all)), fmt(sd(all)), length(all)))
all2 <- c(x[[1]], x[[2]])
arms2 <- paste(sapply(x[1:2], function(g) sprintf("{Mean: %s, SD: %s, N: %d}", fmt(mean(g)), fmt(sd(g)), length(g))), collapse = ", ")
cat(sprintf("{arms: []Arm{%s}, mean: %s, sd: %s, n: %d},\n", arms2, fmt(mean(all2)), fmt(sd(all2)), length(all2)))
