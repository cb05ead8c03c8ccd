package main

import (
	"fmt"
	"io"
	"runtime"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/compare/workspace"
	"unshelved/store"
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
func (o *auditOptions) openDB(cmd *cobra.Command) (*store.DB, error) {
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

// notAudited counts reviews that could not be audited.
var notAudited = [2]string{"review could not be audited", "reviews could not be audited"}

// auditOutput writes audits as they come: JSON and JSON lines from each
// audit's compact JSON text, CSV row by row; the table, whose column
// widths depend on every row, at the end.
type auditOutput struct {
	w      io.Writer
	format string
	level  float64
	json   *jsonStream
	csv    *csvStream
	table  []compare.ReviewAudit
}

func newAuditOutput(g *globals, level float64, indent bool) *auditOutput {
	o := &auditOutput{w: g.IO.Out, format: g.Format, level: level}
	switch g.Format {
	case "json", "jsonl":
		o.json = &jsonStream{w: g.IO.Out, lines: g.Format == "jsonl", indent: indent || g.IO.OutIsTerminal}
	case "csv":
		o.csv = newCSVStream(g.IO.Out, auditColumns)
	}
	return o
}

// wantsJSON reports whether add needs the audit's JSON text.
func (o *auditOutput) wantsJSON() bool { return o.json != nil }

// wantsAudit reports whether add needs the audit itself.
func (o *auditOutput) wantsAudit() bool { return o.json == nil }

func (o *auditOutput) add(a *compare.ReviewAudit, js []byte) error {
	switch {
	case o.json != nil:
		return o.json.add(js)
	case o.csv != nil:
		return o.csv.add(auditGrid([]compare.ReviewAudit{*a}, o.level).CSV)
	default:
		o.table = append(o.table, *a)
		return nil
	}
}

func (o *auditOutput) close() error {
	switch {
	case o.json != nil:
		return o.json.close()
	case o.csv != nil:
		return o.csv.close()
	default:
		return render(o.w, "table", nil, auditGrid(o.table, o.level))
	}
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
	"shift_sd_units", "shift_overstatement_sd", "shift_ci_low", "shift_ci_high", "shift_ci_method",
	"subgroup_difference", "subgroup_se", "subgroup_ci_low", "subgroup_ci_high", "subgroup_q_between", "subgroup_p",
	"mid", "mid_crossed", "conclusion_changed", "tau2_change", "pi_width_change",
	"missing_k", "missing_enrollment", "missing_share", "what_if_estimate", "what_if_significance_changed",
	"discrepancies_flagged",
	"few_studies", "augmented_ci_method", "published_random_p", "augmented_random_p",
	"with_missed_publications_k", "with_missed_publications_estimate", "with_missed_publications_ci_low",
	"with_missed_publications_ci_high", "with_missed_publications_shift", "registry_search",
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
		g.CSV = append(g.CSV, append([]string{
			a.ReviewID, a.Measure, a.Unit, fmt.Sprint(a.KPublished), fmt.Sprint(a.KAdded),
			fullPtr(p.Fixed.Estimate), fullPtr(p.Fixed.SE), fullPtr(p.Fixed.CILow), fullPtr(p.Fixed.CIHigh),
			fullPtr(p.Random.Estimate), fullPtr(p.Random.SE), fullPtr(p.Random.CILow), fullPtr(p.Random.CIHigh), fullPtr(p.Random.Tau2),
			fullPtr(q.Fixed.Estimate), fullPtr(q.Fixed.SE), fullPtr(q.Fixed.CILow), fullPtr(q.Fixed.CIHigh),
			fullPtr(q.Random.Estimate), fullPtr(q.Random.SE), fullPtr(q.Random.CILow), fullPtr(q.Random.CIHigh), fullPtr(q.Random.Tau2),
			p.Random.Tau2Method, p.Random.CIMethod,
			fullPtr(a.Shift.Absolute), fullPtr(a.Shift.Relative), fullPtr(a.Shift.Inflation), fullPtr(a.Shift.PublishedSEUnits), a.Shift.Toward,
			fmt.Sprint(a.SignificanceChanged), fmt.Sprint(a.DirectionChanged),
		}, auditExtraCSV(a)...))
	}
	var few []string
	for _, a := range audits {
		if a.FewStudies {
			few = append(few, a.ReviewID)
		}
	}
	notes := []string{
		fmt.Sprintf("Estimates with %g%% confidence intervals on each review's measure (MD in the review's unit, SMD as Hedges' g).", 100*level),
		"Random effects: published and augmented use the same interval method (ci_method in --format json/csv), its p-value from the same test.",
		"Shift = augmented - published random-effects estimate; relative = 100 shift / published; inflation = 100 (published - augmented) / augmented; both '-' when the published interval includes 0 or the signs differ.",
		"Augmented adds registry-only (unpublished) trials; trials published but missed by the review are pooled apart (see the second table).",
	}
	if len(few) > 0 {
		notes = append(notes, "Fewer than 3 published studies, so Wald intervals throughout: "+strings.Join(few, ", ")+".")
	}
	g.Notes = append(notes, cautions...)
	g.Extra = append(g.Extra, auditDetailTable(audits, level))
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

// cautions are the table form of compare.Cautions, printed wherever output
// may inform editorial or clinical decisions.
var cautions = func() []string {
	lines := []string{"", "Cautions:"}
	for _, c := range compare.Cautions {
		lines = append(lines, "- "+c)
	}
	return lines
}()

// auditExtraCSV gives the audit CSV columns added after direction_changed.
func auditExtraCSV(a compare.ReviewAudit) []string {
	var sg compare.Subgroup
	if a.Subgroup != nil {
		sg = *a.Subgroup
	}
	midCrossed := ""
	if a.MIDCrossed != nil {
		midCrossed = fmt.Sprint(*a.MIDCrossed)
	}
	var piWidth *float64
	if a.PIChange != nil {
		piWidth = a.PIChange.Width
	}
	var wiEst *float64
	wiChanged := ""
	if w := a.Missing.WhatIf; w != nil && w.Estimate != nil {
		wiEst, wiChanged = w.Estimate, fmt.Sprint(w.SignificanceChanged)
	}
	flagged := 0
	for _, d := range a.Discrepancies {
		if d.Flagged {
			flagged++
		}
	}
	var m compare.MissedAnalysis
	mk := 0
	if a.WithMissedPublications != nil {
		m, mk = *a.WithMissedPublications, a.WithMissedPublications.K
	}
	return []string{
		fullPtr(a.Shift.SDUnits), fullPtr(a.Shift.OverstatementSD), fullPtr(a.Shift.CILow), fullPtr(a.Shift.CIHigh), a.Shift.CIMethod,
		fullPtr(sg.Difference), fullPtr(sg.SE), fullPtr(sg.CILow), fullPtr(sg.CIHigh), fullPtr(sg.QBetween), fullPtr(sg.P),
		fullPtr(a.MID), midCrossed, boolPtr(a.ConclusionChanged), fullPtr(a.Tau2Change), fullPtr(piWidth),
		fmt.Sprint(a.Missing.K), fmt.Sprint(a.Missing.Enrollment), fullPtr(a.Missing.Share), fullPtr(wiEst), wiChanged,
		fmt.Sprint(flagged),
		fmt.Sprint(a.FewStudies), a.Augmented.Random.CIMethod, fullPtr(a.Published.Random.P), fullPtr(a.Augmented.Random.P),
		fmt.Sprint(mk), fullPtr(m.Estimate), fullPtr(m.CILow), fullPtr(m.CIHigh), fullPtr(m.Shift), a.RegistrySearch.Status,
	}
}

// auditDetailTable is the second table for people: the shift's
// uncertainty, conclusion changes and what is missing.
func auditDetailTable(audits []compare.ReviewAudit, level float64) titled {
	t := titled{Title: "Shift uncertainty, conclusions and missing evidence",
		Header: []string{"review", "shift [CI]", "registry - published [CI]", "Q-between p", "MID crossed", "conclusion changed", "tau² change", "missing trials (enrolment, share)", "null what-if", "with missed publications [CI]", "discrepancies"}}
	for _, a := range audits {
		boot := roundPtr(a.Shift.Absolute, 2)
		if a.Shift.CILow != nil {
			boot += fmt.Sprintf(" [%s, %s]", roundPtr(a.Shift.CILow, 2), roundPtr(a.Shift.CIHigh, 2))
		}
		sub, subP := "-", "-"
		if sg := a.Subgroup; sg != nil && sg.Difference != nil {
			sub = fmt.Sprintf("%s [%s, %s]", roundPtr(sg.Difference, 2), roundPtr(sg.CILow, 2), roundPtr(sg.CIHigh, 2))
			subP = pPtr(sg.P)
		}
		mid := "-"
		if a.MIDCrossed != nil {
			mid = yesNo(*a.MIDCrossed)
		}
		missing := "0"
		if a.Missing.K > 0 {
			share := "-"
			if a.Missing.Share != nil {
				share = round(100**a.Missing.Share, 0) + "%"
			}
			missing = fmt.Sprintf("%d (%d, %s)", a.Missing.K, a.Missing.Enrollment, share)
		}
		whatIf := "-"
		if w := a.Missing.WhatIf; w != nil && w.Estimate != nil {
			whatIf = fmt.Sprintf("%s [%s, %s]", roundPtr(w.Estimate, 2), roundPtr(w.CILow, 2), roundPtr(w.CIHigh, 2))
			if w.SignificanceChanged {
				whatIf += " sig. changes"
			}
		}
		flagged := 0
		for _, d := range a.Discrepancies {
			if d.Flagged {
				flagged++
			}
		}
		concl := "unknown (" + a.RegistrySearch.Status + ")"
		if a.ConclusionChanged != nil {
			concl = yesNo(*a.ConclusionChanged)
		}
		missed := "-"
		if m := a.WithMissedPublications; m != nil {
			missed = fmt.Sprintf("%s [%s, %s] (+%d)", roundPtr(m.Estimate, 2), roundPtr(m.CILow, 2), roundPtr(m.CIHigh, 2), m.KMissed)
		}
		t.Rows = append(t.Rows, []string{a.ReviewID, boot, sub, subP, mid, concl, roundPtr(a.Tau2Change, 3),
			missing, whatIf, missed, fmt.Sprintf("%d of %d flagged", flagged, len(a.Discrepancies))})
	}
	t.Notes = []string{
		fmt.Sprintf("Shift CI: %g%% interval around the shift of the two analyses (variance from the subgroup model, tau² pooled within subgroups, Knapp-Hartung factor floored at 1, t on k - 2 df); none with fewer than 3 studies.", 100*level),
		"Registry - published: each subgroup pooled with its own tau²; Q-between with 1 df. Same sign as the shift.",
		"Missing trials: linked as eligible with no results posted; share of all randomized participants counted. Null what-if: each imputed as effect 0.",
		"With missed publications: published studies plus accepted trials published but not in the review (a search gap, not publication bias), pooled apart from the registry-only trials.",
		"Discrepancies: registry vs published value of the same trial beyond 0.1 SD; see --format json.",
		"Conclusion changed is unknown where no registry trial was linked (run `unshelved match`) or every linked trial was rejected.",
	}
	return t
}

// explainRun shows the derivation of one trial's numbers.
func explainRun(cmd *cobra.Command, opts *auditOptions) error {
	g := opts.g
	db, err := g.openDB(cmd)
	if err != nil {
		return err
	}
	defer db.Close()
	review := ""
	if len(opts.Reviews) == 1 {
		review = opts.Reviews[0]
	}
	exps, err := workspace.ExplainWith(cmd.Context(), db, opts.Explain, review,
		compare.HarmonizeOptions{Prefer: opts.Prefer, AllowNonrandomized: opts.AllowNonrandomized})
	if err != nil {
		return err
	}
	return render(g.IO.Out, g.Format, exps, explainGrid(exps))
}

var explainColumns = []string{"review_id", "trial_id", "outcome_index", "outcome_title", "decision", "decided_by", "design", "effect", "se",
	"converted_from", "rejected", "derivations", "posted_effect", "posted_se", "posted_used", "arms_effect", "arms_se", "candidates"}

// explainDecision says in words which link is explained and who decided.
func explainDecision(l compare.ExplainedLink) string {
	var s string
	switch {
	case strings.EqualFold(l.Decision, "accept") && l.DecidedBy == "auto":
		s = "accepted automatically (match --accept-above)"
	case strings.EqualFold(l.Decision, "accept"):
		s = "accepted by a person (links file)"
	case strings.EqualFold(l.Decision, "reject"):
		s = "rejected by " + map[bool]string{true: "match", false: "a person"}[l.DecidedBy == "auto"] + "; no link of this trial is accepted"
	default:
		s = "no decision yet: the best candidate is shown"
	}
	if l.Class != "" {
		s += ", class " + l.Class
	}
	if l.Score != nil {
		s += ", score " + strconv.FormatFloat(*l.Score, 'f', -1, 64)
	}
	return s
}

// namedValues prints inputs or outputs as name=value.
func namedValues(vs []analysis.NamedValue) string {
	parts := make([]string, len(vs))
	for i, v := range vs {
		parts[i] = v.Name + "=" + strconv.FormatFloat(v.Value, 'g', 6, 64)
	}
	return strings.Join(parts, ", ")
}

func explainGrid(exps []compare.Explanation) grid {
	g := grid{Columns: explainColumns}
	for i, ex := range exps {
		title := ""
		if ex.Outcome != nil {
			title = ex.Outcome.Title
		}
		var steps []string
		for _, d := range ex.Derivations {
			steps = append(steps, d.Method)
		}
		var pEff, pSE, pUsed, aEff, aSE string
		if pa := ex.PostedAnalysis; pa != nil {
			pEff, pSE, pUsed, aEff, aSE = fullPtr(pa.Effect), fullPtr(pa.SE), yesNo(pa.Used), fullPtr(pa.ArmsEffect), fullPtr(pa.ArmsSE)
		}
		var cands []string
		for _, c := range ex.Candidates {
			cands = append(cands, fmt.Sprint(c.OutcomeIndex))
		}
		g.CSV = append(g.CSV, []string{ex.ReviewID, ex.Trial.TrialID, fmt.Sprint(ex.Link.OutcomeIndex), title, ex.Link.Decision, ex.Link.DecidedBy, ex.Design,
			fullPtr(ex.Effect), fullPtr(ex.SE), ex.ConvertedFrom, ex.Rejected, strings.Join(steps, ";"), pEff, pSE, pUsed, aEff, aSE, strings.Join(cands, ";")})
		tr := ex.Trial
		posted := tr.ResultsFirstPosted
		if posted == "" {
			posted = "not posted"
		}
		if i == 0 {
			g.Header = []string{"field", "value"}
		}
		rows := [][]string{{fmt.Sprintf("Review %s (%s %s): trial %s", ex.ReviewID, ex.Measure, ex.Unit, tr.TrialID), tr.Title}}
		if o := ex.Outcome; o != nil {
			rows = append(rows, []string{"link", fmt.Sprintf("outcome %d: %s (%s); %s", o.Index, o.Title, dash(o.Type), explainDecision(ex.Link))})
			if ex.Design != "" {
				rows = append(rows, []string{"design", ex.Design + " (allocation " + dash(tr.Allocation) + ", model " + dash(tr.InterventionModel) + ")"})
			}
			rows = append(rows,
				[]string{"time frame, unit", fmt.Sprintf("%s, %s", dash(o.TimeFrame), dash(o.Unit))},
				[]string{"parameter, dispersion", fmt.Sprintf("%s, %s", dash(o.Param), dash(o.Dispersion))})
			for _, a := range o.Groups {
				role := a.Role
				if role == "" {
					role = "not used"
				}
				rows = append(rows, []string{"group " + a.GroupID + " (" + role + ")",
					fmt.Sprintf("%s: n %s, value %s, spread %s, limits %s to %s", a.Title, dash(a.N), dash(a.Value), dash(a.Spread), dash(a.Lower), dash(a.Upper))})
			}
		}
		for _, d := range ex.Derivations {
			v := d.Formula
			if len(d.Inputs) > 0 {
				v = "in: " + namedValues(d.Inputs) + "; " + v
			}
			if len(d.Output) > 0 {
				v += "; out: " + namedValues(d.Output)
			}
			if d.Assumption != "" {
				v += " [" + d.Assumption + "]"
			}
			if d.Source != "" {
				v += " (" + d.Source + ")"
			}
			rows = append(rows, []string{"step: " + d.Method, v})
		}
		if ex.Rejected != "" {
			rows = append(rows, []string{"not used", ex.Rejected})
		} else {
			rows = append(rows, []string{"effect (SE)", fmt.Sprintf("%s (%s) from %s", roundPtr(ex.Effect, 4), roundPtr(ex.SE, 4), ex.ConvertedFrom)})
		}
		if pa := ex.PostedAnalysis; pa != nil {
			v := fmt.Sprintf("%s %g", dash(pa.ParamType), pa.Estimate)
			if pa.CILower != nil && pa.CIUpper != nil {
				level := "?"
				if pa.CILevelPct != nil {
					level = strconv.FormatFloat(*pa.CILevelPct, 'g', -1, 64)
				}
				v += fmt.Sprintf(" (%s%% CI %g to %g)", level, *pa.CILower, *pa.CIUpper)
			}
			if pa.SEPosted != nil {
				v += fmt.Sprintf(", SE %g", *pa.SEPosted)
			}
			if pa.Method != "" {
				v += ", " + pa.Method
			}
			if pa.Effect != nil {
				v += fmt.Sprintf("; read as %s (SE %s)", roundPtr(pa.Effect, 4), roundPtr(pa.SE, 4))
			}
			if pa.ArmsEffect != nil {
				v += fmt.Sprintf("; arms give %s (SE %s)", roundPtr(pa.ArmsEffect, 4), roundPtr(pa.ArmsSE, 4))
			}
			if pa.SERatio != nil {
				v += fmt.Sprintf(", SE ratio arms/analysis %s", roundPtr(pa.SERatio, 2))
			}
			rows = append(rows, []string{"posted analysis", v + "; " + pa.Why})
			if pa.Direction != "" {
				rows = append(rows, []string{"posted analysis direction", pa.Direction})
			}
		}
		for _, f := range ex.Flags {
			rows = append(rows, []string{"flag", f})
		}
		for _, c := range ex.Candidates {
			v := fmt.Sprintf("%s; score %s", c.OutcomeTitle, roundPtr(c.Score, 3))
			if c.Effect != nil {
				v += fmt.Sprintf("; effect %s (SE %s)", roundPtr(c.Effect, 4), roundPtr(c.SE, 4))
			}
			rows = append(rows, []string{fmt.Sprintf("other candidate: outcome %d", c.OutcomeIndex), v + "; " + c.Why})
		}
		rows = append(rows,
			[]string{"sponsor", strings.TrimSpace(tr.Sponsor + " " + bracket(tr.SponsorClass))},
			[]string{"status", tr.Status},
			[]string{"start / primary completion / completion", fmt.Sprintf("%s / %s / %s", dash(tr.Start), dash(tr.PrimaryCompletion), dash(tr.Completion))},
			[]string{"results first posted", posted})
		g.Table = append(g.Table, rows...)
	}
	g.Notes = cautions
	return g
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

func bracket(s string) string {
	if s == "" {
		return ""
	}
	return "(" + s + ")"
}
