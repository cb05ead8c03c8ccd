package render

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"unshelved/compare"
	"unshelved/ingest"
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
			"Duval S, Tweedie R", "Stanley TD, Doucouliagos H", "Begg CB, Mazumdar M", "Borenstein M",
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

func fptr(x float64) *float64 { return &x }

// The what-if wording follows the comparison with the augmented analysis
// it re-pools: "still" only when nothing changed, "no longer" only when
// significance was lost, "now" when the imputations brought it.
func TestWhatIfWording(t *testing.T) {
	sig, null := compare.Estimate{CILow: fptr(-0.9), CIHigh: fptr(-0.1)}, compare.Estimate{CILow: fptr(-0.5), CIHigh: fptr(0.1)}
	for _, c := range []struct {
		aug       compare.Estimate
		whatIfSig bool
		want      string
	}{
		{sig, true, "still excluding no effect"},
		{sig, false, "no longer excluding no effect"},
		{null, true, "now excluding no effect"},
		{null, false, "still including no effect"},
	} {
		var a compare.ReviewAudit
		a.Augmented.Random = c.aug
		lo, hi := -0.3, 0.2
		if c.whatIfSig {
			hi = -0.05
		}
		a.Missing.WhatIf = &compare.WhatIf{SD: fptr(1), Estimate: fptr((lo + hi) / 2), CILow: &lo, CIHigh: &hi, Significant: c.whatIfSig}
		got := WhatIfSentence(a)
		if !strings.Contains(got, c.want) {
			t.Errorf("augmented [%v, %v], what-if significant %v: %q lacks %q", *c.aug.CILow, *c.aug.CIHigh, c.whatIfSig, got, c.want)
		}
		for _, other := range []string{"still excluding", "no longer excluding", "now excluding", "still including"} {
			if other != c.want[:len(other)] && strings.Contains(got, other) {
				t.Errorf("%q also says %q", got, other)
			}
		}
	}
}

// A review with no registry links says so on its page and in the index,
// and never that the published conclusion stands.
func TestReportNoRegistrySearch(t *testing.T) {
	a := loadDemoAudits(t)[0]
	a.KAdded, a.Studies, a.Subgroup, a.ConclusionChanged = 0, a.Studies[:a.KPublished], nil, nil
	a.SignificanceChanged, a.DirectionChanged = false, false
	a.Augmented = a.Published
	a.RegistrySearch = compare.RegistrySearch{Status: compare.SearchNotLinked, Note: "no registry trials were linked: run `unshelved match`"}
	dir := t.TempDir()
	if _, err := WriteReport(dir, []compare.ReviewAudit{a}, ReportOptions{}); err != nil {
		t.Fatal(err)
	}
	page, err := os.ReadFile(filepath.Join(dir, PageName(a.ReviewID)))
	if err != nil {
		t.Fatal(err)
	}
	idx, err := os.ReadFile(filepath.Join(dir, "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	for name, s := range map[string]string{"page": string(page), "index": string(idx)} {
		if !strings.Contains(s, "no registry trials were linked: run `unshelved match`") {
			t.Errorf("%s lacks the no-links note", name)
		}
		if strings.Contains(s, "conclusion stands") {
			t.Errorf("%s says the conclusion stands", name)
		}
	}
	if !strings.Contains(string(idx), "not known") {
		t.Errorf("index does not say the change is not known")
	}
}

// The demo's missed publication is shown apart, labelled and linked to
// PubMed; the registry-only table does not list it.
func TestReportMissedPublications(t *testing.T) {
	var a compare.ReviewAudit
	for _, x := range loadDemoAudits(t) {
		if x.WithMissedPublications != nil {
			a = x
		}
	}
	if a.ReviewID == "" {
		t.Fatal("no demo audit has missed publications")
	}
	var buf bytes.Buffer
	if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	for _, want := range []string{"Published but not in the review", "published but not in the review",
		`href="https://pubmed.ncbi.nlm.nih.gov/99000031/"`, "With trials published but not in the review"} {
		if !strings.Contains(s, want) {
			t.Errorf("%s page lacks %q", a.ReviewID, want)
		}
	}
	added := s[strings.Index(s, "<h2>Registry-only trials added</h2>"):strings.Index(s, "<h2>Published but not in the review</h2>")]
	if strings.Contains(added, "NCT99000108") {
		t.Errorf("the missed publication is listed among the registry-only trials")
	}
}

// The report's pooled table printed the Wald p (0.030) beside the HKSJ
// interval for the issue-13 example; it now prints the HKSJ t-test p,
// 0.124 (testdata/reference/ci_p_consistency.txt, scipy 1.10.1).
func TestReportPFromIntervalTest(t *testing.T) {
	in := compare.AuditInput{Review: ingest.Review{ReviewID: "EX", Measure: "MD", Better: "higher"}}
	for i, es := range [][2]float64{{0.10, 0.12}, {0.32, 0.15}, {0.05, 0.10}, {0.40, 0.20}} {
		e, se := es[0], es[1]
		in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: "EX", Study: string(rune('A' + i)), Effect: &e, SE: &se})
	}
	a, err := compare.AuditReview(in, compare.Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	row := s[strings.Index(s, "<td>Published only</td>"):]
	row = row[:strings.Index(row, "</tr>")]
	if !strings.Contains(row, "[\u22120.08, 0.41]") || !strings.Contains(row, ">0.124<") || strings.Contains(row, "0.030") {
		t.Errorf("published row %q: want the HKSJ interval [−0.08, 0.41] with p 0.124", row)
	}
}

