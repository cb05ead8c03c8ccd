#!/usr/bin/python3
"""Analysis-side comparison: DerSimonian-Laird pooling (statsmodels
combine_effects) and Egger's regression (WLS of the standardised effect
on precision) over N invented meta-analyses of k studies each. Prints
nanoseconds per meta-analysis.

    pool_statsmodels.py [N] [K]
"""
import sys
import time

import numpy as np
import statsmodels.api as sm
from statsmodels.stats.meta_analysis import combine_effects


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 10000
    k = int(sys.argv[2]) if len(sys.argv) > 2 else 10
    rng = np.random.default_rng(1)
    data = []
    for _ in range(n):
        se = rng.uniform(0.1, 0.6, k)
        eff = rng.normal(-0.3, 0.15, k) + rng.normal(0, se)
        data.append((eff, se * se))
    start = time.perf_counter()
    acc = 0.0
    for eff, var in data:
        res = combine_effects(eff, var, method_re="dl")
        acc += res.mean_effect_re
        sd = np.sqrt(var)
        # Egger: effect on its standard error, weighted by 1/variance
        # (the same fit as the standardised effect on precision).
        fit = sm.WLS(eff, sm.add_constant(sd), weights=1 / var).fit()
        acc += fit.params[0]
    elapsed = time.perf_counter() - start
    print("meta_analyses %d k %d ns_per_meta_analysis %.0f check %.6f" % (n, k, elapsed / n * 1e9, acc))


if __name__ == "__main__":
    main()
