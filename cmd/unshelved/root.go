package main

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"os/signal"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
)

// defaultDBPath is used when neither --db nor UNSHELVED_DB is given.
const defaultDBPath = "unshelved.db"

// globals are the flags every command shares.
type globals struct {
	IO     *IO
	DBPath string
	Format string
	Quiet  bool
}

// dbPath resolves --db, then UNSHELVED_DB, then the default.
func (g *globals) dbPath(cmd *cobra.Command) string {
	if cmd.Flags().Changed("db") || g.IO.Getenv == nil {
		return g.DBPath
	}
	if p := g.IO.Getenv("UNSHELVED_DB"); p != "" {
		return p
	}
	return g.DBPath
}

// openDB opens the existing workspace database named by the global flags.
// A missing file is an error: only ingest (and demo, in its own folder)
// create a workspace, so a mistyped --db never reads as an empty one.
func (g *globals) openDB(cmd *cobra.Command) (*workspace.DB, error) {
	path := g.dbPath(cmd)
	if _, err := os.Stat(path); errors.Is(err, fs.ErrNotExist) {
		return nil, fmt.Errorf("workspace %s does not exist: check --db (or UNSHELVED_DB), or create it with 'unshelved ingest'", path)
	}
	return g.createDB(cmd)
}

// createDB opens the workspace database, creating it when missing.
func (g *globals) createDB(cmd *cobra.Command) (*workspace.DB, error) {
	path := g.dbPath(cmd)
	db, err := workspace.OpenDB(cmd.Context(), path)
	if err != nil {
		return nil, fmt.Errorf("open database %s: %w", path, err)
	}
	return db, nil
}

// reasonf writes why something was rejected or left out to stderr, even
// under --quiet: quiet silences progress, never reasons.
func (g *globals) reasonf(format string, args ...any) {
	fmt.Fprintf(g.IO.ErrOut, format+"\n", args...)
}

// progressf writes a status line to stderr unless --quiet.
func (g *globals) progressf(format string, args ...any) {
	if g.Quiet {
		return
	}
	fmt.Fprintf(g.IO.ErrOut, format+"\n", args...)
}

var formats = []string{"table", "json", "jsonl", "csv"}

// openDBToWrite opens the workspace for a command that writes to it. A
// read-only workspace is an error naming the file; noStore, when the
// command has a --no-store flag, is suggested.
func (g *globals) openDBToWrite(cmd *cobra.Command, hasNoStore bool) (*workspace.DB, error) {
	db, err := g.openDB(cmd)
	if err != nil {
		return nil, err
	}
	if db.ReadOnly() {
		db.Close()
		return nil, readOnlyError(db.Path(), hasNoStore)
	}
	return db, nil
}

// readOnlyError explains a read-only workspace to someone whose command
// would write to it.
func readOnlyError(path string, hasNoStore bool) error {
	if hasNoStore {
		return fmt.Errorf("workspace %s is read-only, so this run cannot be stored: add --no-store to run without storing it, or make the file and its folder writable", path)
	}
	return fmt.Errorf("workspace %s is read-only: this command writes to it; make the file and its folder writable", path)
}

func newRootCmd(io *IO) (*cobra.Command, *globals) {
	g := &globals{IO: io}
	root := &cobra.Command{
		Use:   "unshelved",
		Short: "Audit meta-analyses against registry results of unpublished trials",
		Long: `unshelved loads trial-registry result records and published meta-analyses of
continuous outcomes into a local SQLite workspace, links each review to the
registered trials whose results it lacks, converts their posted results into
the review's effect measure, re-pools, and reports how much the pooled
estimate shifts.`,
		SilenceErrors: true,
		SilenceUsage:  true,
		Version:       version,
		PersistentPreRunE: func(cmd *cobra.Command, args []string) error {
			for _, f := range formats {
				if g.Format == f {
					return nil
				}
			}
			return flagErrorf("invalid --format %q: valid values are %s", g.Format, strings.Join(formats, ", "))
		},
	}
	root.SetVersionTemplate("unshelved {{.Version}}\n")
	root.SetOut(io.Out)
	root.SetErr(io.ErrOut)
	root.SetIn(io.In)
	root.SetFlagErrorFunc(func(cmd *cobra.Command, err error) error {
		return &flagError{err: err}
	})
	pf := root.PersistentFlags()
	pf.StringVar(&g.DBPath, "db", defaultDBPath, "workspace database file (or set UNSHELVED_DB)")
	pf.StringVar(&g.Format, "format", "table", "output format: table, json, jsonl (one compact JSON value per line) or csv")
	pf.BoolVarP(&g.Quiet, "quiet", "q", false, "no progress or status messages on stderr")

	root.AddCommand(
		newCmdIngest(g),
		newCmdMatch(g),
		newCmdAudit(g),
		newCmdPool(g),
		newCmdDemo(g),
		newCmdDB(g),
		newCmdReport(g),
		newCmdSummary(g), newCmdTrials(g), newCmdFetch(g),
		newCmdVersion(g), newCmdScan(g),
		newCmdRuns(g),
	)
	return root, g
}

// Main runs the command line and returns the process exit code.
func Main(args []string, io *IO) int {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	return run(ctx, args, io)
}

func run(ctx context.Context, args []string, io *IO) int {
	root, _ := newRootCmd(io)
	root.SetArgs(args)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return exitOK
	}
	code := exitCode(err)
	fmt.Fprintf(io.ErrOut, "unshelved: %v\n", err)
	var fe *flagError
	if errors.As(err, &fe) {
		fmt.Fprintln(io.ErrOut, "run 'unshelved --help' for usage")
	}
	if code == exitInterrupted {
		fmt.Fprintln(io.ErrOut, "interrupted")
	}
	return code
}

// exactArgs wraps cobra's argument checks so they count as usage errors.
func exactArgs(n int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if err := cobra.ExactArgs(n)(cmd, args); err != nil {
			return &flagError{err: err}
		}
		return nil
	}
}

func minArgs(n int) cobra.PositionalArgs {
	return func(cmd *cobra.Command, args []string) error {
		if err := cobra.MinimumNArgs(n)(cmd, args); err != nil {
			return &flagError{err: err}
		}
		return nil
	}
}
