package main

import (
	"fmt"
	"io"
	"strings"

	"unshelved/compare"
)

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
