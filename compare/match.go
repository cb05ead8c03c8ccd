package compare

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// Candidate classes, as in links files (ingest.Link.Class).
const (
	ClassIncluded          = "included"
	ClassMissedPublication = "missed-publication"
	ClassRegistryOnly      = "registry-only"
	ClassNoResults         = "no-results"
	// ClassPossiblyIncluded (included.go) is a near match to a study of
	// the review: a person decides.
)

// DefaultAcceptAbove is the score above which a proposal is taken to be
// the right link when nobody has looked at it. Every failed criterion caps
// a score at or below 0.5, so failures stay below it. It is a reference
// point for people and tests; MatchOptions.AcceptAbove decides what is
// accepted automatically.
const DefaultAcceptAbove = 0.7

// Weights of the outcome score components (they sum to 1).
const (
	weightText    = 0.40
	weightTime    = 0.25
	weightUnit    = 0.15
	weightParam   = 0.10
	weightPrimary = 0.05
	weightArms    = 0.05
)

// Caps: the highest score an outcome can reach when one criterion fails.
const (
	capNoText    = 0.35 // the outcome's words do not meet the review's outcome (text below 0.2)
	capWeakText  = 0.60 // fewer than half of the review's outcome words (text below 0.5)
	capTime      = 0.45 // time frame outside the review's window
	capUnit      = 0.30 // unit neither the review's nor convertible to it
	capMedian    = 0.50 // median only: a flagged fallback
	capOtherStat = 0.40 // geometric or log means
	capArms      = 0.30 // no experimental or no comparator group found
	capRejected  = 0.45 // RegistryEffect refuses the proposed link
)

// MatchOptions control automatic matching. The zero value proposes links
// for every review, combines dose arms, and accepts nothing automatically.
type MatchOptions struct {
	// ReviewIDs limits matching to these reviews; empty means all.
	ReviewIDs []string
	// AcceptAbove, when positive, accepts the best outcome of each
	// missed-publication or registry-only trial whose score is above it.
	// Included and no-results candidates are never accepted.
	AcceptAbove float64
	// HighestDose keeps only the highest dose when several experimental
	// groups qualify; by default they are combined into one arm.
	HighestDose bool
	// Save writes the proposals to the store (Match only).
	Save bool
	// Progress, when set, is called after each review (Match only).
	Progress func(reviewID string, done, total int)
}

// ScoreParts are the components of an outcome's score, each in [0, 1].
type ScoreParts struct {
	Text    float64 `json:"text"`
	Time    float64 `json:"time"`
	Unit    float64 `json:"unit"`
	Param   float64 `json:"param"`
	Primary float64 `json:"primary"`
	Arms    float64 `json:"arms"`
	Trial   float64 `json:"trial"` // the trial's fit, which multiplies the rest
}

// OutcomeProposal is one posted outcome measure proposed for a review.
type OutcomeProposal struct {
	OutcomeIndex int        `json:"outcome_index"`
	Title        string     `json:"outcome_title"`
	TimeFrame    string     `json:"time_frame"`
	Type         string     `json:"type"`
	TreatGroups  []string   `json:"treat_groups"`
	CtrlGroups   []string   `json:"ctrl_groups"`
	Flip         bool       `json:"flip"`
	UnitFrom     string     `json:"unit_from"`
	Score        float64    `json:"score"`
	Parts        ScoreParts `json:"parts"`
	Reasons      []string   `json:"reasons"`
	// Converted is true when RegistryEffect accepts the proposed link;
	// otherwise Rejected holds its reason code.
	Converted    bool   `json:"converted"`
	Rejected     string `json:"rejected,omitempty"`
	AutoAccepted bool   `json:"auto_accepted"`
	// Decision is accept for an automatic acceptance; Match fills in a
	// decision already stored for the same outcome.
	Decision string `json:"decision"`
}

