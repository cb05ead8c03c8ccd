package main

import (
	"fmt"
	"strconv"

	"github.com/spf13/cobra"
)

type runsOptions struct {
	g      *globals
	Indent bool
	Keep   int
}

func newCmdRuns(g *globals) *cobra.Command {
	opts := &runsOptions{g: g}
	cmd := &cobra.Command{
		Use:   "runs",
		Short: "List, re-show, compare and remove the stored audit and summary runs",
		Long: `Without a subcommand, list the stored runs: id, kind, status, start and
finish times, tool version, seed, the number of reviews stored and their size
in bytes.

Every audit, report and summary stores a run unless --no-store is given.
'runs show N' re-prints a stored run from what was stored, without
recomputing, in any --format; 'runs diff N M' lists per review what changed
between two audit runs; 'runs delete' and 'runs prune' remove runs and give
their space back to the file system.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runsListRun(cmd, opts) },
	}
	cmd.PersistentFlags().BoolVar(&opts.Indent, "indent", false, "indent --format json even when stdout is not a terminal")
	show := &cobra.Command{
		Use:   "show N",
		Short: "Re-print a stored audit or summary run exactly as it was printed, in any --format",
		Args:  exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			id, err := runID(args[0])
			if err != nil {
				return err
			}
			return showRun(cmd, g, id, "", opts.Indent)
		},
	}
	diff := &cobra.Command{
		Use:   "diff N M",
		Short: "Per review, the estimates and flags that differ between audit runs N and M",
		Long: `Compare two stored audit runs review by review: every number, flag and label
of each review's result that differs (lists such as the studies, the funnel
points and the warnings are not compared), and the reviews found in one run
only. Differences are M minus N.`,
		Args: exactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			a, err := runID(args[0])
			if err != nil {
				return err
			}
			b, err := runID(args[1])
			if err != nil {
				return err
			}
			return runsDiffRun(cmd, opts, a, b)
		},
	}
	del := &cobra.Command{
		Use:   "delete N...",
		Short: "Delete stored runs and give their space back",
		Args:  minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			var ids []int64
			for _, a := range args {
				id, err := runID(a)
				if err != nil {
					return err
				}
				ids = append(ids, id)
			}
			return runsDeleteRun(cmd, opts, ids)
		},
	}
	prune := &cobra.Command{
		Use:   "prune --keep K",
		Short: "Delete all but the K most recent runs of each kind",
		Args:  exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if !cmd.Flags().Changed("keep") || opts.Keep < 0 {
				return flagErrorf("--keep K is required: the number of most recent runs of each kind to keep (0 or more)")
			}
			return runsPruneRun(cmd, opts)
		},
	}
	prune.Flags().IntVar(&opts.Keep, "keep", 0, "number of most recent runs of each kind to keep")
	cmd.AddCommand(show, diff, del, prune)
	return cmd
}

func runID(s string) (int64, error) {
	id, err := strconv.ParseInt(s, 10, 64)
	if err != nil || id <= 0 {
		return 0, flagErrorf("run id %q is not a positive whole number; list the runs with 'unshelved runs'", s)
	}
	return id, nil
}

func runsListRun(cmd *cobra.Command, opts *runsOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	runs, err := db.RunSummaries(cmd.Context())
	if err != nil {
		return err
	}
	out := []runJSON{}
	gr := grid{Columns: []string{"id", "kind", "status", "started", "finished", "version", "seed", "reviews", "size"}}
	var total int64
	for _, r := range runs {
		j := runJSON{ID: r.ID, Kind: r.Kind, Status: r.Status, Started: timeCell(r.Started), Finished: timeCell(r.Finished),
			Version: r.Version, Seed: r.Seed, Reviews: r.Reviews, Size: r.Bytes, Options: r.Options}
		out = append(out, j)
		total += r.Bytes
		row := []string{fmt.Sprint(j.ID), j.Kind, j.Status, j.Started, j.Finished, j.Version, fmt.Sprint(j.Seed), fmt.Sprint(j.Reviews)}
		gr.CSV = append(gr.CSV, append(row, fmt.Sprint(j.Size)))
		gr.Table = append(gr.Table, append(row, byteSize(j.Size)))
	}
	gr.Notes = []string{fmt.Sprintf("%s, %s of stored results. Re-print one with 'unshelved runs show N'.", countOf(len(runs), "run", "runs"), byteSize(total))}
	return render(g.IO.Out, g.Format, out, gr)
}
