package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
	"unshelved/ingest"
	"unshelved/store"
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
	index, audits, failed, err := writeReport(cmd, db, opts)
	if err != nil {
		return err
	}
	g.progressf("report: %s in %s", countOf(len(audits), "review page", "review pages"), opts.Out)
	fmt.Fprintln(g.IO.Out, index)
	if failed > 0 {
		// Pages left out (reasons above); with none written this is
		// not a report at all.
		return &rejectedError{n: failed, what: [2]string{"review left out of the report", "reviews left out of the report"}}
	}
	return nil
}

// writeReport audits the reviews with the report's audit options, records
// the run, and writes the pages; it returns the overview page's path and
// the number of reviews left out (their reasons printed, even under
// --quiet). A workspace without reviews is an error.
func writeReport(cmd *cobra.Command, db *store.DB, opts *reportOptions) (string, []compare.ReviewAudit, int, error) {
	g := opts.g
	run, err := workspace.RunAuditOpts(cmd.Context(), db, opts.Audit.Reviews, opts.Audit.compareOptions(), version,
		workspace.RunOptions{Workers: opts.Audit.Workers, NoStore: opts.Audit.NoStore})
	if err != nil {
		return "", nil, 0, err
	}
	for _, a := range run.Audits {
		noteRegistrySearch(g, a)
	}
	for _, e := range run.Failed {
		g.reasonf("report: left out: %v", e)
	}
	if len(run.Audits) == 0 && len(run.Failed) == 0 {
		return "", nil, 0, errors.New("no reviews in the workspace: load them with `unshelved ingest reviews` first")
	}
	reviews, err := reviewDetails(cmd, db, run.Audits)
	if err != nil {
		return "", nil, 0, err
	}
	aopts := opts.Audit.compareOptions()
	prov, err := workspace.LoadProvenance(cmd.Context(), db, run.Audits,
		compare.RunInfo{Workspace: g.dbPath(cmd), RunID: run.RunID, Version: version, Options: aopts}, true)
	if err != nil {
		return "", nil, 0, fmt.Errorf("provenance of the report pages: %w", err)
	}
	index, err := plotrender.WriteReport(opts.Out, run.Audits, plotrender.ReportOptions{
		Reviews: reviews, Imputed: opts.Imputed, Level: opts.Audit.Level, Figures: opts.Figures,
		Generated: g.IO.now().UTC().Format("2006-01-02") + ", unshelved " + version,
		Audit:     aopts, Version: version, Provenance: prov,
	})
	return index, run.Audits, len(run.Failed), err
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
