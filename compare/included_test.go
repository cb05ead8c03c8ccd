package compare

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"unshelved/ingest"
)

// Recognising a published study without a registry id in a registry record,
// on every posted layout. Each layout is a constructed record (fictional
// ids, invented numbers) with two review studies: the same trial written
// as a paper would report it (computed here from the posted values with
// the handbook formulas named beside them, then rounded as papers round),
// and a different trial of the same size.

// layoutReview is the review the layouts are matched against.
func layoutReview(outcome, unit string, weeks float64) ingest.Review {
	return ingest.Review{ReviewID: "ZX-01", Title: "Quenitrol for zorblax syndrome", Measure: "MD", Outcome: outcome, Unit: unit,
		Better: "lower", TimepointWeeks: &weeks, SearchDate: "2025-06-30", Conditions: []string{"zorblax syndrome"},
		Interventions: []string{"quenitrol"}, Comparator: "placebo"}
}

// layoutTrial is a completed randomized placebo-controlled record holding
// one posted outcome.
func layoutTrial(id string, o ingest.Outcome) ingest.Trial {
	return ingest.Trial{TrialID: id, BriefTitle: "Quenitrol in Zorblax Syndrome", StudyType: "INTERVENTIONAL", Allocation: "RANDOMIZED",
		OverallStatus: "COMPLETED", PrimaryCompletionDate: ingest.Date{Text: "2022-03-31"}, Conditions: []string{"Zorblax Syndrome"},
		Interventions: []ingest.Intervention{{Type: "DRUG", Name: "Quenitrol"}, {Type: "DRUG", Name: "Placebo"}},
		Arms: []ingest.Arm{{Label: "Quenitrol", Type: "EXPERIMENTAL", InterventionNames: []string{"Drug: Quenitrol"}},
			{Label: "Placebo", Type: "PLACEBO_COMPARATOR", InterventionNames: []string{"Drug: Placebo"}}},
		Outcomes: []ingest.Outcome{o}}
}

// arm is one posted group: title, N, and value and spread as posted text.
type arm struct {
	title, n, value, spread string
}

// layoutOutcome builds an outcome with one row per (title, arms) block.
func layoutOutcome(title, timeFrame, param, dispersion, unit string, groups []string, rows map[string][]arm, order []string) ingest.Outcome {
	o := ingest.Outcome{Index: 0, Type: "PRIMARY", Title: title, TimeFrame: timeFrame, ReportingStatus: "POSTED",
		ParamType: param, Dispersion: dispersion, DispersionText: dispersion, Unit: unit}
	for i, g := range groups {
		o.Groups = append(o.Groups, ingest.Group{ID: fmt.Sprintf("OG%03d", i), Title: g})
	}
	var counts []ingest.Count
	for i, a := range rows[order[0]] {
		counts = append(counts, ingest.Count{GroupID: fmt.Sprintf("OG%03d", i), Value: num(a.n)})
	}
	o.Denoms = []ingest.Denom{{Units: "Participants", Counts: counts}}
	for _, row := range order {
		var ms []ingest.Measurement
		for i, a := range rows[row] {
			ms = append(ms, ingest.Measurement{GroupID: fmt.Sprintf("OG%03d", i), Value: num(a.value), Spread: num(a.spread)})
		}
		o.Classes = append(o.Classes, ingest.Class{Title: row, Categories: []ingest.Category{{Measurements: ms}}})
	}
	return o
}

// armsStudy is a published study given by its arms.
func armsStudy(name string, tm, tsd float64, tn int, cm, csd float64, cn int) ingest.ReviewStudy {
	return ingest.ReviewStudy{ReviewID: "ZX-01", Study: name, TreatMean: &tm, TreatSD: &tsd, TreatN: &tn, CtrlMean: &cm, CtrlSD: &csd, CtrlN: &cn}
}

// round rounds as a paper does.
func round(x float64, decimals int) float64 {
	p := math.Pow(10, float64(decimals))
	return math.Round(x*p) / p
}

// combined is the Cochrane Handbook formula for combining two groups into
// one (section 6.5.2.10, Table 6.5.a; from memory):
//
//	N = N1 + N2,  M = (N1 M1 + N2 M2) / N
//	SD = sqrt( ((N1-1) SD1² + (N2-1) SD2² + N1 N2 / N (M1 - M2)²) / (N - 1) )
func combined(n1 int, m1, sd1 float64, n2 int, m2, sd2 float64) (int, float64, float64) {
	n := n1 + n2
	fn1, fn2, fn := float64(n1), float64(n2), float64(n)
	m := (fn1*m1 + fn2*m2) / fn
	sd := math.Sqrt(((fn1-1)*sd1*sd1 + (fn2-1)*sd2*sd2 + fn1*fn2/fn*(m1-m2)*(m1-m2)) / (fn - 1))
	return n, m, sd
}

