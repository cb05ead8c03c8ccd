package fetch

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"time"
)

// Defaults of Options.
const (
	DefaultRate           = 2.0 // requests per second
	DefaultMaxRetries     = 6
	DefaultConnectTimeout = 15 * time.Second
	DefaultReadTimeout    = 60 * time.Second
	DefaultBaseBackoff    = time.Second
	DefaultMaxBackoff     = 2 * time.Minute
	// MaxRetryAfter bounds the wait a Retry-After header can ask for.
	MaxRetryAfter = 10 * time.Minute
)

// Options says how Run talks to the API. The zero value of each field
// means its default.
type Options struct {
	BaseURL   string // DefaultBaseURL when empty; no trailing /api/v2/studies
	PageSize  int    // 1..MaxPageSize; MaxPageSize when 0
	UserAgent string // sent with every request; "unshelved" when empty
	// Rate is the most requests started per second (DefaultRate when 0).
	Rate float64
	// MaxRetries is how many times one page is asked again after a 429 or
	// 5xx answer, a timeout, a cut-off body or a malformed page
	// (DefaultMaxRetries when 0; negative means none).
	MaxRetries int
	// ConnectTimeout bounds making a connection; ReadTimeout bounds the
	// wait for the answer's headers and any pause while reading its body.
	ConnectTimeout, ReadTimeout time.Duration
	// BaseBackoff and MaxBackoff shape the wait before retry n (from 0):
	// min(MaxBackoff, BaseBackoff·2ⁿ), scaled by a random factor in
	// [0.5, 1), and never shorter than a Retry-After header asks.
	BaseBackoff, MaxBackoff time.Duration
	// Restart discards the query's earlier pages and state and starts over.
	Restart bool

	// Client is the HTTP client (one with the timeouts above when nil).
	Client *http.Client
	// Now and Sleep are the clock (time.Now and a context-aware sleep when
	// nil); tests inject a fake clock so that pacing and backoff take no
	// real time.
	Now   func() time.Time
	Sleep func(ctx context.Context, d time.Duration) error
	// Rand draws the jitter (a generator seeded from the clock when nil).
	Rand *rand.Rand
	// Progress, when set, is called after each completed page and before
	// each retry.
	Progress func(Progress)
}

// Progress is a report on a running fetch.
type Progress struct {
	Page    int  // the last completed page (1-based), or the page being retried
	Studies int  // studies in the completed pages, earlier runs included
	Total   *int // the API's count of matching studies, when it gave one
	// Retry is set before a retry: why, and the wait before it.
	Retry     string
	RetryWait time.Duration
}

// PageFile is one completed page in the state file.
type PageFile struct {
	File    string `json:"file"` // name inside the folder; "" for a page without studies
	Studies int    `json:"studies"`
}

// State is the state file of one query in the output folder.
type State struct {
	Query         string     `json:"query"` // the encoded selection parameters
	PageSize      int        `json:"page_size"`
	TotalCount    *int       `json:"total_count"`
	Pages         []PageFile `json:"pages"`
	NextPageToken string     `json:"next_page_token"`
	Done          bool       `json:"done"`
}

// Result says what Run did.
type Result struct {
	Dir       string
	StateFile string
	// Files are the completed page files of the query, earlier runs
	// included, in page order: the files to ingest.
	Files    []string
	Pages    int  // completed pages, earlier runs included
	NewPages int  // pages fetched by this run
	Studies  int  // studies in Files
	Total    *int // the API's count of matching studies, when given
	Resumed  bool // this run continued an interrupted one
	// AlreadyComplete is set when an earlier run had fetched every page
	// and nothing was asked of the API.
	AlreadyComplete bool
	Requests        int // HTTP requests made, retries included
	Retries         int
}

// GiveUpError is returned when a page could not be fetched: the URL, the
// last HTTP status (0 when there was no answer), the attempts made and
// the last problem.
type GiveUpError struct {
	URL      string
	Status   int
	Attempts int
	Err      error
}

func (e *GiveUpError) Error() string {
	status := "no answer"
	if e.Status != 0 {
		status = fmt.Sprintf("HTTP %d %s", e.Status, http.StatusText(e.Status))
	}
	return fmt.Sprintf("fetch %s: %s after %d attempt(s): %v", e.URL, status, e.Attempts, e.Err)
}

