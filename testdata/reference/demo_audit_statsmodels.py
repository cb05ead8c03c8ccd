#!/usr/bin/python3
"""Independent check values for the demo audit (cmd/unshelved demo test).

Re-implements, from the handbook formulas and without any unshelved code,
the conversion of the demo's published studies and accepted registry links
into effects, and pools them (published alone, with the registry-only
trials, and with the trials published but not in the review: those whose
record has a RESULT reference) with Debian's python3-statsmodels 0.13.5
(statsmodels.stats.meta_analysis.combine_effects, method_re="dl").
Under each analysis it prints every study's share of the weights in
percent (weights_rel_re and weights_rel_fe), the check values of
`audit --studies` (cmd/unshelved/audit_exports_test.go).

Formulas (Cochrane Handbook ch. 6; Borenstein et al. 2009 ch. 4):
  SD from SE: SD = SE * sqrt(n)
  SD from a 95% CI of a mean: SD = sqrt(n) * (upper - lower) / (2 * t_{0.975, n-1})
  combining groups: Cochrane Handbook Table 6.5.a
  MD = m1 - m2, SE = sqrt(sd1^2/n1 + sd2^2/n2)
  Hedges' g: d = (m1-m2)/s_pooled, J = 1 - 3/(4(n1+n2)-9), g = J d,
             Var(g) = J^2 ((n1+n2)/(n1 n2) + d^2/(2(n1+n2)))
  glucose: mmol/L = mg/dL / 18.016
  posted adjusted analysis (MD reviews): when the arms are least-squares
    means and the record posts a mean-difference analysis of exactly the
    linked experimental and comparator group, its estimate is used,
    oriented by its estimate comment ("A minus B"), with the SE from its
    posted SE or from its CI: (upper - lower) / (2 q), q = t on n1+n2-2 df
    when a group has fewer than 60 participants, else z (Cochrane Handbook
    6.5.2); a difference converts by the unit's scale alone.

Run from the repository root: /usr/bin/python3 testdata/reference/demo_audit_statsmodels.py
"""
import csv, json, math, os
import numpy as np
import scipy
import statsmodels
from scipy import stats
from statsmodels.stats.meta_analysis import combine_effects

ROOT = os.path.join(os.path.dirname(__file__), "..", "demo")


def combine(arms):
    n, m, s = arms[0]
    for n2, m2, s2 in arms[1:]:
        N = n + n2
        M = (n * m + n2 * m2) / N
        S = math.sqrt(((n - 1) * s * s + (n2 - 1) * s2 * s2 + n * n2 / N * (m * m + m2 * m2 - 2 * m * m2)) / (N - 1))
        n, m, s = N, M, S
    return n, m, s


def effect(measure, t, c):
    (n1, m1, s1), (n2, m2, s2) = t, c
    if measure == "SMD":
        sp = math.sqrt(((n1 - 1) * s1 ** 2 + (n2 - 1) * s2 ** 2) / (n1 + n2 - 2))
        d = (m1 - m2) / sp
        J = 1 - 3 / (4 * (n1 + n2) - 9)
        return J * d, math.sqrt(J * J * ((n1 + n2) / (n1 * n2) + d * d / (2 * (n1 + n2))))
    return m1 - m2, math.sqrt(s1 ** 2 / n1 + s2 ** 2 / n2)


def arm(o, gid, unit_from):
    n = None
    for d in o["denoms"]:
        if d["units"] == "Participants":
            for c in d["counts"]:
                if c["groupId"] == gid:
                    n = int(c["value"])
    cls = o["classes"]
    assert len(cls) == 1 and len(cls[0]["categories"]) == 1
    if cls[0].get("denoms"):
        for d in cls[0]["denoms"]:
            for c in d["counts"]:
                if c["groupId"] == gid:
                    n = int(c["value"])
    m = [x for x in cls[0]["categories"][0]["measurements"] if x["groupId"] == gid][0]
    mean = float(m["value"])
    disp = o["dispersionType"]
    if disp == "Standard Deviation":
        sd = float(m["spread"])
    elif disp == "Standard Error":
        sd = float(m["spread"]) * math.sqrt(n)
    elif disp == "95% Confidence Interval":
        sd = math.sqrt(n) * (float(m["upperLimit"]) - float(m["lowerLimit"])) / (2 * stats.t.ppf(0.975, n - 1))
    else:
        raise ValueError(disp)
    if unit_from == "mg/dL":
        mean, sd = mean / 18.016, sd / 18.016
    return n, mean, sd


def group_n(o, gid):
    for d in (o["classes"][0].get("denoms") or o["denoms"]):
        if d["units"] == "Participants":
            for c in d["counts"]:
                if c["groupId"] == gid:
                    return int(c["value"])
    raise ValueError(gid)


