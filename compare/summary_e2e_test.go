package compare_test

import (
	"context"
	"testing"

	"unshelved/compare"
	"unshelved/compare/internal/batchgen"
	"unshelved/compare/workspace"
)

// TestSummaryRecoversSimulatedOverstatement audits a generated batch of 200
// reviews with known selective publication, half of them with lower is
// better, and checks that the pooled oriented overstatement has the
// simulated truth inside its confidence interval. The truth is the mean
// over reviews with unpublished trials of minus the analytic expected
// difference registry - published on the favourable scale
// (batchgen.Review, truncated-normal moments), known by construction.
func TestSummaryRecoversSimulatedOverstatement(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 200, Seed: 5})
	audits, failed, err := workspace.AuditAll(context.Background(), b.Inputs, compare.Options{SkipSelection: testing.Short()}, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(failed) > 0 {
		t.Fatalf("%d reviews failed, first: %v", len(failed), failed[0])
	}
	var truth float64
	var n, lower int
	for _, r := range b.Reviews {
		if r.Unpublished > 0 {
			truth -= r.ExpectedDifference
			n++
		}
		if r.Better == "lower" {
			lower++
		}
	}
	truth /= float64(n)
	if lower < 60 || lower > 140 {
		t.Errorf("%d of 200 reviews with lower is better, want about half", lower)
	}
	s := compare.Summarize(audits, compare.SummaryOptions{})
	p := s.PooledOverstatementSD
	if p.K != n || s.ReviewsWithAdditions != n {
		t.Errorf("pooled %d reviews, %d with additions; the batch has %d with unpublished trials", p.K, s.ReviewsWithAdditions, n)
	}
	if p.Estimate == nil || p.CILow == nil || p.CIHigh == nil {
		t.Fatalf("no pooled overstatement: %+v", p)
	}
	t.Logf("truth %.4f, pooled %.4f [%.4f, %.4f], tau2 %v, k %d", truth, *p.Estimate, *p.CILow, *p.CIHigh, *p.Tau2, p.K)
	if !(*p.CILow <= truth && truth <= *p.CIHigh) {
		t.Errorf("simulated truth %.4f outside the pooled CI [%.4f, %.4f] (estimate %.4f)", truth, *p.CILow, *p.CIHigh, *p.Estimate)
	}
	if !(truth > 0) {
		t.Errorf("truth %v: selection on significance should make the published trials look better", truth)
	}
	// Every selective review's published-only analysis overstates the
	// benefit in expectation, whichever way is better, so most do.
	if s.OverstatementSD.SharePositive == nil || *s.OverstatementSD.SharePositive < 0.8 || *s.OverstatementSD.Median <= 0 {
		t.Errorf("overstatement %+v, want mostly positive", s.OverstatementSD)
	}
	if s.Reviews != 200 || len(s.Detection) != 10 || len(s.AdjustedError) != 4 {
		t.Fatalf("reviews %d, detection %d, adjusted %d", s.Reviews, len(s.Detection), len(s.AdjustedError))
	}
	k10 := 0
	for _, a := range audits {
		if a.KPublished >= 10 {
			k10++
		}
	}
	for _, d := range s.Detection {
		want := 200
		if d.MinK == 10 {
			want = k10
		}
		if got := d.TP + d.FP + d.FN + d.TN + d.Skipped + d.Unknown; got != want {
			t.Errorf("%s min_k %d: table holds %d reviews, want %d", d.Test, d.MinK, got, want)
		}
	}
	for _, e := range s.AdjustedError {
		if e.Method == "published" && (e.MeanError == nil || *e.MeanError <= 0) {
			t.Errorf("published estimate's oriented error %+v, want positive (it overstates)", e)
		}
	}
	// The registry adds the missing trials' evidence: the augmented estimate
	// is closer to the true effect than the published one, on average, on
	// the favourable scale.
	var errPub, errAug float64
	for _, a := range audits {
		sd, f := 1.0, 1.0
		if a.Shift.PooledSD != nil {
			sd = *a.Shift.PooledSD
		}
		if a.Better == "lower" {
			f = -1
		}
		errPub += f**a.Published.Random.Estimate/sd - b.Settings.Theta
		errAug += f**a.Augmented.Random.Estimate/sd - b.Settings.Theta
	}
	if !(errPub > 0 && errAug < errPub) {
		t.Errorf("mean error published %v, augmented %v (SD units x 200)", errPub, errAug)
	}
}