func (e *GiveUpError) Unwrap() error { return e.Err }

// StatePath is the state file of q in dir. It is JSON, but its name does
// not end in .json, so that ingesting the folder reads only the pages.
func StatePath(dir string, q Query) string {
	return filepath.Join(dir, "fetch-"+q.Key()+".state")
}

// pageName is the file name of page n (1-based) of q.
func pageName(q Query, n int) string {
	return fmt.Sprintf("fetch-%s-%05d.jsonl.gz", q.Key(), n)
}

// Run fetches every page of q into dir, resuming from the state file when
// an earlier run was interrupted. On error the pages completed so far stay
// in dir and in the state file, and the Result lists them; a page is in
// the state file only once its file is complete on disk.
func Run(ctx context.Context, q Query, dir string, opts Options) (Result, error) {
	res := Result{Dir: dir, StateFile: StatePath(dir, q)}
	if err := q.Validate(); err != nil {
		return res, err
	}
	o, err := opts.withDefaults()
	if err != nil {
		return res, err
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return res, fmt.Errorf("create output folder: %w", err)
	}
	if o.Restart {
		if err := discard(dir, res.StateFile); err != nil {
			return res, err
		}
	}
	encoded := q.Values().Encode()
	st, found, err := loadState(res.StateFile)
	if err != nil {
		return res, err
	}
	if found && st.Query != encoded {
		return res, fmt.Errorf("state file %s belongs to another query (%s); remove it or use --restart", res.StateFile, st.Query)
	}
	if !found {
		st = State{Query: encoded, PageSize: o.PageSize}
	}
	res.Resumed = found && !st.Done && len(st.Pages) > 0
	res.AlreadyComplete = found && st.Done
	c := newClient(o)
	fill := func() {
		res.Files, res.Studies = nil, 0
		for _, p := range st.Pages {
			if p.File != "" {
				res.Files = append(res.Files, filepath.Join(dir, p.File))
			}
			res.Studies += p.Studies
		}
		res.Pages, res.Total, res.Requests, res.Retries = len(st.Pages), st.TotalCount, c.requests, c.retries
	}
	for !st.Done {
		n := len(st.Pages) + 1
		params := q.Values()
		params.Set("format", "json")
		params.Set("pageSize", strconv.Itoa(st.PageSize))
		if n == 1 {
			params.Set("countTotal", "true")
		} else {
			params.Set("pageToken", st.NextPageToken)
		}
		pg, err := c.page(ctx, o.BaseURL+StudiesPath+"?"+params.Encode(), n, res.Studies, st.TotalCount)
		if err != nil {
			fill()
			return res, err
		}
		name := ""
		if len(pg.Studies) > 0 {
			// An empty page (nothing matched) gets no file: an empty file
			// would be an empty registry file to the ingest.
			name = pageName(q, n)
			if err := writePage(dir, name, pg.Studies); err != nil {
				fill()
				return res, err
			}
		}
		st.Pages = append(st.Pages, PageFile{File: name, Studies: len(pg.Studies)})
		st.NextPageToken = pg.NextPageToken
		st.Done = pg.NextPageToken == ""
		if n == 1 && pg.TotalCount != nil {
			st.TotalCount = pg.TotalCount
		}
		if err := saveState(res.StateFile, st); err != nil {
			fill()
			return res, err
		}
		res.NewPages++
		fill()
		if o.Progress != nil {
			o.Progress(Progress{Page: n, Studies: res.Studies, Total: st.TotalCount})
		}
	}
	fill()
	return res, nil
}

