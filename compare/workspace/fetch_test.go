package workspace

import (
	"context"
	"fmt"
	"io/fs"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/compare"
	"unshelved/ingest/fetch"
	"unshelved/ingest/fetch/fetchtest"
	"unshelved/store"
	"unshelved/testdata/demo"
)

// demoAPI serves the demo scenario's registry records as the registry's
// API would.
func demoAPI(t *testing.T) (*fetchtest.Server, []string) {
	t.Helper()
	var studies []fetchtest.Study
	var ids []string
	err := fs.WalkDir(demo.FS, "registry", func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := demo.FS.ReadFile(path)
		if err != nil {
			return err
		}
		st, err := fetchtest.ParseStudy(data)
		studies, ids = append(studies, st), append(ids, st.ID)
		return err
	})
	if err != nil || len(studies) == 0 {
		t.Fatalf("demo records: %v (%d)", err, len(studies))
	}
	return fetchtest.NewServer(t, studies), ids
}

func TestFetchAndIngestSplitsLongIDLists(t *testing.T) {
	ctx := context.Background()
	srv, ids := demoAPI(t)
	_, db := demoWorkspace(t)
	// The scenario's ids among more than two selections' worth of
	// others the registry does not hold.
	q := fetch.Query{IDs: append([]string(nil), ids...)}
	for i := 0; len(q.IDs) < 2*MaxIDsPerQuery+10; i++ {
		q.IDs = append(q.IDs, fmt.Sprintf("NCT98%06d", i))
	}
	opens := 0
	o := FetchOptions{Fetch: fetch.Options{BaseURL: srv.URL, Rate: 1000, PageSize: 7},
		Open: func() (*store.DB, error) { opens++; return store.Open(ctx, db.Path()) }}
	dir := t.TempDir()
	rep, err := FetchAndIngest(ctx, q, dir, o)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.StateFiles) != 3 || rep.Studies != len(ids) || rep.Ingest == nil || rep.Ingest.Inserted != len(ids) || opens != 1 {
		t.Fatalf("report %+v (ingest %+v), opened %d times; want 3 selections, %d studies inserted", rep, rep.Ingest, opens, len(ids))
	}
	for _, r := range srv.Requests() {
		if n := len(strings.Split(r.Query["filter.ids"], ",")); n > MaxIDsPerQuery {
			t.Errorf("a request asked for %d ids", n)
		}
	}
	// Again: nothing is asked of the API, and nothing new stored.
	before := len(srv.Requests())
	rep, err = FetchAndIngest(ctx, q, dir, o)
	if err != nil || !rep.Complete || len(srv.Requests()) != before || rep.Ingest.Inserted != 0 {
		t.Errorf("second run: %+v, %v; %d new requests", rep, err, len(srv.Requests())-before)
	}
	// Download only: the workspace is not opened.
	o.NoIngest = true
	if rep, err := FetchAndIngest(ctx, fetch.Query{Condition: "tinnitus"}, t.TempDir(), o); err != nil || rep.Ingest != nil || opens != 2 {
		t.Errorf("no-ingest: %+v, %v, opened %d times", rep, err, opens)
	}
}

// A review with no candidate trial in the workspace gets its registry
// records fetched; the others do not cause a request.
func TestFetchForEmptyReviews(t *testing.T) {
	ctx := context.Background()
	srv, _ := demoAPI(t)
	input, db := demoWorkspace(t)
	if _, err := LoadReviews(ctx, db, []string{filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")}, ',', nil); err != nil {
		t.Fatal(err)
	}
	var said []string
	o := FetchOptions{Fetch: fetch.Options{BaseURL: srv.URL, Rate: 1000}, Logf: func(f string, a ...any) { said = append(said, fmt.Sprintf(f, a...)) }}
	if err := FetchForEmptyReviews(ctx, db, compare.MatchOptions{ReviewIDs: []string{"TINN-01"}}, t.TempDir(), o); err != nil {
		t.Fatal(err)
	}
	if len(srv.Requests()) == 0 {
		t.Fatalf("no request made; said %q", said)
	}
	rep, err := Match(ctx, db, compare.MatchOptions{ReviewIDs: []string{"TINN-01"}})
	if err != nil || len(rep.Reviews) != 1 || rep.Reviews[0].Flow.Examined == 0 {
		t.Fatalf("after fetching, TINN-01 still has no candidate: %+v %v", rep, err)
	}
	n := len(srv.Requests())
	if err := FetchForEmptyReviews(ctx, db, compare.MatchOptions{ReviewIDs: []string{"TINN-01"}}, t.TempDir(), o); err != nil || len(srv.Requests()) != n {
		t.Errorf("a review with candidates fetched again: %v, %d new requests", err, len(srv.Requests())-n)
	}
}
