package main

import (
	"fmt"

	"github.com/spf13/cobra"

	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
)

type reportOptions struct {
	g       *globals
	Out     string
	Imputed bool
	Figures []string     // svg, png, pdf
	Audit   auditOptions // the audit's flags and defaults
}

func newCmdReport(g *globals) *cobra.Command {
	opts := &reportOptions{g: g, Audit: auditOptions{g: g}}
	cmd := &cobra.Command{
		Use:   "report --out DIR",
		Short: "Write the self-contained HTML audit report with funnel and forest plots",
		Long: `Audit the reviews (all, or those named by --review) and write the report:
DIR/index.html, one row per review with its shift and whether the conclusion
changes, and one page per review (DIR/<review id>.html) with the question,
the data-flow counts, the shift in words, the forest and contour-enhanced
funnel plots, the included and added trials with their registry pages and
conversions, the publication-bias battery, the GRADE-style hint, a methods
paragraph written from the options used with its references, the methods
with citations, a provenance block (workspace, run, seed, options, version,
registry files with snapshot and ingest dates, search date, flow counts and
the excluded trials) and the cautions.

Pages are self-contained (inline CSS and SVG, no scripts, no external fonts
or images) and print on A4 or Letter. The path of the overview page is
printed on stdout.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.Out == "" {
				return flagErrorf("--out DIR is required")
			}
			if err := opts.Audit.validate(cmd); err != nil {
				return err
			}
			for _, f := range opts.Figures {
				if !plotrender.ValidFigureFormat(f) {
					return flagErrorf("invalid --figures %q: valid values are svg, png, pdf", f)
				}
			}
			return reportRun(cmd, opts)
		},
	}
	cmd.Flags().StringSliceVar(&opts.Audit.Reviews, "review", nil, "review id to report (repeatable; default all)")
	cmd.Flags().StringVar(&opts.Out, "out", "", "folder for the report's pages (created if needed)")
	addAuditFlags(cmd, &opts.Audit)
	cmd.Flags().BoolVar(&opts.Imputed, "imputed", false, "draw trim-and-fill's imputed studies in the funnel plots")
	cmd.Flags().StringSliceVar(&opts.Figures, "figures", nil, "also write each page's forest and funnel plots as files beside it: svg, png or pdf (repeatable, or comma-separated)")
	return cmd
}

func reportRun(cmd *cobra.Command, opts *reportOptions) error {
	g := opts.g
	db, err := opts.Audit.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	res, err := writeReport(cmd, db, opts)
	if err != nil {
		return err
	}
	g.progressf("report: %s in %s", countOf(len(res.Audits), "review page", "review pages"), opts.Out)
	fmt.Fprintln(g.IO.Out, res.Index)
	if failed := len(res.Failed); failed > 0 {
		// Pages left out (reasons above); with none written this is
		// not a report at all.
		return &rejectedError{n: failed, what: [2]string{"review left out of the report", "reviews left out of the report"}}
	}
	return nil
}

// writeReport writes the report with the audit flags' options and notes
// on stderr, even under --quiet, the reviews without a registry search and
// those left out.
func writeReport(cmd *cobra.Command, db *workspace.DB, opts *reportOptions) (workspace.ReportResult, error) {
	g := opts.g
	res, err := workspace.WriteReport(cmd.Context(), db, workspace.ReportOptions{
		Dir: opts.Out, Reviews: opts.Audit.Reviews, Audit: opts.Audit.compareOptions(),
		Run:     workspace.RunOptions{Workers: opts.Audit.Workers, NoStore: opts.Audit.NoStore},
		Imputed: opts.Imputed, Figures: opts.Figures, Workspace: g.dbPath(cmd), Version: version, Now: g.IO.now,
	})
	for _, a := range res.Audits {
		noteRegistrySearch(g, a)
	}
	for _, e := range res.Failed {
		g.reasonf("report: left out: %v", e)
	}
	return res, err
}
