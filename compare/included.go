package compare

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// ClassPossiblyIncluded is a candidate trial that may be a study the
// review already holds under another name: a near match on effect, SE or
// group sizes. Automatic acceptance never takes it; a links file decides.
const ClassPossiblyIncluded = "possibly-included"

// DecisionAcceptDuplicate accepts a registry trial that the audit would
// otherwise leave out because its effect and group sizes match a published
// study of the same review (a person has checked that they are different
// trials).
const DecisionAcceptDuplicate = "accept-duplicate"

// Accepted reports whether a link decision adds the trial to the review:
// accept or accept-duplicate.
func Accepted(decision string) bool {
	return strings.EqualFold(decision, "accept") || strings.EqualFold(decision, DecisionAcceptDuplicate)
}

// Tolerances for recognising a published study in a registry record. Both
// are read the same way (the review's measure, the visit row at the
// review's timepoint, doses combined, units converted, the sign turned to
// the review's direction), then compared on effect, SE and group sizes.
// The values are common practice, no source: rounding to the posted
// decimals is the only difference two copies of the same numbers can have,
// and the rest is room for small honest changes (a participant dropped
// between posting and paper).
const (
	// sizeNearRel: group sizes that differ by at most 10% of the larger
	// (and at least by one participant) are near; up to sizeOffRel (a
	// completers' analysis against all randomized) they are off but can
	// still be the same trial; beyond, they are another trial's.
	sizeNearRel = 0.10
	sizeOffRel  = 0.25
	// seSameRel: SEs within 10% (plus rounding) are the same analysis.
	seSameRel = 0.10
	// seNearRel and effectNearSE: SEs within 25% and effects within
	// rounding plus a quarter of the published SE are near.
	seNearRel    = 0.25
	effectNearSE = 0.25
	// effectRel is added to the rounding tolerance for the precision of
	// unit-conversion factors (relative to the effect).
	effectRel = 0.005
	// smdRel is added for standardized effects: Cohen's d against Hedges'
	// g and rounded SDs move an SMD by a few percent.
	smdRel = 0.03
	// maxDecimals caps the decimals read from a number.
	maxDecimals = 6
)

// matchLevel is how well a registry record matches a published study.
type matchLevel int

const (
	matchNone matchLevel = iota
	matchPossible
	matchSame
)

// registryReading is one harmonized reading of a registry outcome, with
// the rounding half-step of its posted values in the review's unit.
type registryReading struct {
	eff      StudyEffect
	how      string
	halfStep float64
	// otherRow names the visit row read when it is not the one at the
	// review's timepoint: a paper may report another visit of the same
	// trial, so such a match is only near (a person decides).
	otherRow string
}

// studyMatch is the best comparison of a trial with the review's studies.
type studyMatch struct {
	level matchLevel
	study string
	why   string // the compared values
	sizes string // equal, near, off or unknown
	// tied lists the other studies the trial reads the same as (matchSame),
	// as well as study.
	tied []string
}

// readingsFor reads a registry outcome in every way the review could have
// used it: the link's own groups, and when there are several experimental
// groups also all of them combined and each alone; each through
// RegistryEffectWith as arms (raw or least-squares means) and, where the
// record posts a between-group analysis of exactly the two groups, as that
// analysis.
func readingsFor(rv ingest.Review, t ingest.Trial, l ingest.Link, allTreat []string) []registryReading {
	variants := [][]string{l.TreatGroups}
	if len(allTreat) > 1 {
		if !slices.Equal(allTreat, l.TreatGroups) {
			variants = append(variants, allTreat)
		}
		for _, g := range allTreat {
			if !slices.Equal([]string{g}, l.TreatGroups) {
				variants = append(variants, []string{g})
			}
		}
	}
	o := outcomeByIndex(t, l.OutcomeIndex)
	if o == nil {
		return nil
	}
	var out []registryReading
	for _, treat := range variants {
		v := l
		v.TreatGroups = treat
		groups := strings.Join(treat, "+") + " vs " + strings.Join(l.CtrlGroups, "+")
		out = append(out, readingsAt(rv, t, o, v, groups, "")...)
		// Every other visit row, read as if the review's timepoint were
		// that row's time.
		chosen := chosenRow(rv, o)
		for ci, c := range o.Classes {
			tf := terms.ParseTimeFrame(c.Title)
			if len(o.Classes) < 2 || ci == chosen || !tf.Usable() || tf.UpTo || len(tf.Days) != 1 {
				continue
			}
			at := rv
			weeks := tf.Days[0] / terms.DaysPerWeek
			at.TimepointWeeks = &weeks
			out = append(out, readingsAt(at, t, o, v, groups, c.Title)...)
		}
	}
	return out
}

