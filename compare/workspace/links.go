package workspace

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"strings"

	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/ingest/fetch"
	"unshelved/store"
)

// ProposeLinks matches the reviews to the registry trials in the
// workspace, saves the proposals (keeping decisions already made) and
// writes them as a links file to w (ingest.WriteLinks; ProposalLinks says
// which rows).
func ProposeLinks(ctx context.Context, db *store.DB, opts compare.MatchOptions, w io.Writer) (MatchReport, error) {
	opts.Save = true
	rep, err := Match(ctx, db, opts)
	if err != nil {
		return rep, err
	}
	return rep, ingest.WriteLinks(w, ProposalLinks(rep))
}

// ProposalLinks lists the rows of the proposals file: one link per
// proposed outcome, best first within each trial and trials by best score;
// a trial without a proposed outcome gets one link naming no outcome
// (ingest.NoOutcomeIndex). Reasons join the trial's and the outcome's.
func ProposalLinks(rep MatchReport) []ingest.Link {
	var out []ingest.Link
	for _, rp := range rep.Reviews {
		for _, tp := range rp.Trials {
			if len(tp.Outcomes) == 0 {
				score := tp.Score
				out = append(out, ingest.Link{ReviewID: rp.ReviewID, TrialID: tp.TrialID, Class: tp.Class,
					OutcomeIndex: ingest.NoOutcomeIndex, Score: &score, Reasons: strings.Join(tp.Reasons, "; ")})
				continue
			}
			for _, op := range tp.Outcomes {
				score := op.Score
				reasons := append(append([]string(nil), tp.Reasons...), op.Reasons...)
				out = append(out, ingest.Link{ReviewID: rp.ReviewID, TrialID: tp.TrialID, Class: tp.Class,
					OutcomeIndex: op.OutcomeIndex, OutcomeTitle: op.Title, TimeFrame: op.TimeFrame,
					TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom,
					Score: &score, Reasons: strings.Join(reasons, "; "), Decision: op.Decision})
			}
		}
	}
	return out
}

// AppliedLinks is what ApplyLinksFile did.
type AppliedLinks struct {
	Saved    int
	Rejected []*ingest.ParseError // rows the file format refuses
	Problems []LinkProblem        // rows that do not fit the workspace
}

// ReadLinksFile reads a links file ("-" is stdin) separated by comma:
// the links, and the rows the format refuses (each naming its line and
// field).
func ReadLinksFile(path string, comma rune, stdin io.Reader) ([]ingest.Link, []*ingest.ParseError, error) {
	data, src, err := ReadInput(path, stdin)
	if err != nil {
		return nil, nil, err
	}
	links, bad, err := ingest.ReadLinks(ingest.WithDelimiter(bytes.NewReader(data), comma), src)
	if err != nil {
		return nil, nil, fmt.Errorf("read %s: %w", path, err)
	}
	return links, bad, nil
}

// ApplyLinksFile reads a links file ("-" is stdin), separated by comma, and
// saves the rows that fit the workspace (ApplyLinks); the others are
// returned, each naming its line.
func ApplyLinksFile(ctx context.Context, db *store.DB, path string, comma rune, stdin io.Reader) (AppliedLinks, error) {
	var res AppliedLinks
	links, bad, err := ReadLinksFile(path, comma, stdin)
	if err != nil {
		return res, err
	}
	res.Rejected = bad
	res.Saved, res.Problems, err = ApplyLinks(ctx, db, links)
	return res, err
}

// FetchForEmptyReviews fetches from the registry's API, into dir, and
// ingests the records matching any condition and any intervention of each
// review selected by mo that has no candidate trial in the workspace.
// o.DB is set to db.
func FetchForEmptyReviews(ctx context.Context, db *store.DB, mo compare.MatchOptions, dir string, o FetchOptions) error {
	logf := o.Logf
	if logf == nil {
		logf = func(string, ...any) {}
	}
	o.DB = db
	mo.Save, mo.Progress = false, nil
	dry, err := Match(ctx, db, mo)
	if err != nil {
		return err
	}
	for _, rp := range dry.Reviews {
		if rp.Flow.Examined > 0 {
			continue
		}
		rv, err := db.Review(ctx, rp.ReviewID)
		if err != nil {
			return fmt.Errorf("load review %s: %w", rp.ReviewID, err)
		}
		q := fetch.Query{Condition: AnyOf(rv.Conditions), Intervention: AnyOf(rv.Interventions)}
		if q.Condition == "" && q.Intervention == "" {
			logf("match: review %s has no candidate trial and names no condition or intervention to fetch", rv.ReviewID)
			continue
		}
		logf("match: review %s has no candidate trial in the workspace; fetching registry records for conditions %q and interventions %q into %s",
			rv.ReviewID, q.Condition, q.Intervention, dir)
		rep, err := FetchAndIngest(ctx, q, dir, o)
		if err != nil {
			return fmt.Errorf("fetch for review %s: %w", rv.ReviewID, err)
		}
		logf("match: fetched %d studies for review %s", rep.Studies, rv.ReviewID)
	}
	return nil
}
