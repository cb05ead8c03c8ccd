package compare

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"unshelved/analysis"
	"unshelved/compare/terms"
	"unshelved/ingest"
)

// Which reading of a record HarmonizeOptions.Prefer asks for.
const (
	PreferAnalysis = "analysis" // the posted adjusted analysis when the arms are model-adjusted means (default)
	PreferArms     = "arms"     // the arm-based result whenever the arms give one
)

// HarmonizeOptions choose between readings of a registry record. The zero
// value prefers the posted analysis and refuses records that are not
// randomized.
type HarmonizeOptions struct {
	// Prefer is PreferAnalysis ("" means the same) or PreferArms.
	Prefer string
	// AllowNonrandomized uses a link to a not-randomized or crossover
	// record (flagged) instead of refusing it.
	AllowNonrandomized bool
}

// seDifferenceWarn is the relative difference between the arm-based SE and
// the posted analysis's SE above which a link is flagged (common practice,
// no source: beyond what rounding of posted SEs explains, and large enough
// to change a trial's weight noticeably).
const seDifferenceWarn = 0.20

// smallGroupN: when either group is smaller, the SE from a posted CI of a
// difference uses t on n1 + n2 - 2 degrees of freedom instead of z
// (Cochrane Handbook section 6.5.2.3, which says 60 per group).
const smallGroupN = 60

// PostedComparison is a record's own between-group analysis of exactly
// the linked groups, as posted and as read, beside the arm-based result.
type PostedComparison struct {
	AnalysisIndex int      `json:"analysis_index"` // position among the outcome's analyses
	ParamType     string   `json:"param_type"`
	Method        string   `json:"method"`
	Estimate      float64  `json:"estimate"` // as posted, in the record's unit and direction
	CILower       *float64 `json:"ci_lower"`
	CIUpper       *float64 `json:"ci_upper"`
	CILevelPct    *float64 `json:"ci_level_pct"`
	SEPosted      *float64 `json:"se_posted"`
	// Effect and SE are the estimate read as the review's effect
	// (direction, unit, flip); nil when the analysis cannot be read.
	Effect   *float64 `json:"effect"`
	SE       *float64 `json:"se"`
	SESource string   `json:"se_source,omitempty"` // se_posted, se_from_ci_t or se_from_ci_normal
	// Direction says what established the estimate's direction.
	Direction         string `json:"direction"`
	DirectionConflict bool   `json:"direction_conflict"`
	// ArmsEffect and ArmsSE are the arm-based result on the same measure,
	// nil when the arms give none; SERatio is ArmsSE / SE.
	ArmsEffect *float64 `json:"arms_effect"`
	ArmsSE     *float64 `json:"arms_se"`
	SERatio    *float64 `json:"se_ratio"`
	Used       bool     `json:"used"`
	Why        string   `json:"why"` // why it was used or not
}

// postedReading is a posted analysis read as the review's effect.
type postedReading struct {
	cmp      PostedComparison
	effect   float64
	seEffect float64
	treatN   int
	ctrlN    int
	derivs   []analysis.Derivation
	paired   bool   // the analysis is a paired (within-participant) difference
	refused  string // why it cannot be used ("" when it can)
	// refusedDirection: refused because its direction is unknown.
	refusedDirection bool
	conflict         string // the direction_conflict flag text, when raised
}

// meanDifferenceParam reports whether an analysis's free-text parameter
// type is a difference of means ("Mean Difference (Final Values)", "LS Mean
// Difference", "Difference of LS Mean", "Difference").
func meanDifferenceParam(pt string) bool {
	pt = strings.ToLower(strings.TrimSpace(pt))
	if strings.Contains(pt, "percent") || strings.Contains(pt, "median") || strings.Contains(pt, "ratio") || strings.Contains(pt, "risk") {
		return false
	}
	return strings.Contains(pt, "mean difference") || strings.Contains(pt, "difference of ls mean") ||
		strings.Contains(pt, "difference of least squares") || strings.Contains(pt, "difference in mean") ||
		strings.Contains(pt, "difference of mean") || pt == "difference" || strings.Contains(pt, "ls mean difference")
}

// analysisRowDays returns the visit time an analysis names in its texts
// ("Change from baseline at Week 12"), in days, or -1.
func analysisRowDays(a ingest.Analysis) float64 {
	for _, text := range []string{a.GroupDescription, a.StatisticalComment, a.EstimateComment, a.OtherDescription} {
		if tf := terms.ParseTimeFrame(text); tf.Usable() && !tf.UpTo && len(tf.Days) == 1 {
			return tf.Days[0]
		}
	}
	return -1
}