// chosenRow is the visit row the review's timepoint picks (selectRow), or
// -1 when it picks none.
func chosenRow(rv ingest.Review, o *ingest.Outcome) int {
	if len(o.Classes) < 2 || rv.TimepointWeeks == nil {
		return -1
	}
	row, _, _, err := selectRow(rv, o)
	if err != nil {
		return -1
	}
	return row
}

// readingsAt reads the link's groups as arms and, where posted, as the
// between-group analysis; otherRow names a visit row other than the
// review's timepoint.
func readingsAt(rv ingest.Review, t ingest.Trial, o *ingest.Outcome, v ingest.Link, groups, otherRow string) []registryReading {
	// Recognising a trial is not pooling it: any design is read.
	e, err := RegistryEffectWith(rv, t, v, HarmonizeOptions{Prefer: PreferArms, AllowNonrandomized: true})
	if err != nil {
		return nil
	}
	where := ""
	if otherRow != "" {
		where = fmt.Sprintf(", row %q", otherRow)
	}
	fromAnalysis := e.ConvertedFrom == "between_group_analysis"
	out := []registryReading{{eff: e, how: fmt.Sprintf("outcome %d %s%s, %s", o.Index, groups, where, e.ConvertedFrom),
		halfStep: registryHalfStep(rv, o, v, fromAnalysis), otherRow: otherRow}}
	// A posted analysis is a mean difference: compared on MD reviews only.
	if pa := e.PostedAnalysis; pa != nil && !fromAnalysis && pa.Effect != nil && pa.SE != nil && *pa.SE > 0 && !strings.EqualFold(rv.Measure, "SMD") {
		a := e
		a.Effect, a.SE = *pa.Effect, *pa.SE
		a.ConvertedFrom = "between_group_analysis"
		out = append(out, registryReading{eff: a, how: fmt.Sprintf("outcome %d %s%s, posted between-group analysis", o.Index, groups, where),
			halfStep: registryHalfStep(rv, o, v, true), otherRow: otherRow})
	}
	return out
}

// registryHalfStep is half the last posted decimal of the outcome's
// values (the analysis estimates when fromAnalysis), in the review's unit.
func registryHalfStep(rv ingest.Review, o *ingest.Outcome, l ingest.Link, fromAnalysis bool) float64 {
	dec := 0
	if fromAnalysis {
		for _, a := range o.Analyses {
			dec = max(dec, textDecimals(a.ParamValue.Text))
		}
	} else {
		for _, c := range o.Classes {
			for _, cat := range c.Categories {
				for _, m := range cat.Measurements {
					dec = max(dec, textDecimals(m.Value.Text))
				}
			}
		}
	}
	hs := 0.5 * math.Pow(10, -float64(dec))
	if l.UnitFrom != "" {
		if c, err := terms.FindConversion(l.UnitFrom, rv.Unit, rv.Outcome); err == nil && c != nil {
			hs *= math.Abs(c.Scale)
		}
	}
	return hs
}

