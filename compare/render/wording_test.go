package render

import (
	"bytes"
	"html"
	"strings"
	"testing"
)

// TestForestHeaderNamesMeasure checks that the forest plot's estimate
// column is headed by the measure: "MD [95% CI]" for mean differences,
// "Hedges' g [95% CI]" for standardized mean differences.
func TestForestHeaderNamesMeasure(t *testing.T) {
	seen := map[string]bool{}
	for _, a := range loadDemoAudits(t) {
		var buf bytes.Buffer
		if err := ForestSVG(&buf, ForestFromAudit(a, PlotOptions{})); err != nil {
			t.Fatal(err)
		}
		s := html.UnescapeString(buf.String())
		want := map[string]string{"MD": "MD [95% CI]", "SMD": "Hedges' g [95% CI]"}[a.Measure]
		if want == "" {
			t.Fatalf("%s: demo measure %q", a.ReviewID, a.Measure)
		}
		if !strings.Contains(s, ">"+want+"<") {
			t.Errorf("%s (%s): forest header lacks %q", a.ReviewID, a.Measure, want)
		}
		if strings.Contains(s, "Estimate [95% CI]") {
			t.Errorf("%s: forest header still says Estimate", a.ReviewID)
		}
		seen[a.Measure] = true
	}
	if !seen["MD"] || !seen["SMD"] {
		t.Errorf("demo audits cover %v; want both MD and SMD", seen)
	}
}

// TestPageOwnWording checks the wording of the bias battery on a review
// page: the Egger regression says what it was regressed on and reports the
// effect at SE = 0, and the rank correlation test carries one name.
func TestPageOwnWording(t *testing.T) {
	for _, a := range loadDemoAudits(t) {
		var buf bytes.Buffer
		if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
			t.Fatal(err)
		}
		s := html.UnescapeString(buf.String())
		for _, want := range []string{"Egger's test, regressed on SE", "effect at SE = 0", "Rank correlation test (Begg & Mazumdar 1994)"} {
			if !strings.Contains(s, want) {
				t.Errorf("%s: page lacks %q", a.ReviewID, want)
			}
		}
		low := strings.ToLower(s)
		for _, old := range []string{"predictor", "limit effect", "heterogeneity: q", "begg and mazumdar", "begg's"} {
			if strings.Contains(low, old) {
				t.Errorf("%s: page still says %q", a.ReviewID, old)
			}
		}
	}
}