// TrialProposal is one candidate trial of a review with its outcomes,
// best first.
type TrialProposal struct {
	TrialID    string  `json:"trial_id"`
	Class      string  `json:"class"`
	Score      float64 `json:"score"` // best outcome's score; the trial's fit when no outcome fits
	Fit        float64 `json:"fit"`
	Enrollment *int    `json:"enrollment"`
	IncludedAs string  `json:"included_as,omitempty"` // the review's study label
	// Design is randomized, not-randomized or crossover (DesignOf); links
	// to the last two are never accepted automatically.
	Design   string            `json:"design"`
	Reasons  []string          `json:"reasons"`
	Outcomes []OutcomeProposal `json:"outcomes"`
	// recognised: IncludedAs comes from the trial's numbers (not a cited
	// registry id); see resolveIncludedTies.
	recognised bool
}

// ExcludedTrial is a trial that was examined and does not fit the review.
type ExcludedTrial struct {
	TrialID string   `json:"trial_id"`
	Failed  []string `json:"failed"` // criteria codes: condition, intervention, comparator, design, completion
	Reasons []string `json:"reasons"`
}

// FlowCounts are the per-review numbers for a flow diagram.
type FlowCounts struct {
	Examined            int            `json:"examined"`
	Excluded            int            `json:"excluded"`
	ExcludedBy          map[string]int `json:"excluded_by"`
	Included            int            `json:"included"`
	PossiblyIncluded    int            `json:"possibly_included"`
	MissedPublication   int            `json:"missed_publication"`
	RegistryOnly        int            `json:"registry_only"`
	NoResults           int            `json:"no_results"`
	NoResultsEnrollment int            `json:"no_results_enrollment"`
	ProposedOutcomes    int            `json:"proposed_outcomes"`
	Matched             int            `json:"matched"`   // candidates with results whose best outcome reaches DefaultAcceptAbove
	Converted           int            `json:"converted"` // candidates with results whose best outcome converts
	RejectedBy          map[string]int `json:"rejected_by"`
	AutoAccepted        int            `json:"auto_accepted"`
}

// ReviewProposals are the candidates of one review, best first.
type ReviewProposals struct {
	ReviewID string          `json:"review_id"`
	Trials   []TrialProposal `json:"trials"`
	Excluded []ExcludedTrial `json:"excluded"`
	Flow     FlowCounts      `json:"flow"`
}

// reviewTerms are a review's lists prepared for matching.
type reviewTerms struct {
	rv            ingest.Review
	conditions    []terms.Phrase
	interventions []terms.Phrase
	comparators   []comparatorKind
	outcome       []string       // stems of the outcome without generic words
	synonyms      []terms.Phrase // condition phrases with words beyond the outcome's
	reversed      bool           // the review's own outcome is a reduction or improvement
	included      map[string]string
	unlinked      []ingest.ReviewStudy
}

func prepareReview(rv ingest.Review, studies []ingest.ReviewStudy) *reviewTerms {
	rt := &reviewTerms{rv: rv, included: map[string]string{}}
	rt.conditions = terms.NewPhrases(rv.Conditions)
	rt.interventions = terms.NewPhrases(rv.Interventions)
	for _, c := range terms.SplitTerms(rv.Comparator) {
		rt.comparators = append(rt.comparators, comparatorKindFor(c))
	}
	seen := map[string]bool{}
	for _, s := range terms.StemsOf(rv.Outcome, true) {
		if !seen[s] {
			seen[s] = true
			rt.outcome = append(rt.outcome, s)
		}
	}
	for _, p := range rt.conditions {
		for _, s := range p.Stems {
			if !seen[s] {
				rt.synonyms = append(rt.synonyms, p)
				break
			}
		}
	}
	rt.reversed, _ = reversedMeasure(rv.Outcome, "", rv.Better)
	for _, s := range studies {
		if s.ReviewID != "" && s.ReviewID != rv.ReviewID {
			continue
		}
		if ids := RegistryIDs(s.RegistryID); len(ids) > 0 {
			for _, id := range ids {
				rt.included[id] = s.Study
			}
			continue
		}
		rt.unlinked = append(rt.unlinked, s)
	}
	return rt
}