// textDecimals counts the digits after the decimal point of a number as
// written ("12.50" has 2), capped at maxDecimals.
func textDecimals(s string) int {
	s = strings.TrimSpace(s)
	if i := strings.IndexAny(s, "eE"); i >= 0 {
		s = s[:i]
	}
	i := strings.IndexByte(s, '.')
	if i < 0 {
		return 0
	}
	return min(len(s)-i-1, maxDecimals)
}

// halfStepOf is half the last decimal of a published number as the CSV
// gave it (read as a float, so "12.0" counts as 12, and its half step is
// the looser 0.5); 0 for a missing number.
func halfStepOf(x *float64) float64 {
	if x == nil {
		return 0
	}
	return 0.5 * math.Pow(10, -float64(textDecimals(strconv.FormatFloat(*x, 'f', -1, 64))))
}

// studyDecimals is the most decimals among a published study's numbers
// as the CSV gave them (read as floats).
func studyDecimals(s ingest.ReviewStudy) int {
	dec := 0
	for _, x := range []*float64{s.TreatMean, s.TreatSD, s.CtrlMean, s.CtrlSD, s.Effect, s.SE} {
		if x != nil {
			dec = max(dec, textDecimals(strconv.FormatFloat(*x, 'f', -1, 64)))
		}
	}
	return dec
}

// compareStudy compares one published study with one registry reading.
// A whole number in the paper ("25") may be 25.0 or a rounding to units;
// the study is read both ways. A match that holds only with the whole
// number rounded to units while the study's other numbers carry decimals
// ("25" beside "29.8") is a near match: a person decides, since near the
// null every trial of the same size reads alike within half a unit.
func compareStudy(rv ingest.Review, s ingest.ReviewStudy, pub StudyEffect, r registryReading) (matchLevel, string, string) {
	level, why, sizes := compareStudyHalfSteps(rv, s, pub, r, halfStepOf)
	if r.otherRow != "" {
		// Another visit counts only when it reads the same (a near match
		// at one of several other visits is too common by chance).
		if level != matchSame {
			return matchNone, why, sizes
		}
		return matchPossible, why + fmt.Sprintf("; the same at the registry's row %q, not at the review's timepoint: check which visit the review used", r.otherRow), sizes
	}
	dec := studyDecimals(s)
	if level != matchSame || dec == 0 {
		return level, why, sizes
	}
	inferred := func(x *float64) float64 {
		if x == nil {
			return 0
		}
		return 0.5 * math.Pow(10, -float64(max(dec, textDecimals(strconv.FormatFloat(*x, 'f', -1, 64)))))
	}
	if strict, _, _ := compareStudyHalfSteps(rv, s, pub, r, inferred); strict == matchSame {
		return level, why, sizes
	}
	return matchPossible, why + fmt.Sprintf("; the same only if a whole number of the paper was rounded to units while its other numbers have %d decimals", dec), sizes
}

