package workspace

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"sync"

	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

// AuditResult is one review's audit as AuditEach hands it on.
type AuditResult struct {
	Index int // position in the input order
	Audit compare.ReviewAudit
	// JSON is the compact JSON text of Audit (HTML characters unescaped),
	// filled when StreamOptions.JSON or a packer asks for it.
	JSON []byte
	// Err is a *ReviewError when the review could not be audited; Audit
	// and JSON are then empty.
	Err error

	// Packed is the result packed for storage, when StreamOptions.Packer is set.
	Packed store.PackedResult
}

// StreamOptions control AuditEach.
type StreamOptions struct {
	// Workers is the number of reviews audited in parallel (zero or less
	// means 1).
	Workers int
	// JSON asks for each audit's compact JSON text.
	JSON bool
	// Packer, when set, packs each audit's JSON for storage on the worker
	// goroutines; the first review's JSON becomes its dictionary.
	Packer *store.ResultPacker
}

// AuditEach audits n reviews, input(i) giving the i-th, on up to
// opts.Workers goroutines, and calls emit with each result in input order
// as soon as it and all before it are done. At most a few results per
// worker are held at any time, so memory does not grow with n. Inputs are
// read on the worker goroutines. A review that cannot be audited is
// emitted with its Err set; an error from input or emit, or the context's
// when it is cancelled, stops the audit and is returned.
func AuditEach(ctx context.Context, n int, input func(ctx context.Context, i int) (compare.AuditInput, error), opts compare.Options, so StreamOptions, emit func(AuditResult) error) error {
	if n == 0 {
		return ctx.Err()
	}
	workers := max(1, min(so.Workers, n))
	ctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)
	window := make(chan struct{}, 4*workers) // results dispatched but not yet emitted
	next := make(chan int)
	results := make(chan workerResult, workers)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				r := auditOne(ctx, i, input, opts, so)
				select {
				case results <- r:
				case <-ctx.Done():
				}
			}
		}()
	}
	go func() {
		defer close(next)
		for i := range n {
			select {
			case window <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case next <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	go func() {
		wg.Wait()
		close(results)
	}()

	pending := make(map[int]AuditResult, cap(window))
	want := 0
	for r := range results {
		if ctx.Err() != nil {
			continue // draining after a stop
		}
		if r.fatal != nil {
			cancel(r.fatal)
			continue
		}
		pending[r.Index] = r.AuditResult
		for {
			x, ok := pending[want]
			if !ok {
				break
			}
			delete(pending, want)
			want++
			<-window
			if err := emit(x); err != nil {
				cancel(err)
				break
			}
		}
	}
	if want == n {
		return nil
	}
	if err := context.Cause(ctx); err != nil {
		return err
	}
	return fmt.Errorf("audit stopped after %d of %d reviews", want, n)
}

// workerResult is an AuditResult or an error that stops the whole audit.
type workerResult struct {
	AuditResult
	fatal error
}

// auditOne loads, audits, encodes and packs review i.
func auditOne(ctx context.Context, i int, input func(context.Context, int) (compare.AuditInput, error), opts compare.Options, so StreamOptions) (w workerResult) {
	w.Index = i
	if so.Packer != nil && i == 0 {
		defer func() { so.Packer.SetDictionary(w.JSON) }()
	}
	in, err := input(ctx, i)
	if err != nil {
		w.fatal = err
		return w
	}
	a, err := compare.AuditReview(in, opts)
	if err != nil {
		w.Err = &compare.ReviewError{ReviewID: in.Review.ReviewID, Err: err}
		return w
	}
	w.Audit = a
	if !so.JSON && so.Packer == nil {
		return w
	}
	if w.JSON, err = CompactJSON(a); err != nil {
		w.fatal = fmt.Errorf("encode audit of %s: %w", a.ReviewID, err)
		return w
	}
	if so.Packer != nil {
		if i == 0 {
			so.Packer.SetDictionary(w.JSON)
		}
		if w.Packed, err = so.Packer.Pack(a.ReviewID, w.JSON); err != nil {
			w.fatal = fmt.Errorf("pack audit of %s: %w", a.ReviewID, err)
		}
	}
	return w
}

// CompactJSON is v as compact JSON text without HTML escaping (the form
// the command line prints and the store keeps), with no final newline.
func CompactJSON(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimSuffix(buf.Bytes(), []byte("\n")), nil
}

// AuditAll audits every input with up to workers goroutines (zero or less
// means 1) and returns the audits in input order, leaving out reviews that
// failed; their errors come back as *ReviewError, also in input order. The
// context is checked before each review; when it is cancelled AuditAll
// returns its error and no audits.
func AuditAll(ctx context.Context, inputs []compare.AuditInput, opts compare.Options, workers int) ([]compare.ReviewAudit, []error, error) {
	var out []compare.ReviewAudit
	var failed []error
	err := AuditEach(ctx, len(inputs), func(ctx context.Context, i int) (compare.AuditInput, error) {
		return inputs[i], ctx.Err()
	}, opts, StreamOptions{Workers: workers}, func(r AuditResult) error {
		if r.Err != nil {
			failed = append(failed, r.Err)
		} else {
			out = append(out, r.Audit)
		}
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	return out, failed, nil
}

// LoadAuditInputs reads the named reviews (all when ids is empty) with
// their studies, links and the linked registry records: the records of
// accepted links, and of links classed included or no-results that were
// not rejected (for Discrepancies and Missing).
func LoadAuditInputs(ctx context.Context, db *store.DB, ids []string) ([]compare.AuditInput, error) {
	reviews, err := selectReviews(ctx, db, ids)
	if err != nil {
		return nil, err
	}
	out := make([]compare.AuditInput, 0, len(reviews))
	for lo := 0; lo < len(reviews); lo += inputChunk {
		ids := make([]string, 0, inputChunk)
		for _, rv := range reviews[lo:min(lo+inputChunk, len(reviews))] {
			ids = append(ids, rv.ReviewID)
		}
		ins, err := loadAuditInputChunk(ctx, db, ids)
		if err != nil {
			return nil, err
		}
		out = append(out, ins...)
	}
	return out, nil
}

// loadAuditInputChunk reads the inputs of a few reviews: the reviews with
// their studies and links in one read, then in another the registry
// records of all their accepted links and of the links classed included
// or no-results that were not rejected (records not in the workspace are
// left out).
func loadAuditInputChunk(ctx context.Context, db *store.DB, reviewIDs []string) ([]compare.AuditInput, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	data, err := db.ReviewsData(ctx, reviewIDs)
	if err != nil {
		return nil, err
	}
	ins := make([]compare.AuditInput, len(data))
	var ids []string
	seen := map[string]bool{}
	for i, d := range data {
		in := compare.AuditInput{Review: d.Review, Studies: d.Studies, Links: d.Links, Trials: map[string]ingest.Trial{}}
		for _, l := range in.Links {
			if wantTrial(l) && !seen[l.TrialID] {
				seen[l.TrialID] = true
				ids = append(ids, l.TrialID)
			}
		}
		ins[i] = in
	}
	trials, err := db.Trials(ctx, ids)
	if err != nil {
		return nil, fmt.Errorf("load trials: %w", err)
	}
	byID := make(map[string]ingest.Trial, len(trials))
	for _, t := range trials {
		byID[t.TrialID] = t
	}
	for _, in := range ins {
		for _, l := range in.Links {
			if t, ok := byID[l.TrialID]; ok && wantTrial(l) {
				in.Trials[l.TrialID] = t
			}
		}
	}
	return ins, nil
}

// wantTrial reports whether an audit needs the registry record of a link:
// accepted (also as a duplicate), or classed included or no-results and not rejected.
func wantTrial(l ingest.Link) bool {
	return compare.Accepted(l.Decision) ||
		(!strings.EqualFold(l.Decision, "reject") && (l.Class == compare.ClassIncluded || l.Class == compare.ClassNoResults))
}

// inputChunk is the number of reviews whose inputs are read together.
const inputChunk = 32

// chunkedInputs hands out the inputs of reviews, reading them a chunk at a
// time and dropping each chunk once all its inputs are taken, so that
// memory stays bounded. The first worker to need a chunk reads it and
// starts reading the next one in the background, so that the workers
// rarely wait for a read.
type chunkedInputs struct {
	db       *store.DB
	ids      []string // review ids; each chunk reads its reviews
	mu       sync.Mutex
	chunks   map[int]*loadedChunk
	prefetch sync.WaitGroup
}

// newChunkedInputs returns the inputs of the named reviews (all when ids
// is empty, in review id order); a named review that is not stored is an
// error.
func newChunkedInputs(ctx context.Context, db *store.DB, ids []string) (*chunkedInputs, error) {
	if len(ids) == 0 {
		all, err := db.ReviewIDs(ctx)
		if err != nil {
			return nil, err
		}
		if len(all) == 0 {
			return nil, errors.New("the workspace holds no reviews; load them with 'unshelved ingest reviews'")
		}
		ids = all
	} else if _, err := selectReviews(ctx, db, ids); err != nil {
		return nil, err
	}
	return &chunkedInputs{db: db, ids: ids, chunks: map[int]*loadedChunk{}}, nil
}

type loadedChunk struct {
	once   sync.Once
	inputs []compare.AuditInput
	err    error
	left   int
}

// chunk returns chunk k, reading it if no one has yet, and whether this
// call created it.
func (c *chunkedInputs) chunk(ctx context.Context, k int) (*loadedChunk, bool) {
	lo, hi := k*inputChunk, min((k+1)*inputChunk, len(c.ids))
	c.mu.Lock()
	ch := c.chunks[k]
	created := ch == nil
	if created {
		ch = &loadedChunk{left: hi - lo}
		c.chunks[k] = ch
	}
	c.mu.Unlock()
	return ch, created
}

func (c *chunkedInputs) load(ctx context.Context, k int, ch *loadedChunk) {
	ch.once.Do(func() {
		lo, hi := k*inputChunk, min((k+1)*inputChunk, len(c.ids))
		ch.inputs, ch.err = loadAuditInputChunk(ctx, c.db, c.ids[lo:hi])
	})
}

// wait waits for the background reads to end.
func (c *chunkedInputs) wait() { c.prefetch.Wait() }

func (c *chunkedInputs) input(ctx context.Context, i int) (compare.AuditInput, error) {
	k := i / inputChunk
	lo := k * inputChunk
	ch, created := c.chunk(ctx, k)
	if created && (k+1)*inputChunk < len(c.ids) {
		if next, ok := c.chunk(ctx, k+1); ok {
			c.prefetch.Add(1)
			go func() {
				defer c.prefetch.Done()
				c.load(ctx, k+1, next)
			}()
		}
	}
	c.load(ctx, k, ch)
	if ch.err != nil {
		return compare.AuditInput{}, ch.err
	}
	in := ch.inputs[i-lo]
	c.mu.Lock()
	ch.inputs[i-lo] = compare.AuditInput{}
	if ch.left--; ch.left == 0 {
		delete(c.chunks, k)
	}
	c.mu.Unlock()
	return in, nil
}

// AuditRun is a stored audit run and what it produced.
type AuditRun struct {
	RunID  int64 // zero when the run was not stored
	Audits []compare.ReviewAudit
	Failed []error // *ReviewError per review that could not be audited
	// Reviews is the number of reviews audited and Bytes the size of
	// their stored results.
	Reviews int
	Bytes   int64
}

// RunOptions control RunAuditEach.
type RunOptions struct {
	Workers int
	// NoStore leaves the workspace untouched: no run is recorded.
	NoStore bool
	// JSON asks for each audit's compact JSON text (AuditResult.JSON).
	JSON bool
}

// RunAudit audits the named reviews (all when ids is empty) and records
// the run in the store: StartRun with kind "audit", opts as JSON, version
// and opts.Seed; each review's audit JSON, packed; FinishRun with
// "complete", "cancelled" when ctx was cancelled (the error is then
// ctx's), or "failed" on any other error. A run cut short is never marked
// complete. Reviews that fail on their own (no usable study) do not fail
// the run; they are listed in Failed.
func RunAudit(ctx context.Context, db *store.DB, ids []string, opts compare.Options, version string, workers int) (AuditRun, error) {
	return RunAuditOpts(ctx, db, ids, opts, version, RunOptions{Workers: workers})
}

// RunAuditOpts is RunAudit with the run options (not storing the run).
func RunAuditOpts(ctx context.Context, db *store.DB, ids []string, opts compare.Options, version string, ro RunOptions) (AuditRun, error) {
	var audits []compare.ReviewAudit
	run, err := RunAuditEach(ctx, db, ids, opts, version, ro, func(r AuditResult) error {
		if r.Err == nil {
			audits = append(audits, r.Audit)
		}
		return nil
	})
	run.Audits = audits
	return run, err
}

// RunAuditEach is RunAudit streaming: emit gets each review's result in
// review order as soon as it is ready (see AuditEach), and results are
// stored as they come, so memory stays flat in the number of reviews.
// AuditRun.Audits stays empty.
func RunAuditEach(ctx context.Context, db *store.DB, ids []string, opts compare.Options, version string, ro RunOptions, emit func(AuditResult) error) (AuditRun, error) {
	var run AuditRun
	so := StreamOptions{Workers: ro.Workers, JSON: ro.JSON}
	var w *store.ResultWriter
	if !ro.NoStore {
		optJSON, err := json.Marshal(opts.Record())
		if err != nil {
			return run, fmt.Errorf("encode options: %w", err)
		}
		if run.RunID, err = db.StartRun(ctx, "audit", string(optJSON), version, opts.Seed); err != nil {
			return run, err
		}
		w = db.NewResultWriter(run.RunID)
		so.Packer = w.Packer()
	}
	err := func() error {
		inputs, err := newChunkedInputs(ctx, db, ids)
		if err != nil {
			return err
		}
		defer inputs.wait()
		err = AuditEach(ctx, len(inputs.ids), inputs.input, opts, so, func(r AuditResult) error {
			if r.Err != nil {
				run.Failed = append(run.Failed, r.Err)
			} else {
				run.Reviews++
				if w != nil {
					if err := w.Add(ctx, r.Packed); err != nil {
						return err
					}
				}
			}
			return emit(r)
		})
		if err != nil {
			return err
		}
		if w != nil {
			return w.Flush(ctx)
		}
		return nil
	}()
	if w == nil {
		return run, err
	}
	run.Bytes = w.Bytes()
	return run, finishRun(db, run.RunID, ctx, err)
}