// findPostedAnalysis returns the index of the outcome's between-group
// mean-difference analysis of exactly groups tg and cg for the chosen row,
// or -1. With several rows (visits) the analysis must name the row's time.
func findPostedAnalysis(o *ingest.Outcome, class int, tg, cg string) int {
	rowDays := -1.0
	if len(o.Classes) > 1 {
		tf := terms.ParseTimeFrame(o.Classes[class].Title)
		if !tf.Usable() || len(tf.Days) != 1 {
			return -1
		}
		rowDays = tf.Days[0]
	}
	for i, a := range o.Analyses {
		if len(a.GroupIDs) != 2 || !(a.GroupIDs[0] == tg && a.GroupIDs[1] == cg || a.GroupIDs[0] == cg && a.GroupIDs[1] == tg) {
			continue
		}
		if !meanDifferenceParam(a.ParamType) || !a.ParamValue.OK {
			continue
		}
		if rowDays >= 0 && math.Abs(analysisRowDays(a)-rowDays) > 0.5 {
			continue
		}
		return i
	}
	return -1
}

// readPostedAnalysis reads the posted between-group analysis of the link's
// two groups (one experimental, one comparator group) as the review's
// effect: direction by analysisDirection, SE from the posted SE or from the
// CI at its posted level (t on n1 + n2 - 2 df when either group is under
// 60), the unit converted and the sign flipped as for the arms. It returns
// nil when the record posts no such analysis.
func readPostedAnalysis(rv ingest.Review, t ingest.Trial, o *ingest.Outcome, class, cat int, l ingest.Link, conv *terms.UnitConversion) *postedReading {
	if len(l.TreatGroups) != 1 || len(l.CtrlGroups) != 1 {
		return nil
	}
	tg, cg := l.TreatGroups[0], l.CtrlGroups[0]
	ai := findPostedAnalysis(o, class, tg, cg)
	if ai < 0 {
		return nil
	}
	a := o.Analyses[ai]
	r := &postedReading{cmp: PostedComparison{AnalysisIndex: ai, ParamType: a.ParamType, Method: a.Method, Estimate: a.ParamValue.Value}}
	if a.CILower.OK && a.CIUpper.OK {
		r.cmp.CILower, r.cmp.CIUpper = analysis.FiniteOrNil(a.CILower.Value), analysis.FiniteOrNil(a.CIUpper.Value)
	}
	if a.CIPct.OK {
		r.cmp.CILevelPct = analysis.FiniteOrNil(a.CIPct.Value)
	}
	seKnown := strings.EqualFold(a.DispersionType, "STANDARD_ERROR_OF_MEAN") && a.DispersionValue.OK && a.DispersionValue.Value > 0
	if seKnown {
		r.cmp.SEPosted = analysis.FiniteOrNil(a.DispersionValue.Value)
	}
	r.paired = pairedText(a)
	r.treatN, _ = groupN(o, class, tg)
	r.ctrlN, _ = groupN(o, class, cg)

	est := a.ParamValue.Value
	posted := analysis.Derivation{
		Method:  "posted_analysis",
		Formula: "the record's between-group analysis of the linked groups, as posted",
		Inputs:  postedInputs(a),
		Source:  "registry analysis " + fmt.Sprint(ai) + ": " + strings.TrimSpace(a.ParamType+"; "+a.Method),
	}
	r.derivs = append(r.derivs, posted)
	if why := ciOffCentre(a); why != "" {
		r.refused = why
		return r
	}

	var seEst float64
	switch {
	case seKnown:
		seEst = a.DispersionValue.Value
		r.cmp.SESource = "se_posted"
		r.derivs = append(r.derivs, analysis.Derivation{Method: "se_posted", Formula: "se = posted standard error of the between-group estimate",
			Inputs: []analysis.NamedValue{{Name: "se_posted", Value: seEst}}, Output: []analysis.NamedValue{{Name: "se", Value: seEst}}})
	case a.CILower.OK && a.CIUpper.OK && a.CIPct.OK && a.CIPct.Value > 0 && a.CIPct.Value < 100 && !strings.EqualFold(a.CISides, "ONE_SIDED"):
		df := 0
		if r.treatN > 0 && r.ctrlN > 0 && (r.treatN < smallGroupN || r.ctrlN < smallGroupN) {
			df = r.treatN + r.ctrlN - 2
		}
		v, d, err := analysis.SEFromCI(a.CILower.Value, a.CIUpper.Value, a.CIPct.Value/100, df)
		if err != nil {
			r.refused = fmt.Sprintf("its confidence interval %s to %s cannot give an SE: %v", a.CILower.Text, a.CIUpper.Text, err)
			return r
		}
		if df > 0 {
			d.Assumption += fmt.Sprintf("; t on n1 + n2 - 2 = %d df because a group has fewer than %d participants (Cochrane Handbook 6.5.2)", df, smallGroupN)
		}
		seEst, r.cmp.SESource = v, d.Method
		r.derivs = append(r.derivs, d)
	default:
		r.refused = "it posts neither a standard error nor a two-sided confidence interval with its level"
		return r
	}

	dir := analysisDirection(o, class, cat, a, tg, cg)
	r.cmp.Direction = dir.why
	if dir.sign == 0 {
		r.refused, r.refusedDirection = dir.why, true
		return r
	}
	if dir.conflict {
		r.cmp.DirectionConflict = true
		r.conflict = "direction_conflict: " + dir.why
	}
	r.derivs = append(r.derivs, analysis.Derivation{
		Method:  "between_group_analysis",
		Formula: "effect = sign * posted estimate, oriented experimental minus comparator",
		Inputs:  []analysis.NamedValue{{Name: "posted_estimate", Value: est}, {Name: "sign", Value: dir.sign}},
		Output:  []analysis.NamedValue{{Name: "effect", Value: dir.sign * est}},
		Source:  dir.why,
	})
	est *= dir.sign
	if conv != nil {
		// A difference converts by the scale alone; an offset cancels.
		before, beforeSE := est, seEst
		est *= conv.Scale
		seEst *= math.Abs(conv.Scale)
		r.derivs = append(r.derivs, analysis.Derivation{Method: "unit_conversion",
			Formula: fmt.Sprintf("difference_%s = %g * difference_%s; SE scales by %g", conv.To, conv.Scale, conv.From, math.Abs(conv.Scale)),
			Inputs:  []analysis.NamedValue{{Name: "effect", Value: before}, {Name: "se", Value: beforeSE}},
			Output:  []analysis.NamedValue{{Name: "effect", Value: est}, {Name: "se", Value: seEst}},
			Source:  conv.Source})
	}
	if l.Flip {
		r.derivs = append(r.derivs, flipStep(est))
		est = -est
	}
	r.effect, r.seEffect = est, seEst
	r.cmp.Effect, r.cmp.SE = analysis.FiniteOrNil(est), analysis.FiniteOrNil(seEst)
	return r
}

