package compare_test

import (
	"context"
	"testing"

	"unshelved/compare"
	"unshelved/compare/internal/batchgen"
)

// TestSummaryRecoversSimulatedOverstatement audits a generated batch of 200
// reviews with known selective publication and checks that the pooled
// registry-minus-published difference has the simulated truth inside its
// confidence interval. The truth is the mean over reviews with unpublished
// trials of the analytic expected difference (batchgen.Review,
// truncated-normal moments), known by construction.
func TestSummaryRecoversSimulatedOverstatement(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 200, Seed: 5})
	audits, failed, err := compare.AuditAll(context.Background(), b.Inputs, compare.Options{SkipSelection: testing.Short()}, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(failed) > 0 {
		t.Fatalf("%d reviews failed, first: %v", len(failed), failed[0])
	}
	var truth float64
	var n int
	for _, r := range b.Reviews {
		if r.Unpublished > 0 {
			truth += r.ExpectedDifference
			n++
		}
	}
	truth /= float64(n)
	s := compare.Summarize(audits, compare.SummaryOptions{})
	p := s.PooledDifferenceSMD
	if p.K != n || s.ReviewsWithAdditions != n {
		t.Errorf("pooled %d reviews, %d with additions; the batch has %d with unpublished trials", p.K, s.ReviewsWithAdditions, n)
	}
	if p.Estimate == nil || p.CILow == nil || p.CIHigh == nil {
		t.Fatalf("no pooled difference: %+v", p)
	}
	t.Logf("truth %.4f, pooled %.4f [%.4f, %.4f], tau2 %v, k %d", truth, *p.Estimate, *p.CILow, *p.CIHigh, *p.Tau2, p.K)
	if !(*p.CILow <= truth && truth <= *p.CIHigh) {
		t.Errorf("simulated truth %.4f outside the pooled CI [%.4f, %.4f] (estimate %.4f)", truth, *p.CILow, *p.CIHigh, *p.Estimate)
	}
	if !(truth < 0) {
		t.Errorf("truth %v: selection on significance should make the registry trials look worse", truth)
	}
	// Every selective review's shift points toward harm in expectation, so
	// most observed shifts do.
	if s.ShiftSMD.TowardHarmShare == nil || *s.ShiftSMD.TowardHarmShare < 0.8 {
		t.Errorf("toward harm share %v, want most", s.ShiftSMD.TowardHarmShare)
	}
	if s.Reviews != 200 || len(s.Detection) != 5 || len(s.AdjustedError) != 4 {
		t.Fatalf("reviews %d, detection %d, adjusted %d", s.Reviews, len(s.Detection), len(s.AdjustedError))
	}
	for _, d := range s.Detection {
		if got := d.TP + d.FP + d.FN + d.TN + d.Skipped; got != 200 {
			t.Errorf("%s: table holds %d reviews, want 200", d.Test, got)
		}
	}
	// The registry adds the missing trials' evidence: the augmented estimate
	// is closer to the true effect than the published one, on average.
	var errPub, errAug float64
	for _, a := range audits {
		sd := 1.0
		if a.Shift.PooledSD != nil {
			sd = *a.Shift.PooledSD
		}
		errPub += *a.Published.Random.Estimate/sd - b.Settings.Theta
		errAug += *a.Augmented.Random.Estimate/sd - b.Settings.Theta
	}
	if !(errPub > 0 && errAug < errPub) {
		t.Errorf("mean error published %v, augmented %v (SD units x 200)", errPub, errAug)
	}
}
