package main

import (
	"github.com/spf13/cobra"

	"unshelved/compare"
	"unshelved/compare/workspace"
)

type auditOptions struct {
	g         *globals
	Reviews   []string
	Tau2      string
	CI        string
	Level     float64
	Bootstrap int
	Seed      uint64
	Workers   int
	Explain   string
	// Methods prints the methods paragraph of each audited review instead
	// of the audit table; Studies writes the per-study CSV to this path.
	Methods bool
	Studies string
	// Prefer and AllowNonrandomized choose how registry records are read.
	Prefer             string
	AllowNonrandomized bool
	NoStore            bool
	Indent             bool
	Run                int64
}

func newCmdAudit(g *globals) *cobra.Command {
	opts := &auditOptions{g: g}
	cmd := &cobra.Command{
		Use:   "audit",
		Short: "Published-only vs registry-augmented pooled estimates and the shift, per review",
		Long: `For each review, pool the published studies alone and together with the
accepted registry-only trials (fixed effect and random effects), and report
the shift of the random-effects estimate: absolute (augmented - published),
relative (percent of the published estimate), inflation (percent by which
the published estimate overstates the augmented one) and in units of the
published-only standard error, with whether significance, direction or
the review's minimal important difference changed; the published vs
registry-only subgroup test; a confidence interval of the shift and the
oriented overstatement of the benefit in SD units;
registered trials without results and a null-imputation what-if; the
trials published but missed by the review, pooled apart (a search gap, not
publication bias); and published vs registry values of trials in both. An
accepted registry trial whose effect and group sizes match a published
study of the same review is left out, with a warning naming both, unless
its link's decision is accept-duplicate.

Every random-effects interval and its p come from one test (--ci), the
same for all analyses of a review; with fewer than 3 published studies
that test is Wald. A review with no registry trial linked is reported on
stderr and its conclusion change is unknown (null).

Every run is stored in the workspace (kind audit) with its options, the
tool version and the seed, unless --no-store is given; --run N re-prints a
stored audit run (as 'unshelved runs show N'). --explain TRIAL shows how
one registry trial's numbers were derived instead (not stored).

Results are written review by review, in review order, as they are ready
(the table format, whose column widths depend on every row, is printed at
the end). --format json writes one array, indented when stdout is a
terminal or with --indent; --format jsonl writes one compact JSON object
per review per line.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := opts.validate(cmd); err != nil {
				return err
			}
			if opts.Explain != "" {
				if len(opts.Reviews) > 1 {
					return flagErrorf("--explain takes at most one --review")
				}
				return explainRun(cmd, opts)
			}
			if opts.Run != 0 {
				return showRun(cmd, opts.g, opts.Run, "audit", opts.Indent)
			}
			return auditRun(cmd, opts)
		},
	}
	addAuditFlags(cmd, opts)
	cmd.Flags().StringSliceVar(&opts.Reviews, "review", nil, "review id to audit (repeatable; default all)")
	cmd.Flags().StringVar(&opts.Explain, "explain", "", "show the registry record, outcome, arms and every conversion behind one trial's numbers")
	cmd.Flags().BoolVar(&opts.Methods, "methods", false, "print a methods paragraph with its references for each audited review instead of the table")
	cmd.Flags().StringVar(&opts.Studies, "studies", "", "also write one row per study or registry trial per review to this CSV file")
	cmd.Flags().BoolVar(&opts.Indent, "indent", false, "indent --format json even when stdout is not a terminal")
	cmd.Flags().Int64Var(&opts.Run, "run", 0, "re-print the stored audit run N instead of auditing (as 'runs show N')")
	return cmd
}

func auditRun(cmd *cobra.Command, opts *auditOptions) error {
	g := opts.g
	db, err := opts.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	// --methods and --studies need every audit at the end; otherwise the
	// audits stream out as they come.
	keep := opts.Methods || opts.Studies != ""
	var audits []compare.ReviewAudit
	var out *auditOutput
	if !opts.Methods {
		out = newAuditOutput(g, opts.Level, opts.Indent)
	}
	run, err := workspace.RunAuditEach(cmd.Context(), db, opts.Reviews, opts.compareOptions(), version,
		workspace.RunOptions{Workers: opts.Workers, NoStore: opts.NoStore, JSON: out != nil && out.wantsJSON()}, func(r workspace.AuditResult) error {
			if r.Err != nil {
				g.reasonf("not audited: %v", r.Err)
				return nil
			}
			a := &r.Audit
			noteRegistrySearch(g, *a)
			for _, w := range a.Warnings {
				g.progressf("%s: %s", a.ReviewID, w)
			}
			for _, r := range a.Rejected {
				g.reasonf("review %s: link %s outcome %d not used (%s): %s", a.ReviewID, r.TrialID, r.OutcomeIndex, r.Reason, r.Detail)
			}
			if keep {
				audits = append(audits, *a)
			}
			if out != nil {
				return out.add(a, r.JSON)
			}
			return nil
		})
	if err != nil {
		return err
	}
	if audits == nil {
		audits = []compare.ReviewAudit{}
	}
	if opts.Studies != "" {
		if err := writeStudiesFile(opts.Studies, audits, opts.Level); err != nil {
			return err
		}
	}
	if opts.Methods {
		err = writeMethods(g.IO.Out, g.Format, audits, opts.compareOptions())
	} else {
		err = out.close()
	}
	if err != nil {
		return err
	}
	if !opts.NoStore {
		g.progressf("audit: run %d stored (seed %d, %d reviews, %d bytes)", run.RunID, opts.Seed, run.Reviews, run.Bytes)
	}
	if len(run.Failed) > 0 {
		return &rejectedError{n: len(run.Failed), what: notAudited}
	}
	return nil
}
