package workspace

import (
	"context"
	"errors"
	"fmt"
	"strings"

	"unshelved/ingest"
	"unshelved/store"
)

// selectReviews reads the named reviews in the order given, or every
// review of the workspace when ids is empty (an error when there is none).
// An id that is not in the workspace is an error naming it.
func selectReviews(ctx context.Context, db *store.DB, ids []string) ([]ingest.Review, error) {
	if len(ids) == 0 {
		reviews, err := db.Reviews(ctx)
		if err != nil {
			return nil, fmt.Errorf("list reviews: %w", err)
		}
		if len(reviews) == 0 {
			return nil, errors.New("the workspace holds no reviews; load them with 'unshelved ingest reviews'")
		}
		return reviews, nil
	}
	reviews := make([]ingest.Review, 0, len(ids))
	for _, id := range ids {
		rv, err := db.Review(ctx, id)
		if errors.Is(err, store.ErrNotFound) {
			return nil, fmt.Errorf("review %q is not in the workspace", id)
		}
		if err != nil {
			return nil, fmt.Errorf("load review %s: %w", id, err)
		}
		reviews = append(reviews, rv)
	}
	return reviews, nil
}

// LinkProblem is a link row that does not fit the workspace.
type LinkProblem struct {
	Link   ingest.Link
	Detail string
}

// ApplyLinks checks each link against the workspace (the review and the
// trial exist, the outcome index is in range, the groups exist in that
// outcome) and saves the ones that fit. It returns the problems found;
// rows with problems are not saved.
func ApplyLinks(ctx context.Context, db *store.DB, links []ingest.Link) (saved int, problems []LinkProblem, err error) {
	reviews := map[string]bool{}
	trials := map[string]*ingest.Trial{}
	var ok []ingest.Link
	for _, l := range links {
		if err := ctx.Err(); err != nil {
			return 0, nil, err
		}
		if _, seen := reviews[l.ReviewID]; !seen {
			_, err := db.Review(ctx, l.ReviewID)
			if err != nil && !errors.Is(err, store.ErrNotFound) {
				return 0, nil, fmt.Errorf("load review %s: %w", l.ReviewID, err)
			}
			reviews[l.ReviewID] = err == nil
		}
		if !reviews[l.ReviewID] {
			problems = append(problems, LinkProblem{l, fmt.Sprintf("review %q is not in the workspace", l.ReviewID)})
			continue
		}
		t, seen := trials[l.TrialID]
		if !seen {
			tr, err := db.Trial(ctx, l.TrialID)
			if err != nil && !errors.Is(err, store.ErrNotFound) {
				return 0, nil, fmt.Errorf("load trial %s: %w", l.TrialID, err)
			}
			if err == nil {
				t = &tr
			}
			trials[l.TrialID] = t
		}
		if t == nil {
			problems = append(problems, LinkProblem{l, fmt.Sprintf("trial %q is not in the workspace", l.TrialID)})
			continue
		}
		l.TrialID = t.TrialID // as the registry spells it, whatever the case in the file
		if l.OutcomeIndex == ingest.NoOutcomeIndex {
			if !strings.EqualFold(l.Class, "no-results") {
				problems = append(problems, LinkProblem{l, "only a no-results link may name no outcome"})
				continue
			}
		} else if msg := checkLinkGroups(t, &l); msg != "" {
			problems = append(problems, LinkProblem{l, msg})
			continue
		}
		ok = append(ok, l)
	}
	if len(ok) > 0 {
		if err := db.SaveLinks(ctx, ok); err != nil {
			return 0, problems, fmt.Errorf("save links: %w", err)
		}
	}
	return len(ok), problems, nil
}

// checkLinkGroups checks that the link's outcome and groups exist in the
// trial; group ids are matched in any case and rewritten as posted. A bad
// group id is reported with the outcome's valid ids.
func checkLinkGroups(t *ingest.Trial, l *ingest.Link) string {
	var o *ingest.Outcome
	for i := range t.Outcomes {
		if t.Outcomes[i].Index == l.OutcomeIndex {
			o = &t.Outcomes[i]
		}
	}
	if o == nil {
		return fmt.Sprintf("trial %s has no posted outcome measure at index %d (it has %d)", t.TrialID, l.OutcomeIndex, len(t.Outcomes))
	}
	ids := map[string]string{}
	valid := make([]string, 0, len(o.Groups))
	for _, g := range o.Groups {
		ids[strings.ToUpper(g.ID)] = g.ID
		valid = append(valid, g.ID)
	}
	for _, side := range [][]string{l.TreatGroups, l.CtrlGroups} {
		for i, g := range side {
			id, ok := ids[strings.ToUpper(g)]
			if !ok {
				return fmt.Sprintf("trial %s outcome %d has no group %s; its groups are %s", t.TrialID, l.OutcomeIndex, g, strings.Join(valid, ", "))
			}
			side[i] = id
		}
	}
	return ""
}
