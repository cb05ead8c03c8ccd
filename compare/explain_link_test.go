package compare

import (
	"strings"
	"testing"

	"unshelved/ingest"
)

// TestExplainAcceptedLinkFirst: the accepted link is explained in full,
// whatever its score, with who decided; the other links of the trial are
// candidates, one line each, saying why they are not used.
func TestExplainAcceptedLinkFirst(t *testing.T) {
	tr := lsTrial("Drug minus Placebo")
	second := tr.Outcomes[0]
	second.Index, second.Title = 1, "Distress index at week 4"
	tr.Outcomes = append(tr.Outcomes, second)
	hi, lo := 0.9, 0.6
	links := []ingest.Link{
		{TrialID: tr.TrialID, OutcomeIndex: 1, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}, Score: &hi},
		{TrialID: tr.TrialID, OutcomeIndex: 0, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}, Score: &lo, Decision: "accept"},
		{TrialID: tr.TrialID, OutcomeIndex: 1, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Score: &lo, Decision: "reject", AutoAccepted: false},
	}
	ex := ExplainTrialInReview(mdReview, tr, links, HarmonizeOptions{})
	if ex.Link.OutcomeIndex != 0 || ex.Link.Decision != "accept" || ex.Link.DecidedBy != "person" {
		t.Errorf("explained link %+v, want the accepted outcome 0 decided by a person", ex.Link)
	}
	if ex.PostedAnalysis == nil || !ex.PostedAnalysis.Used || ex.Effect == nil || *ex.Effect != -1.2 {
		t.Errorf("posted analysis %+v, effect %v", ex.PostedAnalysis, ex.Effect)
	}
	if len(ex.Candidates) != 2 || !strings.HasPrefix(ex.Candidates[0].Why, "not chosen") || !strings.HasPrefix(ex.Candidates[1].Why, "rejected by person") {
		t.Errorf("candidates %+v", ex.Candidates)
	}
	for _, d := range ex.Derivations {
		if len(d.Inputs) == 0 {
			t.Errorf("step %s records no inputs", d.Method)
		}
		if d.Method != "posted_analysis" && len(d.Output) == 0 {
			t.Errorf("step %s records no output", d.Method)
		}
	}
}