// compareStudyHalfSteps is compareStudy with the published numbers'
// rounding given by hs.
func compareStudyHalfSteps(rv ingest.Review, s ingest.ReviewStudy, pub StudyEffect, r registryReading, hs func(*float64) float64) (matchLevel, string, string) {
	reg := r.eff
	fromArms := pub.ConvertedFrom != "effect_se"
	hsMeans := math.Max(hs(s.TreatMean), hs(s.CtrlMean))
	pubPart, hsSE := hs(s.Effect), hs(s.SE)
	if fromArms {
		pubPart, hsSE = hs(s.TreatMean)+hs(s.CtrlMean), 0 // two rounded means
	}
	regPart := 2 * r.halfStep
	if reg.ConvertedFrom == "between_group_analysis" {
		regPart = r.halfStep
	}
	tol := effectRel*math.Max(math.Abs(pub.Effect), math.Abs(reg.Effect)) + 1e-9
	if strings.EqualFold(rv.Measure, "SMD") {
		if fromArms && pub.PooledSD > 0 {
			pubPart /= pub.PooledSD
		}
		if reg.PooledSD > 0 {
			regPart /= reg.PooledSD
		}
		tol += smdRel * math.Max(math.Abs(pub.Effect), math.Abs(reg.Effect))
	}
	tol += pubPart + regPart

	sizes := "unknown"
	if pub.TreatN > 0 && pub.CtrlN > 0 && reg.TreatN > 0 && reg.CtrlN > 0 {
		switch {
		case pub.TreatN == reg.TreatN && pub.CtrlN == reg.CtrlN:
			sizes = "equal"
		case sizeWithin(pub.TreatN, reg.TreatN, sizeNearRel) && sizeWithin(pub.CtrlN, reg.CtrlN, sizeNearRel):
			sizes = "near"
		case sizeWithin(pub.TreatN, reg.TreatN, sizeOffRel) && sizeWithin(pub.CtrlN, reg.CtrlN, sizeOffRel):
			sizes = "off"
		default:
			sizes = "far"
		}
	}
	seDiff := math.Abs(reg.SE - pub.SE)
	sameEffect := func(effect float64) bool {
		return math.Abs(effect-pub.Effect) <= tol
	}
	sameSE := seDiff <= seSameRel*pub.SE+hsSE
	nearEffect := math.Abs(reg.Effect-pub.Effect) <= tol+effectNearSE*pub.SE && seDiff <= seNearRel*pub.SE+hsSE
	arms := armsAgree(s, reg, hsMeans+r.halfStep)
	armsNear := armsAgree(s, reg, hsMeans+r.halfStep+effectNearSE*pub.SE)
	level, note := matchNone, ""
	switch {
	case sameEffect(reg.Effect) && sameSE && sizes == "equal" && arms != "differ":
		level = matchSame
	case sameEffect(reg.Effect) && sameSE && sizes == "equal":
		level = matchPossible
		note = "; the arms' means differ"
	case (sizes == "equal" || sizes == "near") && nearEffect && armsNear != "differ":
		level = matchPossible
	case (sizes == "equal" || sizes == "near") && sameEffect(-reg.Effect) && sameSE && reg.Effect != 0:
		level = matchPossible
		note = "; agrees only with the sign reversed: check the direction"
	case sameEffect(reg.Effect) && (sizes == "off" || sizes == "unknown") && (arms == "agree" || arms == "" && sameSE):
		// Another analysis population of the same trial: the effect
		// agrees, and so do both arms' means (or, where either side
		// gives no arms, the SE).
		level = matchPossible
		if arms == "agree" {
			note = "; both arms' means agree"
		}
	}
	if level == matchNone {
		return level, "", sizes // no caller shows why there is no match
	}
	why := fmt.Sprintf("%s: effect %s (SE %s) vs registry %s (SE %s) [%s], difference %s, rounding tolerance %s; group sizes %s vs %s (%s)%s",
		s.Study, fmtNum(pub.Effect), fmtNum(pub.SE), fmtNum(reg.Effect), fmtNum(reg.SE), r.how,
		fmtNum(reg.Effect-pub.Effect), fmtNum(tol), fmtSizes(pub.TreatN, pub.CtrlN), fmtSizes(reg.TreatN, reg.CtrlN), sizes, note)
	return level, why, sizes
}

// armsAgree compares the published arm means with the registry's (in the
// review's unit, either sign), each within slack plus 0.5% (conversion
// factors): "agree", "differ", or "" when either side gives none.
func armsAgree(s ingest.ReviewStudy, reg StudyEffect, slack float64) string {
	if s.TreatMean == nil || s.CtrlMean == nil || reg.armMeans == nil {
		return ""
	}
	near := func(a, b float64) bool {
		return math.Abs(a-b) <= slack+effectRel*math.Max(math.Abs(a), math.Abs(b))+1e-9
	}
	t, c := reg.armMeans[0], reg.armMeans[1]
	if near(*s.TreatMean, t) && near(*s.CtrlMean, c) || near(*s.TreatMean, -t) && near(*s.CtrlMean, -c) {
		return "agree"
	}
	return "differ"
}

