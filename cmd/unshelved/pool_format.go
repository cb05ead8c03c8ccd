package main

import (
	"fmt"

	"unshelved/compare"
)

var poolColumns = []string{"study", "effect", "se", "ci_low", "ci_high", "weight_fixed", "weight_random", "converted_from"}

func poolGrid(r compare.PoolReport) grid {
	g := grid{Columns: poolColumns, Header: []string{"study", r.Measure, "SE", pct(r.Level) + " CI", "weight fixed %", "weight random %", "from"}}
	for _, s := range r.Studies {
		lo, hi := s.CILow, s.CIHigh
		g.Table = append(g.Table, []string{s.Study, round(s.Effect, 3), round(s.SE, 3), "[" + round(lo, 2) + ", " + round(hi, 2) + "]",
			roundPtr(s.WeightFixed, 1), roundPtr(s.WeightRandom, 1), s.ConvertedFrom})
		g.CSV = append(g.CSV, []string{s.Study, full(s.Effect), full(s.SE), full(lo), full(hi), fullPtr(s.WeightFixed), fullPtr(s.WeightRandom), s.ConvertedFrom})
	}
	h := r.Heterogeneity
	models := titled{
		Title:  fmt.Sprintf("Pooled (k = %d, %s CI)", r.K, pct(r.Level)),
		Header: []string{"model", "estimate", "SE", "CI", "p", "tau²"},
		Rows: [][]string{
			{"fixed effect", roundPtr(r.Fixed.Estimate, 3), roundPtr(r.Fixed.SE, 3), ciCell(r.Fixed.CILow, r.Fixed.CIHigh), pPtr(r.Fixed.P), ""},
			{"random (" + h.Tau2Method + "), " + ciLabel(r.Random.CIMethod), roundPtr(r.Random.Estimate, 3), roundPtr(r.Random.SE, 3), ciCell(r.Random.CILow, r.Random.CIHigh), pPtr(r.Random.P), roundPtr(h.Tau2, 4)},
		},
	}
	// The other forms, each with the p of its own test.
	hksjForm := compare.CIHKSJ
	if r.Random.CIMethod == compare.CIHKSJUntruncated {
		hksjForm = compare.CIHKSJUntruncated
	}
	if r.Random.CIMethod != compare.CIWald {
		models.Rows = append(models.Rows, []string{"random (" + h.Tau2Method + "), " + ciLabel(compare.CIWald), roundPtr(r.Random.Estimate, 3), roundPtr(r.Random.WaldSE, 3),
			ciCell(r.Random.WaldCILow, r.Random.WaldCIHigh), pPtr(r.Random.WaldP), ""})
	} else if r.K >= 2 {
		models.Rows = append(models.Rows, []string{"random (" + h.Tau2Method + "), " + ciLabel(hksjForm), roundPtr(r.Random.Estimate, 3), roundPtr(r.Random.HKSJSE, 3),
			ciCell(r.Random.HKSJCILow, r.Random.HKSJCIHigh), pPtr(r.Random.HKSJP), ""})
	}
	for _, m := range []string{"dl", "pm", "reml"} {
		x := r.RandomByMethod[m]
		models.Rows = append(models.Rows, []string{"random (" + m + "), Wald", roundPtr(x.Estimate, 3), roundPtr(x.SE, 3), ciCell(x.CILow, x.CIHigh), "", roundPtr(x.Tau2, 4)})
	}
	models.Notes = []string{
		fmt.Sprintf("Between-study variation: tau² (%s) = %s, %s CI %s (Q-profile); I² = %s%%, H² = %s; Q = %s with %d df (p = %s)",
			h.Tau2Method, roundPtr(h.Tau2, 4), pct(r.Level), ciCell(h.Tau2CILow, h.Tau2CIHigh), roundPtr(h.I2, 1), roundPtr(h.H2, 2), roundPtr(h.Q, 2), h.DF, pPtr(h.QP)),
		fmt.Sprintf("Prediction interval (%s): %s", pct(r.Level), ciCell(r.Random.PILow, r.Random.PIHigh)),
		"The first random-effects row is the headline (--ci); its interval and p come from the same test, as in the forest plot.",
	}
	if r.Random.FewStudies {
		models.Notes = append(models.Notes, "Fewer than 3 studies: the headline uses the Wald interval whatever --ci asks.")
	}
	g.Extra = append(g.Extra, models)
	if len(r.LeaveOneOut) > 0 {
		loo := titled{Title: "Leave one out (random effects, " + h.Tau2Method + ", Wald)", Header: []string{"omitted", "estimate", "CI", "tau²", "I² %"}}
		for _, l := range r.LeaveOneOut {
			loo.Rows = append(loo.Rows, []string{l.Omitted, roundPtr(l.Estimate, 3), ciCell(l.CILow, l.CIHigh), roundPtr(l.Tau2, 4), roundPtr(l.I2, 1)})
		}
		if r.MostInfluential != nil {
			loo.Notes = []string{"Most influential study: " + *r.MostInfluential}
		}
		g.Extra = append(g.Extra, loo)
	}
	g.Extra = append(g.Extra, biasTables(r.Bias)...)
	if len(r.Warnings) > 0 {
		w := titled{Title: "Warnings", Header: []string{"warning"}}
		for _, x := range r.Warnings {
			w.Rows = append(w.Rows, []string{x})
		}
		g.Extra = append(g.Extra, w)
	}
	return g
}

// ciLabel names an interval method in table rows.
func ciLabel(m string) string {
	switch m {
	case compare.CIHKSJ:
		return "HKSJ (floored at 1)"
	case compare.CIHKSJUntruncated:
		return "HKSJ (untruncated)"
	}
	return "Wald"
}

func pct(level float64) string { return fmt.Sprintf("%g%%", 100*level) }

func ciCell(lo, hi *float64) string {
	if lo == nil && hi == nil {
		return "-"
	}
	return "[" + roundPtr(lo, 2) + ", " + roundPtr(hi, 2) + "]"
}

func pPtr(p *float64) string {
	if p == nil {
		return "-"
	}
	return pValue(*p)
}
