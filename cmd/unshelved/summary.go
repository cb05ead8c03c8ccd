package main

import (
	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/compare/workspace"
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
	var db *workspace.DB
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