// ProposeForReview proposes, among candidates, the registry trials, outcome
// measures and groups that fit a review, and classes every fitting trial as
// included, missed-publication, registry-only or no-results. Trials that do
// not fit (another condition or intervention, no comparator of the review's
// kind, not interventional, completed after the search date, or not
// randomised and without results) are listed in Excluded with the failed
// criteria and are not proposed. Trials with results that are not
// randomised or are crossover are proposed with their Design, never
// accepted automatically. It is a pure
// function: candidates are typically the survivors of a TrialIndex search
// plus the trials the review's studies cite.
func ProposeForReview(rv ingest.Review, studies []ingest.ReviewStudy, candidates []ingest.Trial, opts MatchOptions) ReviewProposals {
	rt := prepareReview(rv, studies)
	out := ReviewProposals{ReviewID: rv.ReviewID, Trials: []TrialProposal{}, Excluded: []ExcludedTrial{},
		Flow: FlowCounts{ExcludedBy: map[string]int{}, RejectedBy: map[string]int{}}}
	sorted := append([]ingest.Trial(nil), candidates...)
	sort.SliceStable(sorted, func(i, j int) bool { return sorted[i].TrialID < sorted[j].TrialID })
	for i, t := range sorted {
		if i > 0 && sorted[i-1].TrialID == t.TrialID {
			continue
		}
		out.Flow.Examined++
		tp, ex := proposeTrial(rt, t, opts)
		if ex != nil {
			out.Excluded = append(out.Excluded, *ex)
			out.Flow.Excluded++
			for _, f := range ex.Failed {
				out.Flow.ExcludedBy[f]++
			}
			continue
		}
		out.Trials = append(out.Trials, *tp)
	}
	resolveIncludedTies(out.Trials)
	sort.SliceStable(out.Trials, func(i, j int) bool {
		a, b := out.Trials[i], out.Trials[j]
		if a.Score != b.Score {
			return a.Score > b.Score
		}
		return a.TrialID < b.TrialID
	})
	for _, tp := range out.Trials {
		f := &out.Flow
		switch tp.Class {
		case ClassIncluded:
			f.Included++
		case ClassPossiblyIncluded:
			f.PossiblyIncluded++
		case ClassMissedPublication:
			f.MissedPublication++
		case ClassRegistryOnly:
			f.RegistryOnly++
		case ClassNoResults:
			f.NoResults++
			if tp.Enrollment != nil {
				f.NoResultsEnrollment += *tp.Enrollment
			}
		}
		f.ProposedOutcomes += len(tp.Outcomes)
		if tp.Class == ClassNoResults || tp.Class == ClassIncluded {
			continue
		}
		if len(tp.Outcomes) == 0 {
			f.RejectedBy["no-fitting-outcome"]++
			continue
		}
		best := tp.Outcomes[0]
		if best.Score > DefaultAcceptAbove {
			f.Matched++
		}
		switch {
		case !best.Converted:
			f.RejectedBy[best.Rejected]++
		case best.Score <= DefaultAcceptAbove:
			f.Converted++
			f.RejectedBy["low-score"]++
		default:
			f.Converted++
		}
		if best.AutoAccepted {
			f.AutoAccepted++
		}
	}
	return out
}

