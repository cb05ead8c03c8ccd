package fetch

import (
	"bufio"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math/rand/v2"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"unshelved/ingest/fetch/fetchtest"
)

// fakeClock stands in for the wall clock: Sleep advances it at once and
// records the wait.
type fakeClock struct {
	mu     sync.Mutex
	now    time.Time
	sleeps []time.Duration
}

func newFakeClock() *fakeClock { return &fakeClock{now: time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)} }

func (c *fakeClock) Now() time.Time {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.now
}

func (c *fakeClock) Sleep(ctx context.Context, d time.Duration) error {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.sleeps = append(c.sleeps, d)
	c.now = c.now.Add(d)
	return ctx.Err()
}

func (c *fakeClock) Sleeps() []time.Duration {
	c.mu.Lock()
	defer c.mu.Unlock()
	return append([]time.Duration(nil), c.sleeps...)
}

// corpus is 25 invented studies: 23 about itch, of which the odd ones have
// results; the last update dates run from 2024-01-01 by days.
func corpus() []fetchtest.Study {
	var out []fetchtest.Study
	for i := 1; i <= 25; i++ {
		cond := "Chronic itch"
		if i > 23 {
			cond = "Tinnitus"
		}
		out = append(out, fetchtest.MakeStudy(fmt.Sprintf("NCT991%05d", i), cond, "Zelmoral", "Invented Pharma", i%2 == 1,
			time.Date(2024, 1, i, 0, 0, 0, 0, time.UTC).Format("2006-01-02")))
	}
	return out
}

func testOptions(srv *fetchtest.Server, clock *fakeClock) Options {
	return Options{BaseURL: srv.URL, PageSize: 10, UserAgent: "unshelved/test", Rate: 2, MaxRetries: 3,
		ConnectTimeout: time.Second, ReadTimeout: 2 * time.Second, Now: clock.Now, Sleep: clock.Sleep,
		Rand: rand.New(rand.NewPCG(1, 2))}
}

// readPages returns the study ids in the page files, in order.
func readPages(t *testing.T, files []string) []string {
	t.Helper()
	var ids []string
	for _, f := range files {
		fh, err := os.Open(f)
		if err != nil {
			t.Fatal(err)
		}
		zr, err := gzip.NewReader(fh)
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		sc := bufio.NewScanner(zr)
		sc.Buffer(nil, 1<<20)
		for sc.Scan() {
			st, err := fetchtest.ParseStudy(sc.Bytes())
			if err != nil {
				t.Fatalf("%s: %v", f, err)
			}
			ids = append(ids, st.ID)
		}
		if err := sc.Err(); err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		fh.Close()
	}
	return ids
}

func checkIDs(t *testing.T, got []string, want int) {
	t.Helper()
	seen := map[string]bool{}
	for _, id := range got {
		if seen[id] {
			t.Errorf("%s twice in the pages", id)
		}
		seen[id] = true
	}
	if len(seen) != want {
		t.Errorf("%d distinct studies, want %d", len(seen), want)
	}
}

func noTempFiles(t *testing.T, dir string) {
	t.Helper()
	ents, _ := os.ReadDir(dir)
	for _, e := range ents {
		if strings.HasSuffix(e.Name(), ".tmp") {
			t.Errorf("temporary file %s left behind", e.Name())
		}
	}
}