type layoutCase struct {
	name   string
	review ingest.Review
	trial  ingest.Trial
	same   ingest.ReviewStudy // the same trial, reported without its id
	other  ingest.ReviewStudy // a different trial of the same size
	// wantSame is the class expected with the same trial in the review.
	wantSame string
}

func visitLayouts() []layoutCase {
	rows := map[string][]arm{
		"Week 4":  {{"Quenitrol", "60", "30.2", "8.1"}, {"Placebo", "62", "31.0", "8.3"}},
		"Week 8":  {{"Quenitrol", "60", "27.5", "8.4"}, {"Placebo", "62", "30.1", "8.0"}},
		"Week 12": {{"Quenitrol", "60", "24.8", "8.6"}, {"Placebo", "62", "29.9", "8.2"}},
	}
	order := []string{"Week 4", "Week 8", "Week 12"}
	o := layoutOutcome("Zorblax Symptom Score", "Week 4, Week 8 and Week 12", "MEAN", "STANDARD_DEVIATION", "points",
		[]string{"Quenitrol", "Placebo"}, rows, order)
	var out []layoutCase
	for i, row := range order {
		weeks := float64(4 * (i + 1))
		r := rows[row]
		same := armsStudy("Same "+row, num(r[0].value).Value, num(r[0].spread).Value, 60, num(r[1].value).Value, num(r[1].spread).Value, 62)
		// A different trial of the same size: the drug does worse than placebo.
		other := armsStudy("Other "+row, 33.4, 8.3, 60, 29.0, 8.1, 62)
		out = append(out, layoutCase{name: fmt.Sprintf("visit rows, review timepoint %s (%s of 3)", row, []string{"first", "middle", "last"}[i]),
			review: layoutReview("symptom score", "points", weeks), trial: layoutTrial("NCT99180001", o), same: same, other: other, wantSame: ClassIncluded})
	}
	return out
}

func doseLayout() layoutCase {
	rows := map[string][]arm{"": {{"Quenitrol 10 mg", "40", "26.1", "8.2"}, {"Quenitrol 20 mg", "42", "24.3", "8.8"}, {"Placebo", "41", "29.4", "8.5"}}}
	o := layoutOutcome("Zorblax Symptom Score at Week 12", "Week 12", "MEAN", "STANDARD_DEVIATION", "points",
		[]string{"Quenitrol 10 mg", "Quenitrol 20 mg", "Placebo"}, rows, []string{""})
	n, m, sd := combined(40, 26.1, 8.2, 42, 24.3, 8.8)
	same := armsStudy("Same doses", round(m, 2), round(sd, 2), n, 29.4, 8.5, 41)
	other := armsStudy("Other doses", 28.9, 8.6, n, 27.1, 8.4, 41)
	return layoutCase{name: "dose arms combined", review: layoutReview("symptom score", "points", 12), trial: layoutTrial("NCT99180002", o),
		same: same, other: other, wantSame: ClassIncluded}
}

func lsMeansLayout() layoutCase {
	rows := map[string][]arm{"": {{"Quenitrol", "64", "-6.2", "1.05"}, {"Placebo", "63", "-2.9", "1.07"}}}
	o := layoutOutcome("Change From Baseline in Zorblax Symptom Score at Week 12", "Baseline to Week 12", "LEAST_SQUARES_MEAN", "STANDARD_ERROR", "points",
		[]string{"Quenitrol", "Placebo"}, rows, []string{""})
	// The ANCOVA difference differs from the difference of the LS means
	// shown (-3.3): adjusted for baseline and centre.
	o.Analyses = []ingest.Analysis{{GroupIDs: []string{"OG000", "OG001"}, ParamType: "LS Mean Difference", ParamValue: num("-3.1"),
		CIPct: num("95"), CISides: "TWO_SIDED", CILower: num("-5.6"), CIUpper: num("-0.6"), Method: "ANCOVA",
		EstimateComment: "Quenitrol minus Placebo"}}
	// The paper reports the ANCOVA difference with its SE from the 95% CI,
	// SE = (upper - lower) / (2 x 1.959964) (Cochrane Handbook 6.5.2.3;
	// 1.959964 from Python 3: statistics.NormalDist().inv_cdf(0.975)), and
	// the LS means with SD = SE x sqrt(n).
	seMD := round((-0.6-(-5.6))/(2*1.959964), 2)
	same := armsStudy("Same LS", -6.2, round(1.05*math.Sqrt(64), 2), 64, -2.9, round(1.07*math.Sqrt(63), 2), 63)
	eff := -3.1
	same.Effect, same.SE = &eff, &seMD
	other := armsStudy("Other LS", -3.0, 8.4, 64, -3.5, 8.5, 63)
	effO, seO := 0.5, seMD
	other.Effect, other.SE = &effO, &seO
	return layoutCase{name: "least-squares means with a posted analysis", review: layoutReview("symptom score", "points", 12),
		trial: layoutTrial("NCT99180003", o), same: same, other: other, wantSame: ClassIncluded}
}

