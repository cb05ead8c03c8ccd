package batchgen

import (
	"context"
	"fmt"
	"sort"

	"unshelved/ingest"
	"unshelved/store"
)

// WriteWorkspace stores a batch in a workspace as ingest and match would:
// the registry records, the reviews with their published studies, and the
// links (accepted registry-only trials, and the trials without results).
// Every row names the batch's seed as its source.
func WriteWorkspace(ctx context.Context, db *store.DB, b Batch) error {
	src := ingest.Source{Path: fmt.Sprintf("batchgen seed %d", b.Settings.Seed), SHA256: fmt.Sprintf("batchgen-%d", b.Settings.Seed)}
	w, err := db.NewTrialWriter(ctx, 0)
	if err != nil {
		return err
	}
	var reviews []ingest.Review
	var studies []ingest.ReviewStudy
	var links []ingest.Link
	for n, in := range b.Inputs {
		ids := make([]string, 0, len(in.Trials))
		for id := range in.Trials {
			ids = append(ids, id)
		}
		sort.Strings(ids)
		for _, id := range ids {
			t := in.Trials[id]
			t.Source = src
			t.Source.Position = id
			t.ContentHash = fmt.Sprintf("%s-%d", id, b.Settings.Seed)
			if _, err := w.Write(ctx, t); err != nil {
				return fmt.Errorf("write trial %s: %w", id, err)
			}
		}
		rv := in.Review
		rv.Source = src
		rv.Source.Position = fmt.Sprint(n + 1)
		reviews = append(reviews, rv)
		for _, s := range in.Studies {
			s.Source = rv.Source
			studies = append(studies, s)
		}
		for _, l := range in.Links {
			l.Source = rv.Source
			links = append(links, l)
		}
	}
	if err := w.Close(ctx); err != nil {
		return err
	}
	if err := db.SaveReviews(ctx, reviews, studies); err != nil {
		return err
	}
	return db.SaveLinks(ctx, links)
}
