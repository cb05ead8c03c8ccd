package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/testdata/demo"
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
	ctx := cmd.Context()
	g := opts.g
	input := filepath.Join(opts.Out, "input")
	if err := writeDemoFiles(input); err != nil {
		return err
	}
	dbPath := filepath.Join(opts.Out, "unshelved.db")
	for _, suffix := range []string{"", "-wal", "-shm"} {
		if err := os.Remove(dbPath + suffix); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return fmt.Errorf("remove old demo database: %w", err)
		}
	}
	g.DBPath = dbPath
	db, err := g.createDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()

	quiet := *g
	quiet.Quiet = true
	sum, err := loadRegistry(ctx, &quiet, db, &ingestRegistryOptions{Paths: []string{filepath.Join(input, "registry")}, BatchSize: 2000})
	if err != nil {
		return fmt.Errorf("demo registry: %w", err)
	}
	if sum.Rejected > 0 {
		return fmt.Errorf("demo registry: %s", countOf(sum.Rejected, "record rejected", "records rejected"))
	}
	reviews, studies, err := readReviewFiles(g, []string{filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")}, ',')
	if err != nil {
		return fmt.Errorf("demo reviews: %w", err)
	}
	if err := saveReviews(ctx, &quiet, db, reviews, studies); err != nil {
		return fmt.Errorf("demo reviews: %w", err)
	}
	// The links are found automatically and accepted above the default
	// score, as 'match --links FILE --accept-above 0.7' would; a person
	// would read the proposals file and confirm them. The hand-made links
	// of the scenario (input/links.csv) give the same audit.
	proposals := filepath.Join(opts.Out, "links-proposed.csv")
	fmt.Fprintln(g.IO.Out, "Registry trials found for each review (automatic matching):")
	if err := proposeLinks(ctx, &quiet, db, &matchOptions{g: &quiet, Links: proposals, AcceptAbove: compare.DefaultAcceptAbove}); err != nil {
		return fmt.Errorf("demo matching: %w", err)
	}
	fmt.Fprintln(g.IO.Out)
	ropts := &reportOptions{g: g, Out: filepath.Join(opts.Out, "report"), Audit: defaultAuditOptions(g)}
	index, audits, _, err := writeReport(cmd, db, ropts)
	if err != nil {
		return err
	}
	g.progressf("demo: %d registry records, %d reviews with %d published studies", sum.Records, len(reviews), len(studies))
	if err := render(g.IO.Out, g.Format, audits, auditGrid(audits, ropts.Audit.Level)); err != nil {
		return err
	}
	g.progressf("demo: input files in %s", input)
	g.progressf("demo: workspace database %s (try: unshelved --db %s audit --format json)", dbPath, dbPath)
	g.progressf("demo: proposed links (accepted above %.1f; check them as a person would) %s", compare.DefaultAcceptAbove, proposals)
	g.progressf("demo: report %s", index)
	return nil
}

// writeDemoFiles copies the embedded scenario to dir.
func writeDemoFiles(dir string) error {
	return fs.WalkDir(demo.FS, ".", func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		target := filepath.Join(dir, filepath.FromSlash(path))
		if d.IsDir() {
			return os.MkdirAll(target, 0o755)
		}
		data, err := demo.FS.ReadFile(path)
		if err != nil {
			return err
		}
		if err := os.WriteFile(target, data, 0o644); err != nil {
			return fmt.Errorf("write demo file: %w", err)
		}
		return nil
	})
}
