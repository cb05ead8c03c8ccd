package compare

import "testing"

// A review whose registry was never searched (no link at all) says nothing
// about unpublished trials: its detection truth is unknown, not negative,
// whatever the bias tests say (issue: no search is not no bias). A review
// whose linked trials were all examined and found ineligible was searched
// and stays truth-negative.
func TestDetectionNotLinkedIsUnknown(t *testing.T) {
	mk := func(status string) ReviewAudit {
		a := ReviewAudit{ReviewID: "N", Measure: "SMD", Better: "lower", KPublished: 12}
		a.RegistrySearch.Status = status
		a.Bias = &BiasReport{Egger: &EggerJSON{P: fp(0.01), Bias: fp(-1)}, TrimFill: &TrimFillJSON{K0: 2, Side: "right"}}
		return a
	}
	for _, c := range []struct {
		status  string
		fp, tn  int
		unknown int
	}{
		{SearchNotLinked, 0, 0, 1},
		{SearchNoneEligible, 1, 0, 0},
	} {
		s := Summarize([]ReviewAudit{mk(c.status)}, SummaryOptions{})
		for _, d := range s.Detection {
			if d.Test != "egger" || d.MinK != 0 {
				continue
			}
			if d.FP != c.fp || d.TN != c.tn || d.Unknown != c.unknown || d.TP != 0 || d.FN != 0 {
				t.Errorf("%s: egger %+v, want fp %d tn %d unknown %d", c.status, d, c.fp, c.tn, c.unknown)
			}
		}
	}
}
