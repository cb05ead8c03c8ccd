package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
	"unshelved/store"
)

type summaryOptions struct {
	audit     auditOptions
	Truth     string
	Threshold float64
	Run       int64
	Compare   int64
	Plots     []string // folders (both figures as SVG) or figure files
	Scan      bool
	scan      scanOptions
}

func newCmdSummary(g *globals) *cobra.Command {
	opts := &summaryOptions{audit: auditOptions{g: g}}
	opts.scan.audit.g = g
	cmd := &cobra.Command{
		Use:   "summary",
		Short: "Across reviews: overstatement of the benefit, changed conclusions, pooled overstatement and how well bias tests detected it",
		Long: `Audit every review in the workspace afresh (with the audit options below)
and summarize across them, every number oriented so that positive means
the published-only analysis overstates the benefit: the distribution of the
overstatement in SD units, the share of reviews whose conclusion changes, a
random-effects meta-analysis of the per-review published-minus-registry
difference in SD units, and, for each publication-bias diagnostic run on the
published studies, its 2x2 table against the registry truth with
sensitivity and specificity (all reviews, and reviews with at least 10
published studies), and the error of each bias-adjusted estimate against the
augmented estimate.

The summary is stored as a run (kind summary) with its options, version
and seed. --run N shows a stored summary instead of computing one;
--compare M puts a second stored summary beside it.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := checkTau2(opts.audit.Tau2); err != nil {
				return err
			}
			if err := checkCI(opts.audit.CI); err != nil {
				return err
			}
			for _, p := range opts.Plots {
				if _, err := batchFigureKind(p); err != nil {
					return flagErrorf("%v", err)
				}
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
			if opts.Scan && !(opts.scan.AcceptAbove > 0 && opts.scan.AcceptAbove < 1) {
				return flagErrorf("invalid --accept-above %v: give a score between 0 and 1", opts.scan.AcceptAbove)
			}
			if opts.Compare != 0 && opts.Run == 0 {
				return flagErrorf("--compare needs --run")
			}
			return summaryRun(cmd, opts)
		},
	}
	addAuditFlags(cmd, &opts.audit)
	cmd.Flags().StringVar(&opts.Truth, "truth", compare.TruthThreshold, "what counts as overstatement: threshold (oriented overstatement in SD units above --truth-threshold) or q-between (subgroup test p < 0.05, published more favourable)")
	cmd.Flags().Float64Var(&opts.Threshold, "truth-threshold", compare.DefaultTruthThreshold, "overstatement of the benefit in SD units above which a review counts as overstated")
	cmd.Flags().Int64Var(&opts.Run, "run", 0, "show the stored summary run N instead of computing one")
	cmd.Flags().Int64Var(&opts.Compare, "compare", 0, "with --run: put stored summary run M beside it")
	cmd.Flags().StringArrayVar(&opts.Plots, "plot", nil, "write the batch figures: a folder (shift-histogram.svg and shift-vs-published.svg in it), or a file whose name says histogram or scatter, ending .svg, .png or .pdf (repeatable)")
	cmd.Flags().BoolVar(&opts.Scan, "scan", false, "scan every question afresh (see scan) and summarize the scans: linked trials play the published studies")
	addScanFlags(cmd, &opts.scan)
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
	var db *store.DB
	var err error
	if opts.Run != 0 {
		db, err = g.openDB(cmd)
	} else {
		db, err = opts.audit.openDB(cmd)
	}
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
			r, s, err := workspace.StoredSummary(ctx, db, id)
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
	so := compare.SummaryOptions{
		Truth: opts.Truth, Threshold: opts.Threshold, Level: opts.audit.Level, Tau2: analysis.Tau2Method(opts.audit.Tau2), CI: opts.audit.CI,
	}
	var run workspace.SummaryRun
	if opts.Scan {
		opts.scan.audit = opts.audit
		var ro workspace.ScanRunOptions
		if ro, err = opts.scan.runOptions(); err == nil {
			ro.NoStore = opts.audit.NoStore
			run, err = workspace.RunScanSummary(ctx, db, ro, so)
		}
		g.progressf("summary --scan: each question counts as a review; its linked trials play the published studies, its unlinked trials the registry additions")
		g.progressf("summary --scan: %s", compare.ScanCaution)
	} else {
		run, err = workspace.RunSummaryOpts(ctx, db, opts.audit.compareOptions(), so, version,
			workspace.RunOptions{Workers: opts.audit.Workers, NoStore: opts.audit.NoStore})
	}
	if err != nil {
		return err
	}
	for _, e := range run.Failed {
		g.reasonf("not audited: %v", e)
	}
	for _, w := range run.Summary.Warnings {
		g.progressf("summary: %s", w)
	}
	if run.RunID != 0 {
		g.progressf("summary: run %d stored (seed %d)", run.RunID, opts.audit.Seed)
	}
	for _, p := range opts.Plots {
		if err := writeBatchFigures(p, run.Audits); err != nil {
			return err
		}
		g.progressf("summary: figures in %s", p)
	}
	if err := render(g.IO.Out, g.Format, run.Summary, summaryGrid([]storedSummary{{RunID: run.RunID, Summary: run.Summary}})); err != nil {
		return err
	}
	if len(run.Failed) > 0 {
		return &rejectedError{n: len(run.Failed), what: notAudited}
	}
	return nil
}

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

// batchFigureKind says what a summary --plot value asks for: "dir" (both
// figures as SVG in that folder), "histogram" or "scatter" (one file, in
// the format its extension names).
func batchFigureKind(path string) (string, error) {
	base := strings.ToLower(filepath.Base(path))
	switch filepath.Ext(base) {
	case ".svg", ".png", ".pdf":
	default:
		return "dir", nil
	}
	hist := strings.Contains(base, "histogram")
	scatter := strings.Contains(base, "scatter") || strings.Contains(base, "vs-published")
	switch {
	case hist && !scatter:
		return "histogram", nil
	case scatter && !hist:
		return "scatter", nil
	}
	return "", fmt.Errorf("--plot %s: the file name must say histogram or scatter (e.g. shift-histogram.png, shift-scatter.pdf), or name a folder", path)
}

// writeBatchFigures writes the distribution of the oriented overstatement
// across reviews and overstatement against the oriented published-only
// estimate, both in SD units: both as SVG into a folder, or one figure to
// a file.
func writeBatchFigures(path string, audits []compare.ReviewAudit) error {
	published, over, labels := compare.ShiftPoints(audits)
	hist := plotrender.ShiftHistogram{ShiftsSD: over}
	scatter := plotrender.ShiftScatter{Published: published, ShiftSD: over, Labels: labels}
	kind, err := batchFigureKind(path)
	if err != nil {
		return err
	}
	switch kind {
	case "histogram":
		return plotrender.WritePlot(path, hist)
	case "scatter":
		return plotrender.WritePlot(path, scatter)
	}
	if err := os.MkdirAll(path, 0o755); err != nil {
		return fmt.Errorf("figures folder: %w", err)
	}
	if err := plotrender.WritePlot(filepath.Join(path, "shift-histogram.svg"), hist); err != nil {
		return fmt.Errorf("shift histogram: %w", err)
	}
	if err := plotrender.WritePlot(filepath.Join(path, "shift-vs-published.svg"), scatter); err != nil {
		return fmt.Errorf("shift scatter: %w", err)
	}
	return nil
}
