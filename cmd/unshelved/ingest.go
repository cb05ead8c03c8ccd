package main

import (
	"context"
	"errors"
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
	"unshelved/ingest"
)

func newCmdIngest(g *globals) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "ingest",
		Short: "Load registry records or published meta-analyses into the workspace",
	}
	cmd.AddCommand(newCmdIngestRegistry(g), newCmdIngestReviews(g))
	return cmd
}

type ingestRegistryOptions struct {
	g         *globals
	Paths     []string
	Strict    bool
	Workers   int
	BatchSize int
	Force     bool
	Delimiter string // of neutral CSV files
}

func newCmdIngestRegistry(g *globals) *cobra.Command {
	opts := &ingestRegistryOptions{g: g}
	cmd := &cobra.Command{
		Use:   "registry PATH...",
		Short: "Load registry study records (API v2 JSON: single study, search page, zip, JSON lines, gzip, folders; neutral CSV; - for stdin)",
		Args:  minArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Paths = args
			if err := checkPathsExist(args); err != nil {
				return err
			}
			if opts.Workers < 0 {
				return flagErrorf("--workers must be 0 (all cores) or more, not %d", opts.Workers)
			}
			if opts.BatchSize < 1 {
				return flagErrorf("--batch must be at least 1, not %d", opts.BatchSize)
			}
			if _, err := parseDelimiter(opts.Delimiter); err != nil {
				return err
			}
			return ingestRegistryRun(cmd, opts)
		},
	}
	cmd.Flags().BoolVar(&opts.Strict, "strict", false, "stop at the first malformed record")
	cmd.Flags().IntVar(&opts.Workers, "workers", 0, "parsing goroutines (0 = one per core)")
	cmd.Flags().IntVar(&opts.BatchSize, "batch", 2000, "trials per database transaction")
	cmd.Flags().BoolVar(&opts.Force, "force", false, "re-read files already ingested with the same content")
	cmd.Flags().StringVar(&opts.Delimiter, "delimiter", ",", `field separator of neutral CSV files: ',', ';', '\t' (tab) or '|'`)
	return cmd
}

func ingestRegistryRun(cmd *cobra.Command, opts *ingestRegistryOptions) error {
	g := opts.g
	db, err := g.createDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	if db.ReadOnly() {
		return readOnlyError(db.Path(), false)
	}
	comma, _ := parseDelimiter(opts.Delimiter) // checked by the command
	sum, err := ingestRegistry(cmd.Context(), g, db, workspace.IngestOptions{Paths: opts.Paths, Strict: opts.Strict,
		Workers: opts.Workers, BatchSize: opts.BatchSize, Force: opts.Force, Delimiter: comma})
	if err != nil {
		return err
	}
	if err := render(g.IO.Out, g.Format, sum, ingestGrid(sum)); err != nil {
		return err
	}
	if sum.Rejected > 0 {
		return &rejectedError{n: sum.Rejected}
	}
	return nil
}

// ingestRegistry runs the workspace's registry ingest with the command's
// input, clock and progress bar, and lists the rejected records on stderr
// (even under --quiet).
func ingestRegistry(ctx context.Context, g *globals, db *workspace.DB, o workspace.IngestOptions) (workspace.IngestSummary, error) {
	bar := newProgress(g, "ingest")
	o.Stdin, o.Progress, o.Now = g.IO.In, bar.update, g.IO.now
	sum, err := workspace.IngestRegistry(ctx, db, o)
	bar.finish()
	listRejected(g, sum)
	return sum, err
}

// listRejected lists an ingest's rejected records on stderr.
func listRejected(g *globals, sum workspace.IngestSummary) {
	for _, e := range sum.RejectedErrors {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %v\n", e)
	}
	if n := sum.Rejected - len(sum.RejectedErrors); n > 0 {
		fmt.Fprintf(g.IO.ErrOut, "rejected: %d more not listed\n", n)
	}
}

func ingestGrid(s workspace.IngestSummary) grid {
	rows := [][]string{
		{"files read", fmt.Sprint(s.Files)},
		{"files skipped (unchanged)", fmt.Sprint(s.SkippedFiles)},
		{"records", fmt.Sprint(s.Records)},
		{"with results", fmt.Sprint(s.WithResults)},
		{"inserted", fmt.Sprint(s.Inserted)},
		{"replaced by a newer version", fmt.Sprint(s.Replaced)},
		{"unchanged", fmt.Sprint(s.Unchanged)},
		{"older versions ignored", fmt.Sprint(s.Older)},
		{"rejected", fmt.Sprint(s.Rejected)},
	}
	for _, k := range sortedKeys(s.RejectedByReason) {
		rows = append(rows, []string{"  rejected: " + k, fmt.Sprint(s.RejectedByReason[k])})
	}
	return grid{Columns: []string{"item", "count"}, Table: rows, CSV: rows}
}

// checkPathsExist fails, naming the path, when an input file or folder
// does not exist or cannot be opened: a runtime error (exit 1), not a
// rejected record.
func checkPathsExist(paths []string) error {
	for _, p := range paths {
		if p == "-" {
			continue
		}
		if _, err := os.Stat(p); err != nil {
			if errors.Is(err, os.ErrNotExist) {
				return fmt.Errorf("%s: no such file or folder", p)
			}
			return fmt.Errorf("%s: %w", p, err)
		}
	}
	return nil
}

// parseDelimiter reads a --delimiter value.
func parseDelimiter(s string) (rune, error) {
	switch s {
	case "":
		return ',', nil
	case `\t`, "tab", "\t":
		return '\t', nil
	}
	if r := []rune(s); len(r) == 1 && ingest.ValidDelimiter(r[0]) {
		return r[0], nil
	}
	return 0, flagErrorf("invalid --delimiter %q: use ',', ';', '\\t' (tab) or '|'", s)
}
