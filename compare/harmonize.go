package compare

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"unshelved/analysis"
	"unshelved/compare/terms"
	"unshelved/ingest"
)

// Where a study's effect came from.
const (
	OriginPublished = "published"
	OriginRegistry  = "registry"
)

// StudyEffect is one study's effect on the review's measure, ready to pool.
type StudyEffect struct {
	Study   string  `json:"study"`
	TrialID string  `json:"trial_id,omitempty"`
	Origin  string  `json:"origin"` // published or registry
	Effect  float64 `json:"effect"`
	SE      float64 `json:"se"` // standard error of Effect
	TreatN  int     `json:"treat_n,omitempty"`
	CtrlN   int     `json:"ctrl_n,omitempty"`
	// PooledSD is the within-study pooled SD of the two arms, in the
	// review's unit, when arm data were used (0 otherwise).
	PooledSD      float64 `json:"pooled_sd,omitempty"`
	ConvertedFrom string  `json:"converted_from"`
	// OutcomeIndex is the registry outcome used (registry effects only).
	OutcomeIndex *int                  `json:"outcome_index,omitempty"`
	OutcomeTitle string                `json:"outcome_title,omitempty"`
	Derivations  []analysis.Derivation `json:"derivations,omitempty"`
	Flags        []string              `json:"flags,omitempty"`
	// Design is the record's design class (registry effects only):
	// randomized, not-randomized or crossover (see DesignOf).
	Design string `json:"design,omitempty"`
	// PostedAnalysis is the record's own between-group analysis of the
	// linked groups, when it posts one, whether or not it was used.
	PostedAnalysis *PostedComparison `json:"posted_analysis,omitempty"`

	// armMeans are the two arms' means in the review's unit, before any
	// sign flip, when the effect came from arms (for recognising the same
	// trial among published studies).
	armMeans *[2]float64
}

// RejectError says why a registry outcome or a study cannot be used.
type RejectError struct {
	Reason string // short machine-friendly reason, e.g. "not-continuous"
	Detail string // a sentence for people
	Err    error  // the underlying error, if any (errors.Is/As reach it)
}

func (e *RejectError) Error() string { return e.Reason + ": " + e.Detail }

// Unwrap returns the underlying error, nil when the rejection has none.
func (e *RejectError) Unwrap() error { return e.Err }

// reject builds a *RejectError; an error among args (the last one, if
// several) becomes its Err.
func reject(reason, format string, args ...any) error {
	e := &RejectError{Reason: reason, Detail: fmt.Sprintf(format, args...)}
	for _, a := range args {
		if err, ok := a.(error); ok {
			e.Err = err
		}
	}
	return e
}

// Rejection reasons, stable for scripts.
const (
	ReasonNoOutcome     = "no-outcome"
	ReasonNotPosted     = "not-posted"
	ReasonNotContinuous = "not-continuous"
	ReasonNoData        = "no-data"
	ReasonAmbiguousRow  = "ambiguous-row"
	ReasonMissingGroup  = "missing-group"
	ReasonMissingValue  = "missing-value"
	ReasonMissingN      = "missing-n"
	ReasonDispersion    = "unusable-dispersion"
	ReasonUnit          = "incompatible-unit"
	ReasonBadValue      = "bad-value"
	ReasonIncluded      = "already-included"
	// ReasonDirection: a posted analysis whose direction nothing states
	// and whose raw group values run the other way.
	ReasonDirection = "direction-unknown"
	// ReasonNotRandomized and ReasonCrossover refuse a record whose
	// design cannot be pooled as randomized evidence (DesignOf), unless
	// HarmonizeOptions.AllowNonrandomized.
	ReasonNotRandomized = DesignNotRandomized
	ReasonCrossover     = DesignCrossover
)

// RegistryIDs splits a study's registry_id cell into ids: several may be
// given, separated by ';', ',', '|' or spaces (a trial registered in two
// registries), upper-cased.
func RegistryIDs(cell string) []string {
	f := strings.FieldsFunc(cell, func(r rune) bool { return r == ';' || r == ',' || r == '|' || r == ' ' || r == '\t' })
	out := f[:0]
	for _, id := range f {
		if id = strings.ToUpper(strings.TrimSpace(id)); id != "" {
			out = append(out, id)
		}
	}
	return out
}

