package compare

import (
	"fmt"
	"strings"
	"time"

	"unshelved/store"
)

// FunderTrial is one trial of the funders' view.
type FunderTrial struct {
	TrialID            string `json:"trial_id"`
	Title              string `json:"title"`
	Sponsor            string `json:"sponsor"`
	SponsorClass       string `json:"sponsor_class"`
	Status             string `json:"status"`
	PrimaryCompletion  string `json:"primary_completion"`
	ResultsFirstPosted string `json:"results_first_posted"`
	// ResultsDue is the primary completion date plus 12 calendar months.
	ResultsDue string `json:"results_due"`
	// Months is the number of whole calendar months (see MonthsBetween)
	// from primary completion to the first posting of results, or to the
	// as-of date when none is posted (MonthsTo says which); nil without a
	// primary completion date or when it lies after the as-of date.
	Months   *int   `json:"months"`
	MonthsTo string `json:"months_to"` // "results" or "as_of"
	// PostedWithin12 is whether results were posted on or before
	// ResultsDue (nil while not yet due and not posted).
	PostedWithin12    *bool `json:"posted_within_12_months"`
	PublicationLinked bool  `json:"publication_linked"`
	Enrollment        *int  `json:"enrollment"`
	NoResultsAfter24  bool  `json:"no_results_no_publication_after_24_months"`
}

// FunderReport is the funders' view of a set of trials.
type FunderReport struct {
	AsOf   string        `json:"as_of"`
	Trials []FunderTrial `json:"trials"`
	// Due12 counts trials whose primary completion is at least 12 months
	// before the as-of date; Within12Share is the share of them with
	// results posted within 12 months of primary completion.
	Due12         int      `json:"due_12"`
	Within12Share *float64 `json:"within_12_share"`
	// Due24 counts trials whose primary completion is at least 24 months
	// before the as-of date; Missing24Share is the share of them with no
	// results posted and no linked result publication.
	Due24          int      `json:"due_24"`
	Missing24Share *float64 `json:"missing_24_share"`
	Warnings       []string `json:"warnings"`
}

// ParseRegistryDate reads a registry date "yyyy-MM-dd", "yyyy-MM" or
// "yyyy". A date given to the month is taken as the last day of that month,
// a year alone as 31 December: the latest day it can mean, so that a
// deadline counted from a completion date is never earlier than the
// registry allows, and a month-precision posting date is never credited
// earlier than it may have happened.
func ParseRegistryDate(s string) (time.Time, bool) {
	s = strings.TrimSpace(s)
	for _, layout := range []string{"2006-01-02", "2006-01", "2006"} {
		t, err := time.Parse(layout, s)
		if err != nil {
			continue
		}
		switch layout {
		case "2006-01":
			t = t.AddDate(0, 1, -1)
		case "2006":
			t = time.Date(t.Year(), 12, 31, 0, 0, 0, 0, time.UTC)
		}
		return t, true
	}
	return time.Time{}, false
}

// MonthsBetween is the number of whole calendar months from a to b (b not
// before a): the month difference, less one when b's day of month is
// before a's, unless b is the last day of its month (so 2020-01-31 to
// 2020-02-29 is one month, and 2023-02-28 to 2024-02-29 twelve). Negative
// when b is before a (computed as -MonthsBetween(b, a)).
func MonthsBetween(a, b time.Time) int {
	if b.Before(a) {
		return -MonthsBetween(b, a)
	}
	m := (b.Year()-a.Year())*12 + int(b.Month()) - int(a.Month())
	if b.Day() < a.Day() && !lastDayOfMonth(b) {
		m--
	}
	return m
}

// AddMonths adds n calendar months, clamping to the end of the month
// (2020-01-31 plus one month is 2020-02-29; 2023-02-28 plus 12 is
// 2024-02-28).
func AddMonths(t time.Time, n int) time.Time {
	first := time.Date(t.Year(), t.Month(), 1, 0, 0, 0, 0, time.UTC).AddDate(0, n, 0)
	last := first.AddDate(0, 1, -1).Day()
	return time.Date(first.Year(), first.Month(), min(t.Day(), last), 0, 0, 0, 0, time.UTC)
}

func lastDayOfMonth(t time.Time) bool { return t.AddDate(0, 0, 1).Day() == 1 }

// FunderView builds the funders' report for trial summaries (as selected
// by store.TrialFilter) on the as-of date. A publication counts as linked
// when the record cites a RESULT reference or a neutral CSV says
// publication=yes.
func FunderView(trials []store.TrialSummary, asOf time.Time) FunderReport {
	asOf = time.Date(asOf.Year(), asOf.Month(), asOf.Day(), 0, 0, 0, 0, time.UTC)
	rep := FunderReport{AsOf: asOf.Format("2006-01-02"), Trials: []FunderTrial{}, Warnings: []string{}}
	var within, missing int
	for _, s := range trials {
		ft := FunderTrial{TrialID: s.TrialID, Title: s.BriefTitle, Sponsor: s.LeadSponsor.Name, SponsorClass: s.LeadSponsor.Class,
			Status: s.OverallStatus, PrimaryCompletion: s.PrimaryCompletionDate.Text, ResultsFirstPosted: s.ResultsFirstPosted.Text,
			PublicationLinked: s.ResultReferences > 0 || strings.EqualFold(s.Publication, "yes"), Enrollment: s.Enrollment}
		pc, okPC := ParseRegistryDate(s.PrimaryCompletionDate.Text)
		posted, okPosted := ParseRegistryDate(s.ResultsFirstPosted.Text)
		if s.ResultsFirstPosted.Text != "" && !okPosted {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: results first posted %q is not a date", s.TrialID, s.ResultsFirstPosted.Text))
		}
		if !okPC {
			if s.PrimaryCompletionDate.Text != "" {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: primary completion %q is not a date", s.TrialID, s.PrimaryCompletionDate.Text))
			}
			rep.Trials = append(rep.Trials, ft)
			continue
		}
		due := AddMonths(pc, 12)
		ft.ResultsDue = due.Format("2006-01-02")
		switch {
		case okPosted:
			m := MonthsBetween(pc, posted)
			ft.Months, ft.MonthsTo = &m, "results"
		case !pc.After(asOf):
			m := MonthsBetween(pc, asOf)
			ft.Months, ft.MonthsTo = &m, "as_of"
		}
		if okPosted && !posted.After(asOf) {
			b := !posted.After(due)
			ft.PostedWithin12 = &b
		} else if due.Before(asOf) {
			b := false
			ft.PostedWithin12 = &b
		}
		if !due.After(asOf) {
			rep.Due12++
			if ft.PostedWithin12 != nil && *ft.PostedWithin12 {
				within++
			}
		}
		if !AddMonths(pc, 24).After(asOf) {
			rep.Due24++
			if (!okPosted || posted.After(asOf)) && !ft.PublicationLinked {
				ft.NoResultsAfter24 = true
				missing++
			}
		}
		rep.Trials = append(rep.Trials, ft)
	}
	if rep.Due12 > 0 {
		rep.Within12Share = opt(float64(within) / float64(rep.Due12))
	}
	if rep.Due24 > 0 {
		rep.Missing24Share = opt(float64(missing) / float64(rep.Due24))
	}
	return rep
}
