package funders

import (
	"fmt"
	"math"
	"testing"
	"time"

	"unshelved/analysis"
	"unshelved/ingest"
)

func day(s string) time.Time {
	t, err := time.Parse("2006-01-02", s)
	if err != nil {
		panic(err)
	}
	return t
}

// Calendar facts (Gregorian calendar; 2020 and 2024 are leap years) worked
// by hand.
func TestMonthsBetween(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		want int
	}{
		{"2020-01-31", "2020-02-29", 1},  // end of month to end of a leap February
		{"2023-02-28", "2024-02-29", 12}, // end of February to end of a leap February
		{"2020-02-29", "2021-02-28", 12}, // leap day to the end of the next February
		{"2020-01-31", "2020-02-28", 0},  // not yet the end of February 2020
		{"2021-03-15", "2022-03-14", 11},
		{"2021-03-15", "2022-03-15", 12},
		{"2021-03-15", "2021-03-15", 0},
		{"2022-03-15", "2021-03-15", -12},
	} {
		t.Run(tc.a+"_"+tc.b, func(t *testing.T) {
			if got := MonthsBetween(day(tc.a), day(tc.b)); got != tc.want {
				t.Errorf("MonthsBetween(%s, %s) = %d, want %d", tc.a, tc.b, got, tc.want)
			}
		})
	}
}

func TestAddMonthsAndDates(t *testing.T) {
	for _, tc := range []struct {
		from string
		n    int
		want string
	}{{"2020-01-31", 1, "2020-02-29"}, {"2023-02-28", 12, "2024-02-28"}, {"2020-02-29", 12, "2021-02-28"}, {"2019-08-31", 6, "2020-02-29"}} {
		if got := AddMonths(day(tc.from), tc.n).Format("2006-01-02"); got != tc.want {
			t.Errorf("AddMonths(%s, %d) = %s, want %s", tc.from, tc.n, got, tc.want)
		}
	}
	for _, tc := range []struct{ in, want string }{{"2024-02", "2024-02-29"}, {"2023-02", "2023-02-28"}, {"2021-11", "2021-11-30"}, {"2022", "2022-12-31"}, {"2022-06-15", "2022-06-15"}} {
		got, ok := ParseRegistryDate(tc.in)
		if !ok || got.Format("2006-01-02") != tc.want {
			t.Errorf("ParseRegistryDate(%q) = %v %v, want %s", tc.in, got, ok, tc.want)
		}
	}
	if _, ok := ParseRegistryDate("June 2022"); ok {
		t.Errorf("free text parsed as a date")
	}
}

func TestFunderView(t *testing.T) {
	yes := true
	n := 120
	sum := func(id, pc, posted string, refs int, pub string) ingest.TrialSummary {
		return ingest.TrialSummary{TrialID: id, PrimaryCompletionDate: ingest.Date{Text: pc}, ResultsFirstPosted: ingest.Date{Text: posted},
			ResultReferences: refs, Publication: pub, HasResults: &yes, Enrollment: &n}
	}
	asOf := day("2026-12-01")
	rep := FunderView([]ingest.TrialSummary{
		sum("A", "2023-02-28", "2024-02-28", 0, ""), // due 2024-02-28: on time, 12 months
		sum("B", "2023-02-28", "2024-02-29", 0, ""), // a day late, still 12 whole months
		sum("C", "2020-01", "", 0, ""),              // month precision: 2020-01-31; nothing after 24 months
		sum("D", "2020-01-31", "", 1, ""),           // nothing posted, but a result publication
		sum("E", "2026-06-30", "", 0, "yes"),        // not yet due
		sum("F", "", "", 0, ""),                     // no date
	}, FunderOptions{AsOf: asOf})
	by := map[string]FunderTrial{}
	for _, ft := range rep.Trials {
		by[ft.TrialID] = ft
	}
	if a := by["A"]; a.Months == nil || *a.Months != 12 || a.PostedWithin12 == nil || !*a.PostedWithin12 || a.ResultsDue != "2024-02-28" {
		t.Errorf("A: %+v", a)
	}
	if b := by["B"]; b.Months == nil || *b.Months != 12 || b.PostedWithin12 == nil || *b.PostedWithin12 {
		t.Errorf("B: %+v", b)
	}
	// 2020-01-31 to 2026-12-01: 82 whole months (6 years 10 months, and
	// 1 December is before the 31st).
	if c := by["C"]; c.Months == nil || *c.Months != 82 || c.MonthsTo != "as_of" || !c.NoResultsAfter24 || c.PublicationLinked {
		t.Errorf("C: %+v", c)
	}
	if d := by["D"]; !d.PublicationLinked || d.NoResultsAfter24 {
		t.Errorf("D: %+v", d)
	}
	if e := by["E"]; e.PostedWithin12 != nil || !e.PublicationLinked {
		t.Errorf("E: %+v", e)
	}
	if rep.Due12 != 4 || *rep.Within12Share != 0.25 || rep.Due24 != 4 || *rep.Missing24Share != 0.25 {
		t.Errorf("due12 %d within %v due24 %d missing %v", rep.Due12, deref(rep.Within12Share), rep.Due24, deref(rep.Missing24Share))
	}
}

