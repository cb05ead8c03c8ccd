package compare

import (
	"testing"

	"unshelved/compare/internal/corpus"
	"unshelved/ingest"
)

// benchWorld builds 100 reviews against 100,000 registry trials: the 1,800
// trials made for the reviews and 98,200 background trials.
func benchWorld(b *testing.B) *corpusWorld {
	b.Helper()
	const reviews, total = 100, 100_000
	perReview := len(corpus.New(corpus.Settings{Reviews: 1}).Trials)
	return newCorpusWorld(b, corpus.Settings{Reviews: reviews, Background: total - reviews*perReview, Seed: 7})
}

// BenchmarkMatch is candidate search (index lookup) and outcome ranking for
// 100 reviews against 100,000 trials held in memory; one op is all 100
// reviews.
func BenchmarkMatch(b *testing.B) {
	w := benchWorld(b)
	b.ReportAllocs()
	b.ResetTimer()
	proposed := 0
	for b.Loop() {
		proposed = 0
		for _, rv := range w.c.Reviews {
			st := w.studiesOf(rv.ReviewID)
			rp := ProposeForReview(rv, st, w.candidates(rv, st), MatchOptions{AcceptAbove: DefaultAcceptAbove})
			proposed += len(rp.Trials)
		}
	}
	b.ReportMetric(float64(len(w.c.Reviews))*float64(b.N)/b.Elapsed().Seconds(), "reviews/s")
	b.ReportMetric(float64(proposed), "candidates")
}

// BenchmarkTrialIndex is building the prefilter index over 100,000 trial
// summaries (what Match does once per run after store.TrialSummaries).
func BenchmarkTrialIndex(b *testing.B) {
	w := benchWorld(b)
	sums := make([]ingest.TrialSummary, 0, w.ix.Len())
	for _, t := range w.c.Trials {
		sums = append(sums, corpus.Summary(t))
	}
	for i := 0; i < w.c.Background; i++ {
		sums = append(sums, corpus.Summary(w.c.BackgroundTrial(i)))
	}
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		NewTrialIndex(sums)
	}
	b.ReportMetric(float64(len(sums))*float64(b.N)/b.Elapsed().Seconds(), "trials/s")
}
