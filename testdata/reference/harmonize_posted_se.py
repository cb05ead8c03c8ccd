#!/usr/bin/python3
"""Check values for compare/harmonize_direction_test.go: the SE of a
between-group difference from its posted confidence interval, with t on
n1 + n2 - 2 df for small groups and z otherwise (Cochrane Handbook 6.5.2):

    se = (upper - lower) / (2 q),  q = t_{1-(1-level)/2, n1+n2-2}  or  z_{1-(1-level)/2}

Run from the repository root: /usr/bin/python3 testdata/reference/harmonize_posted_se.py
(values in the test were produced with Debian's python3-scipy 1.10.1).
"""
import scipy
from scipy import stats

print(f"# scipy {scipy.__version__}")
# LS difference -1.2, 95% CI -3.5 to 1.1, 15 per arm
print("ci_15_per_arm_t28", repr(4.6 / (2 * stats.t.ppf(0.975, 28))))
print("ci_15_per_arm_z", repr(4.6 / (2 * stats.norm.ppf(0.975))))
# 90% CI -2.72 to -1.55 with 90/94 per arm (both >= 60: z)
print("ci90_z", repr((-1.55 - -2.72) / (2 * stats.norm.ppf(0.95))))
# 90% CI 0.4 to 3.6 with 20/22 per arm: t on 40 df
print("ci90_t40", repr((3.6 - 0.4) / (2 * stats.t.ppf(0.95, 40))))
# 95% CI -13.6 to 1.2 mg/dL, 140/138 per arm (z), converted to mmol/L by / 18.016
print("gluc_ci_z_mmol", repr((1.2 - -13.6) / (2 * stats.norm.ppf(0.975)) / 18.016))