// funderFixture is a hand-built set of trials; the expected counts in the
// tests below were worked out by hand from the dates in the comments.
func funderFixture() []ingest.TrialSummary {
	acme := ingest.Org{Name: "Acme Pharma", Class: "INDUSTRY"}
	uni := ingest.Org{Name: "Uni Hospital", Class: "OTHER"}
	tr := func(id string, lead ingest.Org, studyType string, phases []string, pc, posted string) ingest.TrialSummary {
		return ingest.TrialSummary{TrialID: id, Registry: ingest.RegistryCTGov, LeadSponsor: lead, StudyType: studyType, Phases: phases,
			PrimaryCompletionDate: ingest.Date{Text: pc}, ResultsFirstPosted: ingest.Date{Text: posted}}
	}
	t1 := tr("T1", acme, "INTERVENTIONAL", []string{"PHASE3"}, "2023-02-28", "2024-02-28") // due 2024-02-28: on time, 12 months
	t1.ResultReferences = 1
	t6 := tr("T6", uni, "INTERVENTIONAL", []string{"NA"}, "2024-11-30", "2026-02-15") // due 2025-11-30: late, 14 months
	t6.Collaborators = []ingest.Org{{Name: "Other Trust", Class: "OTHER"}, acme}
	// A neutral-CSV trial: no class, study type or phase; completion date only.
	t7 := ingest.TrialSummary{TrialID: "T7", Registry: "isrctn", LeadSponsor: ingest.Org{Name: "Uni Hospital"},
		CompletionDate: ingest.Date{Text: "2022-06"}, Publication: "yes"} // 2022-06-30, due 2023-06-30: overdue 41 months
	t7.LeadSponsor.Class = ""
	return []ingest.TrialSummary{
		t1,
		tr("T2", acme, "INTERVENTIONAL", []string{"PHASE2"}, "2023-02-28", "2024-02-29"), // a day late, 12 months
		tr("T3", acme, "INTERVENTIONAL", []string{"PHASE2", "PHASE3"}, "2020-01", ""),    // 2020-01-31, due 2021-01-31: overdue 70 months
		tr("T4", acme, "INTERVENTIONAL", []string{"PHASE1"}, "2020-06-30", ""),           // rule does not apply
		tr("T5", acme, "OBSERVATIONAL", nil, "2019-05-15", "2021-05-15"),                 // rule does not apply; 24 months to posting
		t6, t7,
		tr("T8", uni, "INTERVENTIONAL", []string{"PHASE3"}, "2026-06-30", ""), // completed, not yet due
		tr("T9", uni, "INTERVENTIONAL", []string{"PHASE4"}, "2027-01-31", ""), // not completed
	}
}

func TestFunderViewRuleAndOverdue(t *testing.T) {
	rep := FunderView(funderFixture(), FunderOptions{AsOf: day("2026-12-01"), Sponsor: "acme"})
	by := map[string]FunderTrial{}
	for _, ft := range rep.Trials {
		by[ft.TrialID] = ft
	}
	for _, tc := range []struct {
		id            string
		rule          *bool
		overdue       *int
		matched, name string
		used          string
	}{
		{"T1", ptr(true), nil, "lead_sponsor", "Acme Pharma", "primary_completion"},
		{"T2", ptr(true), nil, "lead_sponsor", "Acme Pharma", "primary_completion"},
		{"T3", ptr(true), ptr(70), "lead_sponsor", "Acme Pharma", "primary_completion"},
		{"T4", ptr(false), nil, "lead_sponsor", "Acme Pharma", "primary_completion"},
		{"T5", ptr(false), nil, "lead_sponsor", "Acme Pharma", "primary_completion"},
		{"T6", ptr(true), nil, "collaborator", "Acme Pharma", "primary_completion"},
		{"T7", nil, ptr(41), "", "", "completion"},
		{"T8", ptr(true), nil, "", "", "primary_completion"},
	} {
		ft := by[tc.id]
		if !eqPtr(ft.RuleApplies, tc.rule) || !eqPtr(ft.MonthsOverdue, tc.overdue) || ft.SponsorMatched != tc.matched ||
			ft.SponsorMatchedName != tc.name || ft.CompletionUsed != tc.used {
			t.Errorf("%s: rule %v overdue %v matched %q %q used %q; want %v %v %q %q %q", tc.id, val(ft.RuleApplies), val(ft.MonthsOverdue),
				ft.SponsorMatched, ft.SponsorMatchedName, ft.CompletionUsed, val(tc.rule), val(tc.overdue), tc.matched, tc.name, tc.used)
		}
	}
	// Due: T1, T2, T3, T6, T7 (T4, T5 out of scope; T8, T9 not due).
	if rep.Due12 != 5 || rep.PostedOnTime != 1 || rep.PostedLate != 2 || rep.Overdue != 2 || rep.RuleNotApplicable != 2 ||
		rep.RuleUnknown != 1 || rep.CompletionFallback != 1 || *rep.Within12Share != 0.2 {
		t.Errorf("report counts: %+v", rep)
	}
}

