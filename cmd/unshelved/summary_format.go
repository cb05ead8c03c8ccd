package main

import (
	"fmt"

	"unshelved/compare"
)

// detectionTests are the diagnostics of the detection tables, in order.
var detectionTests = []string{"egger", "egger_sample_size", "begg", "trim_fill", "selection"}

// detectionPrefix names the CSV columns of the detection table with the
// given min_k: detection_<test>_... for all reviews, detection_k10_<test>_...
// for reviews with at least 10 published studies.
func detectionPrefix(minK int) string {
	if minK == 0 {
		return "detection_"
	}
	return fmt.Sprintf("detection_k%d_", minK)
}

// summaryColumns are the CSV columns: one row per summary, one column per
// figure; detection and adjusted-error figures are named by test.
func summaryColumns() []string {
	cols := []string{"run_id", "reviews", "reviews_with_additions", "overstatement_sd_n", "overstatement_sd_median", "overstatement_sd_q1", "overstatement_sd_q3",
		"overstatement_sd_mean", "overstatement_sd_share_positive", "conclusion_changed_share", "significance_changed_share", "direction_changed_share", "mid_crossed_share",
		"pooled_overstatement_sd_k", "pooled_overstatement_sd_estimate", "pooled_overstatement_sd_se", "pooled_overstatement_sd_ci_low",
		"pooled_overstatement_sd_ci_high", "pooled_overstatement_sd_tau2", "pooled_overstatement_sd_i2", "truth", "truth_threshold"}
	for _, k := range []int{0, 10} {
		for _, t := range detectionTests {
			for _, f := range []string{"tp", "fp", "fn", "tn", "unknown", "sensitivity", "sensitivity_ci_low", "sensitivity_ci_high", "specificity", "specificity_ci_low", "specificity_ci_high"} {
				cols = append(cols, detectionPrefix(k)+t+"_"+f)
			}
		}
	}
	for _, m := range []string{"published", "trim_fill", "pet_peese", "selection"} {
		cols = append(cols, "adjusted_"+m+"_mean_error", "adjusted_"+m+"_rmse")
	}
	return cols
}

