package compare_test

import (
	"context"
	"runtime"
	"testing"

	"unshelved/compare"
	"unshelved/compare/internal/batchgen"
	"unshelved/compare/workspace"
)

// BenchmarkAuditSummary5000 audits 5,000 generated reviews of 10 to 14
// registered trials (about three registry-only additions each) and
// summarizes them, on all cores, with the bias battery (selection model
// included) and the analytic shift interval. Pure core: no database. Run
// with -benchtime 1x.
func BenchmarkAuditSummary5000(b *testing.B) {
	batch := batchgen.Generate(batchgen.Settings{Reviews: 5000, MinStudies: 10, MaxStudies: 14, PublishNonsig: 0.5, Seed: 9})
	added := 0
	for _, r := range batch.Reviews {
		added += r.Unpublished
	}
	b.ReportAllocs()
	for b.Loop() {
		audits, failed, err := workspace.AuditAll(context.Background(), batch.Inputs, compare.Options{Seed: 1}, runtime.GOMAXPROCS(0))
		if err != nil || len(failed) > 0 {
			b.Fatal(err, failed)
		}
		s := compare.Summarize(audits, compare.SummaryOptions{})
		if s.Reviews != 5000 {
			b.Fatal(s.Reviews)
		}
	}
	b.ReportMetric(float64(added)/5000, "added/review")
	b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/batch")
}