func unitLayout() layoutCase {
	rows := map[string][]arm{"": {{"Quenitrol", "55", "142.3", "30.5"}, {"Placebo", "57", "158.9", "32.1"}}}
	o := layoutOutcome("Fasting Plasma Glucose at Week 12", "Week 12", "MEAN", "STANDARD_DEVIATION", "mg/dL",
		[]string{"Quenitrol", "Placebo"}, rows, []string{""})
	// The paper reports mmol/L: mg/dL divided by 18.016 (glucose, molar
	// mass 180.16 g/mol; common practice, no source), two decimals.
	const mgdl = 18.016
	same := armsStudy("Same glucose", round(142.3/mgdl, 2), round(30.5/mgdl, 2), 55, round(158.9/mgdl, 2), round(32.1/mgdl, 2), 57)
	other := armsStudy("Other glucose", 8.61, 1.72, 55, 8.55, 1.80, 57)
	return layoutCase{name: "another unit (mg/dL posted, mmol/L reviewed)", review: layoutReview("fasting plasma glucose", "mmol/L", 12),
		trial: layoutTrial("NCT99180004", o), same: same, other: other, wantSame: ClassIncluded}
}

func reversedLayout() layoutCase {
	rows := map[string][]arm{"": {{"Quenitrol", "50", "8.4", "6.1"}, {"Placebo", "51", "3.2", "6.4"}}}
	o := layoutOutcome("Reduction From Baseline in Zorblax Symptom Score at Week 12", "Baseline to Week 12", "MEAN", "STANDARD_DEVIATION", "points",
		[]string{"Quenitrol", "Placebo"}, rows, []string{""})
	// The paper reports the change (follow-up minus baseline): the
	// reduction with its sign reversed.
	same := armsStudy("Same reversed", -8.4, 6.1, 50, -3.2, 6.4, 51)
	other := armsStudy("Other reversed", -2.0, 6.2, 50, -2.5, 6.3, 51)
	return layoutCase{name: "reversed measure", review: layoutReview("symptom score", "points", 12),
		trial: layoutTrial("NCT99180005", o), same: same, other: other, wantSame: ClassIncluded}
}

func offByOneLayout() layoutCase {
	rows := map[string][]arm{"": {{"Quenitrol", "45", "24.6", "7.9"}, {"Placebo", "44", "29.8", "8.1"}}}
	o := layoutOutcome("Zorblax Symptom Score at Week 12", "Week 12", "MEAN", "STANDARD_DEVIATION", "points",
		[]string{"Quenitrol", "Placebo"}, rows, []string{""})
	// One participant of the drug arm is missing from the paper, which
	// moves the arm's mean by a tenth.
	same := armsStudy("Same minus one", 24.7, 7.9, 44, 29.8, 8.1, 44)
	other := armsStudy("Other same size", 27.0, 8.0, 45, 26.5, 8.2, 44)
	return layoutCase{name: "arm sizes off by one", review: layoutReview("symptom score", "points", 12),
		trial: layoutTrial("NCT99180006", o), same: same, other: other, wantSame: ClassPossiblyIncluded}
}

func allLayouts() []layoutCase {
	return append(visitLayouts(), doseLayout(), lsMeansLayout(), unitLayout(), reversedLayout(), offByOneLayout())
}