// proposeTrial checks one trial against the review and ranks its outcomes.
// It returns an exclusion instead when the trial does not fit (trials the
// review cites are never excluded).
func proposeTrial(rt *reviewTerms, t ingest.Trial, opts MatchOptions) (*TrialProposal, *ExcludedTrial) {
	fit := trialFit(rt, t)
	tp := &TrialProposal{TrialID: t.TrialID, Fit: fit.score, Enrollment: t.Enrollment, Reasons: fit.reasons, Outcomes: []OutcomeProposal{}}
	tp.Design, _ = DesignOf(t, nil, ingest.Link{})
	if study, ok := citedBy(rt, t); ok {
		tp.Class, tp.IncludedAs = ClassIncluded, study
		tp.Reasons = append([]string{fmt.Sprintf("in the review as %s (registry id cited)", study)}, tp.Reasons...)
	} else if len(fit.failed) > 0 {
		return nil, &ExcludedTrial{TrialID: t.TrialID, Failed: fit.failed, Reasons: fit.reasons}
	}
	hasResults := len(t.Outcomes) > 0 || (t.HasResults != nil && *t.HasResults)
	if !hasResults && fit.notRandomized != "" && tp.Class == "" {
		// Nothing to decide on, and it is not missing randomized evidence.
		return nil, &ExcludedTrial{TrialID: t.TrialID, Failed: []string{"design"}, Reasons: append(fit.reasons, fit.notRandomized+" and no results posted")}
	}
	if !hasResults {
		if tp.Class == "" {
			tp.Class = ClassNoResults
		}
		tp.Score = fit.score
		tp.Reasons = append(tp.Reasons, "no results posted")
		return tp, nil
	}
	for i := range t.Outcomes {
		if op, ok := scoreOutcome(rt, t, &t.Outcomes[i], fit.score, opts); ok {
			tp.Outcomes = append(tp.Outcomes, op)
		}
	}
	sort.SliceStable(tp.Outcomes, func(i, j int) bool {
		if tp.Outcomes[i].Score != tp.Outcomes[j].Score {
			return tp.Outcomes[i].Score > tp.Outcomes[j].Score
		}
		return tp.Outcomes[i].OutcomeIndex < tp.Outcomes[j].OutcomeIndex
	})
	if tp.Class == "" {
		classifyIncluded(rt, t, tp)
	}
	if tp.Class == "" {
		if hasResultReference(t) {
			tp.Class = ClassMissedPublication
			tp.Reasons = append(tp.Reasons, "results posted and a RESULT reference, but not in the review")
		} else {
			tp.Class = ClassRegistryOnly
			tp.Reasons = append(tp.Reasons, "results posted, no RESULT reference")
		}
	}
	if len(tp.Outcomes) == 0 {
		tp.Score = 0
		tp.Reasons = append(tp.Reasons, "no posted continuous outcome")
		return tp, nil
	}
	tp.Score = tp.Outcomes[0].Score
	best := tp.Outcomes[0]
	design, why := DesignOf(t, outcomeByIndex(t, best.OutcomeIndex), ingest.Link{TreatGroups: best.TreatGroups, CtrlGroups: best.CtrlGroups})
	tp.Design = design
	if design != DesignRandomized {
		tp.Reasons = append(tp.Reasons, fmt.Sprintf("%s: %s; never accepted automatically, and an accepted link is used only with --allow-nonrandomized", design, why))
	}
	if opts.AcceptAbove > 0 && tp.Outcomes[0].Score > opts.AcceptAbove && design == DesignRandomized &&
		(tp.Class == ClassMissedPublication || tp.Class == ClassRegistryOnly) && tp.Outcomes[0].Converted {
		tp.Outcomes[0].AutoAccepted = true
		tp.Outcomes[0].Decision = "accept"
	}
	return tp, nil
}

// citedBy reports whether a study of the review cites the trial by its id,
// an alias or a secondary id (an EU number, another registry's id).
func citedBy(rt *reviewTerms, t ingest.Trial) (string, bool) {
	ids := []string{t.TrialID}
	ids = append(ids, t.Aliases...)
	for _, s := range t.SecondaryIDs {
		ids = append(ids, s.ID)
	}
	for _, id := range ids {
		if study, ok := rt.included[strings.ToUpper(strings.TrimSpace(id))]; ok {
			return study, true
		}
	}
	return "", false
}

func hasResultReference(t ingest.Trial) bool {
	if strings.EqualFold(t.Publication, "yes") {
		return true
	}
	for _, r := range t.References {
		if strings.EqualFold(r.Type, "RESULT") {
			return true
		}
	}
	return false
}

// agreeMinScore: only outcomes that look like the review's outcome (a
// score of at least this share of the trial's fit) are compared with the
// review's studies (see recogniseIncluded).
const agreeMinScore = 0.3