// Property: on generated review pages, the p printed in the pooled table
// is below 1 - level exactly when the interval printed beside it excludes
// 0. Rows where rounding to the printed digits could decide (p within
// 0.0005 of 0.05, a limit within 0.005 of 0) are skipped and counted; the
// audits have no links, so each page has its published-only row.
func TestReportPIntervalProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 4))
	n := 150
	if testing.Short() {
		n = 30
	}
	row := regexp.MustCompile(`<td>(Published only|With registry-only trials)</td><td class="n">\d+</td><td class="n">[^<]*</td><td class="n">[^\[]*\[([^,]+), ([^\]]+)\]</td><td class="n">([^<]+)</td>`)
	num := func(s string) float64 {
		x, err := strconv.ParseFloat(strings.ReplaceAll(s, "\u2212", "-"), 64)
		if err != nil {
			t.Fatalf("unparsable %q", s)
		}
		return x
	}
	checked, skipped := 0, 0
	for i := range n {
		k := 1 + rng.IntN(10)
		in := compare.AuditInput{Review: ingest.Review{ReviewID: fmt.Sprintf("G%d", i), Measure: "MD", Better: "lower"}}
		mu := 0.3 * rng.NormFloat64()
		for j := range k {
			se := 0.05 + 0.5*rng.Float64()
			eff := mu + 0.2*rng.NormFloat64() + se*rng.NormFloat64()
			in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: in.Review.ReviewID, Study: fmt.Sprint(j), Effect: &eff, SE: &se})
		}
		a, err := compare.AuditReview(in, compare.Options{CI: compare.CIMethods[rng.IntN(3)], SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		if err := ReviewPage(&buf, a, ReportOptions{}, ""); err != nil {
			t.Fatal(err)
		}
		ms := row.FindAllStringSubmatch(buf.String(), -1)
		if len(ms) == 0 {
			t.Fatalf("case %d: no pooled row found", i)
		}
		for _, m := range ms {
			lo, hi := num(m[2]), num(m[3])
			var p float64
			if strings.HasPrefix(m[4], "&lt;") || strings.HasPrefix(m[4], "<") {
				p = 0
			} else {
				p = num(m[4])
			}
			if math.Abs(p-0.05) <= 0.0005 || math.Abs(lo) <= 0.005 || math.Abs(hi) <= 0.005 {
				skipped++
				continue
			}
			checked++
			if (p < 0.05) != (lo > 0 || hi < 0) {
				t.Errorf("case %d %s: printed p %s beside [%s, %s]", i, m[1], m[4], m[2], m[3])
			}
		}
	}
	if checked < 9*n/10 || skipped > checked/10 {
		t.Errorf("checked %d rows, skipped %d", checked, skipped)
	}
}

// TestReportCitesOnlyMethodsRun: the page's list of methods names the
// selection model only when it ran, and the bias tests only when the
// battery ran.
func TestReportCitesOnlyMethodsRun(t *testing.T) {
	// The demo's selection model cannot run (no study in its upper
	// p-value interval); give the first review one that ran.
	noSel := loadDemoAudits(t)[0]
	if noSel.Bias == nil || noSel.Bias.Selection != nil {
		t.Fatal("the demo audit's bias battery changed")
	}
	full := noSel
	b := *noSel.Bias
	b.Selection = &compare.SelectionJSON{Cutpoints: []float64{0.025}, Estimate: fptr(0.3), SE: fptr(0.1), CILow: fptr(0.1), CIHigh: fptr(0.5),
		Tau2: fptr(0.01), Weights: []*float64{fptr(1), fptr(0.5)}, WeightsSE: []*float64{nil, fptr(0.2)}, Counts: []int{3, 4},
		LRT: fptr(1.6), LRTDF: 1, LRTP: fptr(0.2), Converged: true}
	full.Bias = &b
	noBias := full
	noBias.Bias = nil
	for _, tc := range []struct {
		name         string
		a            compare.ReviewAudit
		vevea, duval bool
	}{{"all ran", full, true, true}, {"no selection model", noSel, false, true}, {"no bias battery", noBias, false, false}} {
		dir := t.TempDir()
		if _, err := WriteReport(dir, []compare.ReviewAudit{tc.a}, ReportOptions{}); err != nil {
			t.Fatal(err)
		}
		page, err := os.ReadFile(filepath.Join(dir, PageName(tc.a.ReviewID)))
		if err != nil {
			t.Fatal(err)
		}
		s := string(page)
		if got := strings.Contains(s, "Vevea JL, Hedges LV"); got != tc.vevea {
			t.Errorf("%s: cites the selection model %v, want %v", tc.name, got, tc.vevea)
		}
		if got := strings.Contains(s, "Duval S, Tweedie R"); got != tc.duval {
			t.Errorf("%s: cites trim-and-fill %v, want %v", tc.name, got, tc.duval)
		}
	}
}
