package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
)

// showRun re-prints stored run id; kind, when not empty, is the kind the
// caller expects.
func showRun(cmd *cobra.Command, g *globals, id int64, kind string, indent bool) error {
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	ctx := cmd.Context()
	run, err := workspace.LoadRun(ctx, db, id, kind)
	if err != nil {
		return err
	}
	if run.Status != workspace.RunComplete {
		g.progressf("run %d is %s: it holds only the results stored before it stopped", id, run.Status)
	}
	switch run.Kind {
	case "audit":
		level, err := workspace.AuditRunLevel(run)
		if err != nil {
			return err
		}
		out := newAuditOutput(g, level, indent)
		if err := workspace.EachStoredAudit(ctx, db, id, out.wantsAudit(), out.add); err != nil {
			return err
		}
		return out.close()
	case "summary":
		js, err := workspace.StoredSummaryText(ctx, db, run)
		if err != nil {
			return err
		}
		return showSummaryText(g, run, js)
	case "scan":
		return showScanRun(ctx, g, db, run)
	}
	return fmt.Errorf("run %d is a %s run, which 'runs show' cannot print", id, run.Kind)
}

func runsDiffRun(cmd *cobra.Command, opts *runsOptions, first, second int64) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	out := newDiffOutput(g, opts.Indent, first, second)
	if err := workspace.DiffRuns(cmd.Context(), db, first, second, out.add); err != nil {
		return err
	}
	return out.close()
}
