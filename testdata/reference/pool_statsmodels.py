#!/usr/bin/python3
"""Check values for analysis.Pool from Debian's python3-statsmodels 0.13.5.

Run with Debian's interpreter (it has statsmodels and scipy):

    /usr/bin/python3 testdata/reference/pool_statsmodels.py > testdata/reference/pool_statsmodels.txt

It also writes the datasets to testdata/reference/pool_datasets.csv for
pool_reml.R.

It prints Go struct literals that are pasted into analysis/pool_statsmodels_test.go.
Calls used:
    statsmodels.stats.meta_analysis.combine_effects(eff, var, method_re="dl")
    statsmodels.stats.meta_analysis.combine_effects(eff, var, method_re="pm", atol=1e-13, maxiter=1000)
    res.conf_int(alpha=0.05, use_t=False)  -> fixed and random Wald CI
    res.conf_int(alpha=0.05, use_t=True)   -> random-effects HKSJ CI (t, k-1 df)
    res.test_homogeneity()                 -> Q and its chi-square p-value
    statsmodels.stats.meta_analysis._fit_tau_iterative(...) -> PM convergence flag
    statsmodels.stats.meta_analysis.effectsize_smd(...) -> bias-corrected SMD (g only)

Known differences handled here:
  * statsmodels does not floor the DerSimonian-Laird tau2 at 0. When its value
    is negative the line says dlNegative: true and the Go test expects tau2 = 0
    and random = fixed instead of the statsmodels random-effects numbers.
  * statsmodels' Paule-Mandel loop sets tau2 = 0 when an iterate overshoots
    and can stop unconverged. A PM value is kept only when the loop reports
    convergence, or when Q(0) <= k-1 (then tau2 = 0 is the exact answer).
    Otherwise the line says pmExcluded: true.
  * statsmodels' effectsize_smd uses a different variance for g, so only g
    itself is compared; the variance of g is computed with the textbook formula.
"""
import numpy as np
import statsmodels
from statsmodels.stats import meta_analysis as sm

assert statsmodels.__version__.startswith("0.13.5"), statsmodels.__version__


def book_smd(m1, s1, n1, m2, s2, n2):
    """Borenstein et al. (2009) ch. 4 eqs 4.18-4.24, written out by hand."""
    sp = np.sqrt(((n1 - 1) * s1**2 + (n2 - 1) * s2**2) / (n1 + n2 - 2))
    d = (m1 - m2) / sp
    var_d = (n1 + n2) / (n1 * n2) + d**2 / (2 * (n1 + n2))
    j = 1 - 3 / (4 * (n1 + n2) - 9)
    return j * d, j**2 * var_d


def simulate(rng, k, tau, se_lo, se_hi, mu):
    se = rng.uniform(se_lo, se_hi, size=k)
    y = rng.normal(mu, np.sqrt(se**2 + tau**2))
    return y, se


datasets = []

# Borenstein, Hedges, Higgins & Rothstein (2009) ch. 14 continuous-data
# example (six studies), arm summaries from memory.
m1 = np.array([94, 98, 98, 94, 98, 96.0])
s1 = np.array([22, 21, 28, 19, 21, 21.0])
n1 = np.array([60, 65, 40, 200, 50, 85.0])
m2 = np.array([92, 92, 88, 82, 88, 92.0])
s2 = np.array([20, 22, 26, 17, 22, 22.0])
n2 = np.array([60, 65, 40, 200, 45, 85.0])
g, var_g = book_smd(m1, s1, n1, m2, s2, n2)
g_sm, _ = sm.effectsize_smd(m1, s1, n1, m2, s2, n2)
assert np.allclose(g, g_sm, rtol=1e-14, atol=0), (g, g_sm)
datasets.append(("borenstein_ch14_smd", g, np.sqrt(var_g)))
md = m1 - m2
datasets.append(("borenstein_ch14_md", md, np.sqrt(s1**2 / n1 + s2**2 / n2)))

