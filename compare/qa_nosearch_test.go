package compare

import (
	"strings"
	"testing"
)

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

// Where a review's analyses use the Wald interval (fewer than 3 published
// studies, or --ci wald) no warning may speak of the HKSJ interval as if it
// were used: two close studies have an HKSJ scale below 1, which under HKSJ
// would warn that the interval "was not truncated".
func TestAuditWaldNoHKSJWarnings(t *testing.T) {
	in := effectsInput("TWO", []float64{-0.50, -0.52}, []float64{0.2, 0.25})
	for _, ci := range CIMethods {
		a, err := AuditReview(in, Options{CI: ci, SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range a.Warnings {
			if strings.Contains(w, "Hartung-Knapp-Sidik-Jonkman") {
				t.Errorf("--ci %s (method %s): warning about an interval not used: %q", ci, a.Published.Random.CIMethod, w)
			}
		}
	}
	// With 3 studies under --ci wald the same holds.
	in = effectsInput("THREE", []float64{-0.50, -0.52, -0.51}, []float64{0.2, 0.25, 0.2})
	a, err := AuditReview(in, Options{CI: CIWald, SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range a.Warnings {
		if strings.Contains(w, "Hartung-Knapp-Sidik-Jonkman") {
			t.Errorf("--ci wald: warning about an interval not used: %q", w)
		}
	}
}