// PublishedEffect converts one published study of a review into an effect
// on the review's measure. A study that gives effect and SE is used as the
// review reported it; otherwise the arm data are converted (MD, or Hedges'
// g for SMD reviews).
func PublishedEffect(rv ingest.Review, s ingest.ReviewStudy) (StudyEffect, error) {
	se := StudyEffect{Study: s.Study, TrialID: s.RegistryID, Origin: OriginPublished}
	if s.TreatN != nil && s.CtrlN != nil {
		se.TreatN, se.CtrlN = *s.TreatN, *s.CtrlN
	}
	if s.Effect != nil && s.SE != nil {
		if !(*s.SE > 0) || math.IsInf(*s.SE, 0) || math.IsNaN(*s.Effect) || math.IsInf(*s.Effect, 0) {
			return se, reject(ReasonBadValue, "study %q: effect %v with SE %v is not usable", s.Study, *s.Effect, *s.SE)
		}
		se.Effect, se.SE = *s.Effect, *s.SE
		se.ConvertedFrom = "effect_se"
		return se, nil
	}
	if s.TreatMean == nil || s.TreatSD == nil || s.TreatN == nil || s.CtrlMean == nil || s.CtrlSD == nil || s.CtrlN == nil {
		return se, reject(ReasonMissingValue, "study %q has neither effect and se nor complete arm data", s.Study)
	}
	treat := analysis.Arm{Mean: *s.TreatMean, SD: *s.TreatSD, N: *s.TreatN}
	ctrl := analysis.Arm{Mean: *s.CtrlMean, SD: *s.CtrlSD, N: *s.CtrlN}
	eff, err := armEffect(rv.Measure, treat, ctrl)
	if err != nil {
		return se, reject(ReasonBadValue, "study %q: %v", s.Study, err)
	}
	se.Effect, se.SE = eff.Estimate, eff.SE
	se.Derivations = eff.Derivations
	se.PooledSD = pooledSD(treat, ctrl)
	se.ConvertedFrom = "arms_sd"
	return se, nil
}

// pooledSD is sqrt(((n1-1) sd1² + (n2-1) sd2²) / (n1 + n2 - 2)), the
// within-study SD that standardizes a mean difference (Borenstein et al.
// 2009, ch. 4).
func pooledSD(a, b analysis.Arm) float64 {
	df := float64(a.N + b.N - 2)
	if df <= 0 {
		return 0
	}
	return math.Sqrt((float64(a.N-1)*a.SD*a.SD + float64(b.N-1)*b.SD*b.SD) / df)
}

// armEffect computes the review's measure from two arms.
func armEffect(measure string, treat, ctrl analysis.Arm) (analysis.Effect, error) {
	if strings.EqualFold(measure, "SMD") {
		return analysis.HedgesG(treat, ctrl)
	}
	return analysis.MeanDifference(treat, ctrl)
}

// RegistryEffect is RegistryEffectWith with the default options: the
// posted adjusted analysis first, and records that are not randomized
// refused.
func RegistryEffect(rv ingest.Review, t ingest.Trial, l ingest.Link) (StudyEffect, error) {
	return RegistryEffectWith(rv, t, l, HarmonizeOptions{})
}