// TestIncludedLayouts: the same trial without its id is recognised on
// every layout (included, or possibly-included for the sizes off by one),
// and a different trial of the same size stays registry-only.
func TestIncludedLayouts(t *testing.T) {
	for _, tc := range allLayouts() {
		t.Run(tc.name, func(t *testing.T) {
			for _, c := range []struct {
				study ingest.ReviewStudy
				want  string
			}{{tc.same, tc.wantSame}, {tc.other, ClassRegistryOnly}} {
				rp := ProposeForReview(tc.review, []ingest.ReviewStudy{c.study}, []ingest.Trial{tc.trial}, MatchOptions{AcceptAbove: DefaultAcceptAbove})
				if len(rp.Trials) != 1 {
					t.Fatalf("%s: %d proposals, excluded %+v", c.study.Study, len(rp.Trials), rp.Excluded)
				}
				tp := rp.Trials[0]
				if tp.Class != c.want {
					t.Errorf("%s: class %s, want %s; reasons %q", c.study.Study, tp.Class, c.want, tp.Reasons)
					continue
				}
				if len(tp.Outcomes) == 0 || !tp.Outcomes[0].Converted {
					t.Fatalf("%s: the outcome does not convert: %+v", c.study.Study, tp.Outcomes)
				}
				switch c.want {
				case ClassRegistryOnly:
					if !tp.Outcomes[0].AutoAccepted || tp.IncludedAs != "" {
						t.Errorf("%s: registry-only should be auto-accepted above %v (score %v), included as %q", c.study.Study, DefaultAcceptAbove, tp.Score, tp.IncludedAs)
					}
				default:
					if tp.IncludedAs != c.study.Study {
						t.Errorf("%s: included as %q", c.study.Study, tp.IncludedAs)
					}
					for _, op := range tp.Outcomes {
						if op.AutoAccepted || op.Decision != "" {
							t.Errorf("%s: %s outcome %d auto-accepted", c.study.Study, tp.Class, op.OutcomeIndex)
						}
					}
					// The reasons carry the compared values.
					if !strings.Contains(tp.Reasons[0], c.study.Study) || !strings.Contains(tp.Reasons[0], "group sizes") || !strings.Contains(tp.Reasons[0], "effect") {
						t.Errorf("%s: first reason %q lacks the compared values", c.study.Study, tp.Reasons[0])
					}
				}
			}
			// With both studies in the review, the same one is found.
			rp := ProposeForReview(tc.review, []ingest.ReviewStudy{tc.other, tc.same}, []ingest.Trial{tc.trial}, MatchOptions{AcceptAbove: DefaultAcceptAbove})
			if got := rp.Trials[0]; got.Class != tc.wantSame || got.IncludedAs != tc.same.Study {
				t.Errorf("both studies: class %s as %q, want %s as %q", got.Class, got.IncludedAs, tc.wantSame, tc.same.Study)
			}
		})
	}
}

// TestPossiblyIncludedNeverAutoAccepted: a near match keeps its proposal
// and score, but --accept-above accepts nothing, whatever the threshold.
func TestPossiblyIncludedNeverAutoAccepted(t *testing.T) {
	tc := offByOneLayout()
	for _, above := range []float64{0.01, 0.5, DefaultAcceptAbove} {
		rp := ProposeForReview(tc.review, []ingest.ReviewStudy{tc.same}, []ingest.Trial{tc.trial}, MatchOptions{AcceptAbove: above})
		tp := rp.Trials[0]
		if tp.Class != ClassPossiblyIncluded || tp.Score <= above {
			t.Fatalf("accept above %v: class %s score %v", above, tp.Class, tp.Score)
		}
		if rp.Flow.AutoAccepted != 0 || rp.Flow.PossiblyIncluded != 1 || tp.Outcomes[0].AutoAccepted {
			t.Errorf("accept above %v: flow %+v", above, rp.Flow)
		}
		for _, l := range rp.Links() {
			if l.Decision != "" || l.Class != ClassPossiblyIncluded {
				t.Errorf("accept above %v: link %+v", above, l)
			}
		}
	}
}