func (o Options) withDefaults() (Options, error) {
	if o.BaseURL == "" {
		o.BaseURL = DefaultBaseURL
	}
	u, err := url.Parse(o.BaseURL)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return o, fmt.Errorf("base URL %q is not an http(s) URL", o.BaseURL)
	}
	o.BaseURL = strings.TrimRight(o.BaseURL, "/")
	switch {
	case o.PageSize == 0:
		o.PageSize = MaxPageSize
	case o.PageSize < 1 || o.PageSize > MaxPageSize:
		return o, fmt.Errorf("page size %d is not between 1 and %d", o.PageSize, MaxPageSize)
	}
	if o.UserAgent == "" {
		o.UserAgent = "unshelved"
	}
	switch {
	case o.Rate == 0:
		o.Rate = DefaultRate
	case o.Rate < 0 || math.IsNaN(o.Rate) || math.IsInf(o.Rate, 0):
		return o, fmt.Errorf("rate %v is not a positive number of requests per second", o.Rate)
	}
	if o.MaxRetries == 0 {
		o.MaxRetries = DefaultMaxRetries
	} else if o.MaxRetries < 0 {
		o.MaxRetries = 0
	}
	if o.ConnectTimeout == 0 {
		o.ConnectTimeout = DefaultConnectTimeout
	}
	if o.ReadTimeout == 0 {
		o.ReadTimeout = DefaultReadTimeout
	}
	if o.BaseBackoff == 0 {
		o.BaseBackoff = DefaultBaseBackoff
	}
	if o.MaxBackoff == 0 {
		o.MaxBackoff = DefaultMaxBackoff
	}
	if o.Client == nil {
		o.Client = &http.Client{Transport: &http.Transport{
			Proxy:               http.ProxyFromEnvironment,
			DialContext:         (&net.Dialer{Timeout: o.ConnectTimeout}).DialContext,
			TLSHandshakeTimeout: o.ConnectTimeout,
		}}
	}
	if o.Now == nil {
		o.Now = time.Now
	}
	if o.Sleep == nil {
		o.Sleep = sleepCtx
	}
	if o.Rand == nil {
		o.Rand = rand.New(rand.NewPCG(uint64(time.Now().UnixNano()), 0x9e3779b97f4a7c15))
	}
	return o, nil
}

func sleepCtx(ctx context.Context, d time.Duration) error {
	if d <= 0 {
		return ctx.Err()
	}
	t := time.NewTimer(d)
	defer t.Stop()
	select {
	case <-ctx.Done():
		return context.Cause(ctx)
	case <-t.C:
		return nil
	}
}

// page is one decoded search page.
type page struct {
	Studies       []json.RawMessage
	NextPageToken string
	TotalCount    *int
}

type client struct {
	o        Options
	last     time.Time // when the last request started
	requests int
	retries  int
}

func newClient(o Options) *client { return &client{o: o} }

// statusError is an answer other than 200.
type statusError struct {
	code       int
	retryAfter time.Duration
	hasAfter   bool
	body       string
}

func (e *statusError) Error() string {
	msg := fmt.Sprintf("HTTP %d %s", e.code, http.StatusText(e.code))
	if e.body != "" {
		msg += ": " + e.body
	}
	return msg
}

// errMalformed marks a page that is not the API's page object.
var errMalformed = errors.New("malformed page")

// page fetches one URL with pacing and retries.
func (c *client) page(ctx context.Context, u string, n, studies int, total *int) (page, error) {
	for attempt := 0; ; attempt++ {
		if err := c.pace(ctx); err != nil {
			return page{}, err
		}
		pg, err := c.try(ctx, u)
		if err == nil {
			return pg, nil
		}
		if ctx.Err() != nil {
			return page{}, context.Cause(ctx)
		}
		var se *statusError
		status := 0
		if errors.As(err, &se) {
			status = se.code
		}
		if !retryable(err) || attempt >= c.o.MaxRetries {
			return page{}, &GiveUpError{URL: u, Status: status, Attempts: attempt + 1, Err: err}
		}
		wait := c.backoff(attempt)
		if se != nil && se.hasAfter && se.retryAfter > wait {
			wait = min(se.retryAfter, MaxRetryAfter)
		}
		c.retries++
		if c.o.Progress != nil {
			c.o.Progress(Progress{Page: n, Studies: studies, Total: total, Retry: err.Error(), RetryWait: wait})
		}
		if err := c.o.Sleep(ctx, wait); err != nil {
			return page{}, err
		}
	}
}

// backoff is the jittered exponential wait before retry n (from 0).
func (c *client) backoff(n int) time.Duration {
	d := c.o.MaxBackoff
	if n < 40 {
		d = min(c.o.MaxBackoff, c.o.BaseBackoff<<n)
	}
	return time.Duration(float64(d) * (0.5 + 0.5*c.o.Rand.Float64()))
}