// months_overdue at month ends and in leap years.
func TestMonthsOverdue(t *testing.T) {
	for _, tc := range []struct {
		pc, asOf string
		want     *int
	}{
		{"2023-02-28", "2024-02-28", nil},     // due today: not yet overdue
		{"2023-02-28", "2024-02-29", ptr(0)},  // a day past the due date in a leap year
		{"2023-02-28", "2024-03-28", ptr(1)},  //
		{"2020-02-29", "2022-02-28", ptr(12)}, // due 2021-02-28 (leap day clamped)
		{"2019-08-31", "2020-09-29", ptr(0)},  // due 2020-08-31
		{"2019-08-31", "2020-09-30", ptr(1)},  // the last day of September reaches the 31st
		{"2019-08", "2021-08-31", ptr(12)},    // month precision: 2019-08-31
	} {
		s := ingest.TrialSummary{TrialID: "X", Registry: ingest.RegistryCTGov, StudyType: "INTERVENTIONAL", Phases: []string{"PHASE3"},
			PrimaryCompletionDate: ingest.Date{Text: tc.pc}}
		got := FunderView([]ingest.TrialSummary{s}, FunderOptions{AsOf: day(tc.asOf)}).Trials[0].MonthsOverdue
		if !eqPtr(got, tc.want) {
			t.Errorf("completion %s as of %s: months_overdue %v, want %v", tc.pc, tc.asOf, val(got), val(tc.want))
		}
	}
}

func TestBySponsorTable(t *testing.T) {
	rep := FunderView(funderFixture(), FunderOptions{AsOf: day("2026-12-01")})
	got := BySponsorTable(rep, BySponsor)
	want := []SponsorRow{
		// T1-T5: all completed; due T1, T2, T3; posted T1 12, T2 12, T5 24 months; T1 linked.
		{Sponsor: "Acme Pharma", Trials: 5, Completed: 5, Due: 3, PostedOnTime: 1, PostedLate: 1, Overdue: 1, Posted: 3, PublicationLinked: 1,
			OnTimeShare: analysis.FiniteOrNil(1.0 / 3), OverdueShare: analysis.FiniteOrNil(1.0 / 3), MedianMonthsToPosting: analysis.FiniteOrNil(12), PublicationShare: analysis.FiniteOrNil(1.0 / 5)},
		// T6-T9: completed T6, T7, T8; due T6 (late), T7 (overdue); posted T6 14 months; T7 linked.
		{Sponsor: "Uni Hospital", Trials: 4, Completed: 3, Due: 2, PostedOnTime: 0, PostedLate: 1, Overdue: 1, Posted: 1, PublicationLinked: 1,
			OnTimeShare: analysis.FiniteOrNil(0), OverdueShare: analysis.FiniteOrNil(0.5), MedianMonthsToPosting: analysis.FiniteOrNil(14), PublicationShare: analysis.FiniteOrNil(1.0 / 3)},
	}
	checkRows(t, got.Rows, want)

	got = BySponsorTable(rep, BySponsorClass)
	want = []SponsorRow{
		{Sponsor: "(not stated)", Trials: 1, Completed: 1, Due: 1, Overdue: 1, PublicationLinked: 1,
			OnTimeShare: analysis.FiniteOrNil(0), OverdueShare: analysis.FiniteOrNil(1), PublicationShare: analysis.FiniteOrNil(1)},
		{Sponsor: "INDUSTRY", Trials: 5, Completed: 5, Due: 3, PostedOnTime: 1, PostedLate: 1, Overdue: 1, Posted: 3, PublicationLinked: 1,
			OnTimeShare: analysis.FiniteOrNil(1.0 / 3), OverdueShare: analysis.FiniteOrNil(1.0 / 3), MedianMonthsToPosting: analysis.FiniteOrNil(12), PublicationShare: analysis.FiniteOrNil(1.0 / 5)},
		{Sponsor: "OTHER", Trials: 3, Completed: 2, Due: 1, PostedLate: 1, Posted: 1,
			OnTimeShare: analysis.FiniteOrNil(0), OverdueShare: analysis.FiniteOrNil(0), MedianMonthsToPosting: analysis.FiniteOrNil(14), PublicationShare: analysis.FiniteOrNil(0)},
	}
	checkRows(t, got.Rows, want)

	// With a sponsor filter, a trial matched through a collaborator is
	// counted under the collaborator (months to posting 12, 12, 14, 24:
	// median 13).
	rep = FunderView(funderFixture(), FunderOptions{AsOf: day("2026-12-01"), Sponsor: "ACME"})
	rows := BySponsorTable(rep, BySponsor).Rows
	if rows[0].Sponsor != "Acme Pharma" || rows[0].Trials != 6 || rows[0].Due != 4 || rows[0].PostedLate != 2 || *rows[0].MedianMonthsToPosting != 13 {
		t.Errorf("Acme with its collaboration: %+v", rows[0])
	}
}