rng = np.random.default_rng(20240611)
datasets.append(("k2_heterogeneous", np.array([0.1, 0.9]), np.array([0.12, 0.15])))
datasets.append(("k2_homogeneous", *simulate(rng, 2, 0.0, 0.1, 0.3, 0.4)))
datasets.append(("k3", *simulate(rng, 3, 0.3, 0.1, 0.3, 0.2)))
datasets.append(("identical_effects", np.full(6, 0.35), rng.uniform(0.05, 0.4, size=6)))
datasets.append(("no_heterogeneity_sim", *simulate(rng, 8, 0.0, 0.1, 0.3, -0.2)))
datasets.append(("high_heterogeneity", *simulate(rng, 12, 1.0, 0.1, 0.3, 0.5)))
y, se = simulate(rng, 9, 0.2, 0.15, 0.4, 0.3)
se[4] = 0.004
datasets.append(("dominant_study", y, se))
y, _ = simulate(rng, 7, 0.25, 0.2, 0.2, 0.0)
datasets.append(("identical_se", y, np.full(7, 0.2)))
datasets.append(("k10_moderate", *simulate(rng, 10, 0.15, 0.05, 0.35, 0.25)))
datasets.append(("k30_raw_units", *simulate(rng, 30, 3.0, 1.0, 6.0, -4.0)))
datasets.append(("tiny_scale", *simulate(rng, 8, 2e-4, 1e-4, 6e-4, 1e-3)))


def f(x):
    if np.isnan(x):
        return "math.NaN()"
    return repr(float(x))


def vec(a):
    return "{" + ", ".join(f(x) for x in a) + "}"


# The same datasets for testdata/reference/pool_reml.R.
with open(__file__.replace("pool_statsmodels.py", "pool_datasets.csv"), "w") as out:
    out.write("dataset,effect,se_effect\n")
    for name, y, se in datasets:
        for yi, si in zip(y, se):
            out.write(f"{name},{float(yi)!r},{float(si)!r}\n")

print("// statsmodels", statsmodels.__version__, "numpy", np.__version__)
for name, y, se in datasets:
    var = se**2
    k = len(y)
    dl = sm.combine_effects(y, var, method_re="dl")
    pm = sm.combine_effects(y, var, method_re="pm", atol=1e-13, maxiter=1000)
    _, pm_conv = sm._fit_tau_iterative(y, var, atol=1e-13, maxiter=1000)
    q0 = dl.q
    pm_excluded = not (pm_conv or q0 <= k - 1)
    hom = dl.test_homogeneity()
    fe_ci, dl_ci, _, _ = dl.conf_int(alpha=0.05, use_t=False)
    _, _, _, dl_hk = dl.conf_int(alpha=0.05, use_t=True)
    _, pm_ci, _, _ = pm.conf_int(alpha=0.05, use_t=False)
    _, _, _, pm_hk = pm.conf_int(alpha=0.05, use_t=True)
    print("{")
    print(f"\tname: {name!r},".replace("'", '"'))
    print(f"\teffects: []float64{vec(y)},")
    print(f"\tseEffects: []float64{vec(se)},")
    print(f"\tfixed: [4]float64{{{f(dl.mean_effect_fe)}, {f(dl.sd_eff_w_fe)}, {f(fe_ci[0])}, {f(fe_ci[1])}}},")
    print(f"\tq: {f(hom.statistic)}, qp: {f(hom.pvalue)},")
    print(f"\tdlNegative: {str(bool(dl.tau2 < 0)).lower()},")
    print(f"\tdl: [7]float64{{{f(dl.tau2)}, {f(dl.mean_effect_re)}, {f(dl.sd_eff_w_re)}, {f(dl_ci[0])}, {f(dl_ci[1])}, {f(dl_hk[0])}, {f(dl_hk[1])}}},")
    print(f"\tpmExcluded: {str(bool(pm_excluded)).lower()},")
    print(f"\tpm: [7]float64{{{f(pm.tau2)}, {f(pm.mean_effect_re)}, {f(pm.sd_eff_w_re)}, {f(pm_ci[0])}, {f(pm_ci[1])}, {f(pm_hk[0])}, {f(pm_hk[1])}}},")
    print("},")