// sizeWithin reports whether two group sizes differ by at most rel of the
// larger, or by one participant.
func sizeWithin(a, b int, rel float64) bool {
	d := a - b
	if d < 0 {
		d = -d
	}
	return float64(d) <= math.Max(1, rel*float64(max(a, b)))
}

func fmtNum(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

func fmtSizes(t, c int) string {
	if t == 0 || c == 0 {
		return "not given"
	}
	return fmt.Sprintf("%d/%d", t, c)
}

// bestStudyMatch compares every reading with every study and returns the
// strongest match (the first study in file order on ties; other studies
// it reads the same as are in tied).
func bestStudyMatch(rv ingest.Review, studies []ingest.ReviewStudy, readings []registryReading) studyMatch {
	var best studyMatch
	for _, s := range studies {
		pub, err := PublishedEffect(rv, s)
		if err != nil {
			continue
		}
		for _, r := range readings {
			level, why, sizes := compareStudy(rv, s, pub, r)
			switch {
			case level > best.level:
				best = studyMatch{level: level, study: s.Study, why: why, sizes: sizes}
			case level == best.level && level == matchSame && s.Study != best.study && !slices.Contains(best.tied, s.Study):
				best.tied = append(best.tied, s.Study)
			}
		}
	}
	return best
}

// recogniseIncluded compares a trial's proposed outcomes with the review's
// studies that cite no registry id. Only outcomes that look like the
// review's outcome are read.
func recogniseIncluded(rt *reviewTerms, t ingest.Trial, ops []OutcomeProposal) studyMatch {
	if len(rt.unlinked) == 0 {
		return studyMatch{}
	}
	var readings []registryReading
	for _, op := range ops {
		if op.Score < agreeMinScore*op.Parts.Trial || len(op.TreatGroups) == 0 || len(op.CtrlGroups) == 0 {
			continue
		}
		o := outcomeByIndex(t, op.OutcomeIndex)
		if o == nil {
			continue
		}
		all := assignArms(rt, t, o, false).treat
		l := ingest.Link{ReviewID: rt.rv.ReviewID, TrialID: t.TrialID, OutcomeIndex: op.OutcomeIndex,
			TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom}
		readings = append(readings, readingsFor(rt.rv, t, l, all)...)
	}
	return bestStudyMatch(rt.rv, rt.unlinked, readings)
}

// classifyIncluded sets the class of a trial the review does not cite by
// id: included when its record reads the same as a study of the review,
// possibly-included on a near match. It reports whether it set a class.
func classifyIncluded(rt *reviewTerms, t ingest.Trial, tp *TrialProposal) bool {
	m := recogniseIncluded(rt, t, tp.Outcomes)
	tp.recognised = m.level > matchNone
	switch {
	case m.level == matchSame && len(m.tied) > 0:
		// Two studies of the review read alike: which one the trial is
		// cannot be told from the numbers.
		tp.Class, tp.IncludedAs = ClassPossiblyIncluded, m.study
		tp.Reasons = append([]string{fmt.Sprintf("ambiguous: reads like %s and like %s of the review; a person must decide which, if any (%s)",
			m.study, strings.Join(m.tied, ", "), m.why)}, tp.Reasons...)
	case m.level == matchSame:
		tp.Class, tp.IncludedAs = ClassIncluded, m.study
		tp.Reasons = append([]string{fmt.Sprintf("in the review as %s: effect, SE and group sizes agree with the registry results (%s)", m.study, m.why)}, tp.Reasons...)
	case m.level == matchPossible:
		tp.Class, tp.IncludedAs = ClassPossiblyIncluded, m.study
		tp.Reasons = append([]string{fmt.Sprintf("possibly in the review as %s: a near match, a person must decide (%s)", m.study, m.why)}, tp.Reasons...)
	default:
		return false
	}
	return true
}

// resolveIncludedTies: a published study is one trial. When several
// registry trials read the same as one study (matchSame, not just near),
// none of them can be claimed as it: each becomes possibly-included, with
// a reason naming the others, and a person decides. A single exact match
// keeps its claim beside near matches (those are possibly-included
// already).
func resolveIncludedTies(tps []TrialProposal) {
	claims := map[string][]int{}
	for i, tp := range tps {
		if tp.recognised && tp.Class == ClassIncluded {
			claims[tp.IncludedAs] = append(claims[tp.IncludedAs], i)
		}
	}
	for study, idx := range claims {
		if len(idx) < 2 {
			continue
		}
		ids := make([]string, len(idx))
		for j, i := range idx {
			ids[j] = tps[i].TrialID
		}
		for _, i := range idx {
			tp := &tps[i]
			tp.Class = ClassPossiblyIncluded
			tp.Reasons = append([]string{fmt.Sprintf("ambiguous: %d registry trials (%s) read the same as the review's study %s, which is one trial; which one it is, if any, cannot be told from the numbers: a person must decide",
				len(idx), strings.Join(ids, ", "), study)}, tp.Reasons...)
		}
	}
}

// DuplicateOfPublished reports whether an accepted registry link reads the
// same as a published study of the review: effect and SE within rounding
// and group sizes equal or within 10%. It names the study and the compared
// values.
func DuplicateOfPublished(rv ingest.Review, studies []ingest.ReviewStudy, t ingest.Trial, l ingest.Link) (study, why string, ok bool) {
	readings := readingsFor(rv, t, l, nil)
	for _, s := range studies {
		if s.ReviewID != "" && s.ReviewID != rv.ReviewID {
			continue
		}
		pub, err := PublishedEffect(rv, s)
		if err != nil {
			continue
		}
		for _, r := range readings {
			level, why, sizes := compareStudy(rv, s, pub, r)
			if level == matchNone || (sizes != "equal" && sizes != "near") {
				continue
			}
			if level == matchSame || duplicateNear(rv, s, pub, r) {
				return s.Study, why, true
			}
		}
	}
	return "", "", false
}

// duplicateNear is a near match whose effect and SE are within rounding
// (only the group sizes are off by up to 10%).
func duplicateNear(rv ingest.Review, s ingest.ReviewStudy, pub StudyEffect, r registryReading) bool {
	// Compare as if the sizes were equal: the same trial with a few
	// participants more or fewer.
	eq := r
	eq.eff.TreatN, eq.eff.CtrlN = pub.TreatN, pub.CtrlN
	level, _, _ := compareStudy(rv, s, pub, eq)
	return level == matchSame
}

// ReasonMatchesPublished rejects an accepted registry link whose trial
// reads the same as a published study of the review.
const ReasonMatchesPublished = "matches-published-study"

// duplicateGuard keeps an accepted registry trial out of the augmented
// analysis when it reads the same as a published study of the review
// (DuplicateOfPublished), unless the link's decision is accept-duplicate.
// It returns the rejection and a warning naming both.
func duplicateGuard(rv ingest.Review, studies []ingest.ReviewStudy, t ingest.Trial, l ingest.Link) (Rejected, string, bool) {
	if strings.EqualFold(l.Decision, DecisionAcceptDuplicate) {
		return Rejected{}, "", false
	}
	study, why, ok := DuplicateOfPublished(rv, studies, t, l)
	if !ok {
		return Rejected{}, "", false
	}
	detail := fmt.Sprintf("%s outcome %d reads the same as the published study %q (%s); left out so that one trial is not counted twice; if they are different trials, set decision=%s in the links file",
		t.TrialID, l.OutcomeIndex, study, why, DecisionAcceptDuplicate)
	return Rejected{TrialID: t.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: ReasonMatchesPublished, Detail: detail},
		fmt.Sprintf("registry trial %s left out: it matches the published study %q in effect and group sizes (%s); decision=%s adds it anyway",
			t.TrialID, study, why, DecisionAcceptDuplicate), true
}
