#!/usr/bin/python3
"""The plain loop the audit benchmark (testdata/bench/audit.sh) compares
with: for every review in an unshelved workspace, read its published
studies, pool them with DerSimonian-Laird random effects (statsmodels
combine_effects) and run Egger's regression (WLS of the effect on its
standard error, weights 1/variance), and write one JSON object per review
to OUT. MD studies with arm data get the mean difference and its SE
sqrt(sd1^2/n1 + sd2^2/n2); studies with effect and SE use them as given.

    audit_statsmodels.py WORKSPACE.db OUT.json
"""
import json
import sqlite3
import sys
import time

import numpy as np
import statsmodels.api as sm
from statsmodels.stats.meta_analysis import combine_effects


def main():
    db, out = sys.argv[1], sys.argv[2]
    start = time.perf_counter()
    con = sqlite3.connect("file:%s?mode=ro" % db, uri=True)
    rows = con.execute(
        "SELECT review_id, effect, se, treat_mean, treat_sd, treat_n, ctrl_mean, ctrl_sd, ctrl_n"
        " FROM review_studies ORDER BY review_id, pos")
    results = []
    current, eff, var = None, [], []

    def finish():
        if current is None or len(eff) < 3:
            return
        e, v = np.array(eff), np.array(var)
        res = combine_effects(e, v, method_re="dl")
        sd = np.sqrt(v)
        fit = sm.WLS(e, sm.add_constant(sd), weights=1 / v).fit()
        results.append({"review_id": current, "k": len(e), "random_estimate": float(res.mean_effect_re),
                        "random_se": float(res.sd_eff_w_re), "tau2": float(res.tau2),
                        "egger_bias": float(fit.params[1]), "egger_p": float(fit.pvalues[1])})

    for rid, effect, se, tm, tsd, tn, cm, csd, cn in rows:
        if rid != current:
            finish()
            current, eff, var = rid, [], []
        if effect is not None and se is not None:
            eff.append(effect)
            var.append(se * se)
        elif None not in (tm, tsd, tn, cm, csd, cn):
            eff.append(tm - cm)
            var.append(tsd * tsd / tn + csd * csd / cn)
    finish()
    with open(out, "w") as f:
        json.dump(results, f)
    elapsed = time.perf_counter() - start
    print("reviews %d seconds %.3f us_per_review %.0f" % (len(results), elapsed, elapsed / max(len(results), 1) * 1e6))


if __name__ == "__main__":
    main()
