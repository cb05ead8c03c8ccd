package main

import (
	"strings"

	"github.com/spf13/cobra"

	"unshelved/compare/funders"
	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
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
				if _, ok := funders.ParseRegistryDate(d.v); !ok {
					return flagErrorf("invalid %s %q: want yyyy-MM-dd, yyyy-MM or yyyy", d.flag, d.v)
				}
			}
			if opts.By != "" && opts.By != funders.BySponsor && opts.By != funders.BySponsorClass {
				return flagErrorf("invalid --by %q: valid values are %s, %s", opts.By, funders.BySponsor, funders.BySponsorClass)
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
	asOf := g.IO.now()
	if opts.AsOf != "" {
		asOf, _ = funders.ParseRegistryDate(opts.AsOf)
	}
	rep, err := workspace.FunderQuery(cmd.Context(), db, workspace.TrialFilter{Sponsor: opts.Sponsor, SponsorClass: opts.SponsorClass,
		Condition: opts.Condition, CompletedFrom: opts.CompletedFrom, CompletedTo: opts.CompletedTo}, asOf)
	if err != nil {
		return err
	}
	for _, w := range rep.Warnings {
		g.progressf("trials: %s", w)
	}
	if opts.Plot != "" {
		by := opts.By
		if by == "" {
			by = funders.BySponsorClass
		}
		fig := plotrender.PostingPlot{AsOf: rep.AsOf, Curves: funders.PostingCurves(rep, by, 0)}
		if err := plotrender.WritePlot(opts.Plot, fig); err != nil {
			return err
		}
		g.progressf("trials: wrote %s (%d lines, one per %s)", opts.Plot, len(fig.Curves), strings.ReplaceAll(by, "-", " "))
	}
	if opts.By != "" {
		sr := funders.BySponsorTable(rep, opts.By)
		return render(g.IO.Out, g.Format, sr, sponsorGrid(sr, rep))
	}
	return render(g.IO.Out, g.Format, rep, trialsGrid(rep))
}
