package workspace

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"runtime"
	"slices"
	"strings"
	"sync"

	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

// Questions returns the workspace's questions: the reviews with no
// published studies, in review id order. With ids, those reviews (a
// review with studies is scanned as a question too, its studies unused).
func Questions(ctx context.Context, db *store.DB, ids []string) ([]ingest.Review, error) {
	reviews, err := selectReviews(ctx, db, ids)
	if err != nil || len(ids) > 0 {
		return reviews, err
	}
	var out []ingest.Review
	for _, rv := range reviews {
		st, err := db.ReviewStudies(ctx, rv.ReviewID)
		if err != nil {
			return nil, fmt.Errorf("load studies of %s: %w", rv.ReviewID, err)
		}
		if len(st) == 0 {
			out = append(out, rv)
		}
	}
	if len(out) == 0 {
		return nil, errors.New("the workspace holds no questions (reviews without studies); load a questions.csv with 'unshelved ingest reviews' or name a review with --review")
	}
	return out, nil
}

// ScanRun is a scan and what it produced.
type ScanRun struct {
	RunID         int64 // 0 when not stored
	Results       []compare.ScanResult
	Failed        []error // *ReviewError per question that could not be scanned
	TrialsIndexed int
}

// ScanRunOptions say how RunScan runs.
type ScanRunOptions struct {
	Scan    compare.ScanOptions
	IDs     []string      // questions to scan; empty means every question
	Links   []ingest.Link // links-file rows (all questions)
	Workers int           // zero means GOMAXPROCS
	Version string
	// Store records the run (kind "scan") with each question's result.
	Store bool
	// NoStore keeps RunScanSummary from recording its summary run.
	NoStore bool
	// Emit, when set, receives each result in question order as soon as
	// it and every earlier one are done (results are then not kept in
	// ScanRun.Results).
	Emit func(compare.ScanResult) error
}

// RunScan scans questions in the workspace: it indexes every stored
// trial once, then, in parallel, loads each question's candidate records
// and calls ScanQuestion. Results stream to Emit in question order.
func RunScan(ctx context.Context, db *store.DB, o ScanRunOptions) (ScanRun, error) {
	var run ScanRun
	questions, err := Questions(ctx, db, o.IDs)
	if err != nil {
		return run, err
	}
	if o.Store {
		optJSON, err := json.Marshal(map[string]any{"audit": o.Scan.Audit.Record(), "accept_above": o.Scan.AcceptAboveOrDefault(),
			"highest_dose": o.Scan.HighestDose, "links_rows": len(o.Links)})
		if err != nil {
			return run, fmt.Errorf("encode options: %w", err)
		}
		if run.RunID, err = db.StartRun(ctx, "scan", string(optJSON), o.Version, o.Scan.Audit.Seed); err != nil {
			return run, err
		}
	}
	err = runScan(ctx, db, questions, o, &run)
	if o.Store {
		err = finishRun(db, run.RunID, ctx, err)
	}
	return run, err
}

