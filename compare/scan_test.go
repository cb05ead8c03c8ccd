package compare

import (
	"math"
	"slices"
	"strings"
	"testing"

	"unshelved/compare/internal/corpus"
	"unshelved/ingest"
)

// questionTrials returns the generated trials of question q.
func questionTrials(c *corpus.ScanCorpus, q int) []ingest.Trial {
	prefix := corpus.ScanTrialID(q, 0)[:8]
	var out []ingest.Trial
	for _, t := range c.Trials {
		if strings.HasPrefix(t.TrialID, prefix) {
			out = append(out, t)
		}
	}
	return out
}

// truthShift is the shift the scan estimates, computed from the true trial
// effects with the scan's own inverse-variance weights (tau² = 0):
//
//	Σ_all w θ / Σ_all w  -  Σ_linked w θ / Σ_linked w,  w = 1/SE²
func truthShift(res ScanResult, tr corpus.ScanTruth) float64 {
	var wAll, tAll, wL, tL float64
	for _, st := range res.Trials {
		w := 1 / (st.SE * st.SE)
		th := tr.Effect[st.TrialID]
		wAll += w
		tAll += w * th
		if st.Linked {
			wL += w
			tL += w * th
		}
	}
	return tAll/wAll - tL/wL
}

// TestScanRecoversOverstatement scans a generated registry with known
// truth: in half of the questions unlinked trials are 0.4 SD less
// favourable, in the other half linked and unlinked trials share one
// distribution. The shift interval must cover the simulated shift in at
// least 90% of questions with at least two linked and two unlinked trials,
// and exclude zero on null questions at about the nominal 5%.
func TestScanRecoversOverstatement(t *testing.T) {
	n := 400
	if testing.Short() {
		n = 100
	}
	c := corpus.NewScan(corpus.ScanSettings{Questions: n, Seed: 11})
	opts := ScanOptions{Audit: Options{SkipSelection: true, Bootstrap: 400, Seed: 1}}
	var enough, covered, nulls, alarms, detected, shifted int
	var overShifted, overNull []float64
	var subgroupAlarms int
	for q := range c.Questions {
		res, err := ScanQuestion(c.Questions[q], questionTrials(c, q), nil, opts)
		if err != nil {
			t.Fatal(err)
		}
		if res.Flow.Accepted != 12 || res.Missing.K != 2 {
			t.Fatalf("%s: accepted %d (want 12), missing %d (want 2); not accepted %v", res.QuestionID, res.Flow.Accepted, res.Missing.K, res.Flow.NotAccepted)
		}
		tr := c.Truth[q]
		for _, st := range res.Trials {
			if st.Linked != tr.Linked[st.TrialID] {
				t.Fatalf("%s: %s linked %v, generated %v", res.QuestionID, st.TrialID, st.Linked, tr.Linked[st.TrialID])
			}
		}
		if res.Shift == nil || res.Linked.K < 2 || res.All.K-res.Linked.K < 2 {
			continue
		}
		lo, hi := res.Shift.CILow, res.Shift.CIHigh
		if lo == nil || hi == nil {
			t.Fatalf("%s: no shift interval", res.QuestionID)
		}
		enough++
		truth := truthShift(res, tr)
		if *lo <= truth && truth <= *hi {
			covered++
		}
		excludes := *lo > 0 || *hi < 0
		if o := res.Shift.OverstatementSD; o != nil && tr.Null {
			overNull = append(overNull, *o)
		} else if o != nil {
			overShifted = append(overShifted, *o)
		}
		if tr.Null {
			nulls++
			if sg := res.Subgroup; sg != nil && sg.P != nil && *sg.P < 0.05 {
				subgroupAlarms++
			}
			if excludes {
				alarms++
			}
		} else {
			shifted++
			if excludes {
				detected++
			}
		}
	}
	cover := float64(covered) / float64(enough)
	alarm := float64(alarms) / float64(nulls)
	t.Logf("questions with enough trials %d: coverage %.3f; null questions %d: false alarms %.3f; shifted %d: detected %.3f",
		enough, cover, nulls, alarm, shifted, float64(detected)/float64(shifted))
	// Oriented: unlinked trials 0.4 SD less favourable with about 40% of
	// the weight give an overstatement near 0.16 SD, whichever direction
	// is better; null questions near 0.
	slices.Sort(overShifted)
	slices.Sort(overNull)
	mShift, mNull := overShifted[len(overShifted)/2], overNull[len(overNull)/2]
	t.Logf("median overstatement_sd: shifted %.3f, null %.3f", mShift, mNull)
	if mShift < 0.1 || mShift > 0.25 || math.Abs(mNull) > 0.03 {
		t.Errorf("median overstatement_sd %.3f on shifted questions (want about 0.16), %.3f on null ones (want about 0)", mShift, mNull)
	}
	if enough < n*3/4 {
		t.Fatalf("only %d of %d questions have two linked and two unlinked trials", enough, n)
	}
	if cover < 0.90 {
		t.Errorf("coverage %.3f, want at least 0.90", cover)
	}
	// Nominal 5%; with about n/2 null questions the binomial SD is about 2.5 points.
	// The shift interval is conservative (its estimand carries the
	// between-study variance); the subgroup test is the level-0.05 test.
	sgAlarm := float64(subgroupAlarms) / float64(nulls)
	t.Logf("null questions: subgroup test p < 0.05 in %.3f", sgAlarm)
	if alarm > 0.10 {
		t.Errorf("false alarm rate of the shift interval on null questions %.3f, want near 0.05", alarm)
	}
	if sgAlarm < 0.015 || sgAlarm > 0.10 {
		t.Errorf("false alarm rate of the subgroup test on null questions %.3f, want near 0.05", sgAlarm)
	}
}