// RegistryEffectWith converts the registry outcome named by link into an
// effect on the review's measure, experimental minus comparator, with the
// sign reversed when the link says the registry measure runs the other way.
// It is the one reading of a registry record that the audit, matching and
// the recognition of included trials share:
//
//   - the row (visit) is chosen by the review's timepoint (selectRow);
//   - several experimental or comparator groups are combined;
//   - units are converted by meaning (findConversion);
//   - for MD reviews, when the arms are least-squares or otherwise
//     model-adjusted means and the record posts a between-group analysis
//     of exactly the linked groups, its estimate and SE are used
//     (opts.Prefer), with the arm-based result kept beside it;
//   - the direction of a posted estimate follows the record's statement
//     (analysisDirection); raw values never flip it;
//   - records that are not randomized, and crossover records without a
//     paired analysis, are refused unless opts.AllowNonrandomized.
//
// Every step is recorded in Derivations; the posted analysis, when there
// is one, is in PostedAnalysis. An unusable outcome gives a *RejectError
// with the reason.
func RegistryEffectWith(rv ingest.Review, t ingest.Trial, l ingest.Link, opts HarmonizeOptions) (StudyEffect, error) {
	se := StudyEffect{Study: t.TrialID, TrialID: t.TrialID, Origin: OriginRegistry}
	var o *ingest.Outcome
	for i := range t.Outcomes {
		if t.Outcomes[i].Index == l.OutcomeIndex {
			o = &t.Outcomes[i]
			break
		}
	}
	if o == nil {
		return se, reject(ReasonNoOutcome, "%s has no posted outcome measure at index %d (it has %d)", t.TrialID, l.OutcomeIndex, len(t.Outcomes))
	}
	idx := o.Index
	se.OutcomeIndex = &idx
	se.OutcomeTitle = o.Title
	if strings.EqualFold(o.ReportingStatus, "NOT_POSTED") {
		return se, reject(ReasonNotPosted, "%s outcome %d: results not posted", t.TrialID, idx)
	}
	kind, err := parameterKind(o.ParamType)
	if err != nil {
		return se, reject(ReasonNotContinuous, "%s outcome %d: %v", t.TrialID, idx, err)
	}
	if len(l.TreatGroups) == 0 || len(l.CtrlGroups) == 0 {
		return se, reject(ReasonMissingGroup, "%s outcome %d: the link names no experimental or no comparator group", t.TrialID, idx)
	}
	class, cat, rowDeriv, err := selectRow(rv, o)
	if err != nil {
		return se, reject(ReasonAmbiguousRow, "%s outcome %d: %v", t.TrialID, idx, err)
	}
	design, designWhy := DesignOf(t, o, l)
	se.Design = design
	var designFlags []string
	if design != DesignRandomized {
		if !opts.AllowNonrandomized {
			return se, reject(design, "%s: %s; such a record is pooled with randomized evidence only when asked (--allow-nonrandomized)", t.TrialID, designWhy)
		}
		designFlags = append(designFlags, fmt.Sprintf("%s: %s; used only because non-randomized evidence was allowed (--allow-nonrandomized)", design, designWhy))
	}

	var conv *terms.UnitConversion
	var unitFlags []string
	if l.UnitFrom != "" || (o.Unit != "" && rv.Unit != "") {
		from := l.UnitFrom
		if from == "" {
			from = o.Unit
		}
		c, err := terms.FindConversion(from, rv.Unit, rv.Outcome)
		if err != nil && l.UnitFrom != "" {
			return se, reject(ReasonUnit, "%s outcome %d: %v", t.TrialID, idx, err)
		}
		if err != nil && (terms.PhysicalUnit(o.Unit) || terms.PhysicalUnit(rv.Unit)) {
			// Registries write units freely ("score on a scale" for
			// "points"), so only a difference involving a physical unit
			// is flagged, and not refused.
			unitFlags = append(unitFlags, fmt.Sprintf("unit %q differs from the review's %q and no conversion is known: check that the scales agree", o.Unit, rv.Unit))
		}
		conv = c
	}

	var derivs []analysis.Derivation
	if rowDeriv != nil {
		derivs = append(derivs, *rowDeriv)
	}
	flags := unitFlags
	if kind == kindMean && strings.EqualFold(o.ParamType, "LEAST_SQUARES_MEAN") && o.Dispersion == "STANDARD_ERROR" {
		flags = append(flags, "least-squares (model-adjusted) means; an SD from their SE is approximate")
	}
	buildArm := func(groups []string) (analysis.Arm, error) {
		arms := make([]analysis.Arm, 0, len(groups))
		for _, g := range groups {
			a, d, fl, err := groupArm(t.TrialID, o, class, cat, g, kind)
			if err != nil {
				return analysis.Arm{}, err
			}
			if conv != nil {
				before := a
				// A change from baseline is a difference of two levels:
				// the offset of a conversion cancels in it.
				offset, formula := conv.Offset, fmt.Sprintf("value_%s = %g * value_%s + %g; SD scales by %g", conv.To, conv.Scale, conv.From, conv.Offset, math.Abs(conv.Scale))
				if conv.Offset != 0 && changeFlags(rv, o) != nil {
					offset, formula = 0, fmt.Sprintf("change_%s = %g * change_%s (the offset %g cancels in a change from baseline); SD scales by %g", conv.To, conv.Scale, conv.From, conv.Offset, math.Abs(conv.Scale))
				}
				a.Mean = conv.Scale*a.Mean + offset
				a.SD = math.Abs(conv.Scale) * a.SD
				d = append(d, analysis.Derivation{
					Method:  "unit_conversion",
					Formula: formula,
					Inputs:  []analysis.NamedValue{{Name: "mean", Value: before.Mean}, {Name: "sd", Value: before.SD}},
					Output:  []analysis.NamedValue{{Name: "mean", Value: a.Mean}, {Name: "sd", Value: a.SD}},
					Source:  conv.Source,
				})
			}
			derivs = append(derivs, d...)
			flags = append(flags, fl...)
			arms = append(arms, a)
		}
		if len(arms) == 1 {
			return arms[0], nil
		}
		c, d, err := analysis.CombineArms(arms)
		if err != nil {
			return analysis.Arm{}, reject(ReasonBadValue, "%s outcome %d: combine groups %s: %v", t.TrialID, idx, strings.Join(groups, ";"), err)
		}
		derivs = append(derivs, d)
		return c, nil
	}
	flags = append(flags, designFlags...)
	rowDerivs := append([]analysis.Derivation(nil), derivs...)
	armsSE, armsErr := se, error(nil)
	treat, err := buildArm(l.TreatGroups)
	if err == nil {
		ctrl, ctrlErr := buildArm(l.CtrlGroups)
		if ctrlErr == nil {
			armsSE, armsErr = finishArms(rv, t, o, l, se, kind, treat, ctrl, derivs, flags)
		} else {
			armsErr = ctrlErr
		}
	} else {
		armsErr = err
	}
	posted := readPostedAnalysis(rv, t, o, class, cat, l, conv)
	return chooseReading(rv, t, o, l, opts, se, armsSE, armsErr, posted, rowDerivs, append(designFlags, unitFlags...))
}

