package main

import (
	"fmt"
	"strings"

	"unshelved/compare"
)

// biasTables renders the publication-bias battery for people: the tests
// and adjustments in one table, the GRADE-style hint with its reasons and
// cautions under it.
func biasTables(b *compare.BiasReport) []titled {
	if b == nil {
		return nil
	}
	t := titled{
		Title:  fmt.Sprintf("Publication bias and small-study effects (k = %d)", b.K),
		Header: []string{"method", "statistic", "estimate", "CI", "p"},
	}
	if e := b.Egger; e != nil {
		t.Rows = append(t.Rows, []string{"Egger's test, regressed on SE",
			fmt.Sprintf("slope %s (SE %s), t = %s on %d df", roundPtr(e.Bias, 3), roundPtr(e.BiasSE, 3), roundPtr(e.T, 2), e.DF),
			"effect at SE = 0: " + roundPtr(e.EffectAtSE0, 3), ciCell(e.EffectAtSE0CILow, e.EffectAtSE0CIHigh), pPtr(e.P)})
	}
	if e := b.EggerSampleSize; e != nil {
		t.Rows = append(t.Rows, []string{"Egger's test, regressed on √(1/n₁+1/n₂)",
			fmt.Sprintf("slope %s (SE %s), t = %s on %d df", roundPtr(e.Bias, 3), roundPtr(e.BiasSE, 3), roundPtr(e.T, 2), e.DF),
			"effect at SE = 0: " + roundPtr(e.EffectAtSE0, 3), ciCell(e.EffectAtSE0CILow, e.EffectAtSE0CIHigh), pPtr(e.P)})
	}
	if g := b.Begg; g != nil {
		t.Rows = append(t.Rows, []string{"rank correlation test (Begg & Mazumdar 1994)", fmt.Sprintf("Kendall tau %s, z = %s", roundPtr(g.Tau, 3), roundPtr(g.Z, 2)), "", "", pPtr(g.P)})
	}
	if tf := b.TrimFill; tf != nil {
		t.Rows = append(t.Rows,
			[]string{"Trim-and-fill (" + tf.Estimator + "), fixed", fmt.Sprintf("k0 = %d imputed on the %s", tf.K0, tf.Side), roundPtr(tf.FixedEstimate, 3), ciCell(tf.FixedCILow, tf.FixedCIHigh), ""},
			[]string{"Trim-and-fill (" + tf.Estimator + "), random (" + tf.Tau2Method + ")", "", roundPtr(tf.RandomEstimate, 3), ciCell(tf.CILow, tf.CIHigh), ""})
	}
	if p := b.PET; p != nil {
		t.Rows = append(t.Rows, []string{"PET (intercept at SE = 0)", "", roundPtr(p.Estimate, 3), ciCell(p.CILow, p.CIHigh), pPtr(p.P)})
	}
	if p := b.PEESE; p != nil {
		t.Rows = append(t.Rows, []string{"PEESE (intercept at SE² = 0)", "", roundPtr(p.Estimate, 3), ciCell(p.CILow, p.CIHigh), pPtr(p.P)})
	}
	if p := b.PETPEESE; p != nil {
		t.Rows = append(t.Rows, []string{"PET-PEESE (conditional)", "chose " + p.Chosen, roundPtr(p.Estimate, 3), ciCell(p.CILow, p.CIHigh), ""})
	}
	if s := b.Selection; s != nil {
		w := make([]string, len(s.Weights))
		for i, x := range s.Weights {
			w[i] = roundPtr(x, 2)
		}
		stat := fmt.Sprintf("cut points %v, weights %s, tau² %s", s.Cutpoints, strings.Join(w, "/"), roundPtr(s.Tau2, 4))
		if !s.Converged {
			stat += " (did not converge: " + s.Message + ")"
		}
		t.Rows = append(t.Rows, []string{"Selection model (step function), LRT", stat, roundPtr(s.Estimate, 3), ciCell(s.CILow, s.CIHigh), pPtr(s.LRTP)})
	}
	t.Notes = append(t.Notes,
		"A 0.10 significance level is common for these tests; they are not recommended with fewer than 10 studies.",
		fmt.Sprintf("GRADE-style hint for the publication-bias domain: %s", b.GradeHint.Level))
	for _, r := range b.GradeHint.Reasons {
		t.Notes = append(t.Notes, "  - "+r)
	}
	for _, c := range b.GradeHint.Cautions {
		t.Notes = append(t.Notes, "  ! "+c)
	}
	for _, w := range b.Warnings {
		t.Notes = append(t.Notes, "  warning: "+w)
	}
	return []titled{t}
}
