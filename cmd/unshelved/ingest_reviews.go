package main

import (
	"errors"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
)

type ingestReviewsOptions struct {
	g         *globals
	Files     []string
	Delimiter rune
}

func newCmdIngestReviews(g *globals) *cobra.Command {
	opts := &ingestReviewsOptions{g: g}
	var delimiter string
	cmd := &cobra.Command{
		Use:   "reviews FILE...",
		Short: "Load published meta-analyses: reviews.csv and studies.csv (told apart by their header)",
		Long: `Load published meta-analyses in unshelved's CSV formats.

reviews.csv columns: review_id, title, measure (MD|SMD), outcome, unit,
better (lower|higher), timepoint_weeks, search_date, conditions,
interventions, comparator, mid (lists separated by ';'). A review with no
studies is a question for 'unshelved scan'; a questions.csv with the same
columns is loaded the same way.

studies.csv columns: review_id, study, registry_id, year, and either
effect, se or treat_mean, treat_sd, treat_n, ctrl_mean, ctrl_sd, ctrl_n;
plus note.

Each review named in the files replaces its earlier version and studies;
other reviews in the workspace stay as they are. Loading is all or
nothing: when any row of any file is rejected, nothing is loaded from any
of the files (the workspace keeps what it had) and the command exits 1
after listing every rejected row.

Files are comma-separated with a decimal point. A file separated by ';'
or tabs (a spreadsheet export in many European settings) is rejected with
a message saying so; save it comma-separated or pass --delimiter. Decimal
commas are rejected in any case.`,
		Args: minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Files = args
			d, err := parseDelimiter(delimiter)
			if err != nil {
				return err
			}
			opts.Delimiter = d
			return ingestReviewsRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&delimiter, "delimiter", ",", `field separator of the CSV files: ',', ';', '\t' (tab) or '|'`)
	return cmd
}

func ingestReviewsRun(cmd *cobra.Command, opts *ingestReviewsOptions) error {
	g := opts.g
	if err := checkPathsExist(opts.Files); err != nil {
		return err
	}
	reviews, studies, err := workspace.ReadReviewFiles(opts.Files, opts.Delimiter, g.IO.In)
	if err != nil {
		reportNotLoaded(g, err)
		return err
	}
	db, err := g.createDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	if db.ReadOnly() {
		return readOnlyError(db.Path(), false)
	}
	saved, err := workspace.SaveReviews(cmd.Context(), db, reviews, studies)
	if err != nil {
		return err
	}
	g.progressf("loaded %s and %s", countOf(saved.Reviews, "review", "reviews"), countOf(saved.Studies, "published study", "published studies"))
	if saved.Questions > 0 {
		g.progressf("%s without studies: questions for 'unshelved scan'", countOf(saved.Questions, "review", "reviews"))
	}
	return nil
}

// reportNotLoaded lists on stderr, even under --quiet, every rejected row
// of review files of which nothing was loaded.
func reportNotLoaded(g *globals, err error) {
	var nl *workspace.NotLoadedError
	if errors.As(err, &nl) {
		for _, p := range nl.Problems {
			g.reasonf("rejected: %v", p)
		}
	}
}