func TestFetchPagingQueryAndPacing(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	clock := newFakeClock()
	dir := t.TempDir()
	var events []Progress
	opts := testOptions(srv, clock)
	opts.Progress = func(p Progress) { events = append(events, p) }
	q := Query{Condition: "itch", Intervention: "zelmoral", Sponsor: "invented", Term: "trial"}
	res, err := Run(context.Background(), q, dir, opts)
	if err != nil {
		t.Fatal(err)
	}
	// 23 itch studies in pages of 10: 10, 10, 3.
	if res.Pages != 3 || res.NewPages != 3 || res.Studies != 23 || res.Total == nil || *res.Total != 23 || len(res.Files) != 3 || res.Resumed {
		t.Errorf("result %+v", res)
	}
	checkIDs(t, readPages(t, res.Files), 23)
	reqs := srv.Requests()
	if len(reqs) != 3 {
		t.Fatalf("%d requests, want 3", len(reqs))
	}
	for i, r := range reqs {
		for k, v := range map[string]string{"query.cond": "itch", "query.intr": "zelmoral", "query.spons": "invented", "query.term": "trial",
			"format": "json", "pageSize": "10"} {
			if r.Query[k] != v {
				t.Errorf("request %d: %s = %q, want %q", i, k, r.Query[k], v)
			}
		}
		if r.UserAgent != "unshelved/test" {
			t.Errorf("request %d: User-Agent %q", i, r.UserAgent)
		}
		if (r.Query["countTotal"] == "true") != (i == 0) || (r.Query["pageToken"] == "") != (i == 0) {
			t.Errorf("request %d: countTotal %q pageToken %q", i, r.Query["countTotal"], r.Query["pageToken"])
		}
	}
	if len(events) != 3 || events[2].Studies != 23 || *events[2].Total != 23 {
		t.Errorf("progress events %+v", events)
	}
	// Rate 2 per second: each request after the first waits 0.5 s on the
	// fake clock, which only moves when slept on.
	if s := clock.Sleeps(); len(s) != 2 || s[0] != 500*time.Millisecond || s[1] != 500*time.Millisecond {
		t.Errorf("pacing sleeps %v, want two of 500ms", s)
	}
	noTempFiles(t, dir)

	// A second run of a complete query asks nothing.
	res2, err := Run(context.Background(), q, dir, opts)
	if err != nil || !res2.AlreadyComplete || res2.NewPages != 0 || len(srv.Requests()) != 3 || len(res2.Files) != 3 {
		t.Errorf("re-run: %v %+v, %d requests", err, res2, len(srv.Requests()))
	}
	// --restart fetches again.
	opts.Restart = true
	res3, err := Run(context.Background(), q, dir, opts)
	if err != nil || res3.NewPages != 3 || len(srv.Requests()) != 6 {
		t.Errorf("restart: %v %+v", err, res3)
	}
}

func TestFetchFilters(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	for _, tc := range []struct {
		name   string
		q      Query
		params map[string]string
		want   int
	}{
		{"with results", Query{Condition: "itch", WithResults: true}, map[string]string{"aggFilters": "results:with"}, 12},
		{"updated since", Query{Condition: "itch", UpdatedSince: "2024-01-20"}, map[string]string{"filter.advanced": "AREA[LastUpdatePostDate]RANGE[2024-01-20,MAX]"}, 4},
		{"ids", Query{IDs: []string{"NCT99100024", "NCT99100003"}}, map[string]string{"filter.ids": "NCT99100003,NCT99100024"}, 2},
	} {
		t.Run(tc.name, func(t *testing.T) {
			before := len(srv.Requests())
			res, err := Run(context.Background(), tc.q, t.TempDir(), testOptions(srv, newFakeClock()))
			if err != nil {
				t.Fatal(err)
			}
			checkIDs(t, readPages(t, res.Files), tc.want)
			r := srv.Requests()[before]
			for k, v := range tc.params {
				if r.Query[k] != v {
					t.Errorf("%s = %q, want %q", k, r.Query[k], v)
				}
			}
		})
	}
	for _, q := range []Query{{}, {IDs: []string{"NCT1"}}, {Condition: "x", UpdatedSince: "2024-13-01"}} {
		if _, err := Run(context.Background(), q, t.TempDir(), testOptions(srv, newFakeClock())); err == nil {
			t.Errorf("query %+v accepted", q)
		}
	}
}

func TestFetch429HonoursRetryAfter(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	srv.RetryAfter = "7"
	srv.FaultFor = func(n int, _ string) fetchtest.Fault {
		if n == 2 {
			return fetchtest.TooMany
		}
		return fetchtest.None
	}
	clock := newFakeClock()
	res, err := Run(context.Background(), Query{Condition: "itch"}, t.TempDir(), testOptions(srv, clock))
	if err != nil {
		t.Fatal(err)
	}
	checkIDs(t, readPages(t, res.Files), 23)
	if res.Retries != 1 || res.Requests != 4 {
		t.Errorf("retries %d requests %d, want 1 and 4", res.Retries, res.Requests)
	}
	// Sleeps: pacing before request 2, the wait after the 429 (at least
	// the 7 s asked, though the first backoff is 0.5-1 s), pacing is then
	// already satisfied, pacing before request 4.
	var sawWait bool
	for _, d := range clock.Sleeps() {
		if d == 7*time.Second {
			sawWait = true
		}
	}
	if !sawWait {
		t.Errorf("sleeps %v: no 7s wait for Retry-After", clock.Sleeps())
	}

	// An HTTP date in Retry-After.
	clock = newFakeClock()
	srv.RetryAfter = clock.Now().Add(90 * time.Second).Format(http.TimeFormat)
	before := len(srv.Requests())
	srv.FaultFor = func(n int, _ string) fetchtest.Fault {
		if n == before+1 {
			return fetchtest.TooMany
		}
		return fetchtest.None
	}
	if _, err := Run(context.Background(), Query{Condition: "tinnitus"}, t.TempDir(), testOptions(srv, clock)); err != nil {
		t.Fatal(err)
	}
	if s := clock.Sleeps(); len(s) == 0 || s[0] != 90*time.Second {
		t.Errorf("sleeps %v, want 90s first", s)
	}
}

