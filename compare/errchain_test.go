package compare

import (
	"errors"
	"testing"

	"unshelved/analysis"
	"unshelved/ingest"
)

// A rejection keeps the error it came from: callers check it with
// errors.Is/As, never by its text.
func TestRejectErrorKeepsItsCause(t *testing.T) {
	f, n := func(x float64) *float64 { return &x }, func(x int) *int { return &x }
	s := ingest.ReviewStudy{Study: "Invented 2031", TreatMean: f(1), TreatSD: f(0), TreatN: n(20),
		CtrlMean: f(0), CtrlSD: f(1), CtrlN: n(20), Source: ingest.Source{Path: "studies.csv", Position: "line 7"}}
	_, err := PublishedEffect(ingest.Review{Measure: "MD"}, s)
	var re *RejectError
	if !errors.As(err, &re) || re.Reason != ReasonBadValue {
		t.Fatalf("err = %v, want a *RejectError with reason %s", err, ReasonBadValue)
	}
	if !errors.Is(err, analysis.ErrNonPositiveSD) {
		t.Errorf("errors.Is(%v, ErrNonPositiveSD) = false: the rejection lost its cause", err)
	}
	// pool: the same error names the file and line as an *ingest.ParseError.
	_, err = PoolStudies([]ingest.ReviewStudy{s}, PoolOptions{Measure: "MD"})
	var pe *ingest.ParseError
	if !errors.As(err, &pe) || pe.File != "studies.csv" || pe.Line != 7 {
		t.Fatalf("PoolStudies err = %v, want an *ingest.ParseError at studies.csv:7", err)
	}
	if !errors.Is(err, analysis.ErrNonPositiveSD) || !errors.As(err, &re) {
		t.Errorf("PoolStudies err = %v lost its cause", err)
	}
	if got, want := err.Error(), "studies.csv:7: "+re.Error(); got != want {
		t.Errorf("PoolStudies err = %q, want %q", got, want)
	}
}
