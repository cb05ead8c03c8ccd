package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/store"
)

type trialsOptions struct {
	g                          *globals
	Sponsor, SponsorClass      string
	Condition                  string
	CompletedFrom, CompletedTo string
	AsOf                       string
}

func newCmdTrials(g *globals) *cobra.Command {
	opts := &trialsOptions{g: g}
	cmd := &cobra.Command{
		Use:   "trials",
		Short: "Funders' view: registered trials with results posted or not, publication linked or not, months since completion",
		Long: `List the registered trials that match the filters with their status,
primary completion date, first posting of results, the whole calendar
months from primary completion to posting (or to --as-of when nothing is
posted), whether a result publication is linked and the enrolment, and
summarize: the share of trials due for 12 months whose results were posted
within 12 months of primary completion, and the share of trials due for 24
months with neither results nor a linked publication.

Dates given to the month (yyyy-MM) are read as the month's last day, a
year alone as 31 December. --as-of defaults to today.`,
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
	return cmd
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
	rep := compare.FunderView(summaries, asOf)
	for _, w := range rep.Warnings {
		g.progressf("trials: %s", w)
	}
	return render(g.IO.Out, g.Format, rep, trialsGrid(rep))
}

var trialsColumns = []string{"trial_id", "title", "sponsor", "sponsor_class", "status", "primary_completion", "results_first_posted",
	"results_due", "months", "months_to", "posted_within_12_months", "publication_linked", "enrollment", "no_results_no_publication_after_24_months"}

func trialsGrid(rep compare.FunderReport) grid {
	g := grid{Columns: trialsColumns,
		Header: []string{"trial", "sponsor", "status", "primary completion", "results posted", "months", "within 12 mo", "publication", "enrolment"}}
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
		enrol := ""
		if t.Enrollment != nil {
			enrol = fmt.Sprint(*t.Enrollment)
		}
		g.Table = append(g.Table, []string{t.TrialID, t.Sponsor, t.Status, dash(t.PrimaryCompletion), dash(t.ResultsFirstPosted),
			months, within, yesNo(t.PublicationLinked), dash(enrol)})
		g.CSV = append(g.CSV, []string{t.TrialID, t.Title, t.Sponsor, t.SponsorClass, t.Status, t.PrimaryCompletion, t.ResultsFirstPosted,
			t.ResultsDue, monthsCSV, t.MonthsTo, withinCSV, fmt.Sprint(t.PublicationLinked), enrol, fmt.Sprint(t.NoResultsAfter24)})
	}
	share := func(x *float64) string {
		if x == nil {
			return "-"
		}
		return round(100**x, 0) + "%"
	}
	g.Notes = []string{
		fmt.Sprintf("%d trials; as of %s.", len(rep.Trials), rep.AsOf),
		fmt.Sprintf("Results posted within 12 months of primary completion: %s of %d trials due.", share(rep.Within12Share), rep.Due12),
		fmt.Sprintf("No results and no linked publication 24 months after primary completion: %s of %d trials.", share(rep.Missing24Share), rep.Due24),
		"Months are whole calendar months; a yyyy-MM date counts as the month's last day. 12 months is the usual legal deadline for applicable trials in the US.",
		"A publication is linked when the record cites a RESULT reference (or publication=yes in neutral CSV); unlinked papers may still exist.",
	}
	return g
}