func TestFetchServerErrorGivesUp(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	srv.FaultFor = func(int, string) fetchtest.Fault { return fetchtest.ServerError }
	clock := newFakeClock()
	dir := t.TempDir()
	opts := testOptions(srv, clock)
	opts.BaseBackoff, opts.MaxBackoff = time.Second, 3*time.Second
	res, err := Run(context.Background(), Query{Condition: "itch"}, dir, opts)
	var ge *GiveUpError
	if !errors.As(err, &ge) {
		t.Fatalf("error %v, want a GiveUpError", err)
	}
	if ge.Status != 500 || ge.Attempts != 4 || !strings.HasPrefix(ge.URL, srv.URL+"/api/v2/studies?") ||
		!strings.Contains(err.Error(), "HTTP 500 Internal Server Error after 4 attempt(s)") || !strings.Contains(err.Error(), srv.URL) {
		t.Errorf("error %q", err)
	}
	// Backoff before retries 0, 1, 2: base·2ⁿ capped at 3 s, times [0.5, 1).
	sleeps := clock.Sleeps()
	var backoffs []time.Duration
	for _, d := range sleeps {
		if d != 500*time.Millisecond { // pacing is satisfied by the backoff itself
			backoffs = append(backoffs, d)
		}
	}
	caps := []time.Duration{time.Second, 2 * time.Second, 3 * time.Second}
	if len(backoffs) != 3 {
		t.Fatalf("backoff sleeps %v (all %v)", backoffs, sleeps)
	}
	for i, d := range backoffs {
		if d < caps[i]/2 || d >= caps[i] {
			t.Errorf("backoff %d = %v, want in [%v, %v)", i, d, caps[i]/2, caps[i])
		}
	}
	if res.Pages != 0 || len(res.Files) != 0 {
		t.Errorf("result %+v", res)
	}
	if _, err := os.Stat(StatePath(dir, Query{Condition: "itch"})); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("state file written without a page: %v", err)
	}
	noTempFiles(t, dir)
}

func TestFetchBadRequestNotRetried(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	srv.FaultFor = func(int, string) fetchtest.Fault { return fetchtest.BadRequest }
	_, err := Run(context.Background(), Query{Condition: "itch"}, t.TempDir(), testOptions(srv, newFakeClock()))
	var ge *GiveUpError
	if !errors.As(err, &ge) || ge.Attempts != 1 || ge.Status != 400 || !strings.Contains(err.Error(), "unknown parameter") {
		t.Errorf("error %v", err)
	}
}

// A cut-off body, a slow answer, a stall in mid-body and a malformed page
// are each retried; the pages come out whole.
func TestFetchTransientFaults(t *testing.T) {
	for _, f := range []fetchtest.Fault{fetchtest.Truncated, fetchtest.Slow, fetchtest.StallMidBody, fetchtest.Malformed} {
		t.Run(fmt.Sprint(f), func(t *testing.T) {
			srv := fetchtest.NewServer(t, corpus())
			srv.SlowFor = time.Second
			srv.FaultFor = func(n int, _ string) fetchtest.Fault {
				if n == 2 {
					return f
				}
				return fetchtest.None
			}
			dir := t.TempDir()
			opts := testOptions(srv, newFakeClock())
			opts.ReadTimeout = 150 * time.Millisecond
			res, err := Run(context.Background(), Query{Condition: "itch"}, dir, opts)
			if err != nil {
				t.Fatal(err)
			}
			if res.Retries != 1 {
				t.Errorf("%d retries, want 1", res.Retries)
			}
			checkIDs(t, readPages(t, res.Files), 23)
			noTempFiles(t, dir)
		})
	}
}

