package main

import (
	"encoding/json"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/compare/workspace"
	"unshelved/ingest/fetch/fetchtest"
	"unshelved/testdata/demo"
)

// demoServer serves the demo scenario's invented registry records as the
// registry's search API would.
func demoServer(t *testing.T) *fetchtest.Server {
	t.Helper()
	var studies []fetchtest.Study
	err := fs.WalkDir(demo.FS, "registry", func(path string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		data, err := demo.FS.ReadFile(path)
		if err != nil {
			return err
		}
		st, err := fetchtest.ParseStudy(data)
		if err != nil {
			return err
		}
		studies = append(studies, st)
		return nil
	})
	if err != nil || len(studies) == 0 {
		t.Fatalf("demo records: %v (%d)", err, len(studies))
	}
	return fetchtest.NewServer(t, studies)
}

func dbTrials(t *testing.T, db string) float64 {
	t.Helper()
	code, out, stderr := runCLI(t, "", "--db", db, "db", "info", "--format", "json")
	if code != exitOK {
		t.Fatalf("db info: %d %s", code, stderr)
	}
	var info map[string]any
	if err := json.Unmarshal([]byte(out), &info); err != nil {
		t.Fatal(err)
	}
	return info["trials"].(float64)
}

// The editor's path: with only the review's files, fetch the registry
// records for its question, then match, audit and report.
func TestFetchThenMatchAuditReport(t *testing.T) {
	srv := demoServer(t)
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	code, out, stderr := runCLI(t, "", "--db", db, "fetch", "--base-url", srv.URL, "--condition", "tinnitus", "--intervention", "velmorazine",
		"--with-results", "--page-size", "3", "--rate", "1000", "--format", "json")
	if code != exitOK {
		t.Fatalf("fetch: exit %d: %s", code, stderr)
	}
	var rep workspace.FetchReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Total == nil || *rep.Total != rep.Studies || rep.Studies == 0 || rep.Ingest == nil || rep.Ingest.Inserted != rep.Studies ||
		rep.Pages != (rep.Studies+2)/3 || rep.Dir != filepath.Join(dir, "registry") {
		t.Errorf("fetch report %+v (ingest %+v)", rep, rep.Ingest)
	}
	reqs := srv.Requests()
	if !strings.HasPrefix(reqs[0].UserAgent, "unshelved/"+version) || reqs[0].Query["aggFilters"] != "results:with" || reqs[0].Query["query.cond"] != "tinnitus" {
		t.Errorf("first request %+v", reqs[0])
	}
	if got := dbTrials(t, db); got != float64(rep.Studies) {
		t.Errorf("%v trials stored, want %d", got, rep.Studies)
	}

	input := filepath.Join(dir, "input")
	if err := workspace.WriteDemoFiles(input); err != nil {
		t.Fatal(err)
	}
	for _, step := range [][]string{
		{"ingest", "reviews", filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")},
		{"match", "--review", "TINN-01", "--links", filepath.Join(dir, "links.csv"), "--accept-above", "0.7"},
		{"match", "--apply", filepath.Join(dir, "links.csv")},
	} {
		if code, _, stderr := runCLI(t, "", append([]string{"--db", db, "-q"}, step...)...); code != exitOK {
			t.Fatalf("%v: exit %d: %s", step, code, stderr)
		}
	}
	// The same steps over a workspace holding every demo record give the
	// same added trials and augmented estimate: fetching the question's
	// records with results lost nothing the audit uses.
	full, _ := demoWorkspace(t)
	for _, step := range [][]string{
		{"match", "--review", "TINN-01", "--links", filepath.Join(dir, "links-full.csv"), "--accept-above", "0.7"},
		{"match", "--apply", filepath.Join(dir, "links-full.csv")},
	} {
		if code, _, stderr := runCLI(t, "", append([]string{"--db", full, "-q"}, step...)...); code != exitOK {
			t.Fatalf("%v: exit %d: %s", step, code, stderr)
		}
	}
	type auditRow struct {
		ReviewID  string `json:"review_id"`
		KAdded    int    `json:"k_added"`
		Augmented struct {
			Random struct {
				Estimate float64 `json:"estimate"`
			} `json:"random"`
		} `json:"augmented"`
	}
	auditOf := func(db string) auditRow {
		code, out, stderr := runCLI(t, "", "--db", db, "-q", "audit", "--review", "TINN-01", "--format", "json")
		if code != exitOK {
			t.Fatalf("audit: exit %d: %s", code, stderr)
		}
		var rows []auditRow
		if err := json.Unmarshal([]byte(out), &rows); err != nil || len(rows) != 1 {
			t.Fatalf("audit output: %v %.200s", err, out)
		}
		return rows[0]
	}
	got, want := auditOf(db), auditOf(full)
	if got.KAdded == 0 || got.KAdded != want.KAdded || got.Augmented.Random.Estimate != want.Augmented.Random.Estimate {
		t.Errorf("audit after fetch: %d added, estimate %v; with every record: %d, %v", got.KAdded, got.Augmented.Random.Estimate,
			want.KAdded, want.Augmented.Random.Estimate)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "report", "--review", "TINN-01", "--out", filepath.Join(dir, "report")); code != exitOK {
		t.Fatalf("report: exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "report", "index.html")); err != nil {
		t.Error(err)
	}
}

// A page that keeps failing stops the run with the URL and status named
// and nothing ingested; the next run resumes and ingests every study once.
func TestFetchGiveUpThenResume(t *testing.T) {
	srv := demoServer(t)
	failing := true
	srv.FaultFor = func(_ int, token string) fetchtest.Fault {
		if failing && token != "" {
			return fetchtest.ServerError
		}
		return fetchtest.None
	}
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	out := filepath.Join(dir, "pages")
	args := []string{"--db", db, "fetch", "--base-url", srv.URL, "--term", "NCT99", "--page-size", "4", "--rate", "1000", "--retries", "0", "--out", out}
	code, _, stderr := runCLI(t, "", args...)
	if code != exitError || !strings.Contains(stderr, srv.URL+"/api/v2/studies?") || !strings.Contains(stderr, "HTTP 500") ||
		!strings.Contains(stderr, "nothing ingested") {
		t.Fatalf("exit %d, stderr %q", code, stderr)
	}
	if _, err := os.Stat(db); err == nil && dbTrials(t, db) != 0 {
		t.Errorf("trials ingested after a failed fetch")
	}
	failing = false
	code, stdout, stderr := runCLI(t, "", append(args, "--format", "json")...)
	if code != exitOK {
		t.Fatalf("resume: exit %d: %s", code, stderr)
	}
	var rep workspace.FetchReport
	if err := json.Unmarshal([]byte(stdout), &rep); err != nil {
		t.Fatal(err)
	}
	if !rep.Resumed || rep.NewPages != rep.Pages-1 || rep.Ingest == nil || rep.Ingest.Records != rep.Studies || rep.Studies != len(srv.Studies) {
		t.Errorf("resumed fetch %+v (ingest %+v), want %d studies", rep, rep.Ingest, len(srv.Studies))
	}
	if got := dbTrials(t, db); got != float64(len(srv.Studies)) {
		t.Errorf("%v trials stored, want %d", got, len(srv.Studies))
	}
	// The folder ingests cleanly on its own: the state file is not read as
	// a record, and the pages are known already.
	code, _, stderr = runCLI(t, "", "--db", db, "ingest", "registry", out)
	if code != exitOK || strings.Contains(stderr, "rejected:") {
		t.Errorf("ingest registry %s: exit %d: %s", out, code, stderr)
	}
	if got := dbTrials(t, db); got != float64(len(srv.Studies)) {
		t.Errorf("%v trials stored after re-ingesting the folder, want %d", got, len(srv.Studies))
	}
}

func TestFetchUsage(t *testing.T) {
	dir := t.TempDir()
	ids := writeFile(t, dir, "ids.txt", "# trials\nNCT99000001, NCT99000002\nnct99000003\n")
	bad := writeFile(t, dir, "bad.txt", "NCT1\n")
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"fetch"}, "no selection"},
		{[]string{"fetch", "--id", "12345"}, "not an NCT number"},
		{[]string{"fetch", "--ids", bad}, "not an NCT number"},
		{[]string{"fetch", "--condition", "x", "--rate", "0"}, "--rate"},
		{[]string{"fetch", "--condition", "x", "--page-size", "1001"}, "--page-size"},
		{[]string{"fetch", "--condition", "x", "--updated-since", "2024-1-1"}, "yyyy-MM-dd"},
	} {
		code, _, stderr := runCLI(t, "", append([]string{"--db", filepath.Join(dir, "x.db")}, tc.args...)...)
		if code != exitUsage || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want usage error naming %q", tc.args, code, stderr, tc.want)
		}
	}
	got, err := readIDsFile(ids)
	if err != nil || strings.Join(got, " ") != "NCT99000001 NCT99000002 NCT99000003" {
		t.Errorf("readIDsFile = %v, %v", got, err)
	}
}