func runScan(ctx context.Context, db *store.DB, questions []ingest.Review, o ScanRunOptions, run *ScanRun) error {
	ix, err := indexWorkspace(ctx, db)
	if err != nil {
		return err
	}
	run.TrialsIndexed = ix.Len()
	byQuestion := map[string][]ingest.Link{}
	for _, l := range o.Links {
		byQuestion[l.ReviewID] = append(byQuestion[l.ReviewID], l)
	}
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	type slot struct {
		res  compare.ScanResult
		err  error
		done chan struct{}
	}
	slots := make([]*slot, len(questions))
	for i := range slots {
		slots[i] = &slot{done: make(chan struct{})}
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	next := make(chan int)
	var wg sync.WaitGroup
	for range max(1, min(workers, len(questions))) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				q := questions[i]
				s := slots[i]
				s.res, s.err = scanOne(ctx, db, ix, q, byQuestion[q.ReviewID], o.Scan)
				close(s.done)
			}
		}()
	}
	go func() {
		defer close(next)
		for i := range questions {
			select {
			case next <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	var firstErr error
	for i, s := range slots {
		select {
		case <-s.done:
		case <-ctx.Done():
		}
		if err := ctx.Err(); err != nil {
			firstErr = err
			break
		}
		if s.err != nil {
			var re *compare.ReviewError
			if errors.As(s.err, &re) {
				run.Failed = append(run.Failed, s.err)
				slots[i] = nil
				continue
			}
			firstErr = s.err
			break
		}
		if err := keepScan(ctx, db, o, run, s.res); err != nil {
			firstErr = err
			break
		}
		slots[i] = nil
	}
	cancel()
	wg.Wait()
	return firstErr
}

// keepScan stores and emits (or keeps) one result.
func keepScan(ctx context.Context, db *store.DB, o ScanRunOptions, run *ScanRun, r compare.ScanResult) error {
	if o.Store {
		var b strings.Builder
		enc := json.NewEncoder(&b)
		enc.SetEscapeHTML(false) // as printed, so that 'runs show' gives the same bytes
		if err := enc.Encode(r); err != nil {
			return fmt.Errorf("encode scan of %s: %w", r.QuestionID, err)
		}
		if err := db.SaveRunResult(ctx, run.RunID, r.QuestionID, strings.TrimSuffix(b.String(), "\n")); err != nil {
			return err
		}
	}
	if o.Emit != nil {
		return o.Emit(r)
	}
	run.Results = append(run.Results, r)
	return nil
}

// indexWorkspace builds the candidate index over every stored trial,
// streaming the texts (no summaries are held).
func indexWorkspace(ctx context.Context, db *store.DB) (*compare.TrialIndex, error) {
	b := compare.NewTrialIndexBuilder()
	err := db.IndexTexts(ctx, func(id string, side int, text string) error {
		b.Add(id, side, text)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return b.Index(), nil
}

// scanOne loads a question's candidate records and scans it. A question
// that cannot be scanned on its own is a *ReviewError.
func scanOne(ctx context.Context, db *store.DB, ix *compare.TrialIndex, q ingest.Review, links []ingest.Link, opts compare.ScanOptions) (compare.ScanResult, error) {
	ids := map[string]bool{}
	for _, id := range ix.Candidates(q) {
		ids[id] = true
	}
	for _, l := range links {
		ids[l.TrialID] = true
	}
	trials := make([]ingest.Trial, 0, len(ids))
	seen := map[string]bool{}
	for _, id := range slices.Sorted(maps.Keys(ids)) {
		if err := ctx.Err(); err != nil {
			return compare.ScanResult{}, err
		}
		t, err := db.Trial(ctx, id)
		if errors.Is(err, store.ErrNotFound) {
			continue // a links-file id that is not in the workspace; ScanQuestion says so
		}
		if err != nil {
			return compare.ScanResult{}, fmt.Errorf("load trial %s: %w", id, err)
		}
		if seen[strings.ToUpper(t.TrialID)] {
			continue
		}
		seen[strings.ToUpper(t.TrialID)] = true
		trials = append(trials, t)
	}
	res, err := compare.ScanQuestion(q, trials, links, opts)
	if err != nil {
		return res, &compare.ReviewError{ReviewID: q.ReviewID, Err: err}
	}
	return res, nil
}

// ScanAudits are the audits behind scan results, for Summarize: questions
// with linked and unlinked trials pooled, or linked trials alone.
func ScanAudits(results []compare.ScanResult) []compare.ReviewAudit {
	var out []compare.ReviewAudit
	for _, r := range results {
		if r.Audit != nil {
			out = append(out, *r.Audit)
		}
	}
	return out
}

// RunScanSummary scans every question afresh (or those in o.IDs; the
// scan itself is not stored) and summarizes the audits behind the scans
// with opts, exactly as RunSummary does for reviews: the linked trials
// play the published studies, the unlinked ones the registry additions.
// The summary is stored as a run of kind "summary" whose options say
// "scan": true.
func RunScanSummary(ctx context.Context, db *store.DB, o ScanRunOptions, opts compare.SummaryOptions) (SummaryRun, error) {
	so := opts.Resolved()
	optJSON, err := json.Marshal(map[string]any{"scan": true, "audit": o.Scan.Audit.Record(), "accept_above": o.Scan.AcceptAboveOrDefault(),
		"summary": summaryRecord(so)})
	if err != nil {
		return SummaryRun{}, fmt.Errorf("encode options: %w", err)
	}
	var runID int64
	if !o.NoStore {
		if runID, err = db.StartRun(ctx, "summary", string(optJSON), o.Version, o.Scan.Audit.Seed); err != nil {
			return SummaryRun{}, err
		}
	}
	run := SummaryRun{RunID: runID}
	err = func() error {
		var audits []compare.ReviewAudit
		o.Store = false
		o.Emit = func(r compare.ScanResult) error {
			if r.Audit != nil {
				audits = append(audits, *r.Audit)
			}
			return nil
		}
		sr, err := RunScan(ctx, db, o)
		if err != nil {
			return err
		}
		run.Failed, run.Audits = sr.Failed, audits
		run.Summary = compare.Summarize(audits, so)
		if o.NoStore {
			return nil
		}
		b, err := json.Marshal(run.Summary)
		if err != nil {
			return fmt.Errorf("encode summary: %w", err)
		}
		return db.SaveRunResult(ctx, runID, "", string(b))
	}()
	if o.NoStore {
		return run, err
	}
	return run, finishRun(db, runID, ctx, err)
}