func TestPublicationLink(t *testing.T) {
	for _, tc := range []struct {
		name   string
		t      ingest.Trial
		linked bool
		pmid   string
	}{
		{"no reference", ingest.Trial{}, false, ""},
		{"RESULT with PMID", ingest.Trial{References: []ingest.Reference{{Type: "BACKGROUND", PMID: "1"}, {Type: "RESULT", PMID: " 2 "}}}, true, "2"},
		{"RESULT without PMID (API record)", ingest.Trial{References: []ingest.Reference{{Type: "RESULT", Citation: "Someone 2020"}}}, false, ""},
		{"background PMID only", ingest.Trial{References: []ingest.Reference{{Type: "BACKGROUND", PMID: "3"}}}, false, ""},
		{"neutral publication yes", ingest.Trial{Publication: "yes"}, true, ""},
		{"neutral publication id", ingest.Trial{Publication: "unknown", References: []ingest.Reference{{Type: "RESULT", Citation: "doi:10.9999/x"}}}, true, ""},
		{"neutral publication no", ingest.Trial{Publication: "no"}, false, ""},
	} {
		linked, pmid := PublicationLink(tc.t)
		if linked != tc.linked || pmid != tc.pmid {
			t.Errorf("%s: got %v %q, want %v %q", tc.name, linked, pmid, tc.linked, tc.pmid)
		}
	}
}

