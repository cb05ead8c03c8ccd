"""Check values for the rank-correlation test (Begg & Mazumdar 1994) in
analysis/bias.

The standardized deviates (y_i - FE) / sqrt(v_i - v_FE) are built with plain
numpy arithmetic; Kendall's tau-b between the deviates and the variances, and
its two-sided p value from the normal approximation of Kendall's S with the
tie-corrected variance and no continuity correction, come from
scipy.stats.kendalltau(variant="b", method="asymptotic").

Run with the Debian interpreter that carries scipy 1.10.1:
    /usr/bin/python3 testdata/reference/bias_begg.py
The data sets are invented for testing (the same as bias_regression.R).
"""

import numpy as np
import scipy
from scipy import stats

SETS = {
    "asym10": ([0.82, 0.55, 0.61, 0.30, 0.45, 0.12, 0.25, 0.95, 0.40, 0.18],
               [0.40, 0.25, 0.30, 0.12, 0.20, 0.08, 0.10, 0.45, 0.18, 0.09]),
    "negmd7": ([-4.1, -2.5, -6.0, -1.2, -3.3, -0.8, -5.1],
               [1.9, 1.1, 2.6, 0.6, 1.5, 0.5, 2.2]),
    "sym12": ([0.10, -0.05, 0.22, 0.15, -0.12, 0.30, 0.02, 0.08, -0.20, 0.18, 0.05, 0.12],
              [0.15, 0.11, 0.21, 0.09, 0.17, 0.25, 0.07, 0.13, 0.22, 0.19, 0.06, 0.10]),
    "small5": ([1.5, 2.8, 0.9, 3.6, 2.1],
               [0.7, 1.2, 0.5, 1.6, 0.9]),
    "ties8": ([0.5, 0.3, 0.5, 0.2, 0.7, 0.3, 0.4, 0.6],
              [0.2, 0.1, 0.2, 0.1, 0.3, 0.15, 0.15, 0.25]),
}

print("scipy", scipy.__version__)
for name, (y, se) in SETS.items():
    y = np.asarray(y, dtype=float)
    var = np.asarray(se, dtype=float) ** 2
    w = 1.0 / var
    fe = np.sum(w * y) / np.sum(w)
    var_fe = 1.0 / np.sum(w)
    dev = (y - fe) / np.sqrt(var - var_fe)
    res = stats.kendalltau(dev, var, variant="b", method="asymptotic")
    z_abs = stats.norm.isf(res.pvalue / 2)
    print(f"{name}: tau={res.statistic!r} p={res.pvalue!r} |z|={z_abs!r}")
