package bias

import (
	"fmt"

	"unshelved/analysis"
)

// Grade levels.
const (
	GradeNoConcern    = "no serious concern"
	GradeSerious      = "serious concern"
	GradeCannotAssess = "cannot assess"
	// gradeMinK and gradeAlpha: see Grade.
	gradeMinK  = eggerMinRecommendedK
	gradeAlpha = AsymmetryAlpha
)

// ShiftConcernSD is the overstatement of the pooled estimate, in
// standard-deviation units, shown by adding registry results, from which
// Grade reports a serious concern: half of the conventional "small"
// standardized effect of 0.2 (Cohen, Statistical Power Analysis for the
// Behavioral Sciences, 2nd ed., 1988). The threshold is a choice of this
// package, not a published standard; review teams may judge otherwise.
const ShiftConcernSD = 0.1

// MissingShareConcern is the share of randomized participants in eligible
// trials that posted no results from which Grade never reports "no serious
// concern" and reports a serious one (a choice of this package, not a
// published standard).
const MissingShareConcern = 0.20

// RegistryEvidence is what the registry says about a review, on the
// oriented scale: Overstatement = favourable · (published - augmented) /
// SD, positive when the published-only analysis overstates the benefit,
// with its confidence interval (nil when it could not be estimated); all
// nil when no registry trial was added. MissingShare is the share of
// randomized participants in eligible registered trials that posted no
// results (nil when there are none or it is unknown). PublishedWithoutN
// counts the published studies that give no group sizes and so are left
// out of the share's denominator: with any, the share is an upper bound.
type RegistryEvidence struct {
	Overstatement, CILow, CIHigh *float64
	MissingShare                 *float64
	PublishedWithoutN            int
}

// GradeInput is the evidence Grade combines. Nil pointers mean the method
// was not run or failed.
type GradeInput struct {
	// K is the number of studies in the meta-analysis.
	K int
	// Direction is the sign of a favourable effect (+1 higher is better,
	// -1 lower); 0 means unknown, and then no test can count as pointing
	// to missing unfavourable studies.
	Direction float64
	Egger     *Regression
	Begg      *RankCorrelation
	TrimFill  *TrimFillResult
	Selection *SelectionResult
	Registry  RegistryEvidence
	// Estimate is the fixed-effect estimate of the published studies, in
	// effect units, compared with trim-and-fill's filled fixed-effect
	// estimate in Reasons.
	Estimate float64
}

// GradeHint is a suggestion for the publication-bias domain of a GRADE
// assessment, with the reasons behind it and cautions that always apply.
type GradeHint struct {
	Level    string
	Reasons  []string
	Cautions []string
}