def posted_analysis(measure, o, l):
    """The posted analysis read as the effect, or None when the arms are used."""
    tg, cg = l["treat_groups"].split(";"), l["ctrl_groups"].split(";")
    if measure != "MD" or o.get("paramType") != "LEAST_SQUARES_MEAN" or len(tg) != 1 or len(cg) != 1:
        return None
    titles = {g["id"]: g["title"].lower() for g in o["groups"]}
    for a in o.get("analyses", []):
        if sorted(a.get("groupIds", [])) != sorted([tg[0], cg[0]]) or "paramValue" not in a:
            continue
        est = float(a["paramValue"])
        left, right = a["estimateComment"].lower().split(" minus ")
        if titles[tg[0]] in left and titles[cg[0]] in right:
            sign = 1
        elif titles[cg[0]] in left and titles[tg[0]] in right:
            sign = -1
        else:
            raise ValueError(a["estimateComment"])
        if a.get("dispersionType") == "STANDARD_ERROR_OF_MEAN":
            se = float(a["dispersionValue"])
        else:
            n1, n2 = group_n(o, tg[0]), group_n(o, cg[0])
            p = 1 - (1 - float(a["ciPctValue"]) / 100) / 2
            q = stats.t.ppf(p, n1 + n2 - 2) if min(n1, n2) < 60 else stats.norm.ppf(p)
            se = (float(a["ciUpperLimit"]) - float(a["ciLowerLimit"])) / (2 * q)
        e = sign * est
        if l["unit_from"] == "mg/dL":
            e, se = e / 18.016, se / 18.016
        return e, se
    return None


def main():
    reviews = {r["review_id"]: r for r in csv.DictReader(open(os.path.join(ROOT, "reviews.csv")))}
    studies = list(csv.DictReader(open(os.path.join(ROOT, "studies.csv"))))
    links = list(csv.DictReader(open(os.path.join(ROOT, "links.csv"))))
    print(f"# statsmodels {statsmodels.__version__}, scipy {scipy.__version__}, numpy {np.__version__}")
    for rid, rv in reviews.items():
        pub, pub_names = [], []
        for s in studies:
            if s["review_id"] != rid:
                continue
            pub_names.append(s["study"])
            if s["effect"]:
                pub.append((float(s["effect"]), float(s["se"])))
            else:
                t = (int(s["treat_n"]), float(s["treat_mean"]), float(s["treat_sd"]))
                c = (int(s["ctrl_n"]), float(s["ctrl_mean"]), float(s["ctrl_sd"]))
                pub.append(effect(rv["measure"], t, c))
        added, missed, added_names, missed_names = [], [], [], []
        for l in links:
            if l["review_id"] != rid or l["decision"] != "accept":
                continue
            rec = json.load(open(os.path.join(ROOT, "registry", l["trial_id"] + ".json")))
            o = rec["resultsSection"]["outcomeMeasuresModule"]["outcomeMeasures"][int(l["outcome_index"])]
            pa = posted_analysis(rv["measure"], o, l)
            if pa is not None:
                e, se = pa
                if l["flip"] == "yes":
                    e = -e
                added.append((e, se))
                added_names.append(l["trial_id"])
                continue
            t = combine([arm(o, g, l["unit_from"]) for g in l["treat_groups"].split(";")])
            c = combine([arm(o, g, l["unit_from"]) for g in l["ctrl_groups"].split(";")])
            e, se = effect(rv["measure"], t, c)
            if l["flip"] == "yes":
                e = -e
            # A trial whose record lists a RESULT reference is published;
            # missed by the review it is a search gap, not publication
            # bias, and is pooled apart from the registry-only trials.
            refs = rec["protocolSection"].get("referencesModule", {}).get("references", [])
            if any(r.get("type") == "RESULT" for r in refs):
                missed.append((e, se))
                missed_names.append(l["trial_id"])
            else:
                added.append((e, se))
                added_names.append(l["trial_id"])
        sets = [("published", pub, pub_names), ("augmented", pub + added, pub_names + added_names)]
        if missed:
            sets.append(("with_missed_publications", pub + missed, pub_names + missed_names))
        for name, data, names in sets:
            eff = np.array([x[0] for x in data])
            var = np.array([x[1] ** 2 for x in data])
            res = combine_effects(eff, var, method_re="dl")
            sf = res.summary_frame()
            fe, re_ = sf.loc["fixed effect"], sf.loc["random effect"]
            print(f"{rid} {name} k={len(data)} fixed={fe['eff']!r} fixed_se={fe['sd_eff']!r} "
                  f"random={re_['eff']!r} random_se={re_['sd_eff']!r} tau2={res.tau2!r}")
            # Each study's share of the weights, in percent: random effects
            # (weights_rel_re) and, for a negative DL tau2 (which the audit
            # floors at 0), fixed effect (weights_rel_fe).
            for label, w_re, w_fe in zip(names, res.weights_rel_re, res.weights_rel_fe):
                print(f"  weight {rid} {name} {label.replace(' ', '_')} re={100 * w_re!r} fe={100 * w_fe!r}")


main()