// ciOffCentre says why a posted two-sided confidence interval does not
// fit its mean-difference estimate, or "" when it does. A difference's
// interval is symmetric about it, so its centre is the estimate up to the
// rounding of the three numbers as posted, plus 5% of the half-width
// (common practice, no source). One that is not (an estimate outside its
// interval, or an interval about the estimate with the other sign) cannot
// be read in either direction.
func ciOffCentre(a ingest.Analysis) string {
	if !a.CILower.OK || !a.CIUpper.OK || strings.EqualFold(a.CISides, "ONE_SIDED") || a.CIUpper.Value < a.CILower.Value {
		return ""
	}
	half := func(n ingest.Num) float64 { return 0.5 * math.Pow(10, -float64(textDecimals(n.Text))) }
	centre := (a.CILower.Value + a.CIUpper.Value) / 2
	halfWidth := (a.CIUpper.Value - a.CILower.Value) / 2
	tol := (half(a.CILower)+half(a.CIUpper))/2 + half(a.ParamValue) + 0.05*halfWidth + 1e-9
	if math.Abs(centre-a.ParamValue.Value) <= tol {
		return ""
	}
	return fmt.Sprintf("its estimate %s is not at the centre of its confidence interval %s to %s (centre %s): estimate and interval may be oriented differently; check the record",
		a.ParamValue.Text, a.CILower.Text, a.CIUpper.Text, strconv.FormatFloat(centre, 'g', 6, 64))
}

// postedInputs lists the posted numbers of an analysis that are present
// (JSON has no NaN, so a missing one is left out).
func postedInputs(a ingest.Analysis) []analysis.NamedValue {
	out := []analysis.NamedValue{{Name: "estimate", Value: a.ParamValue.Value}}
	for _, x := range []struct {
		name string
		n    ingest.Num
	}{{"ci_lower", a.CILower}, {"ci_upper", a.CIUpper}, {"ci_level_pct", a.CIPct}, {"se_posted", a.DispersionValue}} {
		if x.n.OK {
			out = append(out, analysis.NamedValue{Name: x.name, Value: x.n.Value})
		}
	}
	return out
}