// Grade combines the publication-bias evidence into a hint for the GRADE
// domain "publication bias" (Guyatt et al. 2011, GRADE guidelines 5, J Clin
// Epidemiol 64:1277-1282). Every figure is oriented so that positive means
// the published evidence overstates the benefit. The rule:
//
//   - Registry comparison (direct evidence): an overstatement of at least
//     ShiftConcernSD (0.1 SD) gives "serious concern". The registry
//     reassures only when the upper limit of the overstatement's interval
//     is below 0.1 SD (an understatement counts as reassuring only under
//     the same condition); without an interval it cannot reassure.
//   - Missing evidence: when MissingShare >= MissingShareConcern (20%) the
//     hint is "serious concern", never "no serious concern".
//   - Tests count only with K >= 10 studies (Cochrane Handbook ch. 13;
//     Sterne et al. 2011, BMJ 343:d4002) and only in the direction of
//     missing unfavourable small studies: Egger's regression with p < 0.10
//     and its coefficient in the benefit direction, the rank correlation
//     test likewise, the selection model's likelihood-ratio test with p < 0.10
//     and its weights below 1 (see direction.go). Any such flag gives
//     "serious concern"; asymmetry the other way is reported, not counted.
//   - Otherwise the hint is "no serious concern" when the registry
//     reassures or at least one test could count and none flagged, and
//     "cannot assess" when neither holds.
//
// Trim-and-fill is reported in Reasons (how many studies it imputes, on
// which side, and how the estimate moves) but never decides, because it is
// an adjustment under strong assumptions, not a test. Cautions always say
// that funnel asymmetry is not proof of bias, that registry results are not
// peer reviewed, and that the judgement belongs to the review team.
func Grade(in GradeInput) GradeHint {
	h := GradeHint{Cautions: []string{
		"funnel-plot asymmetry is not proof of publication bias: heterogeneity, chance, genuine small-study effects and artefacts of the effect measure can cause it",
		"registry results are posted by the sponsors and are not peer reviewed",
		"this is a hint; the judgement belongs to the review team, their GRADE assessment and local practice",
	}}
	serious, reassured := false, false
	r := in.Registry
	if r.Overstatement != nil {
		o := *r.Overstatement
		ci := "no interval could be estimated"
		if r.CILow != nil && r.CIHigh != nil {
			ci = fmt.Sprintf("interval %.2f to %.2f SD", *r.CILow, *r.CIHigh)
		}
		switch {
		case o >= ShiftConcernSD:
			serious = true
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"adding registry results shows the published studies overstate the benefit by %.2f SD (%s; at least %.2f SD)", o, ci, ShiftConcernSD))
		case r.CIHigh != nil && *r.CIHigh < ShiftConcernSD:
			reassured = true
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"adding registry results: overstatement of the benefit %.2f SD (%s, below %.2f SD)", o, ci, ShiftConcernSD))
		default:
			// Below the threshold: three decimals where two would round up
			// to it ("0.10 SD, but 0.10 SD or more cannot be ruled out").
			val := fmt.Sprintf("%.2f", o)
			if val == fmt.Sprintf("%.2f", ShiftConcernSD) {
				val = fmt.Sprintf("%.3f", o)
			}
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"adding registry results: overstatement of the benefit %s SD, but an overstatement of %.2f SD or more cannot be ruled out (%s)", val, ShiftConcernSD, ci))
		}
	} else {
		h.Reasons = append(h.Reasons, "no registry results were added, so the registry gives no direct comparison")
	}
	if r.MissingShare != nil {
		m := *r.MissingShare
		share, bound := fmt.Sprintf("%.0f%%", 100*m), ""
		if r.PublishedWithoutN > 0 {
			share = "at most " + share
			bound = fmt.Sprintf("; %d published studies give no group sizes and are not counted", r.PublishedWithoutN)
		}
		if m >= MissingShareConcern {
			serious = true
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"%s of randomized participants are in eligible registered trials that posted no results (%.0f%% or more%s)", share, 100*MissingShareConcern, bound))
		} else {
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"%s of randomized participants are in eligible registered trials that posted no results (below %.0f%%%s)", share, 100*MissingShareConcern, bound))
		}
	}
	usable, flagged := 0, 0
	test := func(name string, p float64, towardBenefit bool) {
		if in.K < gradeMinK {
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"%s not counted: %d studies, fewer than %d (%s)", name, in.K, gradeMinK, analysis.PText(p)))
			return
		}
		usable++
		switch {
		case p < gradeAlpha && towardBenefit:
			flagged++
			h.Reasons = append(h.Reasons, fmt.Sprintf("%s suggests missing unfavourable small studies (%s, below %.2f; %d studies)", name, analysis.PText(p), gradeAlpha, in.K))
		case p < gradeAlpha:
			h.Reasons = append(h.Reasons, fmt.Sprintf("%s suggests asymmetry the other way, not missing unfavourable studies (%s; %d studies; not counted as a concern)", name, analysis.PText(p), in.K))
		default:
			h.Reasons = append(h.Reasons, fmt.Sprintf("%s does not suggest asymmetry (%s; %d studies)", name, analysis.PText(p), in.K))
		}
	}
	if in.Egger != nil {
		test("Egger's test regressed on SE", in.Egger.P, SmallStudiesFavourable(*in.Egger, in.Direction))
	}
	if in.Begg != nil {
		test("the rank correlation test (Begg & Mazumdar 1994)", in.Begg.P, RankFavourable(*in.Begg, in.Direction))
	}
	if in.Selection != nil && in.Selection.Converged {
		test("the selection model's likelihood-ratio test", in.Selection.LRTP, SelectsFavourable(*in.Selection))
	}
	if in.TrimFill != nil {
		tf := in.TrimFill
		if tf.K0 > 0 {
			side := "the unfavourable side"
			if !FilledUnfavourable(*tf, in.Direction) {
				side = "the favourable side"
			}
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"trim-and-fill (%s) imputes %d studies on the %s (%s); the fixed-effect estimate moves from %.3g to %.3g (random effects of the filled data: %.3g) (not used for the hint)",
				tf.Estimator, tf.K0, tf.Side, side, in.Estimate, tf.FixedEstimate, tf.RandomEstimate))
		} else {
			h.Reasons = append(h.Reasons, fmt.Sprintf("trim-and-fill (%s) imputes no studies (not used for the hint)", tf.Estimator))
		}
	}
	switch {
	case serious || flagged > 0:
		h.Level = GradeSerious
	case reassured || usable > 0:
		h.Level = GradeNoConcern
	default:
		h.Level = GradeCannotAssess
		h.Reasons = append(h.Reasons, fmt.Sprintf(
			"no conclusive registry comparison and too few studies (%d) or no test result to judge asymmetry", in.K))
	}
	return h
}
