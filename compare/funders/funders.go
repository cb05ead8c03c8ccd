package funders

import (
	"fmt"
	"maps"
	"slices"
	"sort"
	"strings"
	"time"

	"unshelved/analysis"
	"unshelved/ingest"
)

// FunderTrial is one trial of the funders' view.
type FunderTrial struct {
	TrialID      string `json:"trial_id"`
	Title        string `json:"title"`
	Sponsor      string `json:"sponsor"`
	SponsorClass string `json:"sponsor_class"`
	// SponsorMatched says which field the sponsor filter matched:
	// "lead_sponsor" or "collaborator" ("" without a filter), and
	// SponsorMatchedName the name it matched.
	SponsorMatched     string `json:"sponsor_matched"`
	SponsorMatchedName string `json:"sponsor_matched_name"`
	Status             string `json:"status"`
	StudyType          string `json:"study_type"`
	Phase              string `json:"phase"` // the registry's phases joined by "/"
	PrimaryCompletion  string `json:"primary_completion"`
	Completion         string `json:"completion"`
	// CompletionUsed names the date the months count from:
	// "primary_completion", or "completion" for a trial from a registry
	// other than ClinicalTrials.gov that gives no primary completion date;
	// "" when neither is usable.
	CompletionUsed     string `json:"completion_used"`
	ResultsFirstPosted string `json:"results_first_posted"`
	// ResultsDue is the completion date used plus 12 calendar months.
	ResultsDue string `json:"results_due"`
	// Months is the number of whole calendar months (see MonthsBetween)
	// from the completion date used to the first posting of results, or to
	// the as-of date when none is posted (MonthsTo says which); nil without
	// a completion date or when it lies after the as-of date.
	Months   *int   `json:"months"`
	MonthsTo string `json:"months_to"` // "results" or "as_of"
	// PostedWithin12 is whether results were posted on or before
	// ResultsDue (nil while not yet due and not posted).
	PostedWithin12 *bool `json:"posted_within_12_months"`
	// RuleApplies approximates the scope of the 12-month reporting rule:
	// an interventional study, in a phase other than 1 or early phase 1,
	// with a completion date. nil when the record does not state the study
	// type or the phase (such trials are counted as due).
	RuleApplies *bool `json:"rule_applies"`
	// MonthsOverdue is the whole calendar months from ResultsDue to the
	// as-of date for a trial the rule may apply to whose due date has
	// passed with nothing posted; nil otherwise.
	MonthsOverdue     *int `json:"months_overdue"`
	PublicationLinked bool `json:"publication_linked"`
	Enrollment        *int `json:"enrollment"`
	NoResultsAfter24  bool `json:"no_results_no_publication_after_24_months"`

	group      ingest.Org // the organisation the trial is counted under by sponsor
	completion time.Time  // the completion date used (zero without one)
	posted     time.Time  // results first posted, when on or before the as-of date
}

// FunderOptions says how FunderView reads the trials.
type FunderOptions struct {
	// AsOf is the date months are counted to; its time of day is ignored.
	AsOf time.Time
	// Sponsor is the sponsor filter the trials were selected with (part of
	// the lead sponsor's or a collaborator's name, any case); FunderView
	// says which field it matched. Empty means no filter.
	Sponsor string
}