// flipStep records a sign reversal with the value before and after.
func flipStep(before float64) analysis.Derivation {
	return analysis.Derivation{
		Method:  "sign_flip",
		Formula: "effect = -effect (the registry measure runs opposite to the review's outcome)",
		Inputs:  []analysis.NamedValue{{Name: "effect", Value: before}},
		Output:  []analysis.NamedValue{{Name: "effect", Value: -before}},
	}
}

// armsAdjusted reports whether an outcome's arm values are least-squares
// or otherwise model-adjusted means, and says how that was told.
func armsAdjusted(o *ingest.Outcome) (bool, string) {
	if strings.EqualFold(o.ParamType, "LEAST_SQUARES_MEAN") {
		return true, "the arms are least-squares means"
	}
	text := strings.ToLower(o.Title + " " + o.Description + " " + o.Population)
	for _, w := range []string{"least squares", "least-squares", "ls mean", "adjusted mean", "model-based", "model based",
		"estimated marginal mean", "mmrm", "mixed model for repeated", "ancova"} {
		if strings.Contains(text, w) {
			return true, fmt.Sprintf("the outcome describes its values as model-based (%q)", w)
		}
	}
	return false, ""
}

// chooseReading picks the effect of a link from the arm-based result
// (armsSE, or armsErr when the arms give none) and the posted analysis
// (posted, nil when none), records the comparison, and adds the flags.
func chooseReading(rv ingest.Review, t ingest.Trial, o *ingest.Outcome, l ingest.Link, opts HarmonizeOptions, base, armsSE StudyEffect, armsErr error,
	posted *postedReading, rowDerivs []analysis.Derivation, postedFlags []string) (StudyEffect, error) {
	smd := strings.EqualFold(rv.Measure, "SMD")
	armsOK := armsErr == nil
	if posted == nil {
		if !armsOK {
			return base, armsErr
		}
		return withSDChoice(rv, o, armsSE, nil), nil
	}
	cmp := posted.cmp
	if armsOK {
		cmp.ArmsEffect, cmp.ArmsSE = analysis.FiniteOrNil(armsSE.Effect), analysis.FiniteOrNil(armsSE.SE)
		if posted.refused == "" && posted.seEffect > 0 {
			cmp.SERatio = analysis.FiniteOrNil(armsSE.SE / posted.seEffect)
		}
	}
	adjusted, adjWhy := armsAdjusted(o)
	crossover := strings.EqualFold(strings.TrimSpace(t.InterventionModel), "CROSSOVER")
	useAnalysis := false
	switch {
	case smd:
		cmp.Why = "not used: the review's measure is an SMD; the posted analysis is a mean difference whose SE reflects the model's residual SD"
	case posted.refused != "":
		cmp.Why = "not used: " + posted.refused
	case posted.paired && crossover:
		useAnalysis, cmp.Why = true, "used: the paired (within-participant) difference of a crossover record"
	case !armsOK:
		useAnalysis, cmp.Why = true, "used: the arms give no effect ("+armsErr.Error()+")"
	case !adjusted:
		cmp.Why = "not used: the arms are raw means, which give the effect directly"
	case opts.Prefer == PreferArms:
		cmp.Why = "not used: the arm-based result was asked for (--prefer arms); " + adjWhy
	default:
		useAnalysis, cmp.Why = true, "used: "+adjWhy+" and the record posts its adjusted analysis of exactly these groups (--prefer analysis)"
	}
	if crossover && !(useAnalysis && posted.paired) && !opts.AllowNonrandomized {
		return base, reject(ReasonCrossover, "%s: crossover design and the posted paired analysis cannot be used (%s)", t.TrialID, cmp.Why)
	}
	var seFlag string
	if cmp.SERatio != nil && math.Abs(*cmp.SERatio-1) > seDifferenceWarn {
		seFlag = fmt.Sprintf("SE from the arms (%.4g) and from the posted analysis (%.4g) differ by %.0f%%", armsSE.SE, posted.seEffect, 100*math.Abs(*cmp.SERatio-1))
	}
	cmp.Used = useAnalysis
	if !useAnalysis {
		if !armsOK {
			if posted.refused != "" {
				reason := ReasonDispersion
				if posted.refusedDirection {
					reason = ReasonDirection
				}
				return base, reject(reason, "%s; the posted between-group analysis cannot replace the arms: %s", armsErr.Error(), posted.refused)
			}
			return base, armsErr
		}
		out := armsSE
		out.Derivations = append(append([]analysis.Derivation(nil), out.Derivations...), posted.derivs[0])
		out.Derivations[len(out.Derivations)-1].Assumption = cmp.Why
		if seFlag != "" && !smd {
			out.Flags = append(out.Flags, seFlag)
		}
		c := cmp
		out.PostedAnalysis = &c
		return withSDChoice(rv, o, out, &c), nil
	}
	out := base
	out.Derivations = append(append([]analysis.Derivation(nil), rowDerivs...), posted.derivs...)
	out.Derivations[len(rowDerivs)].Assumption = cmp.Why
	if armsOK {
		out.Derivations = append(out.Derivations, analysis.Derivation{
			Method:     "arm_based_result",
			Formula:    "the effect from the arms, kept beside the posted analysis (not used)",
			Inputs:     []analysis.NamedValue{{Name: "treat_n", Value: float64(armsSE.TreatN)}, {Name: "ctrl_n", Value: float64(armsSE.CtrlN)}},
			Output:     []analysis.NamedValue{{Name: "effect", Value: armsSE.Effect}, {Name: "se", Value: armsSE.SE}},
			Assumption: "model-adjusted arm means are not independent and their SEs are rounded, so sqrt(SE1² + SE2²) misstates the SE of their difference",
		})
	}
	out.Effect, out.SE = posted.effect, posted.seEffect
	out.TreatN, out.CtrlN = posted.treatN, posted.ctrlN
	out.PooledSD = armsSE.PooledSD
	flags := append(append([]string(nil), postedFlags...), changeFlags(rv, o)...)
	flags = append(flags, "from the posted between-group analysis ("+strings.TrimSpace(cmp.ParamType+", "+cmp.Method)+"), not the arms")
	if posted.conflict != "" {
		flags = append(flags, posted.conflict)
	}
	if seFlag != "" {
		flags = append(flags, seFlag)
	}
	out.Flags = dedupe(flags)
	out.ConvertedFrom = "between_group_analysis"
	c := cmp
	out.PostedAnalysis = &c
	return out, nil
}