// pace waits until 1/Rate seconds have passed since the last request
// started.
func (c *client) pace(ctx context.Context) error {
	interval := time.Duration(float64(time.Second) / c.o.Rate)
	if !c.last.IsZero() {
		if wait := c.last.Add(interval).Sub(c.o.Now()); wait > 0 {
			if err := c.o.Sleep(ctx, wait); err != nil {
				return err
			}
		}
	}
	c.last = c.o.Now()
	return nil
}

func retryable(err error) bool {
	var se *statusError
	if errors.As(err, &se) {
		return se.code == http.StatusTooManyRequests || se.code >= 500
	}
	return true // no answer, a timeout, a cut-off body or a malformed page
}

// errStalled is the cause when the server sends nothing for ReadTimeout.
var errStalled = errors.New("no data within the read timeout")

// try makes one request and decodes the page.
func (c *client) try(ctx context.Context, u string) (page, error) {
	c.requests++
	rctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)
	// A watchdog cancels the request when no byte arrives for ReadTimeout:
	// before the headers or between reads of the body.
	var mu sync.Mutex
	timer := time.AfterFunc(c.o.ReadTimeout, func() { cancel(errStalled) })
	defer timer.Stop()
	touch := func() {
		mu.Lock()
		timer.Reset(c.o.ReadTimeout)
		mu.Unlock()
	}
	req, err := http.NewRequestWithContext(rctx, http.MethodGet, u, nil)
	if err != nil {
		return page{}, err
	}
	req.Header.Set("User-Agent", c.o.UserAgent)
	req.Header.Set("Accept", "application/json")
	resp, err := c.o.Client.Do(req)
	if err != nil {
		if cause := context.Cause(rctx); cause != nil && ctx.Err() == nil {
			return page{}, cause
		}
		return page{}, err
	}
	defer resp.Body.Close()
	touch()
	body := &touchReader{r: resp.Body, touch: touch}
	if resp.StatusCode != http.StatusOK {
		snippet, _ := io.ReadAll(io.LimitReader(body, 300))
		se := &statusError{code: resp.StatusCode, body: strings.Join(strings.Fields(string(snippet)), " ")}
		se.retryAfter, se.hasAfter = parseRetryAfter(resp.Header.Get("Retry-After"), c.o.Now())
		return page{}, se
	}
	data, err := io.ReadAll(body)
	if err != nil {
		if cause := context.Cause(rctx); cause != nil && ctx.Err() == nil {
			return page{}, fmt.Errorf("read body: %w", cause)
		}
		return page{}, fmt.Errorf("read body: %w", err)
	}
	return decodePage(data)
}

// touchReader calls touch after every read that returns data.
type touchReader struct {
	r     io.Reader
	touch func()
}

func (t *touchReader) Read(p []byte) (int, error) {
	n, err := t.r.Read(p)
	if n > 0 {
		t.touch()
	}
	return n, err
}

// decodePage reads {"studies": [...], "nextPageToken": "...", "totalCount": n}.
func decodePage(data []byte) (page, error) {
	var raw struct {
		Studies       *[]json.RawMessage `json:"studies"`
		NextPageToken *string            `json:"nextPageToken"`
		TotalCount    *int               `json:"totalCount"`
	}
	if err := json.Unmarshal(data, &raw); err != nil {
		return page{}, fmt.Errorf("%w: %v", errMalformed, err)
	}
	if raw.Studies == nil {
		return page{}, fmt.Errorf("%w: no \"studies\" array", errMalformed)
	}
	pg := page{Studies: *raw.Studies, TotalCount: raw.TotalCount}
	if raw.NextPageToken != nil {
		pg.NextPageToken = *raw.NextPageToken
	}
	for i, s := range pg.Studies {
		if len(s) == 0 || s[0] != '{' {
			return page{}, fmt.Errorf("%w: studies[%d] is not an object", errMalformed, i)
		}
	}
	return pg, nil
}