// finishArms computes the effect from the two arms and records the steps.
func finishArms(rv ingest.Review, t ingest.Trial, o *ingest.Outcome, l ingest.Link, se StudyEffect, kind string,
	treat, ctrl analysis.Arm, derivs []analysis.Derivation, flags []string) (StudyEffect, error) {
	idx := o.Index
	eff, err := armEffect(rv.Measure, treat, ctrl)
	if err != nil {
		return se, reject(ReasonBadValue, "%s outcome %d: %v", t.TrialID, idx, err)
	}
	derivs = append(derivs, eff.Derivations...)
	se.Effect, se.SE = eff.Estimate, eff.SE
	if l.Flip {
		derivs = append(derivs, flipStep(se.Effect))
		se.Effect = -se.Effect
	}
	se.TreatN, se.CtrlN = treat.N, ctrl.N
	se.PooledSD = pooledSD(treat, ctrl)
	se.armMeans = &[2]float64{treat.Mean, ctrl.Mean}
	se.Derivations = derivs
	se.Flags = dedupe(append(flags, changeFlags(rv, o)...))
	se.ConvertedFrom = convertedFrom(kind, o.Dispersion, len(l.TreatGroups)+len(l.CtrlGroups) > 2)
	return se, nil
}

// changeFlags notes a change-from-baseline outcome: fine to pool with
// final values for a mean difference, not for an SMD (Cochrane Handbook
// ch. 10, section on change scores; from memory).
func changeFlags(rv ingest.Review, o *ingest.Outcome) []string {
	text := strings.ToLower(o.Title + " " + o.TimeFrame)
	if !strings.Contains(text, "change") && !strings.Contains(text, "baseline to") {
		return nil
	}
	if strings.EqualFold(rv.Measure, "SMD") {
		return []string{"change from baseline: mixing change and final values in a standardized mean difference is not advised"}
	}
	return []string{"change from baseline (may be pooled with final values for a mean difference)"}
}

// parameter kinds a registry outcome can have for our purpose.
const (
	kindMean   = "mean"
	kindMedian = "median"
)

func parameterKind(paramType string) (string, error) {
	switch strings.ToUpper(strings.TrimSpace(paramType)) {
	case "MEAN", "LEAST_SQUARES_MEAN":
		return kindMean, nil
	case "MEDIAN":
		return kindMedian, nil
	case "":
		return "", errors.New("no parameter type posted (nobody analysed?)")
	default:
		return "", fmt.Errorf("parameter %s is not a continuous mean or median", paramType)
	}
}

