package render

import (
	"bytes"
	"html"
	"strings"
	"testing"
)

// TestPageOverstatement checks that a review page states the shift's
// interval and the oriented overstatement with its direction in words. In
// the demo every review's registry trials are less favourable, so each page
// says the published-only analysis overstates the benefit.
func TestPageOverstatement(t *testing.T) {
	for _, a := range loadDemoAudits(t) {
		if a.Shift.OverstatementSD == nil || *a.Shift.OverstatementSD <= 0 || a.Shift.CILow == nil {
			t.Fatalf("%s: demo audit without a positive overstatement and an interval: %+v", a.ReviewID, a.Shift)
		}
		var buf bytes.Buffer
		if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
			t.Fatal(err)
		}
		s := html.UnescapeString(buf.String())
		for _, want := range []string{"The published-only analysis overstates the benefit by", "interval of the shift", "positive: published overstates"} {
			if !strings.Contains(s, want) {
				t.Errorf("%s: page lacks %q", a.ReviewID, want)
			}
		}
		if strings.Contains(strings.ToLower(s), "bootstrap") {
			t.Errorf("%s: page still mentions a bootstrap", a.ReviewID)
		}
	}
}
