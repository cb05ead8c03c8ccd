package main

import (
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	plotrender "unshelved/compare/render"
)

type summaryOptions struct {
	audit     auditOptions
	Truth     string
	Threshold float64
	Run       int64
	Compare   int64
	PlotDir   string
}

func newCmdSummary(g *globals) *cobra.Command {
	opts := &summaryOptions{audit: auditOptions{g: g}}
	cmd := &cobra.Command{
		Use:   "summary",
		Short: "Across reviews: distribution of shifts, changed conclusions, pooled difference and how well bias tests detected it",
		Long: `Audit every review in the workspace afresh (with the audit options below)
and summarize across them: the distribution of shifts in SD units, the
share of reviews whose conclusion changes, a random-effects meta-analysis of
the per-review registry-minus-published difference in SD units, and, for
each publication-bias diagnostic run on the published studies, its 2x2
table against the registry truth with sensitivity and specificity, and the
error of each bias-adjusted estimate against the augmented estimate.

The summary is stored as a run (kind summary) with its options, version
and seed. --run N shows a stored summary instead of computing one;
--compare M puts a second stored summary beside it.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := checkTau2(opts.audit.Tau2); err != nil {
				return err
			}
			if opts.audit.HKSJ {
				opts.audit.CI = compare.CIHKSJ
			}
			if err := checkCI(opts.audit.CI); err != nil {
				return err
			}
			if opts.Truth != compare.TruthThreshold && opts.Truth != compare.TruthQBetween {
				return flagErrorf("invalid --truth %q: valid values are threshold, q-between", opts.Truth)
			}
			if !(opts.Threshold > 0) {
				return flagErrorf("--truth-threshold must be positive, not %v", opts.Threshold)
			}
			if opts.audit.Bootstrap < 0 {
				return flagErrorf("--bootstrap must be 0 (off) or positive, not %d", opts.audit.Bootstrap)
			}
			if opts.Compare != 0 && opts.Run == 0 {
				return flagErrorf("--compare needs --run")
			}
			return summaryRun(cmd, opts)
		},
	}
	addAuditFlags(cmd, &opts.audit)
	cmd.Flags().StringVar(&opts.Truth, "truth", compare.TruthThreshold, "what counts as a real shift: threshold (|shift| in SD units above --truth-threshold) or q-between (subgroup test p < 0.05)")
	cmd.Flags().Float64Var(&opts.Threshold, "truth-threshold", compare.DefaultTruthThreshold, "shift in SD units above which a review counts as shifted")
	cmd.Flags().Int64Var(&opts.Run, "run", 0, "show the stored summary run N instead of computing one")
	cmd.Flags().Int64Var(&opts.Compare, "compare", 0, "with --run: put stored summary run M beside it")
	cmd.Flags().StringVar(&opts.PlotDir, "plot", "", "write the batch figures (shift-histogram.svg, shift-vs-published.svg) to this folder")
	return cmd
}

// storedSummary is a summary with the run it came from.
type storedSummary struct {
	RunID   int64           `json:"run_id"`
	Status  string          `json:"status"`
	Version string          `json:"version"`
	Seed    uint64          `json:"seed"`
	Options string          `json:"options"`
	Summary compare.Summary `json:"summary"`
}

func summaryRun(cmd *cobra.Command, opts *summaryOptions) error {
	g := opts.audit.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	ctx := cmd.Context()
	if opts.Run != 0 {
		ids := []int64{opts.Run}
		if opts.Compare != 0 {
			ids = append(ids, opts.Compare)
		}
		var out []storedSummary
		for _, id := range ids {
			r, s, err := compare.StoredSummary(ctx, db, id)
			if err != nil {
				return err
			}
			out = append(out, storedSummary{RunID: r.ID, Status: r.Status, Version: r.Version, Seed: r.Seed, Options: r.Options, Summary: s})
		}
		if len(out) == 1 {
			return render(g.IO.Out, g.Format, out[0], summaryGrid([]storedSummary{out[0]}))
		}
		return render(g.IO.Out, g.Format, out, summaryGrid(out))
	}
	run, err := compare.RunSummary(ctx, db, opts.audit.compareOptions(), compare.SummaryOptions{
		Truth: opts.Truth, Threshold: opts.Threshold, Level: opts.audit.Level, Tau2: analysis.Tau2Method(opts.audit.Tau2), CI: opts.audit.CI,
	}, version, opts.audit.Workers)
	if err != nil {
		return err
	}
	for _, e := range run.Failed {
		g.reasonf("not audited: %v", e)
	}
	for _, w := range run.Summary.Warnings {
		g.progressf("summary: %s", w)
	}
	g.progressf("summary: run %d stored (seed %d)", run.RunID, opts.audit.Seed)
	if opts.PlotDir != "" {
		if err := writeBatchFigures(opts.PlotDir, run.Audits); err != nil {
			return err
		}
		g.progressf("summary: figures in %s", opts.PlotDir)
	}
	if err := render(g.IO.Out, g.Format, run.Summary, summaryGrid([]storedSummary{{RunID: run.RunID, Summary: run.Summary}})); err != nil {
		return err
	}
	if len(run.Failed) > 0 {
		return &rejectedError{n: len(run.Failed), what: notAudited}
	}
	return nil
}

// summaryColumns are the CSV columns: one row per summary, one column per
// figure; detection and adjusted-error figures are named by test.
func summaryColumns() []string {
	cols := []string{"run_id", "reviews", "reviews_with_additions", "shift_smd_n", "shift_smd_median", "shift_smd_q1", "shift_smd_q3",
		"shift_smd_toward_benefit_share", "conclusion_changed_share", "significance_changed_share", "direction_changed_share", "mid_crossed_share",
		"pooled_difference_smd_k", "pooled_difference_smd_estimate", "pooled_difference_smd_se", "pooled_difference_smd_ci_low",
		"pooled_difference_smd_ci_high", "pooled_difference_smd_tau2", "pooled_difference_smd_i2", "truth", "truth_threshold"}
	for _, t := range []string{"egger", "egger_sample_size", "begg", "trim_fill", "selection"} {
		for _, f := range []string{"tp", "fp", "fn", "tn", "sensitivity", "sensitivity_ci_low", "sensitivity_ci_high", "specificity", "specificity_ci_low", "specificity_ci_high"} {
			cols = append(cols, "detection_"+t+"_"+f)
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
		{"shift in SD units: median [IQR]", func(s compare.Summary) string {
			return fmt.Sprintf("%s [%s, %s]", roundPtr(s.ShiftSMD.Median, 3), roundPtr(s.ShiftSMD.Q1, 3), roundPtr(s.ShiftSMD.Q3, 3))
		}},
		{"shifts toward benefit", func(s compare.Summary) string { return pct(s.ShiftSMD.TowardBenefitShare) }},
		{"conclusion changed (any)", func(s compare.Summary) string { return pct(s.ConclusionChangedShare) }},
		{"  significance / direction / MID", func(s compare.Summary) string {
			return fmt.Sprintf("%s / %s / %s", pct(s.SignificanceChangedShare), pct(s.DirectionChangedShare), pct(s.MIDCrossedShare))
		}},
		{"registry - published, pooled (SD units) [CI]", func(s compare.Summary) string {
			p := s.PooledDifferenceSMD
			return fmt.Sprintf("%s [%s, %s], k %d", roundPtr(p.Estimate, 3), roundPtr(p.CILow, 3), roundPtr(p.CIHigh, 3), p.K)
		}},
		{"  across-review tau², I²", func(s compare.Summary) string {
			return fmt.Sprintf("%s, %s%%", roundPtr(s.PooledDifferenceSMD.Tau2, 4), roundPtr(s.PooledDifferenceSMD.I2, 1))
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
		csv := []string{fmt.Sprint(r.RunID), fmt.Sprint(s.Reviews), fmt.Sprint(s.ReviewsWithAdditions), fmt.Sprint(s.ShiftSMD.N),
			fullPtr(s.ShiftSMD.Median), fullPtr(s.ShiftSMD.Q1), fullPtr(s.ShiftSMD.Q3), fullPtr(s.ShiftSMD.TowardBenefitShare),
			fullPtr(s.ConclusionChangedShare), fullPtr(s.SignificanceChangedShare), fullPtr(s.DirectionChangedShare), fullPtr(s.MIDCrossedShare),
			fmt.Sprint(s.PooledDifferenceSMD.K), fullPtr(s.PooledDifferenceSMD.Estimate), fullPtr(s.PooledDifferenceSMD.SE),
			fullPtr(s.PooledDifferenceSMD.CILow), fullPtr(s.PooledDifferenceSMD.CIHigh), fullPtr(s.PooledDifferenceSMD.Tau2),
			fullPtr(s.PooledDifferenceSMD.I2), s.Truth, full(s.TruthThreshold)}
		det := map[string]compare.Detection{}
		for _, d := range s.Detection {
			det[d.Test] = d
		}
		for _, t := range []string{"egger", "egger_sample_size", "begg", "trim_fill", "selection"} {
			d := det[t]
			csv = append(csv, fmt.Sprint(d.TP), fmt.Sprint(d.FP), fmt.Sprint(d.FN), fmt.Sprint(d.TN),
				fullPtr(d.Sensitivity), fullPtr(d.SensitivityCILow), fullPtr(d.SensitivityCIHigh),
				fullPtr(d.Specificity), fullPtr(d.SpecificityCILow), fullPtr(d.SpecificityCIHigh))
		}
		adj := map[string]compare.AdjustedError{}
		for _, e := range s.AdjustedError {
			adj[e.Method] = e
		}
		for _, m := range []string{"published", "trim_fill", "pet_peese", "selection"} {
			csv = append(csv, fullPtr(adj[m].MeanError), fullPtr(adj[m].RMSE))
		}
		g.CSV = append(g.CSV, csv)

		title := "Detection of the registry shift by each diagnostic on the published studies"
		if len(runs) > 1 {
			title += fmt.Sprintf(" (run %d)", r.RunID)
		}
		t := titled{Title: title, Header: []string{"test", "rule", "TP", "FP", "FN", "TN", "not run", "sensitivity [95% CI]", "specificity [95% CI]"}}
		for _, d := range s.Detection {
			t.Rows = append(t.Rows, []string{d.Test, d.Rule, fmt.Sprint(d.TP), fmt.Sprint(d.FP), fmt.Sprint(d.FN), fmt.Sprint(d.TN), fmt.Sprint(d.Skipped),
				propCell(d.Sensitivity, d.SensitivityCILow, d.SensitivityCIHigh), propCell(d.Specificity, d.SpecificityCILow, d.SpecificityCIHigh)})
		}
		truth := fmt.Sprintf("|shift| > %g SD units", s.TruthThreshold)
		if s.Truth == compare.TruthQBetween {
			truth = "subgroup Q-between p < 0.05"
		}
		t.Notes = []string{"Truth: " + truth + "; reviews with nothing added count as not shifted. Intervals: Wilson score."}
		e := titled{Title: "Bias-adjusted estimates against the augmented estimate (SD units)", Header: []string{"method", "reviews", "mean error", "RMSE"}}
		for _, a := range s.AdjustedError {
			e.Rows = append(e.Rows, []string{a.Method, fmt.Sprint(a.N), roundPtr(a.MeanError, 3), roundPtr(a.RMSE, 3)})
		}
		e.Notes = []string{"Error = (estimate from the published studies - augmented random-effects estimate) / SD; \"published\" is unadjusted."}
		g.Extra = append(g.Extra, t, e)
	}
	g.Notes = append([]string{
		"Shift distribution and pooled difference: reviews with at least one registry trial added; conclusion shares: all reviews.",
		"Pooled difference: random effects over reviews of (registry - published) / SD, where SD is each MD review's pooled SD (1 for SMD).",
	}, cautions...)
	return g
}

func propCell(p, lo, hi *float64) string {
	if p == nil {
		return "-"
	}
	return fmt.Sprintf("%s [%s, %s]", round(*p, 2), roundPtr(lo, 2), roundPtr(hi, 2))
}

// writeBatchFigures writes the distribution of shifts across reviews and
// shift against the published-only estimate, both in SD units.
func writeBatchFigures(dir string, audits []compare.ReviewAudit) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("figures folder: %w", err)
	}
	published, shifts, labels := compare.ShiftPoints(audits)
	if err := plotrender.WritePlot(filepath.Join(dir, "shift-histogram.svg"), plotrender.ShiftHistogram{ShiftsSD: shifts}); err != nil {
		return fmt.Errorf("shift histogram: %w", err)
	}
	if err := plotrender.WritePlot(filepath.Join(dir, "shift-vs-published.svg"), plotrender.ShiftScatter{Published: published, ShiftSD: shifts, Labels: labels}); err != nil {
		return fmt.Errorf("shift scatter: %w", err)
	}
	return nil
}