func outcomeByIndex(t ingest.Trial, idx int) *ingest.Outcome {
	for i := range t.Outcomes {
		if t.Outcomes[i].Index == idx {
			return &t.Outcomes[i]
		}
	}
	return nil
}

// scoreOutcome scores one posted outcome against the review. Outcomes
// that are not continuous (counts, numbers, nothing analysed) are not
// proposed (ok false).
func scoreOutcome(rt *reviewTerms, t ingest.Trial, o *ingest.Outcome, fit float64, opts MatchOptions) (OutcomeProposal, bool) {
	op := OutcomeProposal{OutcomeIndex: o.Index, Title: o.Title, TimeFrame: o.TimeFrame, Type: o.Type}
	var parts ScoreParts
	parts.Trial = fit
	caps := []float64{1}
	var reasons []string

	switch strings.ToUpper(strings.TrimSpace(o.ParamType)) {
	case "MEAN", "LEAST_SQUARES_MEAN":
		parts.Param = 1
	case "MEDIAN":
		parts.Param = 0.3
		caps = append(caps, capMedian)
		reasons = append(reasons, "median only: a flagged fallback (mean and SD would be estimated)")
	case "GEOMETRIC_MEAN", "GEOMETRIC_LEAST_SQUARES_MEAN", "LOG_MEAN":
		parts.Param = 0.2
		caps = append(caps, capOtherStat)
		reasons = append(reasons, fmt.Sprintf("parameter %s is not an arithmetic mean", o.ParamType))
	default:
		return op, false
	}
	if strings.EqualFold(o.ReportingStatus, "NOT_POSTED") {
		return op, false
	}

	// Text.
	text, matched := outcomeText(rt, o)
	parts.Text = text
	if len(matched) > 0 {
		reasons = append(reasons, "outcome words: "+strings.Join(matched, ", "))
	}
	switch {
	case text < 0.2:
		caps = append(caps, capNoText)
		reasons = append(reasons, "outcome text does not meet the review's outcome")
	case text < 0.5:
		caps = append(caps, capWeakText)
		reasons = append(reasons, "outcome text meets the review's outcome only in part")
	}

	// Time.
	ts, why := terms.TimeScore(terms.ParseTimeFrame(o.TimeFrame), rt.rv.TimepointWeeks)
	parts.Time = ts
	reasons = append(reasons, why)
	if ts == 0 {
		caps = append(caps, capTime)
	}

	// Unit.
	us, unitFrom, why := unitScore(rt.rv, o.Unit)
	if us > 0 && terms.NormUnit(rt.rv.Unit) == "%" && relativeChange(o.Title) && !relativeChange(rt.rv.Outcome) {
		us, unitFrom = 0, ""
		why = fmt.Sprintf("unit %q is a relative change here (%q), not the review's %q: a percent change from baseline is not a difference in percentage points", o.Unit, o.Title, rt.rv.Unit)
	}
	parts.Unit, op.UnitFrom = us, unitFrom
	reasons = append(reasons, why)
	if us == 0 {
		caps = append(caps, capUnit)
	}

	switch strings.ToUpper(o.Type) {
	case "PRIMARY":
		parts.Primary = 1
		reasons = append(reasons, "primary outcome")
	case "SECONDARY":
		parts.Primary = 0.7
		reasons = append(reasons, "secondary outcome")
	case "":
		parts.Primary = 0.5
		reasons = append(reasons, "outcome type not stated")
	default:
		parts.Primary = 0.5
		reasons = append(reasons, strings.ToLower(o.Type)+" outcome")
	}

	// Arms.
	as := assignArms(rt, t, o, opts.HighestDose)
	op.TreatGroups, op.CtrlGroups = as.treat, as.ctrl
	reasons = append(reasons, as.reasons...)
	if len(as.treat) > 0 && len(as.ctrl) > 0 {
		parts.Arms = 1
	} else {
		caps = append(caps, capArms)
	}

	// Direction.
	rev, why := reversedMeasure(o.Title, o.Description, rt.rv.Better)
	if rev != rt.reversed {
		op.Flip = true
		reasons = append(reasons, "flip: "+why)
	}

	// Conversion check.
	if parts.Arms == 1 {
		l := ingest.Link{ReviewID: rt.rv.ReviewID, TrialID: t.TrialID, OutcomeIndex: o.Index,
			TreatGroups: op.TreatGroups, CtrlGroups: op.CtrlGroups, Flip: op.Flip, UnitFrom: op.UnitFrom}
		// The design is judged per trial (proposeTrial), not per outcome.
		if _, err := RegistryEffectWith(rt.rv, t, l, HarmonizeOptions{AllowNonrandomized: true}); err != nil {
			var re *RejectError
			if errors.As(err, &re) {
				op.Rejected = re.Reason
			} else {
				op.Rejected = "error"
			}
			caps = append(caps, capRejected)
			reasons = append(reasons, "not converted: "+err.Error())
		} else {
			op.Converted = true
		}
	} else {
		op.Rejected = ReasonMissingGroup
	}

	base := weightText*parts.Text + weightTime*parts.Time + weightUnit*parts.Unit +
		weightParam*parts.Param + weightPrimary*parts.Primary + weightArms*parts.Arms
	score := base * fit
	for _, c := range caps {
		score = math.Min(score, c)
	}
	op.Score = math.Round(score*1e4) / 1e4
	op.Parts = parts
	op.Reasons = reasons
	return op, true
}

