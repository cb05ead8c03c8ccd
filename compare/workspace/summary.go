package workspace

import (
	"context"
	"encoding/json"
	"fmt"
	"unshelved/compare"
	"unshelved/store"
)

// SummaryRun is a stored summary run.
type SummaryRun struct {
	RunID   int64
	Summary compare.Summary
	Audits  []compare.ReviewAudit // the audits summarized, in review order
	Failed  []error
}

// RunSummary audits every review with auditOpts (not stored as an audit
// run), summarizes them with opts, and records the run in the store with
// kind "summary": its options (both sets) as JSON, version and
// auditOpts.Seed; the summary JSON is saved as the run's single result
// under the empty review id. Status as for RunAudit.
func RunSummary(ctx context.Context, db *store.DB, auditOpts compare.Options, opts compare.SummaryOptions, version string, workers int) (SummaryRun, error) {
	return RunSummaryOpts(ctx, db, auditOpts, opts, version, RunOptions{Workers: workers})
}

// RunSummaryOpts is RunSummary with the run options; with NoStore the
// workspace is left untouched and RunID is zero.
func RunSummaryOpts(ctx context.Context, db *store.DB, auditOpts compare.Options, opts compare.SummaryOptions, version string, ro RunOptions) (SummaryRun, error) {
	o := opts.Resolved()
	var run SummaryRun
	if !ro.NoStore {
		optJSON, err := json.Marshal(map[string]any{"audit": auditOpts.Record(), "summary": summaryRecord(o)})
		if err != nil {
			return SummaryRun{}, fmt.Errorf("encode options: %w", err)
		}
		if run.RunID, err = db.StartRun(ctx, "summary", string(optJSON), version, auditOpts.Seed); err != nil {
			return SummaryRun{}, err
		}
	}
	err := func() error {
		inputs, err := newChunkedInputs(ctx, db, nil)
		if err != nil {
			return err
		}
		defer inputs.wait()
		err = AuditEach(ctx, len(inputs.ids), inputs.input, auditOpts, StreamOptions{Workers: ro.Workers}, func(r AuditResult) error {
			if r.Err != nil {
				run.Failed = append(run.Failed, r.Err)
			} else {
				run.Audits = append(run.Audits, r.Audit)
			}
			return nil
		})
		if err != nil {
			return err
		}
		run.Summary = compare.Summarize(run.Audits, o)
		if ro.NoStore {
			return nil
		}
		b, err := CompactJSON(run.Summary)
		if err != nil {
			return fmt.Errorf("encode summary: %w", err)
		}
		return db.SaveRunResult(ctx, run.RunID, "", string(b))
	}()
	if ro.NoStore {
		return run, err
	}
	return run, finishRun(db, run.RunID, ctx, err)
}

func summaryRecord(o compare.SummaryOptions) map[string]any {
	return map[string]any{"truth": o.Truth, "truth_threshold": o.Threshold, "level": o.Level, "tau2": string(o.Tau2), "ci": o.CI}
}

// StoredSummary reads the summary saved by run id (kind "summary").
func StoredSummary(ctx context.Context, db *store.DB, runID int64) (store.Run, compare.Summary, error) {
	runs, err := db.Runs(ctx, "summary")
	if err != nil {
		return store.Run{}, compare.Summary{}, err
	}
	for _, r := range runs {
		if r.ID != runID {
			continue
		}
		res, err := db.RunResults(ctx, runID)
		if err != nil {
			return r, compare.Summary{}, err
		}
		js, ok := res[""]
		if !ok {
			return r, compare.Summary{}, fmt.Errorf("summary run %d (%s) holds no result", runID, r.Status)
		}
		var s compare.Summary
		if err := json.Unmarshal([]byte(js), &s); err != nil {
			return r, compare.Summary{}, fmt.Errorf("decode summary run %d: %w", runID, err)
		}
		return r, s, nil
	}
	return store.Run{}, compare.Summary{}, fmt.Errorf("no summary run %d in the workspace", runID)
}