// A page that stays malformed stops the run after the retries; the pages
// before it stay, and a later run resumes at the bad page.
func TestFetchMalformedPageThenResume(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	broken := true
	srv.FaultFor = func(_ int, token string) fetchtest.Fault {
		if broken && token != "" {
			return fetchtest.Malformed
		}
		return fetchtest.None
	}
	dir := t.TempDir()
	q := Query{Condition: "itch"}
	res, err := Run(context.Background(), q, dir, testOptions(srv, newFakeClock()))
	if err == nil || !strings.Contains(err.Error(), "malformed page") || !strings.Contains(err.Error(), "pageToken=") {
		t.Fatalf("error %v", err)
	}
	if res.Pages != 1 || len(res.Files) != 1 {
		t.Errorf("after failure: %+v", res)
	}
	if _, err := os.Stat(filepath.Join(dir, pageName(q, 2))); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("page 2 written: %v", err)
	}
	noTempFiles(t, dir)
	broken = false
	n := len(srv.Requests())
	res, err = Run(context.Background(), q, dir, testOptions(srv, newFakeClock()))
	if err != nil || !res.Resumed || res.NewPages != 2 {
		t.Fatalf("resume: %v %+v", err, res)
	}
	if first := srv.Requests()[n]; first.Query["pageToken"] == "" {
		t.Errorf("resumed run asked for page 1 again")
	}
	checkIDs(t, readPages(t, res.Files), 23)
}

// A run killed between pages resumes from the last completed page, with no
// study twice, even when the killed run left a page file the state file
// does not list.
func TestFetchResumeAfterKill(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	dir := t.TempDir()
	q := Query{Condition: "itch"}
	ctx, kill := context.WithCancel(context.Background())
	opts := testOptions(srv, newFakeClock())
	opts.PageSize = 5 // 23 studies: 5 pages
	opts.Progress = func(p Progress) {
		if p.Page == 2 && p.Retry == "" {
			kill()
		}
	}
	res, err := Run(ctx, q, dir, opts)
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want canceled", err)
	}
	if res.Pages != 2 || res.Studies != 10 {
		t.Errorf("killed run: %+v", res)
	}
	// A kill after a page's rename but before the state file names it
	// leaves that file; the resumed run replaces it.
	if err := os.WriteFile(filepath.Join(dir, pageName(q, 3)), []byte("half"), 0o644); err != nil {
		t.Fatal(err)
	}
	n := len(srv.Requests())
	opts.Progress = nil
	res, err = Run(context.Background(), q, dir, opts)
	if err != nil {
		t.Fatal(err)
	}
	if !res.Resumed || res.NewPages != 3 || res.Pages != 5 || res.Studies != 23 || len(srv.Requests())-n != 3 {
		t.Errorf("resumed run: %+v, %d requests", res, len(srv.Requests())-n)
	}
	checkIDs(t, readPages(t, res.Files), 23)
	var st State
	data, _ := os.ReadFile(res.StateFile)
	if err := json.Unmarshal(data, &st); err != nil || !st.Done || len(st.Pages) != 5 || st.PageSize != 5 {
		t.Errorf("state %s: %v", data, err)
	}
}

func TestParseRetryAfter(t *testing.T) {
	now := time.Date(2026, 12, 1, 12, 0, 0, 0, time.UTC)
	for _, tc := range []struct {
		in   string
		want time.Duration
		ok   bool
	}{{"120", 2 * time.Minute, true}, {"0", 0, true}, {"Tue, 01 Dec 2026 12:00:30 GMT", 30 * time.Second, true},
		{"Tue, 01 Dec 2026 11:00:00 GMT", 0, true}, {"soon", 0, false}, {"", 0, false}, {"-5", 0, false}} {
		got, ok := parseRetryAfter(tc.in, now)
		if got != tc.want || ok != tc.ok {
			t.Errorf("parseRetryAfter(%q) = %v %v, want %v %v", tc.in, got, ok, tc.want, tc.ok)
		}
	}
}

// A selection that matches nothing gives one empty page and no file.
func TestFetchNothingMatches(t *testing.T) {
	srv := fetchtest.NewServer(t, corpus())
	dir := t.TempDir()
	res, err := Run(context.Background(), Query{Condition: "no such condition"}, dir, testOptions(srv, newFakeClock()))
	if err != nil {
		t.Fatal(err)
	}
	if res.Pages != 1 || res.Studies != 0 || len(res.Files) != 0 || res.Total == nil || *res.Total != 0 {
		t.Errorf("result %+v", res)
	}
	ents, _ := os.ReadDir(dir)
	if len(ents) != 1 || !strings.HasSuffix(ents[0].Name(), ".state") {
		t.Errorf("folder holds %v, want only the state file", ents)
	}
	res, err = Run(context.Background(), Query{Condition: "no such condition"}, dir, testOptions(srv, newFakeClock()))
	if err != nil || !res.AlreadyComplete {
		t.Errorf("re-run: %v %+v", err, res)
	}
}
