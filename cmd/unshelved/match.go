package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/compare/workspace"
	"unshelved/ingest/fetch"
)

type matchOptions struct {
	g           *globals
	Apply       string
	Links       string
	Reviews     []string
	AcceptAbove float64
	HighestDose bool
	Fetch       bool
	BaseURL     string
	Delimiter   string // of the --apply file
}

func newCmdMatch(g *globals) *cobra.Command {
	opts := &matchOptions{g: g}
	cmd := &cobra.Command{
		Use:   "match (--links FILE [--review ID] [--accept-above SCORE] | --apply FILE)",
		Short: "Link reviews to registry trial outcomes",
		Long: `Link reviews to registry trial outcomes.

--links FILE proposes, for each review (or those named by --review), the
registry trials that fit it (condition, intervention, a comparator arm of
the review's kind, randomised, completed before the search date) and,
within each, the posted outcome measures and groups that fit the review's
outcome, unit and timepoint. Every candidate trial is classed included
(already in the review: by registry id, or its results read the same as a
study that cites none, on effect, SE and group sizes), possibly-included
(a near match to such a study: a person decides), missed-publication
(results and a RESULT reference), registry-only (results, no RESULT
reference, and clearly none of the review's studies) or no-results. The proposals go to the
workspace and to FILE, a links CSV with one row per candidate outcome, best
first within each trial and trials by their best score. Set the decision
column to accept or reject and load the file with --apply. Running again
keeps the decisions already made.

--accept-above SCORE accepts, for each missed-publication or registry-only
trial, the best outcome when its score (0 to 1) is above SCORE and it
converts to the review's measure; it is marked auto-accepted. It never
accepts a possibly-included trial. Failed
criteria cap a score at 0.5 or less, so 0.7 is a reasonable choice.

--apply FILE loads a links file: CSV with the columns review_id, trial_id,
outcome_index (0-based position in the record's posted outcome measures),
treat_groups, ctrl_groups (the record's group ids for that outcome, several
joined by ';' to be combined into one arm), flip (yes when the registry
measure runs opposite to the review's outcome), unit_from (the registry's
unit when it differs from the review's) and decision (accept, reject, or
accept-duplicate to add a trial that the audit would otherwise leave out
because its results match a published study of the review).
Every row is checked against the workspace: the review and the trial must
be loaded, and the outcome and groups must exist in the record.

--fetch first looks for reviews with no candidate trial in the workspace
and fetches, for each, the registry records matching any of its conditions
and any of its interventions from the registry's API (as the fetch command
does, into registry/ beside the workspace), ingests them, then matches.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			switch {
			case opts.Apply != "" && opts.Links != "":
				return flagErrorf("give either --links FILE or --apply FILE, not both")
			case opts.Apply == "" && opts.Links == "":
				return flagErrorf("give --links FILE to write proposals, or --apply FILE to load decisions")
			}
			if cmd.Flags().Changed("accept-above") && !(opts.AcceptAbove > 0 && opts.AcceptAbove < 1) {
				return flagErrorf("invalid --accept-above %v: give a score between 0 and 1", opts.AcceptAbove)
			}
			return matchRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&opts.Apply, "apply", "", "links CSV file to load (- for stdin)")
	cmd.Flags().StringVar(&opts.Links, "links", "", "links CSV file to write the proposals to (- for stdout)")
	cmd.Flags().StringSliceVar(&opts.Reviews, "review", nil, "review id to match (repeat or join with commas; default all)")
	cmd.Flags().Float64Var(&opts.AcceptAbove, "accept-above", 0, "accept automatically the best outcome per trial scoring above this")
	cmd.Flags().BoolVar(&opts.HighestDose, "highest-dose", false, "keep only the highest dose instead of combining experimental groups")
	cmd.Flags().BoolVar(&opts.Fetch, "fetch", false, "fetch registry records for reviews that have no candidate trial in the workspace (see fetch)")
	cmd.Flags().StringVar(&opts.BaseURL, "base-url", fetch.DefaultBaseURL, "API base URL for --fetch")
	cmd.Flags().StringVar(&opts.Delimiter, "delimiter", ",", `field separator of the --apply file: ',', ';', '\t' (tab) or '|'`)
	return cmd
}

func matchRun(cmd *cobra.Command, opts *matchOptions) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	ctx := cmd.Context()
	if opts.Apply != "" {
		comma, err := parseDelimiter(opts.Delimiter)
		if err != nil {
			return err
		}
		return applyLinksFile(ctx, g, db, opts.Apply, comma)
	}
	if opts.Fetch {
		fo := &fetchOptions{g: g, Rate: fetch.DefaultRate, PageSize: fetch.MaxPageSize, BaseURL: opts.BaseURL,
			Retries: fetch.DefaultMaxRetries, ReadTimeout: fetch.DefaultReadTimeout}
		err := workspace.FetchForEmptyReviews(ctx, db, compare.MatchOptions{ReviewIDs: opts.Reviews, HighestDose: opts.HighestDose},
			workspace.RegistryDir(g.dbPath(cmd)), fetchWorkflowOptions(g, fo))
		if err != nil {
			return err
		}
	}
	return proposeLinks(ctx, g, db, opts)
}

// proposeLinks runs automatic matching, writes the links file and prints
// the per-review summary.
func proposeLinks(ctx context.Context, g *globals, db *workspace.DB, opts *matchOptions) error {
	var buf bytes.Buffer
	rep, err := workspace.ProposeLinks(ctx, db, compare.MatchOptions{
		ReviewIDs:   opts.Reviews,
		AcceptAbove: opts.AcceptAbove,
		HighestDose: opts.HighestDose,
		Progress: func(id string, done, total int) {
			g.progressf("matched %s (%d/%d)", id, done, total)
		},
	}, &buf)
	if err != nil {
		return err
	}
	if opts.Links == "-" {
		_, err = g.IO.Out.Write(buf.Bytes())
		return err
	}
	if err := os.WriteFile(opts.Links, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("write links file: %w", err)
	}
	g.progressf("searched %s; wrote %s", countOf(rep.TrialsIndexed, "registry trial", "registry trials"), opts.Links)
	return render(g.IO.Out, g.Format, rep, matchGrid(rep))
}

// matchGrid is the per-review summary: candidates per class, proposed
// outcomes and automatic acceptances.
func matchGrid(rep workspace.MatchReport) grid {
	cols := []string{"review_id", "examined", "excluded", "included", "possibly_included", "missed_publication", "registry_only",
		"no_results", "no_results_enrollment", "proposed_outcomes", "matched", "converted", "auto_accepted"}
	var rows [][]string
	for _, rp := range rep.Reviews {
		f := rp.Flow
		rows = append(rows, []string{rp.ReviewID, strconv.Itoa(f.Examined), strconv.Itoa(f.Excluded),
			strconv.Itoa(f.Included), strconv.Itoa(f.PossiblyIncluded), strconv.Itoa(f.MissedPublication), strconv.Itoa(f.RegistryOnly),
			strconv.Itoa(f.NoResults), strconv.Itoa(f.NoResultsEnrollment), strconv.Itoa(f.ProposedOutcomes),
			strconv.Itoa(f.Matched), strconv.Itoa(f.Converted), strconv.Itoa(f.AutoAccepted)})
	}
	return grid{
		Header: []string{"review", "examined", "excluded", "included", "possibly incl.", "missed pub.", "registry-only",
			"no results", "no-results n", "outcomes", "matched", "converted", "auto-accepted"},
		Table: rows, Columns: cols, CSV: rows,
		Notes: []string{fmt.Sprintf("matched: best outcome scores above %g; examined: trials found by the condition and intervention search", compare.DefaultAcceptAbove)},
	}
}

// applyLinksFile loads a links CSV into the workspace, rejecting rows that
// do not fit it.
func applyLinksFile(ctx context.Context, g *globals, db *workspace.DB, path string, comma rune) error {
	res, err := workspace.ApplyLinksFile(ctx, db, path, comma, g.IO.In)
	for _, p := range res.Rejected {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %v\n", p)
	}
	if err != nil {
		return err
	}
	for _, p := range res.Problems {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %s:%s: review %s trial %s outcome %d: %s\n", path,
			strings.TrimPrefix(p.Link.Source.Position, "line "), p.Link.ReviewID, p.Link.TrialID, p.Link.OutcomeIndex, p.Detail)
	}
	g.progressf("loaded %s from %s", countOf(res.Saved, "link", "links"), path)
	if n := len(res.Rejected) + len(res.Problems); n > 0 {
		return &rejectedError{n: n}
	}
	return nil
}
