package render

import (
	"bytes"
	"html"
	"os"
	"path/filepath"
	"regexp"
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

// pMention finds p values in running text: "p = 0.038", "p < 0.001".
var pMention = regexp.MustCompile(`\bp (=|<) ([^\s,;)<]+)`)

// TestOnePValueFormat checks every p value on the demo pages (tables,
// bias battery, GRADE hint reasons): "< 0.001", else three decimals.
func TestOnePValueFormat(t *testing.T) {
	for _, a := range loadDemoAudits(t) {
		var buf bytes.Buffer
		if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
			t.Fatal(err)
		}
		s := html.UnescapeString(buf.String())
		ms := pMention.FindAllStringSubmatch(s, -1)
		if len(ms) < 3 {
			t.Fatalf("%s: only %d p values found", a.ReviewID, len(ms))
		}
		for _, m := range ms {
			if thresholds[strings.TrimSuffix(m[2], ".")] {
				continue // a significance level, not a test's p value
			}
			if ok := (m[1] == "<" && m[2] == "0.001") || (m[1] == "=" && threeDecimals.MatchString(m[2])); !ok {
				t.Errorf("%s: p value written %q", a.ReviewID, m[0])
			}
		}
	}
}

var threeDecimals = regexp.MustCompile(`^[01]\.[0-9]{3}$`)

// thresholds are the conventional significance levels (contours, the
// 0.10 rule for asymmetry tests), written with two decimals.
var thresholds = map[string]bool{"0.01": true, "0.05": true, "0.10": true}

// TestOneDirectionVocabulary: the headline and the shift table name the
// direction of the shift in the same words, and the overview names each
// review's measure and unit.
func TestOneDirectionVocabulary(t *testing.T) {
	audits := loadDemoAudits(t)
	dir := t.TempDir()
	index, err := WriteReport(dir, audits, ReportOptions{})
	if err != nil {
		t.Fatal(err)
	}
	idx, err := os.ReadFile(index)
	if err != nil {
		t.Fatal(err)
	}
	cell := regexp.MustCompile(`<td class="n direction">([^<]*)</td>`)
	for _, a := range audits {
		page, err := os.ReadFile(filepath.Join(dir, PageName(a.ReviewID)))
		if err != nil {
			t.Fatal(err)
		}
		s := html.UnescapeString(string(page))
		m := cell.FindStringSubmatch(s)
		if m == nil || m[1] == "" {
			t.Fatalf("%s: no direction in the shift table", a.ReviewID)
		}
		words := m[1]
		if !strings.Contains(words, "no effect") || !strings.Contains(words, "favourable to the intervention") {
			t.Errorf("%s: direction %q does not say both where the estimate went and for whom", a.ReviewID, words)
		}
		// The headline uses the same phrases (with the size of the move).
		head := ShiftSentence(a)
		for _, part := range strings.Split(words, "; ") {
			if !strings.Contains(head, strings.Replace(part, "no effect", "no effect by", 1)) && !strings.Contains(head, part) {
				t.Errorf("%s: headline %q lacks the table's %q", a.ReviewID, head, part)
			}
		}
		for _, old := range []string{">harm<", ">benefit<", "<td>Toward</td>"} {
			if strings.Contains(s, old) {
				t.Errorf("%s: page still shows %q", a.ReviewID, old)
			}
		}
		want := map[string]string{"MD": "MD (" + a.Unit + ")", "SMD": "SMD (Hedges' g)"}[a.Measure]
		if !strings.Contains(html.UnescapeString(string(idx)), `<td class="measure">`+want+`</td>`) {
			t.Errorf("overview lacks %q for %s", want, a.ReviewID)
		}
	}
}
