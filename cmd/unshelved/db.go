package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"
)

func newCmdDB(g *globals) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "db",
		Short: "Inspect and check the workspace database",
	}
	cmd.AddCommand(newCmdDBInfo(g), newCmdDBCheck(g), newCmdDBVacuum(g))
	return cmd
}

// dbInfoReport is the JSON shape of 'db info'.
type dbInfoReport struct {
	SchemaVersion     int          `json:"schema_version"`
	Trials            int          `json:"trials"`
	TrialsWithResults int          `json:"trials_with_results"`
	Outcomes          int          `json:"outcomes"`
	Measurements      int          `json:"measurements"`
	Analyses          int          `json:"analyses"`
	References        int          `json:"references"`
	Reviews           int          `json:"reviews"`
	Studies           int          `json:"studies"`
	Links             int          `json:"links"`
	Runs              int          `json:"runs"`
	Sources           []sourceJSON `json:"sources"`
}

type sourceJSON struct {
	Path     string `json:"path"`
	SHA256   string `json:"sha256"`
	Size     int64  `json:"size"`
	Format   string `json:"format"`
	Records  int    `json:"records"`
	Rejected int    `json:"rejected"`
	Ingested string `json:"ingested"`
}

// dbOptions are the options of the db subcommands: the global flags.
type dbOptions struct{ g *globals }

func newCmdDBInfo(g *globals) *cobra.Command {
	opts := &dbOptions{g: g}
	return &cobra.Command{
		Use:   "info",
		Short: "Counts, sources with their hashes and times, schema version",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return dbInfoRun(cmd, opts) },
	}
}

func dbInfoRun(cmd *cobra.Command, opts *dbOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	info, err := db.Info(cmd.Context())
	if err != nil {
		return err
	}
	rep := dbInfoReport{SchemaVersion: info.SchemaVersion, Trials: info.Trials, TrialsWithResults: info.TrialsWithResults,
		Outcomes: info.Outcomes, Measurements: info.Measurements, Analyses: info.Analyses, References: info.References,
		Reviews: info.Reviews, Studies: info.Studies, Links: info.Links, Runs: info.Runs, Sources: []sourceJSON{}}
	for _, s := range info.Sources {
		rep.Sources = append(rep.Sources, sourceJSON{Path: s.Path, SHA256: s.SHA256, Size: s.Size, Format: s.Format,
			Records: s.Records, Rejected: s.Rejected, Ingested: s.Finished.UTC().Format("2006-01-02T15:04:05Z")})
	}
	rows := [][]string{
		{"schema version", fmt.Sprint(rep.SchemaVersion)},
		{"trials", fmt.Sprint(rep.Trials)},
		{"trials with results", fmt.Sprint(rep.TrialsWithResults)},
		{"outcome measures", fmt.Sprint(rep.Outcomes)},
		{"measurements", fmt.Sprint(rep.Measurements)},
		{"between-group analyses", fmt.Sprint(rep.Analyses)},
		{"references", fmt.Sprint(rep.References)},
		{"reviews", fmt.Sprint(rep.Reviews)},
		{"published studies", fmt.Sprint(rep.Studies)},
		{"links", fmt.Sprint(rep.Links)},
		{"runs", fmt.Sprint(rep.Runs)},
		{"source files", fmt.Sprint(len(rep.Sources))},
	}
	gr := grid{Columns: []string{"item", "count"}, Table: rows, CSV: rows}
	if len(rep.Sources) > 0 {
		src := titled{Title: "Sources", Header: []string{"path", "sha256", "records", "rejected", "ingested"}}
		for _, s := range rep.Sources {
			src.Rows = append(src.Rows, []string{s.Path, s.SHA256[:min(12, len(s.SHA256))], fmt.Sprint(s.Records), fmt.Sprint(s.Rejected), s.Ingested})
		}
		gr.Extra = append(gr.Extra, src)
	}
	return render(g.IO.Out, g.Format, rep, gr)
}

// dbCheckResult is `db check --format json`.
type dbCheckResult struct {
	OK       bool     `json:"ok"`
	Problems []string `json:"problems"`
}

func newCmdDBCheck(g *globals) *cobra.Command {
	opts := &dbOptions{g: g}
	return &cobra.Command{
		Use:   "check",
		Short: "Check the database's integrity and foreign keys (exit 1 on any problem)",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return dbCheckRun(cmd, opts) },
	}
}

func dbCheckRun(cmd *cobra.Command, opts *dbOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	problems, err := db.Check(cmd.Context())
	if err != nil {
		return err
	}
	if problems == nil {
		problems = []string{}
	}
	if g.Format == "json" {
		// One object, as every --format json output.
		res := dbCheckResult{OK: len(problems) == 0, Problems: problems}
		if err := render(g.IO.Out, g.Format, res, grid{}); err != nil {
			return err
		}
	} else {
		for _, p := range problems {
			fmt.Fprintln(g.IO.Out, p)
		}
		if len(problems) == 0 {
			fmt.Fprintln(g.IO.Out, "ok")
		}
	}
	if len(problems) > 0 {
		return fmt.Errorf("%s found", countOf(len(problems), "problem", "problems"))
	}
	return nil
}

func newCmdDBVacuum(g *globals) *cobra.Command {
	opts := &dbOptions{g: g}
	return &cobra.Command{
		Use:   "vacuum",
		Short: "Rewrite the database without its free pages and make later deletions free their space at once",
		Args:  exactArgs(0),
		RunE:  func(cmd *cobra.Command, args []string) error { return dbVacuumRun(cmd, opts) },
	}
}

func dbVacuumRun(cmd *cobra.Command, opts *dbOptions) error {
	g := opts.g
	db, err := g.openDBToWrite(cmd, false)
	if err != nil {
		return err
	}
	defer db.Close()
	before := fileSize(db.Path())
	if err := db.Vacuum(cmd.Context()); err != nil {
		return err
	}
	after := fileSize(db.Path())
	fmt.Fprintf(g.IO.Out, "%s: %s before, %s after\n", db.Path(), byteSize(before), byteSize(after))
	return nil
}

// fileSize is the size of a database file with its write-ahead log.
func fileSize(path string) int64 {
	var n int64
	for _, suffix := range []string{"", "-wal"} {
		if fi, err := os.Stat(path + suffix); err == nil {
			n += fi.Size()
		}
	}
	return n
}