// match --fetch fetches for a review with no candidate trial in the
// workspace, says so on stderr, and fetches nothing once candidates exist.
func TestMatchFetch(t *testing.T) {
	srv := demoServer(t)
	dir := t.TempDir()
	db := filepath.Join(dir, "w.db")
	input := filepath.Join(dir, "input")
	if err := workspace.WriteDemoFiles(input); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "reviews", filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")); code != exitOK {
		t.Fatalf("ingest reviews: %d %s", code, stderr)
	}
	links := filepath.Join(dir, "links.csv")
	args := []string{"--db", db, "match", "--review", "TINN-01", "--links", links, "--fetch", "--base-url", srv.URL}
	code, _, stderr := runCLI(t, "", args...)
	if code != exitOK {
		t.Fatalf("match --fetch: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stderr, "review TINN-01 has no candidate trial in the workspace; fetching") {
		t.Errorf("stderr does not say it fetches: %s", stderr)
	}
	reqs := srv.Requests()
	if len(reqs) == 0 || !strings.Contains(reqs[0].Query["query.cond"], `"tinnitus" OR "chronic tinnitus"`) ||
		!strings.Contains(reqs[0].Query["query.intr"], `"velmorazine" OR "VLZ-204"`) {
		t.Fatalf("requests %+v", reqs)
	}
	_, rows := readLinksCSV(t, links)
	if len(rows) == 0 {
		t.Fatalf("no proposals after fetching")
	}
	n := len(reqs)
	code, _, stderr = runCLI(t, "", args...)
	if code != exitOK || strings.Contains(stderr, "fetching") || len(srv.Requests()) != n {
		t.Errorf("second match --fetch: exit %d, %d new requests, stderr %s", code, len(srv.Requests())-n, stderr)
	}
}

