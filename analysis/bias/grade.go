package bias

import (
	"fmt"
	"math"
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

// ShiftConcernSD is the shift of the pooled estimate, in standard-deviation
// units, caused by adding registry results, from which Grade reports a
// serious concern: half of the conventional "small" standardized effect of
// 0.2 (Cohen, Statistical Power Analysis for the Behavioral Sciences, 2nd
// ed., 1988). The threshold is a choice of this package, not a published
// standard; review teams may judge otherwise.
const ShiftConcernSD = 0.1

// GradeInput is the evidence Grade combines. Nil pointers mean the method
// was not run or failed.
type GradeInput struct {
	// K is the number of studies in the meta-analysis.
	K         int
	Egger     *Regression
	Begg      *RankCorrelation
	TrimFill  *TrimFillResult
	Selection *SelectionResult
	// ShiftSDUnits is the change in the pooled estimate, in SD units, when
	// registry results of unpublished trials are added; nil when unknown.
	ShiftSDUnits *float64
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
// Epidemiol 64:1277-1282). The rule:
//
//   - Registry evidence is direct: if ShiftSDUnits is known and
//     |shift| >= ShiftConcernSD (0.1 SD) the hint is "serious concern".
//   - Tests count only with K >= 10 studies (Cochrane Handbook ch. 13;
//     Sterne et al. 2011, BMJ 343:d4002). A test flags asymmetry when its
//     p value is below 0.10: Egger's regression (P), the rank
//     correlation (P), or the selection model's likelihood-ratio test
//     (LRTP, only if it converged). Any flag gives "serious concern".
//   - Otherwise, if the registry shift is known (and small) or at least one
//     test was usable and none flagged, the hint is "no serious concern".
//   - Otherwise (K < 10 and no registry shift, or no test available) it is
//     "cannot assess".
//
// Trim-and-fill is reported in Reasons (how many studies it imputes and how
// the estimate moves) but never decides, because it is an adjustment under
// strong assumptions, not a test. Cautions always say that funnel asymmetry
// is not proof of bias, that registry results are not peer reviewed, and
// that the judgement belongs to the review team.
func Grade(in GradeInput) GradeHint {
	h := GradeHint{Cautions: []string{
		"funnel-plot asymmetry is not proof of publication bias: heterogeneity, chance, genuine small-study effects and artefacts of the effect measure can cause it",
		"registry results are posted by the sponsors and are not peer reviewed",
		"this is a hint; the judgement belongs to the review team, their GRADE assessment and local practice",
	}}
	serious, reassured := false, false
	if in.ShiftSDUnits != nil {
		shift := *in.ShiftSDUnits
		if math.Abs(shift) >= ShiftConcernSD {
			serious = true
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"adding registry results shifts the pooled estimate by %.2f SD (at least %.2f SD)", shift, ShiftConcernSD))
		} else {
			reassured = true
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"adding registry results shifts the pooled estimate by %.2f SD (less than %.2f SD)", shift, ShiftConcernSD))
		}
	}
	usable, flagged := 0, 0
	test := func(name string, p float64) {
		if in.K < gradeMinK {
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"%s not counted: %d studies, fewer than %d (p = %.3g)", name, in.K, gradeMinK, p))
			return
		}
		usable++
		if p < gradeAlpha {
			flagged++
			h.Reasons = append(h.Reasons, fmt.Sprintf("%s suggests asymmetry (p = %.3g < %.2f, %d studies)", name, p, gradeAlpha, in.K))
		} else {
			h.Reasons = append(h.Reasons, fmt.Sprintf("%s does not suggest asymmetry (p = %.3g, %d studies)", name, p, in.K))
		}
	}
	if in.Egger != nil {
		test("Egger's test regressed on SE", in.Egger.P)
	}
	if in.Begg != nil {
		test("the rank correlation test (Begg & Mazumdar 1994)", in.Begg.P)
	}
	if in.Selection != nil && in.Selection.Converged {
		test("the selection model's likelihood-ratio test", in.Selection.LRTP)
	}
	if in.TrimFill != nil {
		tf := in.TrimFill
		if tf.K0 > 0 {
			h.Reasons = append(h.Reasons, fmt.Sprintf(
				"trim-and-fill (%s) imputes %d studies on the %s; the fixed-effect estimate moves from %.3g to %.3g (random effects of the filled data: %.3g) (not used for the hint)",
				tf.Estimator, tf.K0, tf.Side, in.Estimate, tf.FixedEstimate, tf.RandomEstimate))
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
			"no registry comparison and too few studies (%d) or no test result to judge asymmetry", in.K))
	}
	return h
}
