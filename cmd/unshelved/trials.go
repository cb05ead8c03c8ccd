package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/store"
)

type trialsOptions struct {
	g                          *globals
	Sponsor, SponsorClass      string
	Condition                  string
	CompletedFrom, CompletedTo string
	AsOf                       string
	By                         string
	Plot                       string
}

func newCmdTrials(g *globals) *cobra.Command {
	opts := &trialsOptions{g: g}
	cmd := &cobra.Command{
		Use:   "trials",
		Short: "Funders' view: registered trials with results posted or not, publication linked or not, months since completion",
		Long: `List the registered trials that match the filters with the sponsor field
the filter matched, their status, study type and phase, primary completion
date, first posting of results, the whole calendar months from primary
completion to posting (or to --as-of when nothing is posted), whether the
12-month reporting rule may apply (an approximation of its legal scope:
interventional, a phase other than 1 or early 1, a completion date; not
legal advice), the months overdue, whether a result publication is linked
and the enrolment; and summarize with counts beside every share.

--by sponsor (or sponsor-class) prints one row per sponsor instead: trials,
completed, due, posted on time, posted late, overdue, median months to
posting and the share with a linked publication. --plot FILE.svg|.png|.pdf
draws the cumulative share of due trials with results posted against the
months since primary completion, one line per sponsor class (or per
sponsor with --by sponsor).

Trials from other registries without a primary completion date count from
their completion date, and the output says so. Dates given to the month
(yyyy-MM) are read as the month's last day, a year alone as 31 December.
--as-of defaults to today.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			for _, d := range []struct{ flag, v string }{{"--completed-from", opts.CompletedFrom}, {"--completed-to", opts.CompletedTo}, {"--as-of", opts.AsOf}} {
				if d.v == "" {
					continue
				}
				if _, ok := compare.ParseRegistryDate(d.v); !ok {
					return flagErrorf("invalid %s %q: want yyyy-MM-dd, yyyy-MM or yyyy", d.flag, d.v)
				}
			}
			if opts.By != "" && opts.By != compare.BySponsor && opts.By != compare.BySponsorClass {
				return flagErrorf("invalid --by %q: valid values are %s, %s", opts.By, compare.BySponsor, compare.BySponsorClass)
			}
			if opts.Plot != "" {
				switch ext := strings.ToLower(plotExt(opts.Plot)); ext {
				case ".svg", ".png", ".pdf":
				default:
					return flagErrorf("invalid --plot %q: the file name must end in .svg, .png or .pdf", opts.Plot)
				}
			}
			return trialsRun(cmd, opts)
		},
	}
	f := cmd.Flags()
	f.StringVar(&opts.Sponsor, "sponsor", "", "part of the lead sponsor's or a collaborator's name (case-insensitive)")
	f.StringVar(&opts.SponsorClass, "sponsor-class", "", "lead sponsor class: INDUSTRY, NIH, FED, OTHER_GOV, NETWORK, INDIV, OTHER, ...")
	f.StringVar(&opts.Condition, "condition", "", "part of a condition, keyword or condition term (case-insensitive)")
	f.StringVar(&opts.CompletedFrom, "completed-from", "", "completion date on or after (yyyy-MM-dd, yyyy-MM or yyyy)")
	f.StringVar(&opts.CompletedTo, "completed-to", "", "completion date on or before")
	f.StringVar(&opts.AsOf, "as-of", "", "date the months are counted to when nothing is posted (default today)")
	f.StringVar(&opts.By, "by", "", "one row per sponsor or sponsor-class instead of one per trial")
	f.StringVar(&opts.Plot, "plot", "", "write the cumulative posting figure to FILE (.svg, .png or .pdf)")
	return cmd
}

func plotExt(path string) string {
	if i := strings.LastIndexByte(path, '.'); i >= 0 {
		return path[i:]
	}
	return ""
}

func trialsRun(cmd *cobra.Command, opts *trialsOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	summaries, err := db.TrialSummaries(cmd.Context(), store.TrialFilter{Sponsor: opts.Sponsor, SponsorClass: opts.SponsorClass,
		Condition: opts.Condition, CompletedFrom: opts.CompletedFrom, CompletedTo: opts.CompletedTo})
	if err != nil {
		return err
	}
	asOf := g.IO.now()
	if opts.AsOf != "" {
		asOf, _ = compare.ParseRegistryDate(opts.AsOf)
	}
	rep := compare.FunderView(summaries, compare.FunderOptions{AsOf: asOf, Sponsor: opts.Sponsor})
	for _, w := range rep.Warnings {
		g.progressf("trials: %s", w)
	}
	if opts.Plot != "" {
		by := opts.By
		if by == "" {
			by = compare.BySponsorClass
		}
		fig := plotrender.PostingPlot{AsOf: rep.AsOf, Curves: compare.PostingCurves(rep, by, 0)}
		if err := plotrender.WritePlot(opts.Plot, fig); err != nil {
			return err
		}
		g.progressf("trials: wrote %s (%d lines, one per %s)", opts.Plot, len(fig.Curves), strings.ReplaceAll(by, "-", " "))
	}
	if opts.By != "" {
		sr := compare.BySponsorTable(rep, opts.By)
		return render(g.IO.Out, g.Format, sr, sponsorGrid(sr, rep))
	}
	return render(g.IO.Out, g.Format, rep, trialsGrid(rep))
}

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

func trialsGrid(rep compare.FunderReport) grid {
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

func sponsorGrid(sr compare.SponsorReport, rep compare.FunderReport) grid {
	name := "sponsor"
	if sr.By == compare.BySponsorClass {
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
