#!/usr/bin/python3
"""Check values for one-test-per-comparison: the random-effects p-value and
interval from the same test (compare and analysis tests).

Written from the formulas, without any unshelved code, with Debian's
python3-scipy 1.10.1 and python3-statsmodels 0.13.5:

  REML tau^2: root of  tau2 = sum w^2 ((y-mu)^2 - v) / sum w^2 + 1/sum w,
              w = 1/(v + tau2)  (Viechtbauer 2005, J Educ Behav Stat 30:261,
              the REML fixed-point equation), found with scipy.optimize.brentq
              and floored at 0.
  DL tau^2:   statsmodels.stats.meta_analysis.combine_effects(method_re="dl").
  Wald:       mu +- z se,  p = 2 P(Z > |mu/se|).
  HKSJ:       q = sum w (y-mu)^2 / (k-1), se_h = se sqrt(q) (untruncated) or
              se sqrt(max(1, q)) (floored; Rover, Knapp & Friede 2015, BMC Med
              Res Methodol 15:99); mu +- t_{k-1} se_h,  p = 2 P(T_{k-1} > |mu/se_h|).

Run from the repository root: /usr/bin/python3 testdata/reference/ci_p_consistency.py
"""
import numpy as np
import scipy
import statsmodels
from scipy import optimize, stats
from statsmodels.stats.meta_analysis import combine_effects


def reml_tau2(y, v):
    def f(t2):
        w = 1 / (v + t2)
        mu = (w * y).sum() / w.sum()
        return t2 - ((w * w * ((y - mu) ** 2 - v)).sum() / (w * w).sum() + 1 / w.sum())
    if f(0) >= 0:
        return 0.0
    return optimize.brentq(f, 0, 100, xtol=1e-15, rtol=1e-15)


def report(name, y, se, tau2):
    v = se ** 2
    k = len(y)
    w = 1 / (v + tau2)
    mu = (w * y).sum() / w.sum()
    s = 1 / np.sqrt(w.sum())
    z = stats.norm.ppf(0.975)
    t = stats.t.ppf(0.975, k - 1)
    q = (w * (y - mu) ** 2).sum() / (k - 1)
    print(f"{name} tau2={tau2!r} estimate={mu!r}")
    print(f"  wald se={s!r} ci=({mu - z * s!r}, {mu + z * s!r}) p={2 * stats.norm.sf(abs(mu / s))!r}")
    for form, scale in (("hksj-untruncated", q), ("hksj", max(1.0, q))):
        sh = s * np.sqrt(scale)
        print(f"  {form} scale={scale!r} se={sh!r} ci=({mu - t * sh!r}, {mu + t * sh!r}) p={2 * stats.t.sf(abs(mu / sh), k - 1)!r}")


def main():
    print(f"# scipy {scipy.__version__}, statsmodels {statsmodels.__version__}, numpy {np.__version__}")
    # The example of issue 13: Wald p 0.030 was printed beside the HKSJ CI.
    y = np.array([0.10, 0.32, 0.05, 0.40])
    se = np.array([0.12, 0.15, 0.10, 0.20])
    report("example-reml", y, se, reml_tau2(y, se ** 2))
    res = combine_effects(y, se ** 2, method_re="dl")
    report("example-dl", y, se, res.tau2)
    # statsmodels' own HKSJ ("random effect wls") row at the DL tau^2, as a
    # cross-check of the formula above.
    sf = res.summary_frame()
    print(f"  statsmodels random effect wls sd_eff={sf.loc['random effect wls', 'sd_eff']!r}")
    # Studies that agree more than their SEs suggest: HKSJ scale below 1,
    # so floored and untruncated differ.
    y = np.array([0.30, 0.32, 0.29, 0.31, 0.28])
    se = np.array([0.10, 0.12, 0.11, 0.15, 0.09])
    report("agree-reml", y, se, reml_tau2(y, se ** 2))


main()
