package main

import (
	"bytes"
	"context"
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

type matchOptions struct {
	g     *globals
	Apply string
}

func newCmdMatch(g *globals) *cobra.Command {
	opts := &matchOptions{g: g}
	cmd := &cobra.Command{
		Use:   "match --apply FILE",
		Short: "Link reviews to registry trial outcomes",
		Long: `Link reviews to registry trial outcomes.

--apply FILE loads a links file: CSV with the columns review_id, trial_id,
outcome_index (0-based position in the record's posted outcome measures),
treat_groups, ctrl_groups (the record's group ids for that outcome, several
joined by ';' to be combined into one arm), flip (yes when the registry
measure runs opposite to the review's outcome), unit_from (the registry's
unit when it differs from the review's) and decision (accept or reject).
Every row is checked against the workspace: the review and the trial must
be loaded, and the outcome and groups must exist in the record.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if opts.Apply == "" {
				return flagErrorf("give --apply FILE with the links to load (automatic proposals are not available yet)")
			}
			return matchRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&opts.Apply, "apply", "", "links CSV file to load (- for stdin)")
	return cmd
}

func matchRun(cmd *cobra.Command, opts *matchOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	return applyLinksFile(cmd.Context(), g, db, opts.Apply)
}

// applyLinksFile loads a links CSV into the workspace, rejecting rows that
// do not fit it.
func applyLinksFile(ctx context.Context, g *globals, db *store.DB, path string) error {
	data, src, err := readWhole(g, path)
	if err != nil {
		return err
	}
	links, bad, err := ingest.ReadLinks(bytes.NewReader(data), src)
	if err != nil {
		return fmt.Errorf("read %s: %w", path, err)
	}
	for _, p := range bad {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %v\n", p)
	}
	saved, problems, err := compare.ApplyLinks(ctx, db, links)
	if err != nil {
		return err
	}
	for _, p := range problems {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %s:%s: review %s trial %s outcome %d: %s\n", path, lineOf(p.Link.Source), p.Link.ReviewID, p.Link.TrialID, p.Link.OutcomeIndex, p.Detail)
	}
	g.progressf("loaded %d link(s) from %s", saved, path)
	if n := len(bad) + len(problems); n > 0 {
		return &rejectedError{n: n}
	}
	return nil
}