// FunderReport is the funders' view of a set of trials.
type FunderReport struct {
	AsOf   string        `json:"as_of"`
	Trials []FunderTrial `json:"trials"`
	// Due12 counts trials the 12-month rule may apply to (RuleApplies true
	// or not known) whose due date is before the as-of date; PostedOnTime,
	// PostedLate and Overdue split them (on or before the due date, after
	// it, nothing by the as-of date) and Within12Share is
	// PostedOnTime / Due12.
	Due12         int      `json:"due_12"`
	PostedOnTime  int      `json:"posted_on_time"`
	PostedLate    int      `json:"posted_late"`
	Overdue       int      `json:"overdue"`
	Within12Share *float64 `json:"within_12_share"`
	// RuleNotApplicable counts trials left out of Due12 because the rule
	// does not apply; RuleUnknown those counted although the record does
	// not say whether it applies.
	RuleNotApplicable int `json:"rule_not_applicable"`
	RuleUnknown       int `json:"rule_unknown"`
	// CompletionFallback counts trials whose months count from the
	// completion date because no primary completion date is given.
	CompletionFallback int `json:"completion_date_used"`
	// Due24 counts trials whose completion date used is at least 24 months
	// before the as-of date; Missing24 those of them with no results
	// posted and no linked result publication, Missing24Share the share.
	Due24          int      `json:"due_24"`
	Missing24      int      `json:"missing_24"`
	Missing24Share *float64 `json:"missing_24_share"`
	Warnings       []string `json:"warnings"`

	asOf time.Time
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

// sponsorMatch says which organisation of s the sponsor filter matches:
// the lead sponsor first, then the first collaborator in record order.
func sponsorMatch(s ingest.TrialSummary, filter string) (field string, org ingest.Org) {
	f := strings.ToLower(strings.TrimSpace(filter))
	if f == "" {
		return "", s.LeadSponsor
	}
	if strings.Contains(strings.ToLower(s.LeadSponsor.Name), f) {
		return "lead_sponsor", s.LeadSponsor
	}
	for _, c := range s.Collaborators {
		if strings.Contains(strings.ToLower(c.Name), f) {
			return "collaborator", c
		}
	}
	return "", s.LeadSponsor
}

// ruleApplies approximates the scope of the 12-month rule (see
// FunderTrial.RuleApplies).
func ruleApplies(studyType string, phases []string, hasDate bool) *bool {
	no, yes := false, true
	switch {
	case !hasDate:
		return &no
	case studyType == "":
		return nil
	case !strings.EqualFold(studyType, "INTERVENTIONAL"):
		return &no
	case len(phases) == 0:
		return nil
	}
	for _, p := range phases {
		if !strings.EqualFold(p, "PHASE1") && !strings.EqualFold(p, "EARLY_PHASE1") {
			return &yes
		}
	}
	return &no
}

// FunderView builds the funders' report for trial summaries (as selected
// by store.TrialFilter) on the as-of date. A publication counts as linked
// when the record cites a RESULT reference or a neutral CSV says
// publication=yes. Months count from the primary completion date; a trial
// from a registry other than ClinicalTrials.gov without one counts from
// its completion date (CompletionUsed says so).
func FunderView(trials []ingest.TrialSummary, opts FunderOptions) FunderReport {
	asOf := time.Date(opts.AsOf.Year(), opts.AsOf.Month(), opts.AsOf.Day(), 0, 0, 0, 0, time.UTC)
	rep := FunderReport{AsOf: asOf.Format("2006-01-02"), Trials: []FunderTrial{}, Warnings: []string{}, asOf: asOf}
	for _, s := range trials {
		field, org := sponsorMatch(s, opts.Sponsor)
		ft := FunderTrial{TrialID: s.TrialID, Title: s.BriefTitle, Sponsor: s.LeadSponsor.Name, SponsorClass: s.LeadSponsor.Class,
			SponsorMatched: field, Status: s.OverallStatus, StudyType: s.StudyType, Phase: strings.Join(s.Phases, "/"),
			PrimaryCompletion: s.PrimaryCompletionDate.Text, Completion: s.CompletionDate.Text, ResultsFirstPosted: s.ResultsFirstPosted.Text,
			PublicationLinked: s.ResultReferences > 0 || strings.EqualFold(s.Publication, "yes"), Enrollment: s.Enrollment, group: org}
		if field != "" {
			ft.SponsorMatchedName = org.Name
		}
		dateText, used := s.PrimaryCompletionDate.Text, "primary_completion"
		if dateText == "" && s.Registry != ingest.RegistryCTGov && s.CompletionDate.Text != "" {
			dateText, used = s.CompletionDate.Text, "completion"
		}
		pc, okPC := ParseRegistryDate(dateText)
		posted, okPosted := ParseRegistryDate(s.ResultsFirstPosted.Text)
		if s.ResultsFirstPosted.Text != "" && !okPosted {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: results first posted %q is not a date", s.TrialID, s.ResultsFirstPosted.Text))
		}
		ft.RuleApplies = ruleApplies(s.StudyType, s.Phases, okPC)
		if !okPC {
			if dateText != "" {
				rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: %s date %q is not a date", s.TrialID, strings.ReplaceAll(used, "_", " "), dateText))
			}
			rep.Trials = append(rep.Trials, ft)
			continue
		}
		ft.CompletionUsed, ft.completion = used, pc
		if used == "completion" {
			rep.CompletionFallback++
		}
		postedByAsOf := okPosted && !posted.After(asOf)
		if postedByAsOf {
			ft.posted = posted
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
		if postedByAsOf {
			b := !posted.After(due)
			ft.PostedWithin12 = &b
		} else if due.Before(asOf) {
			b := false
			ft.PostedWithin12 = &b
		}
		counted := ft.RuleApplies == nil || *ft.RuleApplies
		switch {
		case !counted:
			rep.RuleNotApplicable++
		case ft.RuleApplies == nil:
			rep.RuleUnknown++
		}
		if counted && due.Before(asOf) {
			rep.Due12++
			switch {
			case !postedByAsOf:
				rep.Overdue++
				m := MonthsBetween(due, asOf)
				ft.MonthsOverdue = &m
			case !posted.After(due):
				rep.PostedOnTime++
			default:
				rep.PostedLate++
			}
		}
		if !AddMonths(pc, 24).After(asOf) {
			rep.Due24++
			if !postedByAsOf && !ft.PublicationLinked {
				ft.NoResultsAfter24 = true
				rep.Missing24++
			}
		}
		rep.Trials = append(rep.Trials, ft)
	}
	rep.Within12Share = share(rep.PostedOnTime, rep.Due12)
	rep.Missing24Share = share(rep.Missing24, rep.Due24)
	return rep
}

// share is k/n, nil when n is 0.
func share(k, n int) *float64 {
	if n == 0 {
		return nil
	}
	return analysis.FiniteOrNil(float64(k) / float64(n))
}

// Groupings of the per-sponsor table.
const (
	BySponsor      = "sponsor"
	BySponsorClass = "sponsor-class"
)

// notStated labels the group of trials whose sponsor or class is empty.
const notStated = "(not stated)"

// SponsorRow is one sponsor (or sponsor class) of the per-sponsor table.
// Every share comes with its numerator and denominator.
type SponsorRow struct {
	Sponsor string `json:"sponsor"`
	Trials  int    `json:"trials"`
	// Completed counts trials whose completion date used is on or before
	// the as-of date.
	Completed int `json:"completed"`
	// Due, PostedOnTime, PostedLate and Overdue are as in FunderReport;
	// Due = PostedOnTime + PostedLate + Overdue.
	Due          int      `json:"due"`
	PostedOnTime int      `json:"posted_on_time"`
	PostedLate   int      `json:"posted_late"`
	Overdue      int      `json:"overdue"`
	OnTimeShare  *float64 `json:"posted_on_time_share"` // PostedOnTime / Due
	OverdueShare *float64 `json:"overdue_share"`        // Overdue / Due
	// MedianMonthsToPosting is the median of the whole months from the
	// completion date used to the first posting of results, over the
	// Posted trials with results posted by the as-of date.
	MedianMonthsToPosting *float64 `json:"median_months_to_posting"`
	Posted                int      `json:"posted"`
	// PublicationLinked counts completed trials with a linked result
	// publication; PublicationShare = PublicationLinked / Completed.
	PublicationLinked int      `json:"publication_linked"`
	PublicationShare  *float64 `json:"publication_share"`
}

// SponsorReport is the per-sponsor table of a funders' report.
type SponsorReport struct {
	AsOf string       `json:"as_of"`
	By   string       `json:"by"`
	Rows []SponsorRow `json:"rows"`
}

// groupKey is the row a trial belongs to: the organisation the sponsor
// filter matched (the lead sponsor without a filter), by name or class.
func (ft FunderTrial) groupKey(by string) string {
	k := ft.group.Name
	if by == BySponsorClass {
		k = ft.group.Class
	}
	if strings.TrimSpace(k) == "" {
		return notStated
	}
	return k
}

// counted says whether a trial counts toward the due trials.
func (ft FunderTrial) counted(asOf time.Time) bool {
	return (ft.RuleApplies == nil || *ft.RuleApplies) && !ft.completion.IsZero() && AddMonths(ft.completion, 12).Before(asOf)
}

// BySponsorTable groups the report's trials by sponsor or sponsor class
// (by is BySponsor or BySponsorClass), rows sorted by name.
func BySponsorTable(rep FunderReport, by string) SponsorReport {
	out := SponsorReport{AsOf: rep.AsOf, By: by, Rows: []SponsorRow{}}
	rows := map[string]*SponsorRow{}
	months := map[string][]float64{}
	for _, ft := range rep.Trials {
		k := ft.groupKey(by)
		r := rows[k]
		if r == nil {
			r = &SponsorRow{Sponsor: k}
			rows[k] = r
		}
		r.Trials++
		if !ft.completion.IsZero() && !ft.completion.After(rep.asOf) {
			r.Completed++
			if ft.PublicationLinked {
				r.PublicationLinked++
			}
		}
		if !ft.posted.IsZero() && !ft.completion.IsZero() {
			months[k] = append(months[k], float64(MonthsBetween(ft.completion, ft.posted)))
		}
		if ft.counted(rep.asOf) {
			r.Due++
			due := AddMonths(ft.completion, 12)
			switch {
			case ft.posted.IsZero():
				r.Overdue++
			case !ft.posted.After(due):
				r.PostedOnTime++
			default:
				r.PostedLate++
			}
		}
	}
	for _, k := range slices.Sorted(maps.Keys(rows)) {
		r := rows[k]
		r.OnTimeShare, r.OverdueShare = share(r.PostedOnTime, r.Due), share(r.Overdue, r.Due)
		r.PublicationShare = share(r.PublicationLinked, r.Completed)
		if m := months[k]; len(m) > 0 {
			r.Posted = len(m)
			r.MedianMonthsToPosting = analysis.FiniteOrNil(median(m))
		}
		out.Rows = append(out.Rows, *r)
	}
	return out
}

// median of xs (not empty): the middle value, or the mean of the two
// middle values.
func median(xs []float64) float64 {
	s := append([]float64(nil), xs...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// PostingCurve is, for one sponsor or sponsor class, the cumulative share
// of its due trials with results posted against whole months since the
// completion date used: Posted[m] of Due trials had results posted within
// m months (posting before completion counts at month 0), Share[m] =
// Posted[m] / Due, for m = 0 .. len(Share)-1.
type PostingCurve struct {
	Label  string    `json:"label"`
	Due    int       `json:"due"`
	Posted []int     `json:"posted"`
	Share  []float64 `json:"share"`
}

// postingMonthsCap is the longest automatic horizon of PostingCurves.
const postingMonthsCap = 120

// PostingCurves gives one curve per sponsor or sponsor class with due
// trials, sorted by name, over months 0 .. maxMonths; maxMonths 0 means the
// longest time any due trial has been followed (at least 24 months, at
// most postingMonthsCap). Trials due recently
// have been followed for fewer months than the axis shows; their share
// can still rise.
func PostingCurves(rep FunderReport, by string, maxMonths int) []PostingCurve {
	type acc struct {
		due    int
		months []int
	}
	groups := map[string]*acc{}
	for _, ft := range rep.Trials {
		if !ft.counted(rep.asOf) {
			continue
		}
		k := ft.groupKey(by)
		a := groups[k]
		if a == nil {
			a = &acc{}
			groups[k] = a
		}
		a.due++
		if !ft.posted.IsZero() {
			a.months = append(a.months, max(0, MonthsBetween(ft.completion, ft.posted)))
		}
	}
	if maxMonths <= 0 {
		maxMonths = 24
		for _, ft := range rep.Trials {
			if ft.counted(rep.asOf) {
				maxMonths = max(maxMonths, MonthsBetween(ft.completion, rep.asOf))
			}
		}
		maxMonths = min(maxMonths, postingMonthsCap)
	}
	out := []PostingCurve{}
	for _, k := range slices.Sorted(maps.Keys(groups)) {
		a := groups[k]
		c := PostingCurve{Label: k, Due: a.due, Posted: make([]int, maxMonths+1), Share: make([]float64, maxMonths+1)}
		for _, m := range a.months {
			for x := m; x <= maxMonths; x++ {
				c.Posted[x]++
			}
		}
		for x := range c.Posted {
			c.Share[x] = float64(c.Posted[x]) / float64(a.due)
		}
		out = append(out, c)
	}
	return out
}