func TestPostingCurves(t *testing.T) {
	rep := FunderView(funderFixture(), FunderOptions{AsOf: day("2026-12-01")})
	curves := PostingCurves(rep, BySponsorClass, 24)
	if len(curves) != 3 {
		t.Fatalf("%d curves, want 3", len(curves))
	}
	// (not stated): T7 due, nothing posted. INDUSTRY: T1, T2, T3 due; T1
	// and T2 posted at 12 months. OTHER: T6 due, posted at 14 months.
	for i, want := range []struct {
		label  string
		due    int
		points map[int]int // month -> posted
	}{
		{"(not stated)", 1, map[int]int{0: 0, 24: 0}},
		{"INDUSTRY", 3, map[int]int{0: 0, 11: 0, 12: 2, 13: 2, 24: 2}},
		{"OTHER", 1, map[int]int{0: 0, 13: 0, 14: 1, 24: 1}},
	} {
		c := curves[i]
		if c.Label != want.label || c.Due != want.due || len(c.Share) != 25 || len(c.Posted) != 25 {
			t.Errorf("curve %d: %s due %d, %d points; want %s due %d, 25 points", i, c.Label, c.Due, len(c.Share), want.label, want.due)
			continue
		}
		for m, k := range want.points {
			if c.Posted[m] != k || c.Share[m] != float64(k)/float64(want.due) {
				t.Errorf("%s month %d: posted %d share %v, want %d of %d", c.Label, m, c.Posted[m], c.Share[m], k, want.due)
			}
		}
		for m := 1; m < len(c.Posted); m++ {
			if c.Posted[m] < c.Posted[m-1] {
				t.Errorf("%s: cumulative count falls at month %d", c.Label, m)
			}
		}
	}
}

func checkRows(t *testing.T, got, want []SponsorRow) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%d rows, want %d: %+v", len(got), len(want), got)
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.Sponsor != w.Sponsor || g.Trials != w.Trials || g.Completed != w.Completed || g.Due != w.Due || g.PostedOnTime != w.PostedOnTime ||
			g.PostedLate != w.PostedLate || g.Overdue != w.Overdue || g.Posted != w.Posted || g.PublicationLinked != w.PublicationLinked ||
			!eqFloatPtr(g.OnTimeShare, w.OnTimeShare) || !eqFloatPtr(g.OverdueShare, w.OverdueShare) ||
			!eqFloatPtr(g.MedianMonthsToPosting, w.MedianMonthsToPosting) || !eqFloatPtr(g.PublicationShare, w.PublicationShare) {
			t.Errorf("row %d:\n got %s\nwant %s", i, rowText(g), rowText(w))
		}
		if g.Due != g.PostedOnTime+g.PostedLate+g.Overdue {
			t.Errorf("row %d: due %d is not on time + late + overdue", i, g.Due)
		}
	}
}

func rowText(r SponsorRow) string {
	return fmt.Sprintf("%s trials %d completed %d due %d on-time %d late %d overdue %d posted %d linked %d shares %v %v %v median %v",
		r.Sponsor, r.Trials, r.Completed, r.Due, r.PostedOnTime, r.PostedLate, r.Overdue, r.Posted, r.PublicationLinked,
		val(r.OnTimeShare), val(r.OverdueShare), val(r.PublicationShare), val(r.MedianMonthsToPosting))
}

func ptr[T any](v T) *T { return &v }

func eqPtr[T comparable](a, b *T) bool { return (a == nil) == (b == nil) && (a == nil || *a == *b) }

func eqFloatPtr(a, b *float64) bool {
	return (a == nil) == (b == nil) && (a == nil || math.Abs(*a-*b) < 1e-12)
}

// val is *p for printing, or nil.
func val[T any](p *T) any {
	if p == nil {
		return nil
	}
	return *p
}

func deref(x *float64) any {
	if x == nil {
		return nil
	}
	return *x
}
