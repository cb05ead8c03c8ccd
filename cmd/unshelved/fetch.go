package main

import (
	"bufio"
	"fmt"
	"os"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"unshelved/compare/workspace"
	"unshelved/ingest"
	"unshelved/ingest/fetch"
)

type fetchOptions struct {
	g           *globals
	Query       fetch.Query
	IDs         []string
	IDsFile     string
	Out         string
	NoIngest    bool
	Rate        float64
	PageSize    int
	BaseURL     string
	Retries     int
	ReadTimeout time.Duration
	Restart     bool
}

func newCmdFetch(g *globals) *cobra.Command {
	opts := &fetchOptions{g: g}
	cmd := &cobra.Command{
		Use:   "fetch",
		Short: "Download registry records from the registry's public API (resumable), then ingest them",
		Long: `Query the registry's public search API (version 2) for the studies that
match the selection, page by page (up to 1000 studies a page), and store
each page as gzip-compressed JSON lines in --out (default: a registry/
folder beside the workspace database); then ingest them unless --no-ingest.

Each page is written to a temporary file and renamed when complete, and a
small state file in the folder records the completed pages: a run that is
interrupted resumes from the last completed page when run again with the
same selection (--restart starts over). Requests are paced to at most
--rate per second; answers 429 and 5xx, timeouts, cut-off bodies and
malformed pages are retried with exponential backoff and jitter, honouring
Retry-After, at most --retries times a page. Nothing is ingested unless
every page was fetched whole.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Query.IDs = append(opts.Query.IDs, opts.IDs...)
			if opts.IDsFile != "" {
				ids, err := readIDsFile(opts.IDsFile)
				if err != nil {
					return err
				}
				opts.Query.IDs = append(opts.Query.IDs, ids...)
			}
			if err := opts.Query.Validate(); err != nil {
				return flagErrorf("%v", err)
			}
			if opts.Rate <= 0 {
				return flagErrorf("invalid --rate %v: want a positive number of requests per second", opts.Rate)
			}
			if opts.PageSize < 1 || opts.PageSize > fetch.MaxPageSize {
				return flagErrorf("invalid --page-size %d: want 1 to %d", opts.PageSize, fetch.MaxPageSize)
			}
			if opts.Retries < 0 {
				return flagErrorf("invalid --retries %d: want 0 or more", opts.Retries)
			}
			return fetchRun(cmd, opts)
		},
	}
	f := cmd.Flags()
	f.StringVar(&opts.Query.Condition, "condition", "", "condition or disease (the API's condition search)")
	f.StringVar(&opts.Query.Intervention, "intervention", "", "intervention or treatment (the API's intervention search)")
	f.StringVar(&opts.Query.Sponsor, "sponsor", "", "lead sponsor or collaborator (the API's sponsor search)")
	f.StringVar(&opts.Query.Term, "term", "", "other terms (the API's general search)")
	f.StringArrayVar(&opts.IDs, "id", nil, "NCT number to fetch (repeatable)")
	f.StringVar(&opts.IDsFile, "ids", "", "file of NCT numbers, one a line (or separated by commas); # starts a comment")
	f.BoolVar(&opts.Query.WithResults, "with-results", false, "only studies with results posted")
	f.StringVar(&opts.Query.UpdatedSince, "updated-since", "", "only studies updated on or after this date (yyyy-MM-dd), for refreshes")
	f.StringVar(&opts.Out, "out", "", "folder for the page files and the state file (default: registry/ beside the workspace)")
	f.BoolVar(&opts.NoIngest, "no-ingest", false, "only download; do not ingest")
	f.Float64Var(&opts.Rate, "rate", fetch.DefaultRate, "at most this many requests per second")
	f.IntVar(&opts.PageSize, "page-size", fetch.MaxPageSize, "studies per page (at most 1000)")
	f.StringVar(&opts.BaseURL, "base-url", fetch.DefaultBaseURL, "API base URL (a mirror, or a local server in tests)")
	f.IntVar(&opts.Retries, "retries", fetch.DefaultMaxRetries, "retries per page after 429, 5xx, timeouts or damaged pages")
	f.DurationVar(&opts.ReadTimeout, "read-timeout", fetch.DefaultReadTimeout, "give up on an answer that sends nothing for this long (it is retried)")
	f.BoolVar(&opts.Restart, "restart", false, "discard this selection's earlier pages and state and start over")
	return cmd
}

// readIDsFile reads NCT numbers, one a line or separated by commas or
// spaces; '#' starts a comment.
func readIDsFile(path string) ([]string, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("read --ids file: %w", err)
	}
	defer f.Close()
	var ids []string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line, _, _ := strings.Cut(sc.Text(), "#")
		for _, id := range strings.FieldsFunc(line, func(r rune) bool { return r == ',' || r == ' ' || r == '\t' || r == ';' }) {
			ids = append(ids, strings.ToUpper(id))
		}
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("read --ids file %s: %w", path, err)
	}
	if len(ids) == 0 {
		return nil, flagErrorf("--ids file %s names no NCT number", path)
	}
	return ids, nil
}

func fetchRun(cmd *cobra.Command, opts *fetchOptions) error {
	g := opts.g
	dir := opts.Out
	if dir == "" {
		dir = workspace.RegistryDir(g.dbPath(cmd))
	}
	rep, err := fetchAndIngest(cmd, g, opts.Query, dir, opts)
	if err != nil {
		return err
	}
	if err := render(g.IO.Out, g.Format, rep, fetchGrid(rep)); err != nil {
		return err
	}
	if rep.Ingest != nil && rep.Ingest.Rejected > 0 {
		return &rejectedError{n: rep.Ingest.Rejected}
	}
	return nil
}

// fetchAndIngest downloads the query's pages into dir and ingests them
// (unless opts.NoIngest) into db, or into the workspace it creates when db
// is nil; match --fetch uses it too. Nothing is ingested unless every page
// of every selection was fetched.
func fetchAndIngest(cmd *cobra.Command, g *globals, q fetch.Query, dir string, opts *fetchOptions) (workspace.FetchReport, error) {
	o := fetchWorkflowOptions(g, opts)
	o.Open = func() (*workspace.DB, error) {
		db, err := g.createDB(cmd) // fetch ingests, so it may create the workspace as ingest does
		if err == nil && db.ReadOnly() {
			db.Close()
			return nil, readOnlyError(db.Path(), false)
		}
		return db, err
	}
	return workspace.FetchAndIngest(cmd.Context(), q, dir, o)
}

// fetchWorkflowOptions builds the workspace's fetch options from the
// flags, with a progress bar for the download and one for the ingest.
func fetchWorkflowOptions(g *globals, opts *fetchOptions) workspace.FetchOptions {
	fo := fetch.Options{BaseURL: opts.BaseURL, PageSize: opts.PageSize, UserAgent: "unshelved/" + version + " (registry fetch)",
		Rate: opts.Rate, MaxRetries: opts.Retries, ReadTimeout: opts.ReadTimeout, Restart: opts.Restart}
	if opts.Retries == 0 {
		fo.MaxRetries = -1
	}
	bar := newFetchProgress(g)
	fo.Progress = bar.update
	ingestBar := newProgress(g, "ingest")
	return workspace.FetchOptions{Fetch: fo, NoIngest: opts.NoIngest, Logf: g.progressf,
		Ingest: workspace.IngestOptions{Stdin: g.IO.In, Now: g.IO.now, Progress: func(ev ingest.ProgressEvent) {
			bar.finish()
			ingestBar.update(ev)
		}},
		Done: func(sum *workspace.IngestSummary) {
			bar.finish()
			ingestBar.finish()
			if sum != nil {
				listRejected(g, *sum)
			}
		}}
}