// outcomeText scores how well an outcome's title and description cover the
// review's outcome words (0.6 title, 0.4 description; the title alone when
// there is no description). A condition phrase
// of the review that brings words of its own (a synonym such as "low
// mood" for depressive symptoms) counts as one more word found.
func outcomeText(rt *reviewTerms, o *ingest.Outcome) (float64, []string) {
	if len(rt.outcome) == 0 {
		return 0.5, nil
	}
	title := terms.NewTermSet(o.Title)
	desc := terms.NewTermSet(o.Description)
	found := map[string]bool{}
	cover := func(ts terms.TermSet) float64 {
		hits := 0
		for _, s := range rt.outcome {
			if ts.Has(s) {
				hits++
				found[s] = true
			}
		}
		for _, p := range rt.synonyms {
			if ts.HasAll(p.Stems) {
				hits++
				found[p.Text] = true
				break
			}
		}
		return math.Min(1, float64(hits)/float64(len(rt.outcome)))
	}
	ct := cover(title)
	if strings.TrimSpace(o.Description) == "" {
		return ct, terms.SortedKeys(found)
	}
	return 0.6*ct + 0.4*cover(desc), terms.SortedKeys(found)
}

// scaleUnit reports whether a registry unit is a rating-scale unit
// ("score on a scale", "units on a scale", "points").
func scaleUnit(u string) bool {
	u = strings.ToLower(u)
	for _, w := range []string{"scale", "score", "point", "unit"} {
		if strings.Contains(u, w) {
			return true
		}
	}
	return false
}

// shareWords reports whether two unit texts share a content word (stemmed).
func shareWords(a, b string) bool {
	bs := map[string]bool{}
	for _, w := range terms.StemsOf(b, false) {
		bs[w] = true
	}
	for _, w := range terms.StemsOf(a, false) {
		if bs[w] {
			return true
		}
	}
	return false
}

// relativeChange reports whether an outcome text describes a relative
// (percent) change, as in "Percent Change From Baseline in HbA1c".
func relativeChange(text string) bool {
	w := terms.AnalyteWords(text)
	for _, p := range []string{" percent change ", " percentage change ", " percent changes ", " relative change ", " per cent change "} {
		if strings.Contains(w, p) {
			return true
		}
	}
	t := strings.ToLower(text)
	return strings.Contains(t, "% change") || strings.Contains(t, "%change")
}

