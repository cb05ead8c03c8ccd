package compare

import (
	"fmt"
	"reflect"
	"slices"
	"strings"
	"testing"

	"unshelved/ingest"
)

// The unit decisions rest on the conversion table in units.go, whose
// factors name their sources (glucose 18.016 mg/dL per mmol/L, cholesterol
// 38.67, the exact international pound, the IFCC-NGSP equation).
func TestUnitScore(t *testing.T) {
	for _, tc := range []struct {
		name, measure, outcome, reviewUnit, unit string
		want                                     float64
		unitFrom                                 string
	}{
		{"same unit", "MD", "Fasting plasma glucose", "mmol/L", "mmol/L", 1, ""},
		{"same unit spelled out", "MD", "Fasting plasma glucose", "mmol/L", "millimoles per liter", 1, ""},
		{"glucose mg/dL converts", "MD", "Fasting plasma glucose", "mmol/L", "mg/dL", 0.9, "mg/dL"},
		{"LDL cholesterol mg/dL converts", "MD", "LDL cholesterol", "mmol/L", "mg/dL", 0.9, "mg/dL"},
		{"C-peptide has no factor", "MD", "Fasting C-peptide", "mmol/L", "mg/dL", 0, ""},
		{"pounds to kilograms", "MD", "Body weight", "kg", "lb", 0.9, "lb"},
		{"HbA1c percent to mmol/mol", "MD", "HbA1c", "mmol/mol", "%", 0.9, "%"},
		{"HbA1c is not glucose", "MD", "Fasting plasma glucose", "mmol/L", "percentage of haemoglobin", 0, ""},
		{"rating scales agree", "MD", "Tinnitus distress", "points (0-100)", "score on a scale", 1, ""},
		{"loudness is not a rating", "MD", "Tinnitus distress", "points (0-100)", "dB SL", 0, ""},
		{"SMD takes any scale", "SMD", "Depressive symptoms", "SD units", "units on a scale", 1, ""},
		{"SMD doubts a physical unit", "SMD", "Depressive symptoms", "SD units", "steps per day", 0.5, ""},
		{"BMI spelled two ways", "MD", "Body mass index", "kg/m2", "Kg/m^2", 1, ""},
		{"percent body mass is not BMI", "MD", "Body mass index", "kg/m2", "% body mass", 0, ""},
		{"A1C names HbA1c", "MD", "Glycated haemoglobin (A1C)", "mmol/mol", "%", 0.9, "%"},
		{"LDL-C names cholesterol", "MD", "LDL-C", "mmol/L", "mg/dL", 0.9, "mg/dL"},
		{"blood pressure spelled two ways", "MD", "Systolic blood pressure", "mm Hg", "mmHg", 1, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rv := ingest.Review{Measure: tc.measure, Outcome: tc.outcome, Unit: tc.reviewUnit}
			got, from, why := unitScore(rv, tc.unit)
			if got != tc.want || from != tc.unitFrom {
				t.Errorf("unitScore(%q) = %v, %q (%s); want %v, %q", tc.unit, got, from, why, tc.want, tc.unitFrom)
			}
			if got == 0 && !strings.Contains(why, "cannot be converted") {
				t.Errorf("unitScore(%q) = 0 without an explanation: %q", tc.unit, why)
			}
		})
	}
}

func TestReversedMeasure(t *testing.T) {
	for _, tc := range []struct {
		title, desc, better string
		want                bool
	}{
		{"Improvement From Baseline in Tinnitus Distress Index", "", "lower", true},
		{"Improvement in 6-Minute Walk Distance", "", "higher", false},
		{"Reduction in Pain Score From Baseline", "", "lower", true},
		{"Decrease From Baseline in HbA1c", "", "lower", true},
		{"Change From Baseline in Total Distress Score", "Change is the Week 12 score minus the baseline score; negative values mean less distress.", "lower", false},
		{"Change in Distress", "Change is the baseline score minus the Week 12 score.", "lower", true},
		{"Worsening of Quality of Life", "", "higher", true},
		{"Worsening of Pain", "", "lower", false},
		{"Tinnitus Distress Index Total Score at Week 12", "higher scores mean more distress", "lower", false},
	} {
		t.Run(tc.title, func(t *testing.T) {
			got, why := reversedMeasure(tc.title, tc.desc, tc.better)
			if got != tc.want {
				t.Errorf("reversedMeasure = %v (%s), want %v", got, why, tc.want)
			}
			if got && why == "" {
				t.Error("no reason given")
			}
		})
	}
}

func TestDoseOf(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want float64
		ok   bool
	}{
		{"Velmorazine 20 mg", 20, true},
		{"Drug X 0.5mg/kg", 0.5, true},
		{"Drug X 2.5 mg QD", 2.5, true},
		{"Placebo", 0, false},
		{"Cohort 3", 0, false},
	} {
		t.Run(tc.in, func(t *testing.T) {
			got, ok := doseOf(tc.in)
			if got != tc.want || ok != tc.ok {
				t.Errorf("doseOf(%q) = %v, %v; want %v, %v", tc.in, got, ok, tc.want, tc.ok)
			}
		})
	}
}

