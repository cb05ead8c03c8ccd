package workspace

import (
	"context"
	"errors"
	"fmt"
	"sort"
	"strings"
	"unshelved/compare"
	"unshelved/ingest"
	"unshelved/store"
)

// Explain is ExplainWith with the default harmonization options.
func Explain(ctx context.Context, db *store.DB, trialID, reviewID string) ([]compare.Explanation, error) {
	return ExplainWith(ctx, db, trialID, reviewID, compare.HarmonizeOptions{})
}

// ExplainWith traces a trial's use in every review it is linked to (in
// one review when reviewID is not empty), in review id order: one
// explanation per review, of the accepted link (else the best candidate),
// with the other candidate outcomes one line each. A trial with no link
// gives one explanation of the record alone, with Rejected saying so.
func ExplainWith(ctx context.Context, db *store.DB, trialID, reviewID string, hopts compare.HarmonizeOptions) ([]compare.Explanation, error) {
	t, err := db.Trial(ctx, trialID)
	if errors.Is(err, store.ErrNotFound) {
		return nil, fmt.Errorf("trial %q is not in the workspace", trialID)
	}
	if err != nil {
		return nil, fmt.Errorf("load trial %s: %w", trialID, err)
	}
	links, err := db.Links(ctx, reviewID)
	if err != nil {
		return nil, fmt.Errorf("load links: %w", err)
	}
	byReview := map[string][]ingest.Link{}
	var order []string
	for _, l := range links {
		if !strings.EqualFold(l.TrialID, t.TrialID) {
			continue
		}
		if _, ok := byReview[l.ReviewID]; !ok {
			order = append(order, l.ReviewID)
		}
		byReview[l.ReviewID] = append(byReview[l.ReviewID], l)
	}
	sort.Strings(order)
	var out []compare.Explanation
	for _, id := range order {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		rv, err := db.Review(ctx, id)
		if err != nil {
			return nil, fmt.Errorf("load review %s: %w", id, err)
		}
		out = append(out, compare.ExplainTrialInReview(rv, t, byReview[id], hopts))
	}
	if len(out) == 0 {
		ex := compare.ExplainLinkWith(ingest.Review{ReviewID: reviewID}, t, ingest.Link{OutcomeIndex: -1}, hopts)
		ex.Rejected = "no-link: the trial is not linked to " + map[bool]string{true: "any review", false: "review " + reviewID}[reviewID == ""]
		out = append(out, ex)
	}
	return out, nil
}
