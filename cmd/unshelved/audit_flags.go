package main

import (
	"runtime"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/compare/workspace"
)

// defaultAuditOptions are the audit defaults: REML tau² with the HKSJ
// interval at the 95% level, no bootstrap check of the shift's interval,
// the fixed default seed, one worker per core.
func defaultAuditOptions(g *globals) auditOptions {
	return auditOptions{g: g, Tau2: "reml", CI: compare.CIHKSJ, Level: analysis.DefaultLevel, Bootstrap: 0, Seed: compare.DefaultSeed, Workers: runtime.GOMAXPROCS(0),
		Prefer: compare.PreferAnalysis}
}

// addAuditFlags adds the flags shared by audit, summary and report.
func addAuditFlags(cmd *cobra.Command, opts *auditOptions) {
	d := defaultAuditOptions(opts.g)
	cmd.Flags().StringVar(&opts.Tau2, "tau2", d.Tau2, "tau² estimator for random effects: reml, dl or pm")
	cmd.Flags().StringVar(&opts.CI, "ci", d.CI, "random-effects interval and its p-value: hksj (Hartung-Knapp-Sidik-Jonkman, scale floored at 1), hksj-untruncated or wald; Wald throughout for reviews with fewer than 3 published studies")
	cmd.Flags().Float64Var(&opts.Level, "level", d.Level, "confidence level")
	cmd.Flags().IntVar(&opts.Bootstrap, "bootstrap", d.Bootstrap, "replicates of a parametric-bootstrap check of the shift's interval (shift.boot_ci_low/high; the interval itself is analytic); 0: no check")
	cmd.Flags().Uint64Var(&opts.Seed, "seed", d.Seed, "seed of the bootstrap's draws (stored with the run)")
	cmd.Flags().IntVar(&opts.Workers, "workers", d.Workers, "reviews audited in parallel (results stay in review order)")
	cmd.Flags().StringVar(&opts.Prefer, "prefer", d.Prefer, "for model-adjusted arm means, use the record's posted between-group analysis or the arms: analysis or arms")
	cmd.Flags().BoolVar(&opts.AllowNonrandomized, "allow-nonrandomized", false, "use accepted links to not-randomized and crossover records (flagged) instead of refusing them")
	cmd.Flags().BoolVar(&opts.NoStore, "no-store", false, "do not record the run in the workspace (which is then not written at all)")
}

// openDB opens the workspace for a command that stores a run unless
// --no-store was given.
func (o *auditOptions) openDB(cmd *cobra.Command) (*workspace.DB, error) {
	if o.NoStore {
		return o.g.openDB(cmd)
	}
	return o.g.openDBToWrite(cmd, true)
}

// validate checks the shared audit flags.
func (o *auditOptions) validate(cmd *cobra.Command) error {
	if err := checkTau2(o.Tau2); err != nil {
		return err
	}
	if err := checkCI(o.CI); err != nil {
		return err
	}
	if !(o.Level > 0 && o.Level < 1) {
		return flagErrorf("--level must lie between 0 and 1, not %v", o.Level)
	}
	if o.Prefer != compare.PreferAnalysis && o.Prefer != compare.PreferArms {
		return flagErrorf("invalid --prefer %q: valid values are analysis, arms", o.Prefer)
	}
	if o.Bootstrap < 0 {
		return flagErrorf("--bootstrap must be 0 (off) or a positive number of replicates, not %d", o.Bootstrap)
	}
	return nil
}

func (o *auditOptions) compareOptions() compare.Options {
	return compare.Options{Level: o.Level, Tau2: analysis.Tau2Method(o.Tau2), CI: o.CI, Bootstrap: o.Bootstrap, Seed: o.Seed,
		Harmonize: compare.HarmonizeOptions{Prefer: o.Prefer, AllowNonrandomized: o.AllowNonrandomized}}
}

// noteRegistrySearch says on stderr, even under --quiet, when a review
// had no registry trial linked or none eligible: no search is not no bias.
func noteRegistrySearch(g *globals, a compare.ReviewAudit) {
	if a.RegistrySearch.Note != "" {
		g.reasonf("review %s: %s", a.ReviewID, a.RegistrySearch.Note)
	}
}

// checkCI rejects an unknown --ci value, listing the valid ones.
func checkCI(m string) error {
	if compare.ValidCI(m) {
		return nil
	}
	return flagErrorf("invalid --ci %q: valid values are %s", m, strings.Join(compare.CIMethods, ", "))
}

func checkTau2(m string) error {
	switch analysis.Tau2Method(m) {
	case analysis.Tau2DL, analysis.Tau2REML, analysis.Tau2PM:
		return nil
	}
	return flagErrorf("invalid --tau2 %q: valid values are dl, reml, pm", m)
}