// withSDChoice adds, for SMD reviews, a step saying which SD standardised
// the difference and why.
func withSDChoice(rv ingest.Review, o *ingest.Outcome, e StudyEffect, cmp *PostedComparison) StudyEffect {
	if !strings.EqualFold(rv.Measure, "SMD") {
		return e
	}
	from := map[string]string{
		"STANDARD_DEVIATION":   "the posted standard deviations",
		"STANDARD_ERROR":       "SD = SE sqrt(n) from the posted standard errors",
		"INTER_QUARTILE_RANGE": "SDs estimated from the quartiles",
		"FULL_RANGE":           "SDs estimated from the ranges",
	}[o.Dispersion]
	if from == "" {
		from = "SDs from the posted confidence intervals of the group means"
	}
	why := "the between-participant SD of each arm is what a standardized mean difference divides by"
	if adj, _ := armsAdjusted(o); adj && o.Dispersion == "STANDARD_ERROR" {
		why += "; the arms are model-adjusted, so SE sqrt(n) approximates it"
	}
	if cmp != nil {
		why += "; the posted analysis's SE is not used for the SD because an adjusted model's SE reflects the residual SD, which would inflate the SMD"
	}
	d := analysis.Derivation{
		Method:     "sd_choice",
		Formula:    "SMD standardised by the pooled SD of the two arms (" + from + ")",
		Inputs:     []analysis.NamedValue{{Name: "treat_n", Value: float64(e.TreatN)}, {Name: "ctrl_n", Value: float64(e.CtrlN)}},
		Output:     []analysis.NamedValue{{Name: "sd_pooled", Value: e.PooledSD}},
		Assumption: why,
	}
	e.Derivations = append(append([]analysis.Derivation(nil), e.Derivations...), d)
	return e
}

// direction is what analysisDirection found.
type direction struct {
	sign     float64 // +1: the estimate runs experimental minus comparator; -1: the other way; 0: unknown (refuse)
	stated   bool
	conflict bool
	why      string
}