// parseRetryAfter reads a Retry-After value: seconds, or an HTTP date.
func parseRetryAfter(s string, now time.Time) (time.Duration, bool) {
	s = strings.TrimSpace(s)
	if s == "" {
		return 0, false
	}
	if n, err := strconv.Atoi(s); err == nil && n >= 0 {
		return time.Duration(n) * time.Second, true
	}
	if t, err := http.ParseTime(s); err == nil {
		return max(0, t.Sub(now)), true
	}
	return 0, false
}

// writePage writes the studies as gzip JSON lines to dir/name: a
// temporary file, synced, then renamed over name, and the folder synced.
func writePage(dir, name string, studies []json.RawMessage) (err error) {
	tmp, err := os.CreateTemp(dir, "."+name+".*.tmp")
	if err != nil {
		return fmt.Errorf("write page %s: %w", name, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	zw := gzip.NewWriter(tmp)
	var line bytes.Buffer
	for i, s := range studies {
		line.Reset()
		if err := json.Compact(&line, s); err != nil {
			return fmt.Errorf("write page %s: studies[%d]: %w", name, i, err)
		}
		line.WriteByte('\n')
		if _, err := zw.Write(line.Bytes()); err != nil {
			return fmt.Errorf("write page %s: %w", name, err)
		}
	}
	if err := zw.Close(); err != nil {
		return fmt.Errorf("write page %s: %w", name, err)
	}
	if err := tmp.Sync(); err != nil {
		return fmt.Errorf("write page %s: %w", name, err)
	}
	if err := tmp.Close(); err != nil {
		return fmt.Errorf("write page %s: %w", name, err)
	}
	if err := os.Rename(tmp.Name(), filepath.Join(dir, name)); err != nil {
		return fmt.Errorf("write page %s: %w", name, err)
	}
	return syncDir(dir)
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) {
		return fmt.Errorf("sync %s: %w", dir, err)
	}
	return nil
}

func loadState(path string) (State, bool, error) {
	data, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return State{}, false, nil
	}
	if err != nil {
		return State{}, false, fmt.Errorf("read state file: %w", err)
	}
	var st State
	if err := json.Unmarshal(data, &st); err != nil {
		return State{}, false, fmt.Errorf("state file %s is damaged (%v); remove it or use --restart", path, err)
	}
	if st.PageSize < 1 || st.PageSize > MaxPageSize || (!st.Done && len(st.Pages) > 0 && st.NextPageToken == "") {
		return State{}, false, fmt.Errorf("state file %s is inconsistent; remove it or use --restart", path)
	}
	for _, p := range st.Pages {
		if p.File == "" {
			continue
		}
		if _, err := os.Stat(filepath.Join(filepath.Dir(path), p.File)); err != nil {
			return State{}, false, fmt.Errorf("state file %s lists %s, which is missing; use --restart", path, p.File)
		}
	}
	return st, true, nil
}

// saveState writes the state file atomically.
func saveState(path string, st State) error {
	data, err := json.MarshalIndent(st, "", "  ")
	if err != nil {
		return err
	}
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".*.tmp")
	if err != nil {
		return fmt.Errorf("write state file: %w", err)
	}
	// A failed write or sync must stop the rename: the old state stays.
	if _, err = tmp.Write(append(data, '\n')); err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err == nil {
		err = os.Rename(tmp.Name(), path)
	}
	if err != nil {
		os.Remove(tmp.Name())
		return fmt.Errorf("write state file: %w", err)
	}
	return syncDir(dir)
}

// discard removes a query's state file and the pages it lists.
func discard(dir, statePath string) error {
	st, found, _ := loadStateLoose(statePath)
	if !found {
		return nil
	}
	for _, p := range st.Pages {
		if p.File == "" {
			continue
		}
		if err := os.Remove(filepath.Join(dir, p.File)); err != nil && !errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("remove %s: %w", p.File, err)
		}
	}
	if err := os.Remove(statePath); err != nil && !errors.Is(err, os.ErrNotExist) {
		return fmt.Errorf("remove state file: %w", err)
	}
	return nil
}

// loadStateLoose reads a state file without checking it.
func loadStateLoose(path string) (State, bool, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return State{}, false, err
	}
	var st State
	err = json.Unmarshal(data, &st)
	return st, true, err
}