// TestScanAcceptRules: a crossover or non-randomized trial is never
// accepted automatically (even above 0.01),
// a threshold above every score accepts nothing, and links-file rows
// decide for their trials (a rejection leaves the trial out; an accepted
// row that does not convert is listed with its reason).
func TestScanAcceptRules(t *testing.T) {
	c := corpus.NewScan(corpus.ScanSettings{Questions: 2, Seed: 5})
	q := c.Questions[1]
	trials := questionTrials(c, 1)
	trials[0].InterventionModel = "CROSSOVER"
	trials[1].Allocation = "NON_RANDOMIZED"
	res, err := ScanQuestion(q, trials, nil, ScanOptions{AcceptAbove: 0.01})
	if err != nil {
		t.Fatal(err)
	}
	if res.Flow.Accepted != 10 || res.Flow.NotAccepted[DesignCrossover] != 1 || res.Flow.NotAccepted[DesignNotRandomized] != 1 {
		t.Errorf("crossover and not randomized: accepted %d, not accepted %v", res.Flow.Accepted, res.Flow.NotAccepted)
	}
	for _, st := range res.Trials {
		if st.TrialID == trials[0].TrialID || st.TrialID == trials[1].TrialID {
			t.Errorf("crossover or non-randomized trial %s pooled", st.TrialID)
		}
	}
	// Secondary outcomes score at most 1 - 0.05 (1 - 0.7) = 0.985.
	secondary := questionTrials(corpus.NewScan(corpus.ScanSettings{Questions: 2, Seed: 5}), 1)[1:]
	for i := range secondary {
		if len(secondary[i].Outcomes) > 0 {
			secondary[i].Outcomes[0].Type = "SECONDARY"
		}
	}
	res, err = ScanQuestion(q, secondary, nil, ScanOptions{AcceptAbove: 0.99})
	if err != nil {
		t.Fatal(err)
	}
	if res.Flow.Accepted != 0 || res.Flow.NotAccepted["low-score"] != 11 || len(res.Trials) != 0 || res.Missing.K != 2 {
		t.Errorf("threshold 0.99: accepted %d, not accepted %v, missing %d", res.Flow.Accepted, res.Flow.NotAccepted, res.Missing.K)
	}
	links := []ingest.Link{
		{ReviewID: q.ReviewID, TrialID: trials[1].TrialID, OutcomeIndex: 0, Decision: "reject"},
		{ReviewID: q.ReviewID, TrialID: trials[2].TrialID, OutcomeIndex: 1, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}, Decision: "accept"},
		{ReviewID: q.ReviewID, TrialID: trials[3].TrialID, OutcomeIndex: 0, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept"},
	}
	res, err = ScanQuestion(q, trials[1:], links, ScanOptions{})
	if err != nil {
		t.Fatal(err)
	}
	byID := map[string]ScanTrial{}
	for _, st := range res.Trials {
		byID[st.TrialID] = st
	}
	if _, ok := byID[trials[1].TrialID]; ok || res.Flow.NotAccepted["links-file"] != 1 {
		t.Errorf("rejected in the links file but pooled, or not counted: %v", res.Flow.NotAccepted)
	}
	if _, ok := byID[trials[2].TrialID]; ok || len(res.Rejected) == 0 || res.Rejected[0].TrialID != trials[2].TrialID {
		t.Errorf("a count outcome accepted in the links file must be refused with a reason: %+v", res.Rejected)
	}
	// Arms swapped by the links file: the effect is control minus drug.
	auto, err := ScanQuestion(q, trials[3:4], nil, ScanOptions{})
	if err != nil {
		t.Fatal(err)
	}
	st, ok := byID[trials[3].TrialID]
	if !ok || st.Chosen != "links-file" || len(auto.Trials) != 1 || st.Effect != -auto.Trials[0].Effect {
		t.Errorf("links-file arms not used: %+v vs automatic %+v", st, auto.Trials)
	}
}

// TestScanAllLinked: when every pooled trial links a publication nothing
// is unlinked, so there is no shift; the registry was still searched, so
// the question's conclusion is known not to change (and summary counts it
// as searched, not as a question with no links).
func TestScanAllLinked(t *testing.T) {
	c := corpus.NewScan(corpus.ScanSettings{Questions: 1, Trials: 6, NoResults: -1, Seed: 9})
	trials := questionTrials(c, 0)
	for i := range trials {
		trials[i].References = []ingest.Reference{{Type: "RESULT", PMID: "61000000"}}
	}
	res, err := ScanQuestion(c.Questions[0], trials, nil, ScanOptions{Audit: Options{SkipSelection: true}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Shift != nil || res.Linked.K != 6 || res.All.K != 6 || res.Audit == nil {
		t.Fatalf("all linked: shift %v, linked k %d, all k %d", res.Shift, res.Linked.K, res.All.K)
	}
	a := res.Audit
	if a.RegistrySearch.Status != SearchLinked || a.ConclusionChanged == nil || *a.ConclusionChanged {
		t.Errorf("registry search %+v, conclusion changed %v", a.RegistrySearch, a.ConclusionChanged)
	}
}