// analysisDirection applies the direction rules to a posted estimate:
//
//  1. an explicit statement in the record decides: the estimate comment,
//     the group description, the parameter type, the statistical comment
//     or the other-analysis description naming the groups around "minus",
//     "versus", "vs" or " - " (statedSign);
//  2. raw group values of the row may confirm it; when they disagree, the
//     statement wins and the link is flagged direction_conflict;
//  3. with no statement, raw values that agree with the estimate's sign
//     confirm it (+1); raw values that disagree, or none, leave the
//     direction unknown (0) and the analysis is refused. An adjusted
//     difference can differ in sign from raw means, so raw values alone
//     never flip a posted analysis.
//
// An estimate of exactly 0 needs no direction.
func analysisDirection(o *ingest.Outcome, class, cat int, a ingest.Analysis, tg, cg string) direction {
	est := a.ParamValue.Value
	stated := directionStatements(o, a, tg, cg)
	var sign float64
	var where, text string
	if len(stated) > 0 {
		sign, where, text = stated[0].sign, stated[0].where, stated[0].text
	}
	diff, rawOK := rawDifference(o, class, cat, tg, cg)
	if est == 0 {
		return direction{sign: 1, stated: sign != 0, why: "the posted estimate is 0: its direction does not matter"}
	}
	for _, s := range stated {
		if s.sign != sign {
			return direction{why: fmt.Sprintf("direction unknown: the record's statements contradict each other: %q in its %s puts %s first, %q in its %s puts %s first; neither is guessed (check the record with its sponsor, or leave the trial out)",
				stated[0].clause, where, sideName(sign), s.clause, s.where, sideName(s.sign))}
		}
	}
	if sign != 0 {
		d := direction{sign: sign, stated: true, why: fmt.Sprintf("direction stated in the record's %s (%q)", where, text)}
		if rawOK && diff != 0 {
			if (diff > 0) == (sign*est > 0) {
				d.why += fmt.Sprintf("; the posted group values agree (experimental - comparator = %.4g)", diff)
			} else {
				d.conflict = true
				d.why += fmt.Sprintf("; the posted group values run the other way (experimental - comparator = %.4g), kept as stated: an adjusted estimate can differ in sign from raw means", diff)
			}
		}
		return d
	}
	switch {
	case rawOK && diff != 0 && (diff > 0) == (est > 0):
		return direction{sign: 1, why: fmt.Sprintf("no statement of direction in the record; the posted group values confirm it (experimental - comparator = %.4g, estimate %.4g)", diff, est)}
	case rawOK && diff != 0:
		return direction{why: fmt.Sprintf("direction unknown: the record does not state it and the posted group values (experimental - comparator = %.4g) disagree with the estimate's sign (%.4g); raw values never flip a posted analysis", diff, est)}
	default:
		return direction{why: "direction unknown: the record does not state which group is subtracted from which, and no group values confirm the estimate's sign"}
	}
}

// rawDifference is the experimental minus comparator difference of the
// posted group values in the chosen row.
func rawDifference(o *ingest.Outcome, class, cat int, tg, cg string) (float64, bool) {
	if class >= len(o.Classes) || cat >= len(o.Classes[class].Categories) {
		return 0, false
	}
	var mt, mc *ingest.Num
	for i, m := range o.Classes[class].Categories[cat].Measurements {
		switch m.GroupID {
		case tg:
			mt = &o.Classes[class].Categories[cat].Measurements[i].Value
		case cg:
			mc = &o.Classes[class].Categories[cat].Measurements[i].Value
		}
	}
	if mt == nil || mc == nil || !mt.OK || !mc.OK {
		return 0, false
	}
	return mt.Value - mc.Value, true
}

// Words that stand for either side of a comparison when a statement does
// not use the group titles ("Drug minus Placebo").
var (
	experimentalWords = []string{"drug", "active", "treatment", "experimental", "intervention", "investigational", "study drug", "test"}
	comparatorWords   = []string{"placebo", "vehicle", "sham", "control", "comparator", "usual care", "standard care", "pbo"}
	groupStopWords    = map[string]bool{"mg": true, "kg": true, "ml": true, "qw": true, "q2w": true, "q4w": true, "qd": true, "bid": true, "tid": true,
		"daily": true, "once": true, "twice": true, "weekly": true, "group": true, "arm": true, "dose": true, "the": true, "and": true, "with": true,
		"fas": true, "ss": true, "itt": true, "mitt": true, "pp": true, "set": true, "population": true}
	directionSeparators = []string{" minus ", " - ", " – ", " versus ", " vs. ", " vs ", " compared with ", " compared to "}
)

// statedSign reads a statement of the estimate's direction from the
// analysis's texts. It returns +1 when the statement puts the experimental
// group first ("Velmorazine 10 mg minus Placebo", "Drug minus Placebo"),
// -1 when it puts the comparator first, 0 when no text says; where names
// the field and text quotes it. It reports the first statement only;
// directionStatements lists them all.
func statedSign(o *ingest.Outcome, a ingest.Analysis, tg, cg string) (float64, string, string) {
	if s := directionStatements(o, a, tg, cg); len(s) > 0 {
		return s[0].sign, s[0].where, s[0].text
	}
	return 0, "", ""
}