// selectRow returns the class (row) and category of an outcome to use. An
// outcome posted in one row uses it. One posted in several rows (visits,
// as real records post per-visit results) uses the row whose title is a
// time at the review's timepoint: titles are parsed like time frames
// ("Week 12", "Day 84", "Month 3") and the closest within the matching
// window (±25% or ±2 weeks) is taken, recorded as a derivation step. Rows
// with several categories, several rows without such a title, or a tie are
// not used.
func selectRow(rv ingest.Review, o *ingest.Outcome) (int, int, *analysis.Derivation, error) {
	switch len(o.Classes) {
	case 0:
		return 0, 0, nil, errors.New("no measurements posted")
	case 1:
		if n := len(o.Classes[0].Categories); n != 1 {
			return 0, 0, nil, fmt.Errorf("posted in %d categories; only single-category rows are used", n)
		}
		return 0, 0, nil, nil
	}
	titles := make([]string, len(o.Classes))
	for i, c := range o.Classes {
		titles[i] = fmt.Sprintf("%q", c.Title)
	}
	if rv.TimepointWeeks == nil {
		return 0, 0, nil, fmt.Errorf("posted in %d rows (%s) and the review gives no timepoint to choose one", len(o.Classes), strings.Join(titles, ", "))
	}
	target := *rv.TimepointWeeks * terms.DaysPerWeek
	window := terms.TimeWindow(target)
	best, bestDist, tie := -1, math.Inf(1), false
	for i, c := range o.Classes {
		tf := terms.ParseTimeFrame(c.Title)
		if !tf.Usable() || tf.UpTo || len(tf.Days) != 1 || len(c.Categories) != 1 {
			continue
		}
		d := math.Abs(tf.Days[0] - target)
		switch {
		case d > window:
		case d < bestDist:
			best, bestDist, tie = i, d, false
		case d == bestDist:
			tie = true
		}
	}
	if best < 0 || tie {
		return 0, 0, nil, fmt.Errorf("posted in %d rows (%s); none is a single time at the review's timepoint of %s weeks", len(o.Classes), strings.Join(titles, ", "), terms.FormatWeeks(target))
	}
	d := &analysis.Derivation{
		Method:  "row_by_timepoint",
		Formula: fmt.Sprintf("row %q of %d chosen: the posted time closest to the review's timepoint (%s weeks, window ±%s weeks)", o.Classes[best].Title, len(o.Classes), terms.FormatWeeks(target), terms.FormatWeeks(window)),
		Inputs:  []analysis.NamedValue{{Name: "rows", Value: float64(len(o.Classes))}, {Name: "timepoint_days", Value: target}, {Name: "window_days", Value: window}},
		Output:  []analysis.NamedValue{{Name: "row", Value: float64(best)}, {Name: "distance_days", Value: bestDist}},
	}
	return best, 0, d, nil
}

// groupArm reads one group's mean, SD and N from an outcome row.
func groupArm(trialID string, o *ingest.Outcome, class, cat int, groupID, kind string) (analysis.Arm, []analysis.Derivation, []string, error) {
	var m *ingest.Measurement
	for i, x := range o.Classes[class].Categories[cat].Measurements {
		if x.GroupID == groupID {
			m = &o.Classes[class].Categories[cat].Measurements[i]
			break
		}
	}
	where := fmt.Sprintf("%s outcome %d group %s", trialID, o.Index, groupID)
	if m == nil {
		return analysis.Arm{}, nil, nil, reject(ReasonMissingGroup, "%s: no measurement posted", where)
	}
	n, ok := groupN(o, class, groupID)
	if !ok {
		return analysis.Arm{}, nil, nil, reject(ReasonMissingN, "%s: no participant count", where)
	}
	if n < 2 {
		who := "participants"
		if n == 1 {
			who = "participant"
		}
		return analysis.Arm{}, nil, nil, reject(ReasonMissingN, "%s: %d %s analysed", where, n, who)
	}
	if !m.Value.OK {
		return analysis.Arm{}, nil, nil, reject(ReasonMissingValue, "%s: value %q is not a number%s", where, m.Value.Text, commentSuffix(m.Comment))
	}
	value := m.Value.Value
	var derivs []analysis.Derivation
	var flags []string
	var sd float64
	switch o.Dispersion {
	case "STANDARD_DEVIATION":
		if !m.Spread.OK || !(m.Spread.Value > 0) {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: standard deviation %q is not usable%s", where, m.Spread.Text, commentSuffix(m.Comment))
		}
		sd = m.Spread.Value
	case "STANDARD_ERROR":
		if !m.Spread.OK || !(m.Spread.Value > 0) {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: standard error %q is not usable%s", where, m.Spread.Text, commentSuffix(m.Comment))
		}
		v, d, err := analysis.SDFromSE(m.Spread.Value, n)
		if err != nil {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: %v", where, err)
		}
		sd = v
		derivs = append(derivs, d)
	case "CONFIDENCE_80", "CONFIDENCE_90", "CONFIDENCE_95", "CONFIDENCE_975", "CONFIDENCE_99":
		if !m.Lower.OK || !m.Upper.OK || !(m.Upper.Value > m.Lower.Value) {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: confidence limits %q, %q are not usable%s", where, m.Lower.Text, m.Upper.Text, commentSuffix(m.Comment))
		}
		v, d, err := analysis.SDFromCI(m.Lower.Value, m.Upper.Value, n, ciLevel(o.Dispersion))
		if err != nil {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: %v", where, err)
		}
		sd = v
		derivs = append(derivs, d)
	case "INTER_QUARTILE_RANGE", "FULL_RANGE":
		if !m.Lower.OK || !m.Upper.OK || !(m.Upper.Value > m.Lower.Value) {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: limits %q, %q are not usable%s", where, m.Lower.Text, m.Upper.Text, commentSuffix(m.Comment))
		}
		var mean float64
		var d analysis.Derivation
		var err error
		if o.Dispersion == "INTER_QUARTILE_RANGE" {
			mean, sd, d, err = analysis.MeanSDFromMedianIQR(m.Lower.Value, value, m.Upper.Value, n)
		} else {
			mean, sd, d, err = analysis.MeanSDFromMedianRange(m.Lower.Value, value, m.Upper.Value, n)
		}
		if err != nil {
			return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: %v", where, err)
		}
		if kind == kindMedian {
			value = mean
		}
		derivs = append(derivs, d)
		flags = append(flags, "symmetry assumption: mean and SD estimated from quartiles or range")
	default:
		return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: dispersion %q cannot give a standard deviation", where, o.DispersionText)
	}
	if kind == kindMedian && o.Dispersion != "INTER_QUARTILE_RANGE" && o.Dispersion != "FULL_RANGE" {
		return analysis.Arm{}, nil, nil, reject(ReasonDispersion, "%s: a median needs quartiles or a range", where)
	}
	return analysis.Arm{Mean: value, SD: sd, N: n}, derivs, flags, nil
}