func armsTrial(arms []ingest.Arm, groups []ingest.Group) (ingest.Trial, *ingest.Outcome) {
	t := ingest.Trial{TrialID: "NCT00000000", Arms: arms, Outcomes: []ingest.Outcome{{Groups: groups}}}
	return t, &t.Outcomes[0]
}

func TestAssignArms(t *testing.T) {
	rt := prepareReview(ingest.Review{Interventions: []string{"velmorazine", "VLZ-204"}, Comparator: "placebo", Better: "lower"}, nil)
	placeboArm := ingest.Arm{Label: "Placebo", Type: "PLACEBO_COMPARATOR", InterventionNames: []string{"Drug: Placebo"}}
	drugArm := ingest.Arm{Label: "Velmorazine 20 mg", Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: Velmorazine"}}
	for _, tc := range []struct {
		name              string
		arms              []ingest.Arm
		groups            []ingest.Group
		highest           bool
		wantTreat, wantCt []string
		wantReason        string
	}{
		{"placebo first", []ingest.Arm{drugArm, placeboArm},
			[]ingest.Group{{ID: "OG000", Title: "Placebo"}, {ID: "OG001", Title: "Velmorazine 20 mg"}}, false,
			[]string{"OG001"}, []string{"OG000"}, ""},
		{"placebo arm typed experimental", []ingest.Arm{drugArm, {Label: "Placebo", Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: Placebo"}}},
			[]ingest.Group{{ID: "OG000", Title: "Velmorazine 20 mg"}, {ID: "OG001", Title: "Placebo"}}, false,
			[]string{"OG000"}, []string{"OG001"}, ""},
		{"doses combined", []ingest.Arm{drugArm, placeboArm},
			[]ingest.Group{{ID: "OG000", Title: "Velmorazine 10 mg"}, {ID: "OG001", Title: "Velmorazine 20 mg"}, {ID: "OG002", Title: "Placebo"}}, false,
			[]string{"OG000", "OG001"}, []string{"OG002"}, "combined 2 experimental groups"},
		{"highest dose", []ingest.Arm{drugArm, placeboArm},
			[]ingest.Group{{ID: "OG000", Title: "Velmorazine 10 mg"}, {ID: "OG001", Title: "Velmorazine 20 mg"}, {ID: "OG002", Title: "Placebo"}}, true,
			[]string{"OG001"}, []string{"OG002"}, "highest dose kept"},
		{"other active drug has no role", []ingest.Arm{drugArm, placeboArm, {Label: "Tarnelide 50 mg", Type: "ACTIVE_COMPARATOR", InterventionNames: []string{"Drug: Tarnelide"}}},
			[]ingest.Group{{ID: "OG000", Title: "Velmorazine 20 mg"}, {ID: "OG001", Title: "Tarnelide 50 mg"}, {ID: "OG002", Title: "Placebo"}}, false,
			[]string{"OG000"}, []string{"OG002"}, `no role: OG001 "Tarnelide 50 mg"`},
		{"crossover sequence is not an arm", []ingest.Arm{drugArm, placeboArm},
			[]ingest.Group{{ID: "OG000", Title: "Placebo (FAS)"}, {ID: "OG001", Title: "Velmorazine 20 mg (FAS)"}, {ID: "OG002", Title: "Placebo->OL Velmorazine"}}, false,
			[]string{"OG001"}, []string{"OG000"}, "no role: OG002"},
		{"neutral titles resolved by the arm's interventions", []ingest.Arm{{Label: "Arm A", Type: "OTHER", InterventionNames: []string{"Drug: Velmorazine"}}, {Label: "Arm B", Type: "OTHER", InterventionNames: []string{"Drug: Placebo"}}},
			[]ingest.Group{{ID: "OG000", Title: "Arm B"}, {ID: "OG001", Title: "Arm A"}}, false,
			[]string{"OG001"}, []string{"OG000"}, ""},
		{"description decides when the title does not", []ingest.Arm{},
			[]ingest.Group{{ID: "OG000", Title: "Group 1", Description: "Matching placebo tablets"}, {ID: "OG001", Title: "Group 2", Description: "VLZ-204 tablets"}}, false,
			[]string{"OG001"}, []string{"OG000"}, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			tr, o := armsTrial(tc.arms, tc.groups)
			as := assignArms(rt, tr, o, tc.highest)
			if !reflect.DeepEqual(as.treat, tc.wantTreat) || !reflect.DeepEqual(as.ctrl, tc.wantCt) {
				t.Errorf("treat %v ctrl %v, want %v %v (%v)", as.treat, as.ctrl, tc.wantTreat, tc.wantCt, as.reasons)
			}
			if tc.wantReason != "" && !strings.Contains(strings.Join(as.reasons, "; "), tc.wantReason) {
				t.Errorf("reasons %v lack %q", as.reasons, tc.wantReason)
			}
		})
	}
}

func TestDateAfter(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want bool
	}{
		{"2025-05-30", "2025-03-31", true},
		{"2025-03-31", "2025-03-31", false},
		{"2025-03", "2025-03-31", false},
		{"2025", "2024-12-31", true},
		{"2019-05-31", "2025-03-31", false},
	} {
		if got := dateAfter(tc.a, tc.b); got != tc.want {
			t.Errorf("dateAfter(%q, %q) = %v, want %v", tc.a, tc.b, got, tc.want)
		}
	}
}

// TestAcceptAboveNeverTakesCrossover: a crossover, non-randomized or
// single-group record that fits the review perfectly is proposed with its
// design class and a reason, undecided, and --accept-above (even 0.01)
// does not accept it; the same record as a randomized parallel trial is
// accepted. A non-randomized record without results is excluded (nothing
// to decide on, and not missing randomized evidence).
func TestAcceptAboveNeverTakesCrossover(t *testing.T) {
	weeks := 12.0
	rv := ingest.Review{ReviewID: "R1", Measure: "MD", Outcome: "Itch intensity (numeric rating scale)", Unit: "points",
		Better: "lower", TimepointWeeks: &weeks, SearchDate: "2024-01-31",
		Conditions: []string{"pruritus"}, Interventions: []string{"exampline"}, Comparator: "placebo"}
	yes := true
	trial := func(alloc, model string) ingest.Trial {
		return ingest.Trial{TrialID: "NCT99990015", StudyType: "INTERVENTIONAL", Allocation: alloc, InterventionModel: model,
			OverallStatus: "COMPLETED", Conditions: []string{"Pruritus"}, HasResults: &yes, PrimaryCompletionDate: ingest.Date{Text: "2022-05-31"},
			Arms: []ingest.Arm{{Label: "Exampline 10 mg", InterventionNames: []string{"Drug: Exampline"}}, {Label: "Placebo", InterventionNames: []string{"Drug: Placebo"}}},
			Outcomes: []ingest.Outcome{{Index: 0, Type: "PRIMARY", Title: "Itch Intensity at Week 12", TimeFrame: "Week 12",
				ParamType: "MEAN", Dispersion: "STANDARD_DEVIATION", Unit: "score on a scale",
				Groups: []ingest.Group{{ID: "OG000", Title: "Placebo"}, {ID: "OG001", Title: "Exampline 10 mg"}},
				Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num("50")}, {GroupID: "OG001", Value: num("50")}}}},
				Classes: []ingest.Class{{Categories: []ingest.Category{{Measurements: []ingest.Measurement{
					{GroupID: "OG000", Value: num("4.1"), Spread: num("2.0")}, {GroupID: "OG001", Value: num("3.2"), Spread: num("2.1")}}}}}},
			}},
		}
	}
	for _, tc := range []struct {
		alloc, model, design string
		accepted             bool
	}{{"RANDOMIZED", "PARALLEL", DesignRandomized, true}, {"RANDOMIZED", "CROSSOVER", DesignCrossover, false},
		{"NON_RANDOMIZED", "PARALLEL", DesignNotRandomized, false}, {"NA", "SINGLE_GROUP", DesignNotRandomized, false},
		{"NON_RANDOMIZED", "CROSSOVER", DesignNotRandomized, false}} {
		for _, above := range []float64{DefaultAcceptAbove, 0.01} {
			name := fmt.Sprintf("%s/%s above %v", tc.alloc, tc.model, above)
			rp := ProposeForReview(rv, nil, []ingest.Trial{trial(tc.alloc, tc.model)}, MatchOptions{AcceptAbove: above})
			if len(rp.Trials) != 1 || len(rp.Trials[0].Outcomes) == 0 {
				t.Fatalf("%s: proposals %+v", name, rp)
			}
			tp := rp.Trials[0]
			if tp.Design != tc.design || tp.Outcomes[0].AutoAccepted != tc.accepted || tp.Outcomes[0].Score <= DefaultAcceptAbove {
				t.Errorf("%s: design %q, score %v, auto-accepted %v; want %q, above %v, %v", name, tp.Design, tp.Outcomes[0].Score,
					tp.Outcomes[0].AutoAccepted, tc.design, DefaultAcceptAbove, tc.accepted)
			}
			if !tc.accepted && !strings.Contains(strings.Join(tp.Reasons, "; "), tc.design+": ") ||
				!tc.accepted && !strings.Contains(strings.Join(tp.Reasons, "; "), "never accepted automatically") {
				t.Errorf("%s: reasons %q do not give the class %s and why", name, tp.Reasons, tc.design)
			}
			links := rp.Links()
			if len(links) == 0 || (links[0].Decision == "accept") != tc.accepted || links[0].AutoAccepted != tc.accepted {
				t.Errorf("%s: links %+v: want decision accepted %v", name, links, tc.accepted)
			}
		}
		noResults := trial(tc.alloc, tc.model)
		noResults.Outcomes, noResults.HasResults = nil, nil
		rp := ProposeForReview(rv, nil, []ingest.Trial{noResults}, MatchOptions{})
		if excluded := len(rp.Excluded) == 1 && slices.Contains(rp.Excluded[0].Failed, "design"); excluded != (tc.design == DesignNotRandomized) {
			t.Errorf("%s/%s without results: proposals %+v, excluded %+v", tc.alloc, tc.model, rp.Trials, rp.Excluded)
		}
	}
}