// statement is one statement of direction found in a record.
type statement struct {
	sign                float64
	where, text, clause string // field, its whole text, the statement itself
}

// directionStatements lists every statement of the estimate's direction
// in the analysis's texts, in field order, each occurrence of each
// separator read, so that a record contradicting itself can be seen.
func directionStatements(o *ingest.Outcome, a ingest.Analysis, tg, cg string) []statement {
	tt, ct := groupTitle(o, tg), groupTitle(o, cg)
	fields := []struct{ name, text string }{
		{"estimate comment", a.EstimateComment}, {"group description", a.GroupDescription}, {"parameter type", a.ParamType},
		{"statistical comment", a.StatisticalComment}, {"analysis description", a.OtherDescription},
	}
	var out []statement
	for _, f := range fields {
		low := " " + strings.ToLower(strings.ReplaceAll(f.text, `\`, "")) + " "
		for _, sep := range directionSeparators {
			for from := 0; ; {
				j := strings.Index(low[from:], sep)
				if j < 0 {
					break
				}
				i := from + j
				from = i + len(sep)
				if i <= 0 {
					continue
				}
				left := clauseEnd(low[:i])
				right := clauseStart(low[i+len(sep):])
				if s := sideSign(left, right, tt, ct, a, tg); s != 0 {
					out = append(out, statement{s, f.name, strings.TrimSpace(f.text), strings.TrimSpace(left) + sep + strings.TrimSpace(right)})
				}
			}
		}
	}
	return out
}

// sideName names the group a statement of the given sign puts first.
func sideName(sign float64) string {
	if sign > 0 {
		return "the experimental group"
	}
	return "the comparator"
}

// clauseEnd keeps the part of s after its last clause break.
func clauseEnd(s string) string {
	if i := strings.LastIndexAny(s, ".;:(,"); i >= 0 {
		s = s[i+1:]
	}
	return " " + strings.TrimSpace(s) + " "
}

// clauseStart keeps the part of s before its first clause break.
func clauseStart(s string) string {
	if i := strings.IndexAny(s, ";:(),"); i >= 0 {
		s = s[:i]
	}
	if i := strings.Index(s, ". "); i >= 0 {
		s = s[:i]
	}
	return " " + strings.TrimSuffix(strings.TrimSpace(s), ".") + " "
}

// sideSign decides which group each side of a "left minus right"
// statement names.
func sideSign(left, right, tt, ct string, a ingest.Analysis, tg string) float64 {
	// Ordinal statements refer to the analysis's group order.
	first := containsAny(left, " first ", " 1st ", " group 1 ", " arm 1 ") && containsAny(right, " second ", " 2nd ", " group 2 ", " arm 2 ")
	second := containsAny(left, " second ", " 2nd ", " group 2 ", " arm 2 ") && containsAny(right, " first ", " 1st ", " group 1 ", " arm 1 ")
	if (first || second) && len(a.GroupIDs) == 2 {
		firstIsTreat := a.GroupIDs[0] == tg
		if first == firstIsTreat {
			return 1
		}
		return -1
	}
	lt, lc := namesGroup(left, tt, ct, true), namesGroup(left, ct, tt, false)
	rt, rc := namesGroup(right, tt, ct, true), namesGroup(right, ct, tt, false)
	switch {
	case lt && !lc && rc && !rt:
		return 1
	case lc && !lt && rt && !rc:
		return -1
	}
	return 0
}

func containsAny(s string, subs ...string) bool {
	for _, x := range subs {
		if strings.Contains(s, x) {
			return true
		}
	}
	return false
}

// namesGroup reports whether side (lower case, padded with spaces) names
// the group titled title rather than the one titled other: the whole
// title, a distinctive word of it (one the other title lacks), or a
// generic word for its role when the title itself does not name the
// other role.
func namesGroup(side, title, other string, experimental bool) bool {
	if title == "" {
		return false
	}
	if other != title && strings.Contains(other, title) && strings.Contains(side, other) {
		// "Ointment Vehicle" names the vehicle group, not "Ointment".
		return false
	}
	if strings.Contains(side, " "+title+" ") || strings.Contains(side, title) && len(title) > 3 {
		return true
	}
	otherWords := map[string]bool{}
	for _, w := range titleWords(other) {
		otherWords[w] = true
	}
	for _, w := range titleWords(title) {
		if !otherWords[w] && strings.Contains(side, " "+w+" ") {
			return true
		}
	}
	roleWords, againstWords := experimentalWords, comparatorWords
	if !experimental {
		roleWords, againstWords = comparatorWords, experimentalWords
	}
	titleIsOther := false
	for _, w := range againstWords {
		if strings.Contains(" "+title+" ", " "+w+" ") {
			titleIsOther = true
		}
	}
	if experimental {
		// An experimental group whose title is a comparator word
		// ("Placebo") cannot be named by "drug".
		for _, w := range comparatorWords {
			if strings.Contains(" "+title+" ", " "+w+" ") {
				titleIsOther = true
			}
		}
	}
	if titleIsOther {
		return false
	}
	for _, w := range roleWords {
		if strings.Contains(side, " "+w+" ") {
			return true
		}
	}
	return false
}

// titleWords are the distinctive words of a group title: letters only,
// three or more characters, no dose or population tags.
func titleWords(title string) []string {
	var out []string
	for _, w := range strings.FieldsFunc(title, func(r rune) bool { return !(r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '-') }) {
		if len(w) < 3 || groupStopWords[w] || strings.IndexFunc(w, func(r rune) bool { return r >= 'a' && r <= 'z' }) < 0 {
			continue
		}
		out = append(out, w)
	}
	return out
}

// groupTitle is a group's title, lower case, without a trailing
// population tag such as "(FAS)".
func groupTitle(o *ingest.Outcome, id string) string {
	for _, g := range o.Groups {
		if g.ID == id {
			t := strings.ToLower(strings.TrimSpace(g.Title))
			if i := strings.LastIndex(t, " ("); i > 0 && strings.HasSuffix(t, ")") {
				t = strings.TrimSpace(t[:i])
			}
			return t
		}
	}
	return ""
}

// pairedText reports whether an analysis describes a paired
// (within-participant) difference, as a crossover trial's analysis must.
func pairedText(a ingest.Analysis) bool {
	text := strings.ToLower(a.Method + " " + a.ParamType + " " + a.GroupDescription + " " + a.StatisticalComment + " " + a.OtherDescription)
	return containsAny(text, "paired", "within-subject", "within subject", "within-participant", "within participant", "within-patient", "crossover", "cross-over", "period effect")
}

// Design classes of a registry record (StudyEffect.Design).
const (
	DesignRandomized    = "randomized"
	DesignNotRandomized = "not-randomized"
	DesignCrossover     = "crossover"
)

// DesignOf classes a record's design for pooling with randomized parallel
// trials: not-randomized (allocation NON_RANDOMIZED, a single-group or
// observational record, allocation NA), crossover (intervention model
// CROSSOVER, unless the record posts a paired analysis of the link's
// groups), else randomized (including records that do not state their
// allocation, which matching already marks down). why says what decided.
func DesignOf(t ingest.Trial, o *ingest.Outcome, l ingest.Link) (class, why string) {
	alloc := strings.ToUpper(strings.TrimSpace(t.Allocation))
	model := strings.ToUpper(strings.TrimSpace(t.InterventionModel))
	st := strings.ToUpper(strings.TrimSpace(t.StudyType))
	switch {
	case st != "" && st != "INTERVENTIONAL":
		return DesignNotRandomized, fmt.Sprintf("not an interventional trial (study type %s)", t.StudyType)
	case alloc == "NON_RANDOMIZED":
		return DesignNotRandomized, "allocation is not randomized (NON_RANDOMIZED)"
	case model == "SINGLE_GROUP" || alloc == "NA":
		return DesignNotRandomized, fmt.Sprintf("single-group design (allocation %s, model %s): its groups are cohorts, not randomized arms", dashIfEmpty(t.Allocation), dashIfEmpty(t.InterventionModel))
	case model == "CROSSOVER":
		if o != nil && len(l.TreatGroups) == 1 && len(l.CtrlGroups) == 1 {
			for _, a := range o.Analyses {
				if len(a.GroupIDs) == 2 && meanDifferenceParam(a.ParamType) && pairedText(a) &&
					(a.GroupIDs[0] == l.TreatGroups[0] && a.GroupIDs[1] == l.CtrlGroups[0] || a.GroupIDs[1] == l.TreatGroups[0] && a.GroupIDs[0] == l.CtrlGroups[0]) {
					return DesignRandomized, "crossover design with a posted paired analysis of the linked groups"
				}
			}
		}
		return DesignCrossover, "crossover design: the groups' values are periods of the same participants, not independent arms"
	}
	return DesignRandomized, ""
}

func dashIfEmpty(s string) string {
	if s == "" {
		return "-"
	}
	return s
}