// groupN resolves a group's N: class-level denominators when the class has
// them, else the outcome-level ones, in the unit the outcome was analysed
// in (participants unless the record says otherwise).
func groupN(o *ingest.Outcome, class int, groupID string) (int, bool) {
	denoms := o.Denoms
	if len(o.Classes[class].Denoms) > 0 {
		denoms = o.Classes[class].Denoms
	}
	want := o.DenomUnits
	if want == "" {
		want = "Participants"
	}
	var chosen *ingest.Denom
	for i := range denoms {
		if strings.EqualFold(strings.TrimSpace(denoms[i].Units), want) {
			chosen = &denoms[i]
			break
		}
	}
	if chosen == nil && len(denoms) == 1 {
		chosen = &denoms[0]
	}
	if chosen == nil {
		return 0, false
	}
	for _, c := range chosen.Counts {
		if c.GroupID == groupID && c.Value.OK && c.Value.Value == math.Trunc(c.Value.Value) && c.Value.Value >= 0 {
			return int(c.Value.Value), true
		}
	}
	return 0, false
}

func ciLevel(code string) float64 {
	switch code {
	case "CONFIDENCE_80":
		return 0.80
	case "CONFIDENCE_90":
		return 0.90
	case "CONFIDENCE_975":
		return 0.975
	case "CONFIDENCE_99":
		return 0.99
	default:
		return 0.95
	}
}

func commentSuffix(c string) string {
	if c == "" {
		return ""
	}
	return fmt.Sprintf(" (comment: %s)", c)
}

// convertedFrom names the route a registry effect took, for tables:
// "arms_" then "median_" for medians, the dispersion (sd, se, ci95, iqr,
// range) and "_combined" when groups were combined.
func convertedFrom(kind, dispersion string, combined bool) string {
	base := strings.ToLower(dispersion)
	switch dispersion {
	case "STANDARD_DEVIATION":
		base = "sd"
	case "STANDARD_ERROR":
		base = "se"
	case "INTER_QUARTILE_RANGE":
		base = "iqr"
	case "FULL_RANGE":
		base = "range"
	default:
		if strings.HasPrefix(dispersion, "CONFIDENCE_") {
			base = "ci" + strings.TrimPrefix(dispersion, "CONFIDENCE_")
		}
	}
	s := "arms_"
	if kind == kindMedian {
		s += "median_"
	}
	s += base
	if combined {
		s += "_combined"
	}
	return s
}

func dedupe(s []string) []string {
	if len(s) == 0 {
		return nil
	}
	seen := make(map[string]bool, len(s))
	out := s[:0:0]
	for _, x := range s {
		if !seen[x] {
			seen[x] = true
			out = append(out, x)
		}
	}
	return out
}