// TestNearMatchRules walks the near-match rules on the off-by-one record:
// what moves a study from included to possibly-included to registry-only.
func TestNearMatchRules(t *testing.T) {
	tc := offByOneLayout()
	for _, c := range []struct {
		name  string
		study ingest.ReviewStudy
		want  string
	}{
		{"identical", armsStudy("S", 24.6, 7.9, 45, 29.8, 8.1, 44), ClassIncluded},
		{"sizes 10% off, same values", armsStudy("S", 24.6, 7.9, 41, 29.8, 8.1, 40), ClassPossiblyIncluded},
		{"sizes 20% off, same values (another analysis population)", armsStudy("S", 24.6, 7.9, 37, 29.8, 8.1, 36), ClassPossiblyIncluded},
		{"sizes 20% off, same effect, SE and arm means", armsStudy("S", 24.6, 7.2, 37, 29.8, 7.3, 36), ClassPossiblyIncluded},
		{"sizes 20% off, same effect and SE, other arm means", armsStudy("S", 20.6, 7.2, 37, 25.8, 7.3, 36), ClassRegistryOnly},
		{"same sizes, effect a quarter SE away", armsStudy("S", 25.1, 7.9, 45, 29.8, 8.1, 44), ClassPossiblyIncluded},
		{"a whole number widens its rounding (25 may be 24.6 rounded to units), but only to a near match beside numbers with decimals", armsStudy("S", 25, 7.9, 45, 29.8, 8.1, 44), ClassPossiblyIncluded},
		{"same sizes, effect a whole SE away", armsStudy("S", 26.3, 7.9, 45, 29.8, 8.1, 44), ClassRegistryOnly},
		{"same sizes, sign reversed", armsStudy("S", 29.8, 7.9, 45, 24.6, 8.1, 44), ClassPossiblyIncluded},
		{"sizes far off, same values", armsStudy("S", 24.6, 7.9, 90, 29.8, 8.1, 88), ClassRegistryOnly},
	} {
		t.Run(c.name, func(t *testing.T) {
			rp := ProposeForReview(tc.review, []ingest.ReviewStudy{c.study}, []ingest.Trial{tc.trial}, MatchOptions{})
			if got := rp.Trials[0]; got.Class != c.want {
				t.Errorf("class %s, want %s; reasons %q", got.Class, c.want, got.Reasons[0])
			}
		})
	}
}

// TestDoseReadings: a review may have combined the doses or kept one; the
// record is read both ways whatever the matching option.
func TestDoseReadings(t *testing.T) {
	tc := doseLayout()
	n, m, sd := combined(40, 26.1, 8.2, 42, 24.3, 8.8)
	for _, c := range []struct {
		name    string
		study   ingest.ReviewStudy
		highest bool
	}{
		{"review kept the 20 mg arm", armsStudy("S", 24.3, 8.8, 42, 29.4, 8.5, 41), false},
		{"review kept the 10 mg arm", armsStudy("S", 26.1, 8.2, 40, 29.4, 8.5, 41), false},
		{"review combined, matching keeps the highest dose", armsStudy("S", round(m, 2), round(sd, 2), n, 29.4, 8.5, 41), true},
	} {
		t.Run(c.name, func(t *testing.T) {
			rp := ProposeForReview(tc.review, []ingest.ReviewStudy{c.study}, []ingest.Trial{tc.trial}, MatchOptions{HighestDose: c.highest})
			if got := rp.Trials[0]; got.Class != ClassIncluded {
				t.Errorf("class %s, want included; reasons %q", got.Class, got.Reasons)
			}
		})
	}
}

// TestAuditGuardsDuplicates: a registry trial accepted by hand that reads
// the same as a published study of the review is left out of the
// augmented analysis with a warning naming both, unless the decision is
// accept-duplicate; a different trial is added.
func TestAuditGuardsDuplicates(t *testing.T) {
	for _, tc := range []layoutCase{doseLayout(), lsMeansLayout(), reversedLayout(), offByOneLayout(), visitLayouts()[1]} {
		t.Run(tc.name, func(t *testing.T) {
			rp := ProposeForReview(tc.review, nil, []ingest.Trial{tc.trial}, MatchOptions{})
			op := rp.Trials[0].Outcomes[0]
			link := ingest.Link{ReviewID: tc.review.ReviewID, TrialID: tc.trial.TrialID, OutcomeIndex: op.OutcomeIndex,
				TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom,
				Class: ClassRegistryOnly, Decision: "accept"}
			// A second published study so that both analyses pool.
			third := armsStudy("Third", 26.0, 8.0, 50, 28.0, 8.0, 50)
			if tc.review.Unit == "mmol/L" {
				third = armsStudy("Third", 8.1, 1.7, 50, 8.4, 1.7, 50)
			}
			audit := func(s ingest.ReviewStudy, l ingest.Link) ReviewAudit {
				a, err := AuditReview(AuditInput{Review: tc.review, Studies: []ingest.ReviewStudy{s, third}, Links: []ingest.Link{l},
					Trials: map[string]ingest.Trial{tc.trial.TrialID: tc.trial}}, Options{SkipBias: true})
				if err != nil {
					t.Fatal(err)
				}
				return a
			}

			a := audit(tc.same, link)
			if a.KAdded != 0 || len(a.Rejected) != 1 || a.Rejected[0].Reason != ReasonMatchesPublished {
				t.Fatalf("duplicate accepted by hand: k_added %d, rejected %+v", a.KAdded, a.Rejected)
			}
			warned := false
			for _, w := range a.Warnings {
				if strings.Contains(w, tc.trial.TrialID) && strings.Contains(w, tc.same.Study) && strings.Contains(w, DecisionAcceptDuplicate) {
					warned = true
				}
			}
			if !warned {
				t.Errorf("no warning naming %s and %q: %q", tc.trial.TrialID, tc.same.Study, a.Warnings)
			}
			if a.Augmented.K != a.Published.K {
				t.Errorf("augmented k %d, published k %d", a.Augmented.K, a.Published.K)
			}

			dup := link
			dup.Decision = DecisionAcceptDuplicate
			if a := audit(tc.same, dup); a.KAdded != 1 || len(a.Rejected) != 0 {
				t.Errorf("accept-duplicate: k_added %d, rejected %+v", a.KAdded, a.Rejected)
			}
			if a := audit(tc.other, link); a.KAdded != 1 || len(a.Rejected) != 0 {
				t.Errorf("a different trial of the same size: k_added %d, rejected %+v", a.KAdded, a.Rejected)
			}
		})
	}
}

