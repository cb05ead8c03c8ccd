package compare

import (
	"errors"
	"strings"
	"testing"

	"unshelved/ingest"
)

// A record whose statements of direction contradict each other, within
// one field or across fields, says nothing trustworthy about the sign: the
// posted analysis is refused (direction-unknown) with both statements
// named, never read by whichever statement comes first. Statements that
// agree, repeated, still decide. The constructed record (NCT99999901) has
// no usable arm SDs, so only the posted analysis (-2.1) could give the
// effect.
func TestContradictoryDirectionStatementsRefuse(t *testing.T) {
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	for _, c := range []struct {
		name        string
		comment     string
		statistical string
		values      [2]string
		want        float64 // 0: refused
	}{
		{"one field, two statements", "Velmorazine 10 mg minus Placebo; Placebo minus Velmorazine 10 mg", "", [2]string{"NA", "NA"}, 0},
		{"one field, generic words", "Drug minus placebo. Placebo minus drug.", "", [2]string{"NA", "NA"}, 0},
		{"two fields disagree", "Velmorazine 10 mg minus Placebo", "Estimated as Placebo vs. Velmorazine 10 mg", [2]string{"NA", "NA"}, 0},
		{"raw values agree with the first statement: still refused", "Velmorazine 10 mg minus Placebo; Placebo minus Velmorazine 10 mg", "", [2]string{"-8.7", "-6.6"}, 0},
		{"two fields agree", "Velmorazine 10 mg minus Placebo", "Difference: Drug versus placebo", [2]string{"NA", "NA"}, -2.1},
		{"same statement twice", "Velmorazine 10 mg minus Placebo; i.e. Velmorazine 10 mg - Placebo", "", [2]string{"NA", "NA"}, -2.1},
	} {
		t.Run(c.name, func(t *testing.T) {
			tr := analysisTrial([]string{"OG000", "OG001"}, c.values, c.comment)
			tr.Outcomes[0].Analyses[0].StatisticalComment = c.statistical
			got, err := RegistryEffect(mdReview, tr, link)
			if c.want != 0 {
				if err != nil || got.Effect != c.want {
					t.Fatalf("effect %v, err %v: want %v", got.Effect, err, c.want)
				}
				return
			}
			var re *RejectError
			if !errors.As(err, &re) || re.Reason != ReasonDirection {
				t.Fatalf("effect %v, err %v: want a %s rejection", got.Effect, err, ReasonDirection)
			}
			msg := strings.ToLower(err.Error())
			if !strings.Contains(msg, "contradict") || !strings.Contains(msg, "placebo minus") && !strings.Contains(msg, "placebo vs.") {
				t.Errorf("reason does not name the contradicting statements: %v", err)
			} else if testing.Verbose() {
				t.Log(err)
			}
		})
	}
}
