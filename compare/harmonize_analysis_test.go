package compare

import (
	"errors"
	"strconv"
	"strings"
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
	// R 4.2.2: (2.4-(-6.6))/(2*qnorm(0.975)) (testdata/reference/compare_checks.R);
	// both groups have 60 or more participants, so z.
	const wantSE = 2.2959605561609435
	for _, tc := range []struct {
		name     string
		trial    ingest.Trial
		want     float64
		reason   string // rejection reason, "" when used
		conflict bool
	}{
		{"no statement, values agree with the posted sign", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-8.7", "-6.6"}, ""), -2.1, "", false},
		{"no statement, values disagree: refused, never flipped", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-6.6", "-8.7"}, ""), 0, ReasonDirection, false},
		{"statement in our order, values agree", analysisTrial([]string{"OG001", "OG000"}, [2]string{"-8.7", "-6.6"}, "Velmorazine 10 mg minus Placebo"), -2.1, "", false},
		{"statement reversed, values agree", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-6.6", "-8.7"}, "Placebo minus Velmorazine 10 mg"), 2.1, "", false},
		{"statement wins over values that disagree", analysisTrial([]string{"OG000", "OG001"}, [2]string{"-6.6", "-8.7"}, "Velmorazine 10 mg vs. Placebo"), -2.1, "", true},
		{"no values, statement in our order", analysisTrial([]string{"OG001", "OG000"}, [2]string{"NA", "NA"}, "Velmorazine 10 mg minus Placebo"), -2.1, "", false},
		{"no values, statement reversed", analysisTrial([]string{"OG000", "OG001"}, [2]string{"NA", "NA"}, "Placebo minus Velmorazine 10 mg"), 2.1, "", false},
		{"no values, no statement: direction unknown", analysisTrial([]string{"OG000", "OG001"}, [2]string{"NA", "NA"}, ""), 0, ReasonDirection, false},
		{"analysis of other groups", analysisTrial([]string{"OG000", "OG002"}, [2]string{"-8.7", "-6.6"}, ""), 0, ReasonDispersion, false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := RegistryEffect(mdReview, tc.trial, link)
			if tc.reason != "" {
				var re *RejectError
				if !errors.As(err, &re) || re.Reason != tc.reason {
					t.Fatalf("err = %v, want a %s rejection", err, tc.reason)
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
			if hasFlag(got.Flags, "direction_conflict") != tc.conflict {
				t.Errorf("flags %q: direction_conflict want %v", got.Flags, tc.conflict)
			}
			if got.PostedAnalysis == nil || !got.PostedAnalysis.Used || got.PostedAnalysis.DirectionConflict != tc.conflict {
				t.Errorf("posted analysis %+v", got.PostedAnalysis)
			}
		})
	}
}

func hasFlag(flags []string, prefix string) bool {
	for _, f := range flags {
		if strings.HasPrefix(f, prefix) {
			return true
		}
	}
	return false
}

// lsTrial is a constructed record (fictional id) near the null: LS means
// with SEs per arm, 15 per arm, and a posted ANCOVA LS difference of -1.2
// (95% CI -3.5 to 1.1) whose sign is opposite to the raw means (30.4 vs
// 30.1), as adjusted estimates can be.
func lsTrial(comment string) ingest.Trial {
	tr := twoArmTrial("STANDARD_ERROR", "LEAST_SQUARES_MEAN",
		map[string][4]string{"OG000": {"30.4", "0.81", "", ""}, "OG001": {"30.1", "0.84", "", ""}},
		map[string]string{"OG000": "15", "OG001": "15"})
	tr.TrialID = "NCT99990014"
	tr.Allocation, tr.InterventionModel = "RANDOMIZED", "PARALLEL"
	tr.Outcomes[0].Groups = []ingest.Group{{ID: "OG000", Title: "Drug"}, {ID: "OG001", Title: "Placebo"}}
	tr.Outcomes[0].Analyses = []ingest.Analysis{{
		GroupIDs: []string{"OG000", "OG001"}, ParamType: "LS Mean Difference", ParamValue: num("-1.2"), Method: "ANCOVA",
		CIPct: num("95"), CISides: "TWO_SIDED", CILower: num("-3.5"), CIUpper: num("1.1"), EstimateComment: comment,
	}}
	return tr
}

// TestDirectionStatedWinsOverRawMeans is the near-null case: the stated
// "Drug minus Placebo" LS difference of -1.2 stays -1.2 (benefit when lower
// is better) although the raw means run the other way, and the link is
// flagged direction_conflict. The SE comes from the CI with t on 28 df
// (15 per arm). Without a statement the analysis is refused, and the arms
// give the effect.
func TestDirectionStatedWinsOverRawMeans(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	// scipy 1.10.1: 4.6/(2*stats.t.ppf(0.975, 28)) (testdata/reference/harmonize_posted_se.py)
	const wantSE = 1.1228236579883515
	got, err := RegistryEffect(mdReview, lsTrial("Drug minus Placebo"), link)
	if err != nil {
		t.Fatal(err)
	}
	if got.Effect != -1.2 || !scalar.EqualWithinAbsOrRel(got.SE, wantSE, 1e-8, 1e-8) {
		t.Errorf("effect %v (SE %.17g), want -1.2 (SE %.17g)", got.Effect, got.SE, wantSE)
	}
	if !hasFlag(got.Flags, "direction_conflict") {
		t.Errorf("no direction_conflict flag: %q", got.Flags)
	}
	pa := got.PostedAnalysis
	if pa == nil || !pa.Used || pa.SESource != "se_from_ci_t" || pa.ArmsEffect == nil || !scalar.EqualWithinAbsOrRel(*pa.ArmsEffect, 0.3, 1e-9, 1e-9) {
		t.Fatalf("posted analysis %+v: want used, SE from the CI with t, arm-based 0.3 kept beside", pa)
	}
	var methods []string
	for _, d := range got.Derivations {
		methods = append(methods, d.Method)
	}
	if strings.Join(methods, ",") != "posted_analysis,se_from_ci_t,between_group_analysis,arm_based_result" {
		t.Errorf("derivation steps %v", methods)
	}

	// --prefer arms: the arm-based result, the analysis listed as not used.
	arms, err := RegistryEffectWith(mdReview, lsTrial("Drug minus Placebo"), link, HarmonizeOptions{Prefer: PreferArms})
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(arms.Effect, 0.3, 1e-9, 1e-9) || arms.PostedAnalysis == nil || arms.PostedAnalysis.Used {
		t.Errorf("prefer arms: effect %v, posted %+v", arms.Effect, arms.PostedAnalysis)
	}
	if last := arms.Derivations[len(arms.Derivations)-1]; last.Method != "posted_analysis" || !strings.HasPrefix(last.Assumption, "not used") {
		t.Errorf("prefer arms: the unused posted analysis is not listed last: %+v", last)
	}

	// No statement and raw values that disagree: the analysis is refused
	// (not flipped) and the arms give the effect.
	none, err := RegistryEffect(mdReview, lsTrial(""), link)
	if err != nil {
		t.Fatal(err)
	}
	if none.ConvertedFrom != "arms_se" || none.PostedAnalysis == nil || none.PostedAnalysis.Used ||
		!strings.Contains(none.PostedAnalysis.Why, "direction unknown") {
		t.Errorf("no statement: from %q, posted %+v", none.ConvertedFrom, none.PostedAnalysis)
	}
}

func TestSEFromPostedCIUsesTForSmallGroups(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	for _, tc := range []struct {
		name     string
		n1, n2   string
		level    string
		lo, hi   string
		wantSE   float64
		wantFrom string
	}{
		// scipy 1.10.1 (testdata/reference/harmonize_posted_se.py)
		{"15 per arm, t on 28 df", "15", "15", "95", "-3.5", "1.1", 1.1228236579883515, "se_from_ci_t"},
		{"65 and 60 per arm, z", "65", "60", "95", "-3.5", "1.1", 1.173490950926704, "se_from_ci_normal"},
		{"90% CI, 90/94, z", "90", "94", "90", "-2.72", "-1.55", 0.355654746668385, "se_from_ci_normal"},
		{"90% CI, 20/22, t on 40 df", "20", "22", "90", "0.4", "3.6", 0.9502028321867193, "se_from_ci_t"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tr := lsTrial("Drug minus Placebo")
			tr.Outcomes[0].Denoms[0].Counts = []ingest.Count{{GroupID: "OG000", Value: num(tc.n1)}, {GroupID: "OG001", Value: num(tc.n2)}}
			a := &tr.Outcomes[0].Analyses[0]
			a.CIPct, a.CILower, a.CIUpper = num(tc.level), num(tc.lo), num(tc.hi)
			// The estimate at the interval's centre: a difference off the
			// centre of its interval is refused (ciOffCentre).
			a.ParamValue = num(strconv.FormatFloat((a.CILower.Value+a.CIUpper.Value)/2, 'f', -1, 64))
			got, err := RegistryEffect(mdReview, tr, link)
			if err != nil {
				t.Fatal(err)
			}
			// 1e-8: the t quantile is computed numerically.
			if !scalar.EqualWithinAbsOrRel(got.SE, tc.wantSE, 1e-8, 1e-8) || got.PostedAnalysis.SESource != tc.wantFrom {
				t.Errorf("SE %.17g from %s, want %.17g from %s", got.SE, got.PostedAnalysis.SESource, tc.wantSE, tc.wantFrom)
			}
		})
	}
}

// TestStatedSign reads statements of direction as records write them.
func TestStatedSign(t *testing.T) {
	o := &ingest.Outcome{Groups: []ingest.Group{{ID: "OG000", Title: "Placebo qw"}, {ID: "OG001", Title: "Dupilumab 300 mg qw"}}}
	for _, tc := range []struct {
		name string
		a    ingest.Analysis
		want float64
	}{
		{"estimate comment vs.", ingest.Analysis{EstimateComment: "Dupilumab 300 mg qw vs. Placebo qw"}, 1},
		{"generic words", ingest.Analysis{EstimateComment: "Drug minus Placebo"}, 1},
		{"generic words reversed", ingest.Analysis{EstimateComment: "Placebo minus active treatment"}, -1},
		{"group description", ingest.Analysis{GroupDescription: "ANCOVA. Difference: dupilumab - placebo."}, 1},
		{"parameter type", ingest.Analysis{ParamType: "Mean Difference (Placebo minus Dupilumab)"}, -1},
		{"group order, first minus second", ingest.Analysis{GroupIDs: []string{"OG000", "OG001"}, StatisticalComment: "Estimate is first group minus second group."}, -1},
		{"no statement", ingest.Analysis{GroupDescription: "ANCOVA with baseline as covariate."}, 0},
		{"a ratio is no direction of a difference", ingest.Analysis{EstimateComment: "Odds ratio: CZP/Placebo"}, 0},
		{"both sides name both groups", ingest.Analysis{EstimateComment: "dupilumab and placebo minus placebo and dupilumab"}, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if got, _, _ := statedSign(o, tc.a, "OG001", "OG000"); got != tc.want {
				t.Errorf("sign %v, want %v", got, tc.want)
			}
		})
	}
	// One title inside the other (an active ointment and its vehicle).
	o = &ingest.Outcome{Groups: []ingest.Group{{ID: "OG000", Title: "ACU-D1 Ointment"}, {ID: "OG001", Title: "ACU-D1 Ointment Vehicle"}}}
	for _, tc := range []struct {
		name string
		a    ingest.Analysis
		want float64
	}{
		{"active first", ingest.Analysis{EstimateComment: "ACU-D1 Ointment - ACU-D1 Ointment Vehicle"}, 1},
		{"vehicle first", ingest.Analysis{EstimateComment: "ACU-D1 Ointment Vehicle minus ACU-D1 Ointment"}, -1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if got, _, _ := statedSign(o, tc.a, "OG000", "OG001"); got != tc.want {
				t.Errorf("sign %v, want %v", got, tc.want)
			}
		})
	}
}

// TestSMDSaysWhichSD: an SMD review standardises by the arms' SD and the
// derivation says so, and why the posted adjusted analysis is not used.
func TestSMDSaysWhichSD(t *testing.T) {
	rv := mdReview
	rv.Measure = "SMD"
	got, err := RegistryEffect(rv, lsTrial("Drug minus Placebo"), ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}})
	if err != nil {
		t.Fatal(err)
	}
	last := got.Derivations[len(got.Derivations)-1]
	if last.Method != "sd_choice" || !strings.Contains(last.Formula, "SE sqrt(n)") || !strings.Contains(last.Assumption, "residual SD") {
		t.Errorf("last step %+v", last)
	}
	if got.PostedAnalysis == nil || got.PostedAnalysis.Used {
		t.Errorf("posted analysis %+v: listed, not used for an SMD", got.PostedAnalysis)
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

// TestDesignClasses: records that are not randomized parallel trials are
// refused unless allowed, then used and flagged.
func TestDesignClasses(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	base := func() ingest.Trial {
		return twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"-5", "10", "", ""}, "OG001": {"-2", "11", "", ""}},
			map[string]string{"OG000": "40", "OG001": "40"})
	}
	for _, tc := range []struct {
		name         string
		alloc, model string
		paired       bool
		want         string
	}{
		{"randomized parallel", "RANDOMIZED", "PARALLEL", false, DesignRandomized},
		{"allocation not stated", "", "", false, DesignRandomized},
		{"non-randomized cohorts", "NON_RANDOMIZED", "SINGLE_GROUP", false, DesignNotRandomized},
		{"single group", "NA", "SINGLE_GROUP", false, DesignNotRandomized},
		{"crossover", "RANDOMIZED", "CROSSOVER", false, DesignCrossover},
		{"crossover with a paired analysis", "RANDOMIZED", "CROSSOVER", true, DesignRandomized},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tr := base()
			tr.Allocation, tr.InterventionModel = tc.alloc, tc.model
			if tc.paired {
				tr.Outcomes[0].Analyses = []ingest.Analysis{{GroupIDs: []string{"OG000", "OG001"}, ParamType: "Mean Difference (Final Values)",
					ParamValue: num("-2.5"), DispersionType: "STANDARD_ERROR_OF_MEAN", DispersionValue: num("0.9"), Method: "Mixed model, paired within-participant difference",
					EstimateComment: "OG000 treatment minus placebo"}}
				tr.Outcomes[0].Groups = []ingest.Group{{ID: "OG000", Title: "Velmorazine"}, {ID: "OG001", Title: "Placebo"}}
			}
			got, err := RegistryEffect(mdReview, tr, link)
			if tc.want != DesignRandomized {
				var re *RejectError
				if !errors.As(err, &re) || re.Reason != tc.want {
					t.Fatalf("err = %v, want a %s rejection", err, tc.want)
				}
				allowed, err := RegistryEffectWith(mdReview, tr, link, HarmonizeOptions{AllowNonrandomized: true})
				if err != nil || allowed.Design != tc.want || !hasFlag(allowed.Flags, tc.want+":") {
					t.Errorf("allowed: err %v, design %q, flags %q", err, allowed.Design, allowed.Flags)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got.Design != DesignRandomized {
				t.Errorf("design %q", got.Design)
			}
			if tc.paired && (got.ConvertedFrom != "between_group_analysis" || got.Effect != -2.5 || got.SE != 0.9) {
				t.Errorf("crossover: from %q effect %v SE %v, want the paired analysis -2.5 (0.9)", got.ConvertedFrom, got.Effect, got.SE)
			}
		})
	}
}