// unitScore scores a registry unit against the review's. MD reviews need
// the same unit, two rating-scale units, or a conversion in the unit table
// (then unitFrom is the registry's unit); SMD reviews are unit-free but a
// physical unit suggests another construct.
func unitScore(rv ingest.Review, unit string) (score float64, unitFrom, why string) {
	if strings.EqualFold(rv.Measure, "SMD") {
		if scaleUnit(unit) || unit == "" {
			return 1, "", fmt.Sprintf("unit %q (SMD: any rating scale)", unit)
		}
		return 0.5, "", fmt.Sprintf("unit %q is not a rating scale (SMD)", unit)
	}
	if unit == "" || rv.Unit == "" {
		return 0.7, "", "unit not stated"
	}
	if terms.NormUnit(unit) == terms.NormUnit(rv.Unit) || (scaleUnit(unit) && scaleUnit(rv.Unit)) {
		return 1, "", fmt.Sprintf("unit %q fits %q", unit, rv.Unit)
	}
	if scaleUnit(unit) && strings.Contains(strings.ToLower(rv.Unit), "point") {
		return 1, "", fmt.Sprintf("unit %q fits %q", unit, rv.Unit)
	}
	c, err := terms.FindConversion(unit, rv.Unit, rv.Outcome)
	if err == nil && c != nil {
		return 0.9, unit, fmt.Sprintf("unit %q converts to %q (%s)", unit, rv.Unit, c.Source)
	}
	if !terms.PhysicalUnit(unit) && !terms.PhysicalUnit(rv.Unit) {
		// Counts and scores are worded freely ("number of lesions" for
		// "lesions"): not a failure, but shared words count for more.
		if shareWords(unit, rv.Unit) {
			return 0.9, "", fmt.Sprintf("unit %q resembles %q", unit, rv.Unit)
		}
		return 0.6, "", fmt.Sprintf("unit %q and %q are worded differently (neither is a physical unit): check they are the same scale", unit, rv.Unit)
	}
	why = fmt.Sprintf("unit %q cannot be converted to %q (units compared by meaning: %q vs %q)", unit, rv.Unit, terms.NormUnit(unit), terms.NormUnit(rv.Unit))
	if err != nil {
		why += ": " + err.Error()
	}
	return 0, "", why
}

// trialFitResult is a trial's fit to a review.
type trialFitResult struct {
	score   float64
	failed  []string
	reasons []string
	// notRandomized is set when the allocation is not randomized: such a
	// trial with results is proposed for a person to decide (never
	// accepted automatically); without results it is excluded.
	notRandomized string
}

// Penalties for criteria the record leaves unknown (not failures).
const (
	fitWeakField   = 0.85 // condition or intervention found only in titles or keywords
	fitUnknown     = 0.85 // allocation or completion date not stated
	fitNotRandom   = 0.0
	dateOKStatuses = "COMPLETED TERMINATED UNKNOWN"
)

