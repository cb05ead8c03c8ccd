package compare

import (
	"math"
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

// A change from baseline in HbA1c posted in % converts to mmol/mol by the
// scale alone (10.929, the IFCC-NGSP master equation's slope): the offset
// of the equation belongs to levels, not to changes. Hand computation:
// -0.80 % -> -8.7432 mmol/mol, -0.20 % -> -2.1858; the difference
// -6.5574 is the same either way, but the arm means (compared with a
// paper's arms, and shown in the derivations) were -32.24 and -25.68.
func TestChangeFromBaselineConvertsByScaleOnly(t *testing.T) {
	rv := layoutReview("Change in HbA1c", "mmol/mol", 24)
	o := layoutOutcome("Change From Baseline in HbA1c at Week 24", "Baseline to Week 24", "MEAN", "STANDARD_DEVIATION", "percentage of haemoglobin",
		[]string{"Quenitrol", "Placebo"}, map[string][]arm{"": {{"Quenitrol", "60", "-0.80", "0.90"}, {"Placebo", "62", "-0.20", "0.85"}}}, []string{""})
	tr := layoutTrial("NCT99990779", o)
	l := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}, UnitFrom: "percentage of haemoglobin"}
	e, err := RegistryEffect(rv, tr, l)
	if err != nil {
		t.Fatal(err)
	}
	if e.armMeans == nil || math.Abs(e.armMeans[0]-(-8.7432)) > 1e-9 || math.Abs(e.armMeans[1]-(-2.1858)) > 1e-9 || math.Abs(e.Effect-(-6.5574)) > 1e-9 {
		t.Errorf("arm means %v, effect %v: want -8.7432, -2.1858 and -6.5574", e.armMeans, e.Effect)
	}
	// The same trial in the review without its id, arms in mmol/mol as a
	// paper would round them, is recognised.
	st := armsStudy("Paper", -8.7, 9.8, 60, -2.2, 9.3, 62)
	rp := ProposeForReview(rv, []ingest.ReviewStudy{st}, []ingest.Trial{tr}, MatchOptions{})
	if got := rp.Trials[0]; got.Class != ClassIncluded {
		t.Errorf("class %s, want included; reasons %q", got.Class, got.Reasons[0])
	}
}
