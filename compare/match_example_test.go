package compare_test

import (
	"fmt"

	"unshelved/compare"
	"unshelved/ingest"
)

func ExampleProposeForReview() {
	weeks := 12.0
	rv := ingest.Review{ReviewID: "R1", Measure: "MD", Outcome: "Itch intensity (numeric rating scale)", Unit: "points",
		Better: "lower", TimepointWeeks: &weeks, SearchDate: "2024-01-31",
		Conditions: []string{"pruritus", "chronic itch"}, Interventions: []string{"exampline", "EX-1"}, Comparator: "placebo"}
	num := func(v float64) ingest.Num { return ingest.Num{Text: fmt.Sprint(v), Value: v, OK: true} }
	yes := true
	trial := ingest.Trial{TrialID: "NCT00000001", StudyType: "INTERVENTIONAL", Allocation: "RANDOMIZED", OverallStatus: "COMPLETED",
		Conditions: []string{"Chronic Itch"}, HasResults: &yes,
		PrimaryCompletionDate: ingest.Date{Text: "2022-05-31"},
		Arms: []ingest.Arm{{Label: "Exampline 10 mg", Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: Exampline"}},
			{Label: "Placebo", Type: "PLACEBO_COMPARATOR", InterventionNames: []string{"Drug: Placebo"}}},
		Outcomes: []ingest.Outcome{{Index: 0, Type: "PRIMARY", Title: "Reduction From Baseline in Itch Intensity at Week 12",
			TimeFrame: "Baseline to Week 12", ParamType: "MEAN", Dispersion: "STANDARD_DEVIATION", Unit: "score on a scale",
			Groups: []ingest.Group{{ID: "OG000", Title: "Placebo"}, {ID: "OG001", Title: "Exampline 10 mg"}},
			Denoms: []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num(50)}, {GroupID: "OG001", Value: num(52)}}}},
			Classes: []ingest.Class{{Categories: []ingest.Category{{Measurements: []ingest.Measurement{
				{GroupID: "OG000", Value: num(1.1), Spread: num(2.0)}, {GroupID: "OG001", Value: num(2.4), Spread: num(2.1)}}}}}},
		}},
	}
	rp := compare.ProposeForReview(rv, nil, []ingest.Trial{trial}, compare.MatchOptions{AcceptAbove: compare.DefaultAcceptAbove})
	for _, tp := range rp.Trials {
		best := tp.Outcomes[0]
		fmt.Printf("%s %s: outcome %d, treat %v, ctrl %v, flip %v, score %.2f, accepted %v\n",
			tp.TrialID, tp.Class, best.OutcomeIndex, best.TreatGroups, best.CtrlGroups, best.Flip, best.Score, best.AutoAccepted)
	}
	// Output:
	// NCT00000001 registry-only: outcome 0, treat [OG001], ctrl [OG000], flip true, score 1.00, accepted true
}
