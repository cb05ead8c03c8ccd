package compare

import (
	"testing"
	"time"

	"unshelved/ingest"
	"unshelved/store"
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
	sum := func(id, pc, posted string, refs int, pub string) store.TrialSummary {
		return store.TrialSummary{TrialID: id, PrimaryCompletionDate: ingest.Date{Text: pc}, ResultsFirstPosted: ingest.Date{Text: posted},
			ResultReferences: refs, Publication: pub, HasResults: &yes, Enrollment: &n}
	}
	asOf := day("2026-12-01")
	rep := FunderView([]store.TrialSummary{
		sum("A", "2023-02-28", "2024-02-28", 0, ""), // due 2024-02-28: on time, 12 months
		sum("B", "2023-02-28", "2024-02-29", 0, ""), // a day late, still 12 whole months
		sum("C", "2020-01", "", 0, ""),              // month precision: 2020-01-31; nothing after 24 months
		sum("D", "2020-01-31", "", 1, ""),           // nothing posted, but a result publication
		sum("E", "2026-06-30", "", 0, "yes"),        // not yet due
		sum("F", "", "", 0, ""),                     // no date
	}, asOf)
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
