package render

import (
	"bytes"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/compare"
)

// loadDemoAudits reads testdata/demo-audit.json: the audit JSON of the
// invented demo scenario (unshelved demo, then audit --format json).
func loadDemoAudits(tb testing.TB) []compare.ReviewAudit {
	tb.Helper()
	data, err := os.ReadFile(filepath.Join("testdata", "demo-audit.json"))
	if err != nil {
		tb.Fatal(err)
	}
	var audits []compare.ReviewAudit
	if err := json.Unmarshal(data, &audits); err != nil {
		tb.Fatal(err)
	}
	if len(audits) == 0 {
		tb.Fatal("no audits in testdata/demo-audit.json")
	}
	return audits
}

func TestWriteReportDemo(t *testing.T) {
	audits := loadDemoAudits(t)
	dir := t.TempDir()
	if d := os.Getenv("UNSHELVED_REPORT_DIR"); d != "" {
		dir = d
	}
	index, err := WriteReport(dir, audits, ReportOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := index, filepath.Join(dir, "index.html"); got != want {
		t.Errorf("index path %q, want %q", got, want)
	}
	idx, err := os.ReadFile(index)
	if err != nil {
		t.Fatal(err)
	}
	for _, a := range audits {
		name := PageName(a.ReviewID)
		if !bytes.Contains(idx, []byte(`href="`+name+`"`)) {
			t.Errorf("index has no link to %s", name)
		}
		page, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		s := string(page)
		for _, want := range []string{"<svg", "Forest plot", "Contour-enhanced funnel plot", "Egger", "Begg", "Trim-and-fill",
			"PET-PEESE", "Selection model", "GRADE-style hint", "DerSimonian", "Higgins JPT, Thompson SG, Spiegelhalter DJ",
			"Duval S, Tweedie R", "Vevea JL, Hedges LV", "Stanley TD, Doucouliagos H", "Begg CB, Mazumdar M", "Borenstein M",
			"Cochrane Handbook", "not peer reviewed", "not proof of publication bias", "GRADE assessment and local practice"} {
			if !strings.Contains(s, want) {
				t.Errorf("%s: page lacks %q", a.ReviewID, want)
			}
		}
		if strings.Contains(strings.ToLower(s), "<script") {
			t.Errorf("%s: page holds a script element", a.ReviewID)
		}
		for _, st := range a.Studies {
			if u := string(trialURL(st.TrialID)); u != "" && !strings.Contains(s, `href="`+u+`"`) {
				t.Errorf("%s: no link to %s", a.ReviewID, u)
			}
		}
	}
}

type compareAudit = compare.ReviewAudit

func rejectedOf(detail string) compare.Rejected {
	return compare.Rejected{TrialID: "NCT00000000", Reason: "no-outcome", Detail: detail}
}

func BenchmarkReviewPage(b *testing.B) {
	a := loadDemoAudits(b)[0]
	b.ReportAllocs()
	for b.Loop() {
		if err := ReviewPage(io.Discard, a, ReportOptions{}, "index.html"); err != nil {
			b.Fatal(err)
		}
	}
}

func TestPageName(t *testing.T) {
	for _, tc := range []struct{ id, want string }{
		{"TINN-01", "TINN-01.html"},
		{"../etc/passwd", "_etc_passwd.html"},
		{"a b<c>", "a_b_c_.html"},
		{"index", "review_index.html"},
		{"", "review.html"},
		{"...", "review.html"},
	} {
		if got := PageName(tc.id); got != tc.want {
			t.Errorf("PageName(%q) = %q, want %q", tc.id, got, tc.want)
		}
	}
	// Two ids that sanitise alike get distinct pages.
	dir := t.TempDir()
	a := loadDemoAudits(t)[0]
	b := a
	a.ReviewID, b.ReviewID = "x/y", "x?y"
	if _, err := WriteReport(dir, []compare.ReviewAudit{a, b}, ReportOptions{}); err != nil {
		t.Fatal(err)
	}
	for _, n := range []string{"x_y.html", "x_y-2.html", "index.html"} {
		if _, err := os.Stat(filepath.Join(dir, n)); err != nil {
			t.Errorf("missing %s: %v", n, err)
		}
	}
}
