package main

import (
	"github.com/spf13/cobra"

	"unshelved/compare"
	plotrender "unshelved/compare/render"
	"unshelved/compare/workspace"
)

type scanOptions struct {
	audit       auditOptions
	Reviews     []string
	AcceptAbove float64
	Links       string
	HighestDose bool
	ReportDir   string
}

func newCmdScan(g *globals) *cobra.Command {
	opts := &scanOptions{audit: auditOptions{g: g}}
	cmd := &cobra.Command{
		Use:   "scan [--review ID] [--accept-above 0.8] [--links FILE]",
		Short: "Registry-internal comparison per question: trials linked to a publication vs all trials with results",
		Long: `For each question (a review row with no published studies; load them from
a questions.csv or reviews.csv with 'unshelved ingest reviews'), find the
eligible registry trials with the matcher, accept each trial's best outcome
when its score is above --accept-above (never a not-randomized or crossover
trial), and split the trials into linked (the record has a RESULT reference
with a PMID, or a publication id in neutral CSV) and unlinked. Pool the
linked trials' posted results (what a review of the published trials would
have seen) and all of them, with the audit's model, and report the shift
(all - linked, oriented as in audit), the unlinked - linked subgroup test,
the unlinked share of randomized participants, the eligible trials that
posted no results, and the bias battery on the linked trials.

--links FILE (a links CSV as match writes it) decides for the trials it
names: the first accepted row of a trial is used; a trial whose rows
accept nothing is left out.

Caution: a missing RESULT reference does not prove non-publication;
registry links to publications are incomplete. Each question also reports
its "linked by PMID in the record" rate.

Every scan is stored in the workspace as a run of kind scan. Results
stream in question order; --report DIR writes a page per question, marked
"registry-internal comparison".`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := opts.audit.validate(cmd); err != nil {
				return err
			}
			if !(opts.AcceptAbove > 0 && opts.AcceptAbove < 1) {
				return flagErrorf("invalid --accept-above %v: give a score between 0 and 1", opts.AcceptAbove)
			}
			return scanRun(cmd, opts)
		},
	}
	addAuditFlags(cmd, &opts.audit)
	addScanFlags(cmd, opts)
	cmd.Flags().StringVar(&opts.ReportDir, "report", "", "also write a report page per question and an overview to this folder")
	return cmd
}

// addScanFlags adds the flags that scan and summary --scan share.
func addScanFlags(cmd *cobra.Command, opts *scanOptions) {
	cmd.Flags().StringSliceVar(&opts.Reviews, "review", nil, "question (review) id to scan (repeatable; default every review without studies)")
	cmd.Flags().Float64Var(&opts.AcceptAbove, "accept-above", compare.DefaultScanAcceptAbove, "accept each trial's best outcome scoring above this")
	cmd.Flags().StringVar(&opts.Links, "links", "", "links CSV whose rows decide for the trials they name")
	cmd.Flags().BoolVar(&opts.HighestDose, "highest-dose", false, "keep only the highest dose instead of combining experimental groups")
}

// runOptions reads the links file and builds the scan's run options.
func (o *scanOptions) runOptions() (workspace.ScanRunOptions, error) {
	g := o.audit.g
	ro := workspace.ScanRunOptions{IDs: o.Reviews, Workers: o.audit.Workers, Version: version,
		Scan: compare.ScanOptions{Audit: o.audit.compareOptions(), AcceptAbove: o.AcceptAbove, HighestDose: o.HighestDose}}
	if o.Links == "" {
		return ro, nil
	}
	links, bad, err := workspace.ReadLinksFile(o.Links, ',', g.IO.In)
	if err != nil {
		return ro, err
	}
	for _, p := range bad {
		g.reasonf("rejected: %v", p)
	}
	if len(bad) > 0 {
		return ro, &rejectedError{n: len(bad)}
	}
	ro.Links = links
	return ro, nil
}

func scanRun(cmd *cobra.Command, opts *scanOptions) error {
	g := opts.audit.g
	ro, err := opts.runOptions()
	if err != nil {
		return err
	}
	db, err := opts.audit.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	out := newScanWriter(g.IO.Out, g.Format, opts.audit.Level)
	var audits []compare.ReviewAudit
	ro.Store = !opts.audit.NoStore
	ro.Emit = func(r compare.ScanResult) error {
		for _, w := range r.Warnings {
			g.progressf("%s: %s", r.QuestionID, w)
		}
		if opts.ReportDir != "" && r.Audit != nil {
			audits = append(audits, *r.Audit)
		}
		return out.add(r)
	}
	run, err := workspace.RunScan(cmd.Context(), db, ro)
	if err != nil {
		return err
	}
	if err := out.finish(); err != nil {
		return err
	}
	if run.RunID != 0 {
		g.progressf("scan: run %d stored", run.RunID)
	}
	g.progressf("scan: %s indexed", countOf(run.TrialsIndexed, "trial", "trials"))
	g.progressf("scan: %s", compare.ScanCaution)
	if opts.ReportDir != "" {
		index, err := plotrender.WriteReport(opts.ReportDir, audits, plotrender.ReportOptions{Level: opts.audit.Level, Scan: true})
		if err != nil {
			return err
		}
		g.progressf("scan: report in %s", index)
	}
	for _, e := range run.Failed {
		g.reasonf("not scanned: %v", e)
	}
	if len(run.Failed) > 0 {
		return &rejectedError{n: len(run.Failed), what: [2]string{"question could not be scanned", "questions could not be scanned"}}
	}
	return nil
}
