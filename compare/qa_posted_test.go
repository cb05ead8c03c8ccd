package compare

import (
	"errors"
	"strings"
	"testing"

	"unshelved/ingest"
)

// A posted mean difference sits at the centre of its two-sided confidence
// interval (up to rounding). One that does not (an estimate outside its
// interval, or an interval centred on the estimate with the other sign, as
// when the estimate is "drug minus placebo" and the interval "placebo
// minus drug") cannot be read in either direction: the analysis is refused
// with the reason, never used as posted. Hand check: the intervals below
// are centred at +1.0, +3.0 and +2.1 while the estimate is -2.1.
func TestPostedAnalysisCIMustBeCentred(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	for _, c := range []struct {
		name   string
		lo, hi string
		used   bool
	}{
		{"asymmetric", "-3.0", "5.0", false},
		{"excludes the estimate", "1.0", "5.0", false},
		{"mirrored: centred on +2.1", "-2.4", "6.6", false},
		{"centred within rounding", "-6.6", "2.4", true},
		{"centred, one decimal less", "-6.6", "2.5", true}, // centre -2.05: within the half-steps 0.05 + 0.05 of the limits and 0.05 of the estimate
	} {
		t.Run(c.name, func(t *testing.T) {
			tr := analysisTrial([]string{"OG000", "OG001"}, [2]string{"NA", "NA"}, "Velmorazine 10 mg minus Placebo")
			tr.Outcomes[0].Analyses[0].CILower, tr.Outcomes[0].Analyses[0].CIUpper = num(c.lo), num(c.hi)
			got, err := RegistryEffect(mdReview, tr, link)
			if c.used {
				if err != nil || got.ConvertedFrom != "between_group_analysis" || got.Effect != -2.1 {
					t.Fatalf("got %+v, %v: want the posted analysis used", got.Effect, err)
				}
				return
			}
			var re *RejectError
			if !errors.As(err, &re) || !strings.Contains(err.Error(), "centre of its confidence interval") {
				t.Fatalf("effect %v, err %v: want the analysis refused as not centred", got.Effect, err)
			}
		})
	}
}

// Near the null every trial of the same size reads alike within half a
// unit. A published study written "30.02 vs 30" (the 30 read as a whole
// number, so rounded to units) and a different registry trial posting
// 30.05 vs 30.00 with the same sizes and SDs: the effects 0.02 and 0.05
// differ by 0.03, beyond the rounding of numbers with 2 decimals (0.005
// per mean on each side), so the trial is left to a person
// (possibly-included), never silently taken as the published study.
func TestWholeNumberRoundingIsOnlyNear(t *testing.T) {
	tc := offByOneLayout()
	tr := tc.trial
	o := layoutOutcome("Zorblax severity score at week 12", "Week 12", "MEAN", "STANDARD_DEVIATION", "points",
		[]string{"Quenitrol", "Placebo"}, map[string][]arm{"": {{"Quenitrol", "40", "30.05", "10.00"}, {"Placebo", "40", "30.00", "10.00"}}}, []string{""})
	tr.Outcomes = []ingest.Outcome{o}
	for _, c := range []struct {
		name  string
		study ingest.ReviewStudy
		want  string
	}{
		{"30.02 vs 30 (whole number beside 2 decimals)", armsStudy("S", 30.02, 10, 40, 30, 10, 40), ClassPossiblyIncluded},
		{"30.05 vs 30: the same numbers", armsStudy("S", 30.05, 10, 40, 30, 10, 40), ClassIncluded},
		{"30 vs 30, all whole: rounded to units", armsStudy("S", 30, 10, 40, 30, 10, 40), ClassIncluded},
	} {
		t.Run(c.name, func(t *testing.T) {
			rp := ProposeForReview(tc.review, []ingest.ReviewStudy{c.study}, []ingest.Trial{tr}, MatchOptions{})
			if got := rp.Trials[0]; got.Class != c.want {
				t.Errorf("class %s, want %s; reasons %q", got.Class, c.want, got.Reasons[0])
			}
		})
	}
}

// A paper may report another visit of the same trial than the review's
// timepoint (the review took what the paper gave). Its numbers are the
// registry's row for that visit: such a trial must not be registry-only
// (its week-12 row would be added beside its own week-8 numbers, the same
// trial counted twice); it is left to a person. The study at the review's
// timepoint stays included, and a different trial stays registry-only.
func TestOtherVisitOfSameTrialIsPossiblyIncluded(t *testing.T) {
	tc := visitLayouts()[2] // review timepoint: week 12, the last row
	for _, c := range []struct {
		study ingest.ReviewStudy
		want  string
	}{
		{armsStudy("Paper at week 8", 27.5, 8.4, 60, 30.1, 8.0, 62), ClassPossiblyIncluded},
		{armsStudy("Paper at week 4", 30.2, 8.1, 60, 31.0, 8.3, 62), ClassPossiblyIncluded},
		{armsStudy("Paper at week 12", 24.8, 8.6, 60, 29.9, 8.2, 62), ClassIncluded},
		{tc.other, ClassRegistryOnly},
	} {
		rp := ProposeForReview(tc.review, []ingest.ReviewStudy{c.study}, []ingest.Trial{tc.trial}, MatchOptions{})
		if got := rp.Trials[0]; got.Class != c.want {
			t.Errorf("%s: class %s, want %s; reasons %q", c.study.Study, got.Class, c.want, got.Reasons[0])
		}
	}
}
