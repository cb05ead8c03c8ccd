package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/ingest"
	"unshelved/store"
)

type reportOptions struct {
	g       *globals
	Reviews []string
	Out     string
	Tau2    string
	HKSJ    bool
	Level   float64
	Imputed bool
}

func newCmdReport(g *globals) *cobra.Command {
	opts := &reportOptions{g: g}
	cmd := &cobra.Command{
		Use:   "report --out DIR",
		Short: "Write the self-contained HTML audit report with funnel and forest plots",
		Long: `Audit the reviews (all, or those named by --review) and write the report:
DIR/index.html, one row per review with its shift and whether the conclusion
changes, and one page per review (DIR/<review id>.html) with the question,
the data-flow counts, the shift in words, the forest and contour-enhanced
funnel plots, the included and added trials with their registry pages and
conversions, the publication-bias battery, the GRADE-style hint, the methods
with citations and the cautions.

Pages are self-contained (inline CSS and SVG, no scripts, no external fonts
or images) and print on A4 or Letter. The path of the overview page is
printed on stdout.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.Out == "" {
				return flagErrorf("--out DIR is required")
			}
			if err := checkTau2(opts.Tau2); err != nil {
				return err
			}
			if !(opts.Level > 0 && opts.Level < 1) {
				return flagErrorf("--level must lie between 0 and 1, not %v", opts.Level)
			}
			return reportRun(cmd, opts)
		},
	}
	cmd.Flags().StringSliceVar(&opts.Reviews, "review", nil, "review id to report (repeatable; default all)")
	cmd.Flags().StringVar(&opts.Out, "out", "", "folder for the report's pages (created if needed)")
	cmd.Flags().StringVar(&opts.Tau2, "tau2", "dl", "tau² estimator for random effects: dl, reml or pm")
	cmd.Flags().BoolVar(&opts.HKSJ, "hksj", false, "random-effects interval by Hartung-Knapp-Sidik-Jonkman instead of Wald")
	cmd.Flags().Float64Var(&opts.Level, "level", 0.95, "confidence level")
	cmd.Flags().BoolVar(&opts.Imputed, "imputed", false, "draw trim-and-fill's imputed studies in the funnel plots")
	return cmd
}

func reportRun(cmd *cobra.Command, opts *reportOptions) error {
	g := opts.g
	ctx := cmd.Context()
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	audits, err := compare.Audit(ctx, db, opts.Reviews, compare.Options{
		Level: opts.Level, Tau2: analysis.Tau2Method(opts.Tau2), HKSJ: opts.HKSJ,
	})
	if err != nil {
		return err
	}
	reviews, err := reviewDetails(cmd, db, audits)
	if err != nil {
		return err
	}
	index, err := plotrender.WriteReport(opts.Out, audits, plotrender.ReportOptions{
		Reviews: reviews, Imputed: opts.Imputed, Level: opts.Level,
		Generated: g.IO.Now().UTC().Format("2006-01-02") + ", unshelved " + version,
	})
	if err != nil {
		return err
	}
	g.progressf("report: %d review page(s) in %s", len(audits), opts.Out)
	fmt.Fprintln(g.IO.Out, index)
	return nil
}

// reviewDetails loads each audited review's question (outcome, timepoint,
// populations) for the report pages.
func reviewDetails(cmd *cobra.Command, db *store.DB, audits []compare.ReviewAudit) (map[string]ingest.Review, error) {
	out := make(map[string]ingest.Review, len(audits))
	for _, a := range audits {
		rv, err := db.Review(cmd.Context(), a.ReviewID)
		if errors.Is(err, store.ErrNotFound) {
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("load review %s: %w", a.ReviewID, err)
		}
		out[a.ReviewID] = rv
	}
	return out, nil
}
