package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/compare/workspace"
)

type demoOptions struct {
	g   *globals
	Out string
}

func newCmdDemo(g *globals) *cobra.Command {
	opts := &demoOptions{g: g}
	cmd := &cobra.Command{
		Use:   "demo",
		Short: "Run the whole job on the embedded, invented demo scenario",
		Long: `Build a workspace from the embedded demo scenario (three invented reviews and
about thirty invented registry records whose ids cannot be real), find the
registry trials and outcomes that fit each review automatically (accepting
proposals scoring above 0.7), print the audit table and write the HTML
report.

The scenario's input files are written to DIR/input, the workspace database
to DIR/unshelved.db, the report to DIR/report/index.html (DIR is unshelved-demo in the current folder unless
--out says otherwise). An earlier demo database in DIR is replaced; nothing
else is touched. The --db flag does not apply.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			return demoRun(cmd, opts)
		},
	}
	cmd.Flags().StringVar(&opts.Out, "out", "unshelved-demo", "folder for the demo's files")
	return cmd
}

func demoRun(cmd *cobra.Command, opts *demoOptions) error {
	g := opts.g
	a := defaultAuditOptions(g)
	res, err := workspace.Demo(cmd.Context(), workspace.DemoOptions{Dir: opts.Out, Audit: a.compareOptions(),
		Run: workspace.RunOptions{Workers: a.Workers}, Version: version, Now: g.IO.now})
	for _, ra := range res.Report.Audits {
		noteRegistrySearch(g, ra)
	}
	for _, e := range res.Report.Failed {
		g.reasonf("report: left out: %v", e)
	}
	if err != nil {
		return err
	}
	fmt.Fprintln(g.IO.Out, "Registry trials found for each review (automatic matching):")
	if err := render(g.IO.Out, g.Format, res.Match, matchGrid(res.Match)); err != nil {
		return err
	}
	fmt.Fprintln(g.IO.Out)
	g.progressf("demo: %d registry records, %d reviews with %d published studies", res.Ingest.Records, res.Reviews.Reviews, res.Reviews.Studies)
	if err := render(g.IO.Out, g.Format, res.Report.Audits, auditGrid(res.Report.Audits, a.Level)); err != nil {
		return err
	}
	g.progressf("demo: input files in %s", res.Input)
	g.progressf("demo: workspace database %s (try: unshelved --db %s audit --format json)", res.DBPath, res.DBPath)
	g.progressf("demo: proposed links (accepted above %.1f; check them as a person would) %s", compare.DefaultAcceptAbove, res.Proposals)
	g.progressf("demo: report %s", res.Report.Index)
	return nil
}