// trialFit checks the trial-level criteria: condition, intervention,
// comparator kind, randomised interventional design and completion
// before the review's search date.
func trialFit(rt *reviewTerms, t ingest.Trial) trialFitResult {
	r := trialFitResult{score: 1}
	fail := func(code, why string) {
		r.failed = append(r.failed, code)
		r.reasons = append(r.reasons, why)
	}

	// Condition: in conditions or registry terms (strong), else in
	// keywords or titles (weak).
	strong := append(append([]string(nil), t.Conditions...), t.ConditionTerms...)
	weak := append(append([]string(nil), t.Keywords...), t.BriefTitle, t.OfficialTitle)
	if m := matchAny(rt.conditions, strong); len(m) > 0 {
		r.reasons = append(r.reasons, "condition: "+strings.Join(m, ", "))
	} else if m := matchAny(rt.conditions, weak); len(m) > 0 {
		r.score *= fitWeakField
		r.reasons = append(r.reasons, "condition in title or keywords: "+strings.Join(m, ", "))
	} else {
		fail("condition", "no condition of the review ("+phraseTexts(rt.conditions)+") among the trial's conditions")
	}

	// Intervention.
	strong = append([]string(nil), t.InterventionTerms...)
	for _, iv := range t.Interventions {
		strong = append(strong, iv.Name)
		strong = append(strong, iv.OtherNames...)
	}
	for _, a := range t.Arms {
		strong = append(strong, a.Label)
		strong = append(strong, a.InterventionNames...)
	}
	weak = []string{t.BriefTitle, t.OfficialTitle, t.Acronym}
	for _, o := range t.Outcomes {
		for _, g := range o.Groups {
			weak = append(weak, g.Title)
		}
	}
	if m := matchAny(rt.interventions, strong); len(m) > 0 {
		r.reasons = append(r.reasons, "intervention: "+strings.Join(m, ", "))
	} else if m := matchAny(rt.interventions, weak); len(m) > 0 {
		r.score *= fitWeakField
		r.reasons = append(r.reasons, "intervention in titles only: "+strings.Join(m, ", "))
	} else {
		fail("intervention", "no intervention of the review ("+phraseTexts(rt.interventions)+") in the trial")
	}

	// Comparator.
	if len(rt.comparators) > 0 {
		if k, where := findComparatorArm(rt.comparators, t); k != "" {
			r.reasons = append(r.reasons, fmt.Sprintf("comparator %s: %s", k, where))
		} else {
			names := make([]string, len(rt.comparators))
			for i, c := range rt.comparators {
				names[i] = c.Name
			}
			fail("comparator", "no "+strings.Join(names, " or ")+" arm")
		}
	}

	// Design.
	if st := strings.ToUpper(t.StudyType); st != "" && st != "INTERVENTIONAL" {
		fail("design", "not interventional ("+t.StudyType+")")
	}
	switch strings.ToUpper(t.Allocation) {
	case "RANDOMIZED":
		r.reasons = append(r.reasons, "randomized")
	case "":
		r.score *= fitUnknown
		r.reasons = append(r.reasons, "allocation not stated")
	default:
		r.notRandomized = "not randomized (allocation " + t.Allocation + ")"
		r.reasons = append(r.reasons, r.notRandomized+": proposed for a person to decide, never accepted automatically")
	}

	// Completion before the search date.
	status := strings.ToUpper(t.OverallStatus)
	switch status {
	case "RECRUITING", "NOT_YET_RECRUITING", "ENROLLING_BY_INVITATION", "ACTIVE_NOT_RECRUITING", "SUSPENDED", "WITHDRAWN":
		fail("completion", "not completed (status "+t.OverallStatus+")")
	}
	date, which := t.PrimaryCompletionDate.Text, "primary completion"
	if date == "" {
		date, which = t.CompletionDate.Text, "completion"
	}
	switch {
	case date == "":
		r.score *= fitUnknown
		r.reasons = append(r.reasons, "no completion date")
	case rt.rv.SearchDate == "":
		r.reasons = append(r.reasons, which+" "+date)
	case dateAfter(date, rt.rv.SearchDate):
		fail("completion", fmt.Sprintf("%s %s is after the review's search date %s", which, date, rt.rv.SearchDate))
	default:
		r.reasons = append(r.reasons, fmt.Sprintf("%s %s before search date %s", which, date, rt.rv.SearchDate))
	}
	if len(r.failed) > 0 {
		r.score = 0
	}
	r.score = math.Round(r.score*1e4) / 1e4
	return r
}

// dateAfter reports whether registry date a is after b, compared on their
// common precision ("2025" is not after "2025-03-31").
func dateAfter(a, b string) bool {
	n := len(a)
	if len(b) < n {
		n = len(b)
	}
	return a[:n] > b[:n]
}

// matchAny returns the phrases found, each entirely, within one of texts.
func matchAny(ps []terms.Phrase, texts []string) []string {
	found := map[string]bool{}
	for _, tx := range texts {
		if tx == "" {
			continue
		}
		for _, m := range terms.MatchPhrases(terms.NewTermSet(tx), ps) {
			found[m] = true
		}
	}
	var out []string
	for _, p := range ps {
		if found[p.Text] {
			out = append(out, p.Text)
		}
	}
	return out
}

func phraseTexts(ps []terms.Phrase) string {
	s := make([]string, len(ps))
	for i, p := range ps {
		s[i] = p.Text
	}
	return strings.Join(s, "; ")
}
