package workspace

import (
	"context"
	"errors"
	"fmt"
	"time"

	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/ingest"
	"unshelved/store"
)

// ReportOptions control WriteReport.
type ReportOptions struct {
	Dir     string          // folder of the pages, created if needed
	Reviews []string        // review ids; empty means all
	Audit   compare.Options // the audit's options (Level is the pages' level)
	Run     RunOptions      // workers, and whether the run is stored
	Imputed bool            // draw trim-and-fill's imputed studies
	Figures []string        // also write the plots as files: svg, png, pdf
	// Workspace is the database path the provenance block names; Version
	// the tool version recorded with the run and printed on the pages.
	Workspace, Version string
	// Now is the clock of the pages' date; nil means time.Now.
	Now func() time.Time
}

// ReportResult is what WriteReport wrote.
type ReportResult struct {
	Index  string                // path of the overview page
	RunID  int64                 // the stored audit run, 0 when not stored
	Audits []compare.ReviewAudit // the reviews with a page
	Failed []error               // reviews left out, each naming why
}

// WriteReport audits the reviews with o.Audit, records the run (unless
// o.Run.NoStore) and writes the HTML report: an overview page and one
// page per review with its provenance. Reviews that cannot be audited are
// left out and returned in Failed. A workspace without reviews is an
// error.
func WriteReport(ctx context.Context, db *store.DB, o ReportOptions) (ReportResult, error) {
	var res ReportResult
	run, err := RunAuditOpts(ctx, db, o.Reviews, o.Audit, o.Version, o.Run)
	if err != nil {
		return res, err
	}
	res.RunID, res.Audits, res.Failed = run.RunID, run.Audits, run.Failed
	if len(run.Audits) == 0 && len(run.Failed) == 0 {
		return res, errors.New("no reviews in the workspace: load them with `unshelved ingest reviews` first")
	}
	reviews, err := reviewDetails(ctx, db, run.Audits)
	if err != nil {
		return res, err
	}
	prov, err := LoadProvenance(ctx, db, run.Audits,
		compare.RunInfo{Workspace: o.Workspace, RunID: run.RunID, Version: o.Version, Options: o.Audit}, true)
	if err != nil {
		return res, fmt.Errorf("provenance of the report pages: %w", err)
	}
	now := o.Now
	if now == nil {
		now = time.Now
	}
	res.Index, err = plotrender.WriteReport(o.Dir, run.Audits, plotrender.ReportOptions{
		Reviews: reviews, Imputed: o.Imputed, Level: o.Audit.Level, Figures: o.Figures,
		Generated: now().UTC().Format("2006-01-02") + ", unshelved " + o.Version,
		Audit:     o.Audit, Version: o.Version, Provenance: prov,
	})
	return res, err
}

// reviewDetails loads each audited review's question (outcome, timepoint,
// populations) for the report pages.
func reviewDetails(ctx context.Context, db *store.DB, audits []compare.ReviewAudit) (map[string]ingest.Review, error) {
	out := make(map[string]ingest.Review, len(audits))
	for _, a := range audits {
		rv, err := db.Review(ctx, a.ReviewID)
		if errors.Is(err, store.ErrNotFound) {
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("load review %s: %w", a.ReviewID, err)
		}
		out[a.ReviewID] = rv
	}
	return out, nil
}
