package workspace

import (
	"context"
	"errors"
	"fmt"
	"maps"
	"slices"
	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

// MatchReport is the result of Match: the proposals per review, in review
// id order.
type MatchReport struct {
	Reviews []compare.ReviewProposals `json:"reviews"`
	// TrialsIndexed is the number of registry trials searched.
	TrialsIndexed int `json:"trials_indexed"`
}

// Match proposes links for the reviews in the workspace. It indexes the
// texts of all stored trials once (store.DB.IndexTexts), loads the
// full records only of each review's index candidates and of the trials
// its studies cite (by id, alias or secondary id), and calls
// ProposeForReview. With opts.Save the proposals are written with
// SaveLinks, which keeps decisions already made.
func Match(ctx context.Context, db *store.DB, opts compare.MatchOptions) (MatchReport, error) {
	var rep MatchReport
	reviews, err := selectReviews(ctx, db, opts.ReviewIDs)
	if err != nil {
		return rep, err
	}
	ix, err := indexWorkspace(ctx, db)
	if err != nil {
		return rep, err
	}
	rep.TrialsIndexed = ix.Len()
	rep.Reviews = make([]compare.ReviewProposals, 0, len(reviews))
	for n, rv := range reviews {
		if err := ctx.Err(); err != nil {
			return rep, err
		}
		studies, err := db.ReviewStudies(ctx, rv.ReviewID)
		if err != nil {
			return rep, fmt.Errorf("load studies of %s: %w", rv.ReviewID, err)
		}
		ids := map[string]bool{}
		for _, id := range ix.Candidates(rv) {
			ids[id] = true
		}
		for _, s := range studies {
			for _, id := range compare.RegistryIDs(s.RegistryID) {
				ids[id] = true
				other, err := db.TrialBySecondaryID(ctx, id)
				if err != nil {
					return rep, fmt.Errorf("look up %s: %w", id, err)
				}
				for _, o := range other {
					ids[o] = true
				}
			}
		}
		trials := make([]ingest.Trial, 0, len(ids))
		for _, id := range slices.Sorted(maps.Keys(ids)) {
			if err := ctx.Err(); err != nil {
				return rep, err
			}
			t, err := db.Trial(ctx, id)
			if errors.Is(err, store.ErrNotFound) {
				continue // a cited id that is not in the workspace
			}
			if err != nil {
				return rep, fmt.Errorf("load trial %s: %w", id, err)
			}
			trials = append(trials, t)
		}
		rp := compare.ProposeForReview(rv, studies, trials, opts)
		if opts.Save {
			if links := rp.Links(); len(links) > 0 {
				if err := db.SaveLinks(ctx, links); err != nil {
					return rep, fmt.Errorf("save proposals of %s: %w", rv.ReviewID, err)
				}
			}
		}
		if err := withStoredDecisions(ctx, db, &rp); err != nil {
			return rep, err
		}
		rep.Reviews = append(rep.Reviews, rp)
		if opts.Progress != nil {
			opts.Progress(rv.ReviewID, n+1, len(reviews))
		}
	}
	return rep, nil
}

// withStoredDecisions shows decisions already in the store on the
// proposals: a stored decision and the groups, flip and unit it was made
// on replace the proposal's.
func withStoredDecisions(ctx context.Context, db *store.DB, rp *compare.ReviewProposals) error {
	stored, err := db.Links(ctx, rp.ReviewID)
	if err != nil {
		return fmt.Errorf("load links of %s: %w", rp.ReviewID, err)
	}
	type key struct {
		trial   string
		outcome int
	}
	byKey := make(map[key]ingest.Link, len(stored))
	for _, l := range stored {
		byKey[key{l.TrialID, l.OutcomeIndex}] = l
	}
	for i := range rp.Trials {
		tp := &rp.Trials[i]
		for j := range tp.Outcomes {
			op := &tp.Outcomes[j]
			l, ok := byKey[key{tp.TrialID, op.OutcomeIndex}]
			if !ok || l.Decision == "" {
				continue
			}
			op.Decision, op.AutoAccepted = l.Decision, l.AutoAccepted
			op.TreatGroups, op.CtrlGroups, op.Flip, op.UnitFrom = l.TreatGroups, l.CtrlGroups, l.Flip, l.UnitFrom
		}
	}
	rp.Flow.AutoAccepted = 0
	for _, tp := range rp.Trials {
		for _, op := range tp.Outcomes {
			if op.AutoAccepted && op.Decision == "accept" {
				rp.Flow.AutoAccepted++
			}
		}
	}
	return nil
}
