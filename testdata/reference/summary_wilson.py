# Check values for compare.Wilson (compare/summary_test.go): Wilson score
# intervals without continuity correction from Debian's python3-statsmodels
# 0.13.5. Run: /usr/bin/python3 testdata/reference/summary_wilson.py
from statsmodels.stats.proportion import proportion_confint

for x, n in [(81, 263), (15, 148), (0, 20), (1, 29), (29, 29), (7, 10)]:
    lo, hi = proportion_confint(x, n, alpha=0.05, method="wilson")
    print(f"{x}/{n}: {lo!r} {hi!r}")
