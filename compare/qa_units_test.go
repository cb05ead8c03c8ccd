package compare

import (
	"strings"
	"testing"

	"unshelved/ingest"
)

// HbA1c is reported in "%" (of haemoglobin), and so is a percent change
// from baseline, which is relative: -12.5% of a baseline 8.0% is -1.0
// percentage point. For a review of HbA1c in %, a "Percent Change From
// Baseline" outcome posted in "percentage" must fail the unit criterion
// (score 0, capped) with the reason, and rank below the absolute change
// posted in mmol/mol (converted).
func TestPercentChangeIsNotPercentUnit(t *testing.T) {
	rv := layoutReview("Glycated haemoglobin (HbA1c)", "%", 24)
	rows := map[string][]arm{"": {{"Quenitrol", "60", "-12.5", "20.1"}, {"Placebo", "60", "-3.0", "19.0"}}}
	for _, c := range []struct {
		title, unit string
		fits        bool
	}{
		{"Percent Change From Baseline in HbA1c at Week 24", "percentage", false},
		{"Percentage change from baseline in HbA1c", "%", false},
		{"Relative change in HbA1c from baseline", "percent", false},
		{"Change From Baseline in HbA1c at Week 24", "percentage of haemoglobin", true},
		{"Change From Baseline in HbA1c at Week 24", "mmol/mol", true},
	} {
		o := layoutOutcome(c.title, "Baseline to Week 24", "MEAN", "STANDARD_DEVIATION", c.unit, []string{"Quenitrol", "Placebo"}, rows, []string{""})
		rp := ProposeForReview(rv, nil, []ingest.Trial{layoutTrial("NCT99990777", o)}, MatchOptions{})
		op := rp.Trials[0].Outcomes[0]
		reasons := strings.Join(op.Reasons, "; ")
		if got := !strings.Contains(reasons, "relative change"); got != c.fits {
			t.Errorf("%s [%s]: score %.3f, reasons %q; want fits %v", c.title, c.unit, op.Score, reasons, c.fits)
		}
		if !c.fits && op.Score > 0.3 {
			t.Errorf("%s [%s]: score %.3f, want capped at 0.3 by the failed unit criterion", c.title, c.unit, op.Score)
		}
	}
}

// An outcome without a type (neutral CSV has no primary/secondary column)
// is said so in the reasons, not written as a bare " outcome".
func TestUntypedOutcomeReason(t *testing.T) {
	rv := layoutReview("symptom score", "points", 12)
	o := layoutOutcome("Zorblax Symptom Score", "Week 12", "MEAN", "STANDARD_DEVIATION", "points", []string{"Quenitrol", "Placebo"},
		map[string][]arm{"": {{"Quenitrol", "60", "24.8", "8.6"}, {"Placebo", "62", "29.9", "8.2"}}}, []string{""})
	o.Type = ""
	rp := ProposeForReview(rv, nil, []ingest.Trial{layoutTrial("NCT99990778", o)}, MatchOptions{})
	reasons := rp.Trials[0].Outcomes[0].Reasons
	for _, r := range reasons {
		if strings.TrimSpace(r) == "outcome" {
			t.Errorf("bare reason %q in %q", r, reasons)
		}
	}
	if !strings.Contains(strings.Join(reasons, "; "), "outcome type not stated") {
		t.Errorf("reasons %q: want \"outcome type not stated\"", reasons)
	}
}
