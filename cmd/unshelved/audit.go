package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
)

type auditOptions struct {
	g       *globals
	Reviews []string
	Tau2    string
	HKSJ    bool
	Level   float64
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
published-only standard error, with whether significance or direction
changed.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := checkTau2(opts.Tau2); err != nil {
				return err
			}
			if !(opts.Level > 0 && opts.Level < 1) {
				return flagErrorf("--level must lie between 0 and 1, not %v", opts.Level)
			}
			return auditRun(cmd, opts)
		},
	}
	cmd.Flags().StringSliceVar(&opts.Reviews, "review", nil, "review id to audit (repeatable; default all)")
	cmd.Flags().StringVar(&opts.Tau2, "tau2", "dl", "tau² estimator for random effects: dl, reml or pm")
	cmd.Flags().BoolVar(&opts.HKSJ, "hksj", false, "random-effects interval by Hartung-Knapp-Sidik-Jonkman instead of Wald")
	cmd.Flags().Float64Var(&opts.Level, "level", 0.95, "confidence level")
	return cmd
}

func checkTau2(m string) error {
	switch analysis.Tau2Method(m) {
	case analysis.Tau2DL, analysis.Tau2REML, analysis.Tau2PM:
		return nil
	}
	return flagErrorf("invalid --tau2 %q: valid values are dl, reml, pm", m)
}

func auditRun(cmd *cobra.Command, opts *auditOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	audits, err := compare.Audit(cmd.Context(), db, opts.Reviews, compare.Options{
		Level: opts.Level, Tau2: analysis.Tau2Method(opts.Tau2), HKSJ: opts.HKSJ,
	})
	if err != nil {
		return err
	}
	for _, a := range audits {
		for _, w := range a.Warnings {
			g.progressf("%s: %s", a.ReviewID, w)
		}
		for _, r := range a.Rejected {
			g.progressf("%s: link %s outcome %d not used (%s): %s", a.ReviewID, r.TrialID, r.OutcomeIndex, r.Reason, r.Detail)
		}
	}
	return render(g.IO.Out, g.Format, audits, auditGrid(audits, opts.Level))
}

var auditColumns = []string{
	"review_id", "measure", "unit", "k_published", "k_added",
	"published_fixed_estimate", "published_fixed_se", "published_fixed_ci_low", "published_fixed_ci_high",
	"published_random_estimate", "published_random_se", "published_random_ci_low", "published_random_ci_high", "published_tau2",
	"augmented_fixed_estimate", "augmented_fixed_se", "augmented_fixed_ci_low", "augmented_fixed_ci_high",
	"augmented_random_estimate", "augmented_random_se", "augmented_random_ci_low", "augmented_random_ci_high", "augmented_tau2",
	"tau2_method", "ci_method",
	"shift_absolute", "shift_relative", "shift_inflation", "shift_published_se_units", "shift_toward",
	"significance_changed", "direction_changed",
}

func auditGrid(audits []compare.ReviewAudit, level float64) grid {
	g := grid{Columns: auditColumns, Header: []string{"review", "k pub+add", "model", "published", "augmented", "shift", "relative %", "inflation %", "shift/SE", "sig. changed", "dir. changed"}}
	for _, a := range audits {
		g.Table = append(g.Table,
			[]string{a.ReviewID + " (" + a.Measure + ")", fmt.Sprintf("%d+%d", a.KPublished, a.KAdded), "fixed",
				estimateCell(a.Published.Fixed), estimateCell(a.Augmented.Fixed), "", "", "", "", "", ""},
			[]string{"", "", "random (" + a.Published.Random.Tau2Method + ")",
				estimateCell(a.Published.Random), estimateCell(a.Augmented.Random),
				roundPtr(a.Shift.Absolute, 2), roundPtr(a.Shift.Relative, 1), roundPtr(a.Shift.Inflation, 1),
				roundPtr(a.Shift.PublishedSEUnits, 2), yesNo(a.SignificanceChanged), yesNo(a.DirectionChanged)},
		)
		p, q := a.Published, a.Augmented
		g.CSV = append(g.CSV, []string{
			a.ReviewID, a.Measure, a.Unit, fmt.Sprint(a.KPublished), fmt.Sprint(a.KAdded),
			fullPtr(p.Fixed.Estimate), fullPtr(p.Fixed.SE), fullPtr(p.Fixed.CILow), fullPtr(p.Fixed.CIHigh),
			fullPtr(p.Random.Estimate), fullPtr(p.Random.SE), fullPtr(p.Random.CILow), fullPtr(p.Random.CIHigh), fullPtr(p.Random.Tau2),
			fullPtr(q.Fixed.Estimate), fullPtr(q.Fixed.SE), fullPtr(q.Fixed.CILow), fullPtr(q.Fixed.CIHigh),
			fullPtr(q.Random.Estimate), fullPtr(q.Random.SE), fullPtr(q.Random.CILow), fullPtr(q.Random.CIHigh), fullPtr(q.Random.Tau2),
			p.Random.Tau2Method, p.Random.CIMethod,
			fullPtr(a.Shift.Absolute), fullPtr(a.Shift.Relative), fullPtr(a.Shift.Inflation), fullPtr(a.Shift.PublishedSEUnits), a.Shift.Toward,
			fmt.Sprint(a.SignificanceChanged), fmt.Sprint(a.DirectionChanged),
		})
	}
	g.Notes = append([]string{
		fmt.Sprintf("Estimates with %g%% confidence intervals on each review's measure (MD in the review's unit, SMD as Hedges' g).", 100*level),
		"Shift = augmented - published random-effects estimate; relative = 100 shift / published; inflation = 100 (published - augmented) / augmented.",
	}, cautions...)
	return g
}

func estimateCell(e compare.Estimate) string {
	if e.Estimate == nil {
		return "-"
	}
	lo, hi := "-", "-"
	if e.CILow != nil {
		lo = round(*e.CILow, 2)
	}
	if e.CIHigh != nil {
		hi = round(*e.CIHigh, 2)
	}
	return fmt.Sprintf("%s [%s, %s]", round(*e.Estimate, 2), lo, hi)
}

// cautions are printed wherever output may inform editorial or clinical
// decisions.
var cautions = []string{
	"",
	"Cautions:",
	"- Registry results are posted by sponsors and are not peer reviewed; check each added trial's record.",
	"- A shift, or funnel-plot asymmetry, is not proof of publication bias: heterogeneity, chance and small-study effects can cause it.",
	"- Defer to the review authors, their GRADE assessment and local practice before drawing clinical or editorial conclusions.",
}
