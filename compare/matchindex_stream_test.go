package compare

import (
	"path/filepath"
	"slices"
	"testing"

	"unshelved/compare/internal/corpus"
	"unshelved/store"
)

// TestIndexFromTextsEqualsSummaries: the index streamed from the store
// (IndexTexts, TrialIndexBuilder) holds, for every stem on each side,
// exactly the trials of the index built from the summaries.
func TestIndexFromTextsEqualsSummaries(t *testing.T) {
	db, err := store.Open(t.Context(), filepath.Join(t.TempDir(), "ws.db"))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	c := corpus.New(corpus.Settings{Reviews: 4, Background: 300, Seed: 3})
	w, err := db.NewTrialWriter(t.Context(), 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, tr := range c.Trials {
		if _, err := w.Write(t.Context(), tr); err != nil {
			t.Fatal(err)
		}
	}
	for i := range c.Background {
		if _, err := w.Write(t.Context(), c.BackgroundTrial(i)); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Close(t.Context()); err != nil {
		t.Fatal(err)
	}
	sums, err := db.TrialSummaries(t.Context(), store.TrialFilter{})
	if err != nil {
		t.Fatal(err)
	}
	want := NewTrialIndex(sums)
	b := NewTrialIndexBuilder()
	err = db.IndexTexts(t.Context(), func(id string, side int, text string) error {
		b.Add(id, side, text)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	got := b.Index()
	if got.Len() != want.Len() || got.Len() != len(c.Trials)+c.Background {
		t.Fatalf("indexed %d trials, summaries %d", got.Len(), want.Len())
	}
	ids := func(ix *TrialIndex, list []int32) []string {
		out := make([]string, len(list))
		for i, p := range list {
			out[i] = ix.ids[p]
		}
		slices.Sort(out)
		return out
	}
	for side, pair := range map[string][2]map[string][]int32{"condition": {want.cond, got.cond}, "intervention": {want.intv, got.intv}} {
		if len(pair[0]) != len(pair[1]) {
			t.Errorf("%s side: %d stems from summaries, %d streamed", side, len(pair[0]), len(pair[1]))
		}
		for s, list := range pair[0] {
			if a, b := ids(want, list), ids(got, pair[1][s]); !slices.Equal(a, b) {
				t.Errorf("%s side, stem %q: summaries %v, streamed %v", side, s, a, b)
			}
		}
	}
	for _, rv := range c.Reviews {
		if a, b := want.Candidates(rv), got.Candidates(rv); !slices.Equal(a, b) || len(a) == 0 {
			t.Errorf("%s: candidates %v vs %v", rv.ReviewID, a, b)
		}
	}
}
