package bias

import (
	"strings"
	"testing"
)

// Published studies given only as effect and SE carry no group sizes, so
// the share of participants without posted results leaves them out of its
// denominator: it is an upper bound, and the reason says so.
func TestGradeMissingShareUpperBound(t *testing.T) {
	share := 0.25
	h := Grade(GradeInput{K: 4, Registry: RegistryEvidence{MissingShare: &share, PublishedWithoutN: 4}})
	joined := strings.Join(h.Reasons, "; ")
	if h.Level != GradeSerious || !strings.Contains(joined, "at most 25%") || !strings.Contains(joined, "4 published studies give no group sizes") {
		t.Errorf("level %q, reasons %q: want serious concern with the share stated as an upper bound", h.Level, h.Reasons)
	}
	h = Grade(GradeInput{K: 4, Registry: RegistryEvidence{MissingShare: &share}})
	if joined := strings.Join(h.Reasons, "; "); strings.Contains(joined, "at most") {
		t.Errorf("reasons %q: no upper bound when every published study gives its sizes", h.Reasons)
	}
}

// An overstatement just below the 0.10 SD threshold is not written as
// "0.10 SD" beside "0.10 SD or more cannot be ruled out".
func TestGradeOverstatementBelowThresholdNotRoundedUp(t *testing.T) {
	o, lo, hi := 0.0959, -0.004, 0.24
	h := Grade(GradeInput{K: 4, Registry: RegistryEvidence{Overstatement: &o, CILow: &lo, CIHigh: &hi}})
	if !strings.Contains(h.Reasons[0], "0.096 SD") {
		t.Errorf("reason %q: want the overstatement as 0.096 SD", h.Reasons[0])
	}
}
