package workspace

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"unshelved/ingest/fetch"
	"unshelved/store"
)

// FetchReport is the result of FetchAndIngest: the download and, unless
// nothing was ingested, the ingest summary.
type FetchReport struct {
	Dir        string         `json:"dir"`
	StateFiles []string       `json:"state_files"`
	Pages      int            `json:"pages"`
	NewPages   int            `json:"new_pages"`
	Studies    int            `json:"studies"`
	Total      *int           `json:"total_count"`
	Resumed    bool           `json:"resumed"`
	Complete   bool           `json:"already_complete"`
	Requests   int            `json:"requests"`
	Retries    int            `json:"retries"`
	Ingest     *IngestSummary `json:"ingest"`
}

// FetchOptions control FetchAndIngest.
type FetchOptions struct {
	Fetch    fetch.Options
	NoIngest bool          // only download
	Ingest   IngestOptions // for the ingest step; its Paths are the fetched pages
	// DB is the workspace to ingest into, left open; when nil, Open opens
	// (or creates) it, only when there are pages to ingest, and it is
	// closed after.
	DB   *store.DB
	Open func() (*store.DB, error)
	// Done, when set, is called at the end of each FetchAndIngest with
	// the ingest summary (nil when nothing was ingested).
	Done func(*IngestSummary)
	// Logf, when set, receives status lines (resumes, id batches, what
	// was kept after a failure).
	Logf func(format string, args ...any)
}

// MaxIDsPerQuery bounds the NCT numbers sent in one filter.ids parameter,
// keeping request URLs short (about 12 characters each); longer lists are
// fetched as several selections.
const MaxIDsPerQuery = 200

// splitIDs splits a query with many ids into queries of at most
// MaxIDsPerQuery ids each, in sorted order so that a re-run makes the
// same selections.
func splitIDs(q fetch.Query) []fetch.Query {
	if len(q.IDs) <= MaxIDsPerQuery {
		return []fetch.Query{q}
	}
	ids := append([]string(nil), q.IDs...)
	sort.Strings(ids)
	ids = slices.Compact(ids)
	var out []fetch.Query
	for len(ids) > 0 {
		n := min(MaxIDsPerQuery, len(ids))
		c := q
		c.IDs = ids[:n]
		out = append(out, c)
		ids = ids[n:]
	}
	return out
}

func plural(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// FetchAndIngest downloads the query's pages from the registry's API into
// dir (resumable; long id lists in several selections) and ingests them
// unless o.NoIngest. Nothing is ingested unless every page of every
// selection was fetched.
func FetchAndIngest(ctx context.Context, q fetch.Query, dir string, o FetchOptions) (FetchReport, error) {
	logf := o.Logf
	if logf == nil {
		logf = func(string, ...any) {}
	}
	rep := FetchReport{Dir: dir, StateFiles: []string{}}
	if o.Done != nil {
		defer func() { o.Done(rep.Ingest) }()
	}
	var files []string
	parts := splitIDs(q)
	complete := true
	for i, part := range parts {
		if len(parts) > 1 {
			logf("fetch: ids %d to %d of %d", i*MaxIDsPerQuery+1, i*MaxIDsPerQuery+len(part.IDs), len(q.IDs))
		}
		res, err := fetch.Run(ctx, part, dir, o.Fetch)
		rep.StateFiles = append(rep.StateFiles, res.StateFile)
		rep.Pages += res.Pages
		rep.NewPages += res.NewPages
		rep.Studies += res.Studies
		rep.Requests += res.Requests
		rep.Retries += res.Retries
		rep.Resumed = rep.Resumed || res.Resumed
		complete = complete && res.AlreadyComplete
		switch {
		case res.Total == nil || (i > 0 && rep.Total == nil):
			rep.Total = nil
		case i == 0:
			rep.Total = res.Total
		default:
			*rep.Total += *res.Total
		}
		if err != nil {
			if rep.Pages > 0 && !errors.Is(err, context.Canceled) {
				logf("fetch: %s (%s) kept in %s; nothing ingested; run the same command again to resume", plural(rep.Pages, "page", "pages"), plural(rep.Studies, "study", "studies"), dir)
			} else if rep.Pages > 0 {
				logf("fetch: interrupted; %s kept in %s; run the same command again to resume", plural(rep.Pages, "page", "pages"), dir)
			}
			return rep, err
		}
		if res.Resumed {
			logf("fetch: resumed after %s", plural(res.Pages-res.NewPages, "earlier page", "earlier pages"))
		}
		files = append(files, res.Files...)
	}
	rep.Complete = complete
	if complete {
		logf("fetch: this selection was fetched completely before (%d pages in %s); use --restart to fetch it again", rep.Pages, dir)
	}
	if o.NoIngest || len(files) == 0 {
		return rep, nil
	}
	db := o.DB
	if db == nil {
		var err error
		if db, err = o.Open(); err != nil {
			return rep, err
		}
		defer db.Close()
	}
	io := o.Ingest
	io.Paths = files
	sum, err := IngestRegistry(ctx, db, io)
	rep.Ingest = &sum
	return rep, err
}

// AnyOf writes terms as one search expression matching any of them:
// "a" OR "b c", each quoted so that a phrase is searched as a phrase.
func AnyOf(terms []string) string {
	var parts []string
	for _, t := range terms {
		if t = strings.TrimSpace(strings.ReplaceAll(t, `"`, "")); t != "" {
			parts = append(parts, `"`+t+`"`)
		}
	}
	return strings.Join(parts, " OR ")
}

// RegistryDir is the folder fetched pages go to by default: registry/
// beside the workspace database.
func RegistryDir(dbPath string) string {
	return filepath.Join(filepath.Dir(dbPath), "registry")
}