// TestIncludedSMD: on a standardized mean difference review the record and
// the study are both read as Hedges' g, the tolerance scaled by the SD.
func TestIncludedSMD(t *testing.T) {
	tc := offByOneLayout()
	rv := tc.review
	rv.Measure, rv.Unit = "SMD", ""
	for _, c := range []struct {
		study ingest.ReviewStudy
		want  string
	}{
		{armsStudy("Same", 24.6, 7.9, 45, 29.8, 8.1, 44), ClassIncluded},
		{tc.other, ClassRegistryOnly},
	} {
		rp := ProposeForReview(rv, []ingest.ReviewStudy{c.study}, []ingest.Trial{tc.trial}, MatchOptions{})
		if got := rp.Trials[0]; got.Class != c.want {
			t.Errorf("%s: class %s, want %s; reasons %q", c.study.Study, got.Class, c.want, got.Reasons[0])
		}
	}
}

// TestIncludedTiesAreAmbiguous: a published study is one trial. Three
// registry records with identical results that all read the same as one
// study are not all claimed as it: each is possibly-included, naming the
// others. And one record that reads the same as two identical studies is
// not claimed as the first of them.
func TestIncludedTiesAreAmbiguous(t *testing.T) {
	tc := visitLayouts()[0]
	var trials []ingest.Trial
	for _, id := range []string{"NCT99180101", "NCT99180102", "NCT99180103"} {
		tr := tc.trial
		tr.TrialID = id
		trials = append(trials, tr)
	}
	// One record alone is recognised as the study (the layout test).
	if rp := ProposeForReview(tc.review, []ingest.ReviewStudy{tc.same}, trials[:1], MatchOptions{}); rp.Trials[0].Class != tc.wantSame {
		t.Fatalf("one record: class %s, want %s", rp.Trials[0].Class, tc.wantSame)
	}
	rp := ProposeForReview(tc.review, []ingest.ReviewStudy{tc.same}, trials, MatchOptions{AcceptAbove: DefaultAcceptAbove})
	if rp.Flow.Included != 0 || rp.Flow.PossiblyIncluded != 3 {
		t.Errorf("three identical records: flow %+v, want 0 included and 3 possibly included", rp.Flow)
	}
	for _, tp := range rp.Trials {
		if tp.Class != ClassPossiblyIncluded || tp.IncludedAs != tc.same.Study || !strings.Contains(tp.Reasons[0], "ambiguous: 3 registry trials (NCT99180101, NCT99180102, NCT99180103) read the same as") {
			t.Errorf("%s: class %s as %q, first reason %q", tp.TrialID, tp.Class, tp.IncludedAs, tp.Reasons[0])
		}
	}
	twin := tc.same
	twin.Study = "Twin of " + tc.same.Study
	rp = ProposeForReview(tc.review, []ingest.ReviewStudy{tc.same, twin}, trials[:1], MatchOptions{})
	if tp := rp.Trials[0]; tp.Class != ClassPossiblyIncluded || !strings.Contains(tp.Reasons[0], "ambiguous: reads like") || !strings.Contains(tp.Reasons[0], twin.Study) {
		t.Errorf("two identical studies: class %s, first reason %q", tp.Class, tp.Reasons[0])
	}
}
