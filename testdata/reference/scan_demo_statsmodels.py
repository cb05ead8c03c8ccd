#!/usr/bin/python3
"""Independent check values for scan on the demo (cmd/unshelved TestScanDemoReference).

The demo's tinnitus review asked as a question (no studies): every eligible
demo trial with results posts its tinnitus distress outcome; the outcome
used per trial is the one a reader picks in the record (the TDI total at
week 12). Arms are picked here by group title, independently of unshelved's
matcher: experimental = groups whose title names velmorazine (several are
combined with the Cochrane Handbook formula), comparator = the placebo
group. A trial is linked when its record has a RESULT reference with a
PMID. The effects use the conversion functions of demo_audit_statsmodels.py
(handbook formulas, no unshelved code); linked trials and all trials are
pooled with Debian's python3-statsmodels 0.13.5 combine_effects
(method_re="dl").

Run from the repository root: /usr/bin/python3 testdata/reference/scan_demo_statsmodels.py
"""
import json, os
import numpy as np
import scipy
import statsmodels
from statsmodels.stats.meta_analysis import combine_effects

HERE = os.path.dirname(__file__)
# The conversion functions of the demo check (everything before its main).
exec(open(os.path.join(HERE, "demo_audit_statsmodels.py")).read().split("\ndef main")[0])

# (trial, outcome index): the TDI total at week 12 in each record.
TRIALS = [("NCT99000101", 0), ("NCT99000102", 0), ("NCT99000103", 0), ("NCT99000104", 0),
          ("NCT99000105", 0), ("NCT99000106", 0), ("NCT99000107", 0), ("NCT99000108", 1)]
# NCT99000107 posts an improvement (baseline minus week 12: positive is less
# distress, its description says), so its sign is reversed.
FLIP = {"NCT99000107"}


def main():
    print(f"# statsmodels {statsmodels.__version__}, scipy {scipy.__version__}, numpy {np.__version__}")
    linked, everything = [], []
    for tid, idx in TRIALS:
        rec = json.load(open(os.path.join(ROOT, "registry", tid + ".json")))
        o = rec["resultsSection"]["outcomeMeasuresModule"]["outcomeMeasures"][idx]
        treat = [g["id"] for g in o["groups"] if "velmorazine" in g["title"].lower()]
        ctrl = [g["id"] for g in o["groups"] if "placebo" in g["title"].lower()]
        flip = "yes" if tid in FLIP else "no"
        l = {"treat_groups": ";".join(treat), "ctrl_groups": ";".join(ctrl), "unit_from": "", "flip": flip}
        pa = posted_analysis("MD", o, l)
        if pa is not None and flip == "yes":
            pa = (-pa[0], pa[1])
        if pa is None:
            t = combine([arm(o, g, "") for g in treat])
            c = combine([arm(o, g, "") for g in ctrl])
            pa = effect("MD", t, c)
            if flip == "yes":
                pa = (-pa[0], pa[1])
        refs = rec["protocolSection"].get("referencesModule", {}).get("references", [])
        is_linked = any(r.get("type") == "RESULT" and r.get("pmid") for r in refs)
        print(f"# {tid} outcome {idx} treat {treat} ctrl {ctrl} linked {is_linked} effect {pa[0]!r} se {pa[1]!r}")
        everything.append(pa)
        if is_linked:
            linked.append(pa)
    for name, data in [("linked", linked), ("all", everything)]:
        eff = np.array([x[0] for x in data])
        var = np.array([x[1] ** 2 for x in data])
        res = combine_effects(eff, var, method_re="dl")
        sf = res.summary_frame()
        fe, re_ = sf.loc["fixed effect"], sf.loc["random effect"]
        print(f"Q-TINN-01 {name} k={len(data)} fixed={fe['eff']!r} fixed_se={fe['sd_eff']!r} "
              f"random={re_['eff']!r} random_se={re_['sd_eff']!r} tau2={res.tau2!r}")


main()