func summaryGrid(runs []storedSummary) grid {
	g := grid{Columns: summaryColumns(), Header: []string{"figure"}}
	for _, r := range runs {
		g.Header = append(g.Header, fmt.Sprintf("run %d", r.RunID))
	}
	type row struct {
		name string
		cell func(s compare.Summary) string
	}
	pct := func(x *float64) string {
		if x == nil {
			return "-"
		}
		return round(100**x, 1) + "%"
	}
	rows := []row{
		{"reviews (with registry additions)", func(s compare.Summary) string { return fmt.Sprintf("%d (%d)", s.Reviews, s.ReviewsWithAdditions) }},
		{"overstatement of the benefit, SD: median [IQR]", func(s compare.Summary) string {
			o := s.OverstatementSD
			return fmt.Sprintf("%s [%s, %s]", roundPtr(o.Median, 3), roundPtr(o.Q1, 3), roundPtr(o.Q3, 3))
		}},
		{"published overstates (share of reviews)", func(s compare.Summary) string { return pct(s.OverstatementSD.SharePositive) }},
		{"conclusion changed (any)", func(s compare.Summary) string { return pct(s.ConclusionChangedShare) }},
		{"  significance / direction / MID", func(s compare.Summary) string {
			return fmt.Sprintf("%s / %s / %s", pct(s.SignificanceChangedShare), pct(s.DirectionChangedShare), pct(s.MIDCrossedShare))
		}},
		{"published - registry, oriented, pooled (SD) [CI]", func(s compare.Summary) string {
			p := s.PooledOverstatementSD
			return fmt.Sprintf("%s [%s, %s], %d reviews", roundPtr(p.Estimate, 3), roundPtr(p.CILow, 3), roundPtr(p.CIHigh, 3), p.K)
		}},
		{"  across-review tau², I²", func(s compare.Summary) string {
			return fmt.Sprintf("%s, %s%%", roundPtr(s.PooledOverstatementSD.Tau2, 4), roundPtr(s.PooledOverstatementSD.I2, 1))
		}},
	}
	for _, r := range rows {
		line := []string{r.name}
		for _, x := range runs {
			line = append(line, r.cell(x.Summary))
		}
		g.Table = append(g.Table, line)
	}
	for _, r := range runs {
		s := r.Summary
		o, p := s.OverstatementSD, s.PooledOverstatementSD
		csv := []string{fmt.Sprint(r.RunID), fmt.Sprint(s.Reviews), fmt.Sprint(s.ReviewsWithAdditions), fmt.Sprint(o.N),
			fullPtr(o.Median), fullPtr(o.Q1), fullPtr(o.Q3), fullPtr(o.Mean), fullPtr(o.SharePositive),
			fullPtr(s.ConclusionChangedShare), fullPtr(s.SignificanceChangedShare), fullPtr(s.DirectionChangedShare), fullPtr(s.MIDCrossedShare),
			fmt.Sprint(p.K), fullPtr(p.Estimate), fullPtr(p.SE), fullPtr(p.CILow), fullPtr(p.CIHigh), fullPtr(p.Tau2),
			fullPtr(p.I2), s.Truth, full(s.TruthThreshold)}
		type key struct {
			test string
			minK int
		}
		det := map[key]compare.Detection{}
		for _, d := range s.Detection {
			det[key{d.Test, d.MinK}] = d
		}
		for _, k := range []int{0, 10} {
			for _, t := range detectionTests {
				d := det[key{t, k}]
				csv = append(csv, fmt.Sprint(d.TP), fmt.Sprint(d.FP), fmt.Sprint(d.FN), fmt.Sprint(d.TN), fmt.Sprint(d.Unknown),
					fullPtr(d.Sensitivity), fullPtr(d.SensitivityCILow), fullPtr(d.SensitivityCIHigh),
					fullPtr(d.Specificity), fullPtr(d.SpecificityCILow), fullPtr(d.SpecificityCIHigh))
			}
		}
		adj := map[string]compare.AdjustedError{}
		for _, e := range s.AdjustedError {
			adj[e.Method] = e
		}
		for _, m := range []string{"published", "trim_fill", "pet_peese", "selection"} {
			csv = append(csv, fullPtr(adj[m].MeanError), fullPtr(adj[m].RMSE))
		}
		g.CSV = append(g.CSV, csv)

		truth := fmt.Sprintf("overstatement of the benefit > %g SD", s.TruthThreshold)
		if s.Truth == compare.TruthQBetween {
			truth = "subgroup Q-between p < 0.05 with the published studies more favourable"
		}
		for _, k := range []int{0, 10} {
			title := "Detection of overstatement by each diagnostic on the published studies"
			if k > 0 {
				title += fmt.Sprintf(" (reviews with at least %d published studies)", k)
			} else {
				title += " (all reviews)"
			}
			if len(runs) > 1 {
				title += fmt.Sprintf(" (run %d)", r.RunID)
			}
			t := titled{Title: title, Header: []string{"test", "rule", "TP", "FP", "FN", "TN", "unknown", "not run", "sensitivity [95% CI]", "specificity [95% CI]"}}
			for _, d := range s.Detection {
				if d.MinK != k {
					continue
				}
				t.Rows = append(t.Rows, []string{d.Test, d.Rule, fmt.Sprint(d.TP), fmt.Sprint(d.FP), fmt.Sprint(d.FN), fmt.Sprint(d.TN), fmt.Sprint(d.Unknown), fmt.Sprint(d.Skipped),
					propCell(d.Sensitivity, d.SensitivityCILow, d.SensitivityCIHigh), propCell(d.Specificity, d.SpecificityCILow, d.SpecificityCIHigh)})
			}
			t.Notes = []string{"Truth: " + truth + "; reviews with nothing added count as not overstated when no eligible registered trial lacks results, and as unknown (left out) otherwise. A test counts only when its asymmetry points to missing unfavourable small studies. Intervals: Wilson score."}
			if k > 0 {
				t.Notes = append(t.Notes, fmt.Sprintf("Asymmetry tests are not advised with fewer than %d studies (Sterne et al. 2011, BMJ 343:d4002).", k))
			}
			g.Extra = append(g.Extra, t)
		}
		e := titled{Title: "Bias-adjusted estimates against the augmented estimate (oriented, SD units)", Header: []string{"method", "reviews", "mean error", "RMSE"}}
		for _, a := range s.AdjustedError {
			e.Rows = append(e.Rows, []string{a.Method, fmt.Sprint(a.N), roundPtr(a.MeanError, 3), roundPtr(a.RMSE, 3)})
		}
		e.Notes = []string{"Error = favourable x (estimate from the published studies - augmented random-effects estimate) / SD, over reviews with registry additions: positive still overstates the benefit; \"published\" is unadjusted."}
		g.Extra = append(g.Extra, e)
	}
	g.Notes = append([]string{
		"Overstatement, pooled overstatement and adjusted errors: reviews with at least one registry trial added, oriented so that positive means the published-only analysis overstates the benefit; conclusion shares: all reviews.",
		"Pooled overstatement: random effects over reviews of favourable x (published - registry) / SD, where SD is each MD review's pooled SD (1 for SMD).",
	}, cautions...)
	return g
}

func propCell(p, lo, hi *float64) string {
	if p == nil {
		return "-"
	}
	return fmt.Sprintf("%s [%s, %s]", round(*p, 2), roundPtr(lo, 2), roundPtr(hi, 2))
}
