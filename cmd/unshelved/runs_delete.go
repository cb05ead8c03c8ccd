package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
)

func runsDeleteRun(cmd *cobra.Command, opts *runsOptions, ids []int64) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	return deleteRuns(cmd, g, db, ids)
}

func deleteRuns(cmd *cobra.Command, g *globals, db *workspace.DB, ids []int64) error {
	if len(ids) == 0 {
		g.progressf("runs: nothing to delete")
		return nil
	}
	reclaimed, err := workspace.DeleteRuns(cmd.Context(), db, ids)
	if err != nil {
		return err
	}
	names := make([]string, len(ids))
	for i, id := range ids {
		names[i] = fmt.Sprint(id)
	}
	msg := "their space is back to the file system"
	if !reclaimed {
		msg = "run 'unshelved db vacuum' once to give their space back to the file system (later deletions then do it at once)"
	}
	what := "runs"
	if len(names) == 1 {
		what = "run"
	}
	fmt.Fprintf(g.IO.Out, "deleted %s %s; %s\n", what, strings.Join(names, ", "), msg)
	return nil
}

func runsPruneRun(cmd *cobra.Command, opts *runsOptions) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	drop, err := workspace.RunsToPrune(cmd.Context(), db, opts.Keep)
	if err != nil {
		return err
	}
	return deleteRuns(cmd, g, db, drop)
}