// A long --ids list is fetched as several selections of at most
// workspace.MaxIDsPerQuery ids, all ingested.
func TestFetchManyIDs(t *testing.T) {
	srv := demoServer(t)
	dir := t.TempDir()
	var ids []string
	for _, st := range srv.Studies {
		ids = append(ids, st.ID)
	}
	for i := 0; len(ids) < 2*workspace.MaxIDsPerQuery+50; i++ {
		ids = append(ids, fmt.Sprintf("NCT98%06d", i)) // not served
	}
	file := writeFile(t, dir, "ids.txt", strings.Join(ids, "\n")+"\n")
	db := filepath.Join(dir, "w.db")
	code, out, stderr := runCLI(t, "", "--db", db, "fetch", "--base-url", srv.URL, "--ids", file, "--rate", "1000", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var rep workspace.FetchReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	reqs := srv.Requests()
	if len(reqs) != 3 || len(rep.StateFiles) != 3 || rep.Studies != len(srv.Studies) || rep.Total == nil || *rep.Total != len(srv.Studies) {
		t.Errorf("%d requests, report %+v", len(reqs), rep)
	}
	for i, r := range reqs {
		if n := len(strings.Split(r.Query["filter.ids"], ",")); n > workspace.MaxIDsPerQuery {
			t.Errorf("request %d: %d ids", i, n)
		}
	}
	if got := dbTrials(t, db); got != float64(len(srv.Studies)) {
		t.Errorf("%v trials stored, want %d", got, len(srv.Studies))
	}
}
