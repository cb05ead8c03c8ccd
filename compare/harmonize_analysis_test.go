package compare

import (
	"errors"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/ingest"
)

// analysisTrial: arm SDs are "NA", so only the posted between-group
// analysis (estimate -2.1, 95% CI -6.6 to 2.4) can give the effect.
func analysisTrial(groupIDs []string, values [2]string, comment string) ingest.Trial {
	tr := twoArmTrial("STANDARD_DEVIATION", "LEAST_SQUARES_MEAN",
		map[string][4]string{"OG000": {values[0], "NA", "", ""}, "OG001": {values[1], "NA", "", ""}},
		map[string]string{"OG000": "70", "OG001": "71"})
	tr.Outcomes[0].Groups = []ingest.Group{{ID: "OG000", Title: "Velmorazine 10 mg"}, {ID: "OG001", Title: "Placebo"}}
	tr.Outcomes[0].Analyses = []ingest.Analysis{{
		GroupIDs: groupIDs, ParamType: "Mean Difference (Net)", ParamValue: num("-2.1"),
		CIPct: num("95"), CISides: "TWO_SIDED", CILower: num("-6.6"), CIUpper: num("2.4"), EstimateComment: comment,
	}}
	return tr
}

func TestRegistryEffectFromAnalysis(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	// R 4.2.2: (2.4-(-6.6))/(2*qnorm(0.975)) (testdata/reference/compare_checks.R)
	const wantSE = 2.2959605561609435
	for _, tc := range []struct {
		name   string
		trial  ingest.Trial
		want   float64
		reject bool
	}{
		{"values agree with the posted sign", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-8.7", "-6.6"}, ""), -2.1, false},
		{"values say the posted sign is reversed", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-6.6", "-8.7"}, ""), 2.1, false},
		{"no values, comment in our order", analysisTrial([]string{"OG001", "OG000"}, [2]string{"NA", "NA"}, "Velmorazine 10 mg minus Placebo"), -2.1, false},
		{"no values, comment reversed", analysisTrial([]string{"OG000", "OG001"}, [2]string{"NA", "NA"}, "Placebo minus Velmorazine 10 mg"), 2.1, false},
		{"no values, no comment: direction unknown", analysisTrial([]string{"OG000", "OG001"}, [2]string{"NA", "NA"}, ""), 0, true},
		{"analysis of other groups", analysisTrial([]string{"OG000", "OG002"}, [2]string{"-8.7", "-6.6"}, ""), 0, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := RegistryEffect(mdReview, tc.trial, link)
			if tc.reject {
				var re *RejectError
				if !errors.As(err, &re) {
					t.Fatalf("err = %v, want a rejection", err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.ConvertedFrom != "between_group_analysis" {
				t.Errorf("converted_from = %q", got.ConvertedFrom)
			}
			if !scalar.EqualWithinAbsOrRel(got.Effect, tc.want, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(got.SE, wantSE, 1e-12, 1e-12) {
				t.Errorf("effect %v (SE %.17g), want %v (SE %.17g)", got.Effect, got.SE, tc.want, wantSE)
			}
			if got.TreatN != 70 || got.CtrlN != 71 {
				t.Errorf("N = %d/%d, want 70/71", got.TreatN, got.CtrlN)
			}
		})
	}
}

func TestChangeFlags(t *testing.T) {
	tr := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"-5", "10", "", ""}, "OG001": {"-2", "11", "", ""}},
		map[string]string{"OG000": "40", "OG001": "40"})
	tr.Outcomes[0].Title = "Change From Baseline in Distress Index at Week 12"
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	md, err := RegistryEffect(mdReview, tr, link)
	if err != nil {
		t.Fatal(err)
	}
	smdReview := mdReview
	smdReview.Measure = "SMD"
	smd, err := RegistryEffect(smdReview, tr, link)
	if err != nil {
		t.Fatal(err)
	}
	if len(md.Flags) != 1 || len(smd.Flags) != 1 || md.Flags[0] == smd.Flags[0] {
		t.Errorf("flags MD %q, SMD %q: want one change-score flag each, the SMD one a warning", md.Flags, smd.Flags)
	}
}
