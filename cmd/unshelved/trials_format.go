package main

import (
	"fmt"
	"strings"

	"unshelved/compare/funders"
)

var trialsColumns = []string{"trial_id", "title", "sponsor", "sponsor_class", "status", "primary_completion", "results_first_posted",
	"results_due", "months", "months_to", "posted_within_12_months", "publication_linked", "enrollment", "no_results_no_publication_after_24_months",
	"sponsor_matched", "sponsor_matched_name", "study_type", "phase", "completion", "completion_used", "rule_applies", "months_overdue"}

// countShare prints "k of n (p%)", or "-" when n is 0.
func countShare(k, n int) string {
	if n == 0 {
		return "-"
	}
	return fmt.Sprintf("%d of %d (%s%%)", k, n, round(100*float64(k)/float64(n), 0))
}

func optInt(p *int) string {
	if p == nil {
		return ""
	}
	return fmt.Sprint(*p)
}

func trialsGrid(rep funders.FunderReport) grid {
	g := grid{Columns: trialsColumns,
		Header: []string{"trial", "sponsor", "status", "type / phase", "completion", "results posted", "months", "within 12 mo", "rule", "overdue (mo)", "publication", "enrolment"}}
	for _, t := range rep.Trials {
		months, monthsCSV := "-", ""
		if t.Months != nil {
			monthsCSV = fmt.Sprint(*t.Months)
			months = monthsCSV
			if t.MonthsTo == "as_of" {
				months += " (none yet)"
			}
		}
		within, withinCSV := "-", ""
		if t.PostedWithin12 != nil {
			within, withinCSV = yesNo(*t.PostedWithin12), fmt.Sprint(*t.PostedWithin12)
		}
		rule, ruleCSV := "?", ""
		if t.RuleApplies != nil {
			rule, ruleCSV = yesNo(*t.RuleApplies), fmt.Sprint(*t.RuleApplies)
		}
		sponsor := t.Sponsor
		if t.SponsorMatched == "collaborator" {
			sponsor += " (collaborator: " + t.SponsorMatchedName + ")"
		}
		completion := dash(t.PrimaryCompletion)
		if t.CompletionUsed == "completion" {
			completion = t.Completion + " (completion date)"
		}
		kind := strings.TrimSpace(strings.ToLower(t.StudyType) + " " + t.Phase)
		g.Table = append(g.Table, []string{t.TrialID, dash(sponsor), t.Status, dash(kind), completion, dash(t.ResultsFirstPosted),
			months, within, rule, dash(optInt(t.MonthsOverdue)), yesNo(t.PublicationLinked), dash(optInt(t.Enrollment))})
		g.CSV = append(g.CSV, []string{t.TrialID, t.Title, t.Sponsor, t.SponsorClass, t.Status, t.PrimaryCompletion, t.ResultsFirstPosted,
			t.ResultsDue, monthsCSV, t.MonthsTo, withinCSV, fmt.Sprint(t.PublicationLinked), optInt(t.Enrollment), fmt.Sprint(t.NoResultsAfter24),
			t.SponsorMatched, t.SponsorMatchedName, t.StudyType, t.Phase, t.Completion, t.CompletionUsed, ruleCSV, optInt(t.MonthsOverdue)})
	}
	g.Notes = []string{
		fmt.Sprintf("%d trials; as of %s.", len(rep.Trials), rep.AsOf),
		fmt.Sprintf("Results posted within 12 months of completion: %s trials due; %d posted late, %d overdue.",
			countShare(rep.PostedOnTime, rep.Due12), rep.PostedLate, rep.Overdue),
		fmt.Sprintf("No results and no linked publication 24 months after completion: %s trials.", countShare(rep.Missing24, rep.Due24)),
		fmt.Sprintf("Rule: an approximation of the scope of the 12-month reporting rule (interventional, phase other than 1 or early 1, a completion date), not legal advice; %d trials out of scope are not counted as due, %d whose record does not state study type or phase are.",
			rep.RuleNotApplicable, rep.RuleUnknown),
		"Months are whole calendar months; a yyyy-MM date counts as the month's last day. 12 months is the usual legal deadline for applicable trials in the US.",
		"A publication is linked when the record cites a RESULT reference (or publication=yes in neutral CSV); unlinked papers may still exist.",
	}
	if rep.CompletionFallback > 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("%d trials from other registries give no primary completion date: their completion date is used.", rep.CompletionFallback))
	}
	return g
}

var sponsorColumns = []string{"sponsor", "trials", "completed", "due", "posted_on_time", "posted_late", "overdue", "posted_on_time_share",
	"overdue_share", "median_months_to_posting", "posted", "publication_linked", "publication_share"}

func sponsorGrid(sr funders.SponsorReport, rep funders.FunderReport) grid {
	name := "sponsor"
	if sr.By == funders.BySponsorClass {
		name = "sponsor class"
	}
	g := grid{Columns: sponsorColumns,
		Header: []string{name, "trials", "completed", "due", "posted on time", "posted late", "overdue", "median months to posting", "publication linked"}}
	f := func(p *float64) string {
		if p == nil {
			return ""
		}
		return fmt.Sprint(*p)
	}
	for _, r := range sr.Rows {
		median := "-"
		if r.MedianMonthsToPosting != nil {
			median = fmt.Sprintf("%s (n=%d)", round(*r.MedianMonthsToPosting, 1), r.Posted)
		}
		g.Table = append(g.Table, []string{r.Sponsor, fmt.Sprint(r.Trials), fmt.Sprint(r.Completed), fmt.Sprint(r.Due),
			countShare(r.PostedOnTime, r.Due), fmt.Sprint(r.PostedLate), countShare(r.Overdue, r.Due), median,
			countShare(r.PublicationLinked, r.Completed)})
		g.CSV = append(g.CSV, []string{r.Sponsor, fmt.Sprint(r.Trials), fmt.Sprint(r.Completed), fmt.Sprint(r.Due), fmt.Sprint(r.PostedOnTime),
			fmt.Sprint(r.PostedLate), fmt.Sprint(r.Overdue), f(r.OnTimeShare), f(r.OverdueShare), f(r.MedianMonthsToPosting), fmt.Sprint(r.Posted),
			fmt.Sprint(r.PublicationLinked), f(r.PublicationShare)})
	}
	g.Notes = []string{
		fmt.Sprintf("%d trials; as of %s. Due: the 12-month rule may apply and the due date has passed; due = posted on time + posted late + overdue.", len(rep.Trials), rep.AsOf),
		"Completed: completion date on or before the as-of date; publication linked is counted among completed trials.",
		"Rule scope is an approximation, not legal advice; trials whose record does not state study type or phase are counted as due.",
	}
	if rep.CompletionFallback > 0 {
		g.Notes = append(g.Notes, fmt.Sprintf("%d trials from other registries give no primary completion date: their completion date is used.", rep.CompletionFallback))
	}
	return g
}
