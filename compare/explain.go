package compare

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"unshelved/analysis"
	"unshelved/ingest"
)

// DiscrepancyTolerance says when a published value and the registry value
// of the same trial's outcome disagree. A difference is flagged when it
// exceeds SDUnits in units of the study's SD (for MD: the published
// study's pooled SD when it gave arms, else the review's pooled SD; for
// SMD the difference itself). A relative difference alone never flags:
// near 0 a negligible difference is a large percentage (0.05 vs 0.06 is
// 20% but 0.01 SD). Where no SD is known the difference is not flagged
// and Discrepancy.Reason says so. Zero fields take DefaultDiscrepancy's.
type DiscrepancyTolerance struct {
	SDUnits float64
}

// DefaultDiscrepancy flags differences beyond 0.1 SD units (common
// practice, no source: a tenth of an SD is well below the usual
// small-effect size of 0.2).
var DefaultDiscrepancy = DiscrepancyTolerance{SDUnits: 0.1}

func (t DiscrepancyTolerance) resolve() DiscrepancyTolerance {
	if t.SDUnits == 0 {
		t.SDUnits = DefaultDiscrepancy.SDUnits
	}
	return t
}

// Discrepancy compares one published study with the registry result of the
// same trial (a link with class "included" naming an outcome and groups).
// Difference is registry minus published, on the review's measure.
type Discrepancy struct {
	Study        string `json:"study"`
	TrialID      string `json:"trial_id"`
	OutcomeIndex int    `json:"outcome_index"`
	OutcomeTitle string `json:"outcome_title"`
	OutcomeType  string `json:"outcome_type"`
	// RegistryPrimary says whether the outcome the review used is a
	// primary outcome of the registry record; PrimaryOutcomes lists the
	// record's primary outcome titles.
	RegistryPrimary  bool     `json:"registry_primary"`
	PrimaryOutcomes  []string `json:"primary_outcomes"`
	PublishedEffect  *float64 `json:"published_effect"`
	RegistryEffect   *float64 `json:"registry_effect"`
	Difference       *float64 `json:"difference"`
	DifferenceSD     *float64 `json:"difference_sd_units"`
	RelativePct      *float64 `json:"relative_pct"`
	Flagged          bool     `json:"flagged"`
	Reason           string   `json:"reason,omitempty"` // why the registry value could not be computed or compared
	PublishedStudyIn bool     `json:"published_study_found"`
}

func discrepanciesOf(rv ingest.Review, pub []StudyEffect, links []ingest.Link,
	trials map[string]ingest.Trial, opts Options) []Discrepancy {
	out := []Discrepancy{}
	tol := opts.Discrepancy.resolve()
	reviewSD := reviewPooledSD(pub, len(pub))
	for _, l := range bestLinkPerTrial(links) {
		if len(l.TreatGroups) == 0 || len(l.CtrlGroups) == 0 {
			continue
		}
		t, ok := trials[l.TrialID]
		if !ok {
			continue
		}
		d := Discrepancy{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, PrimaryOutcomes: []string{}}
		for _, o := range t.Outcomes {
			if strings.EqualFold(o.Type, "PRIMARY") {
				d.PrimaryOutcomes = append(d.PrimaryOutcomes, o.Title)
			}
			if o.Index == l.OutcomeIndex {
				d.OutcomeTitle, d.OutcomeType = o.Title, o.Type
				d.RegistryPrimary = strings.EqualFold(o.Type, "PRIMARY")
			}
		}
		var ps *StudyEffect
		for i := range pub {
			ids := map[string]bool{}
			for _, id := range RegistryIDs(pub[i].TrialID) {
				ids[id] = true
			}
			if len(ids) > 0 && isIncluded(t, ids) {
				ps = &pub[i]
				break
			}
		}
		e, err := RegistryEffectWith(rv, t, l, HarmonizeOptions{Prefer: opts.Harmonize.Prefer, AllowNonrandomized: true})
		if ps == nil && err == nil {
			// A published study that cites no registry id: the one whose
			// arm sizes match the registry outcome's (as matching found it).
			ps = studyByArmSizes(pub, e.TreatN, e.CtrlN)
		}
		if ps != nil {
			d.Study, d.PublishedStudyIn = ps.Study, true
			d.PublishedEffect = analysis.FiniteOrNil(ps.Effect)
		}
		if err != nil {
			var re *RejectError
			if errors.As(err, &re) {
				d.Reason = re.Reason + ": " + re.Detail
			} else {
				d.Reason = err.Error()
			}
			out = append(out, d)
			continue
		}
		d.RegistryEffect = analysis.FiniteOrNil(e.Effect)
		if ps != nil {
			diff := e.Effect - ps.Effect
			d.Difference = analysis.FiniteOrNil(diff)
			sd := 1.0
			if !strings.EqualFold(rv.Measure, "SMD") {
				sd = ps.PooledSD
				if !(sd > 0) {
					sd = reviewSD
				}
			}
			if sd > 0 {
				d.DifferenceSD = analysis.FiniteOrNil(diff / sd)
			}
			if ps.Effect != 0 {
				d.RelativePct = analysis.FiniteOrNil(100 * diff / math.Abs(ps.Effect))
			}
			d.Flagged = d.DifferenceSD != nil && math.Abs(*d.DifferenceSD) > tol.SDUnits
			if d.DifferenceSD == nil {
				d.Reason = "no SD known to put the difference in SD units; not flagged"
			}
		}
		out = append(out, d)
	}
	return out
}

// bestLinkPerTrial keeps, for each trial, the outcome link a discrepancy
// check should use: an accepted one if any, else the best-scoring one
// (lowest outcome index on ties); rejected links and links without groups
// are left out. Trials keep their first-seen order.
func bestLinkPerTrial(links []ingest.Link) []ingest.Link {
	best := map[string]int{}
	var out []ingest.Link
	better := func(a, b ingest.Link) bool {
		aa, ba := Accepted(a.Decision), Accepted(b.Decision)
		if aa != ba {
			return aa
		}
		as, bs := -1.0, -1.0
		if a.Score != nil {
			as = *a.Score
		}
		if b.Score != nil {
			bs = *b.Score
		}
		if as != bs {
			return as > bs
		}
		return a.OutcomeIndex < b.OutcomeIndex
	}
	for _, l := range links {
		if strings.EqualFold(l.Decision, "reject") || len(l.TreatGroups) == 0 || len(l.CtrlGroups) == 0 {
			continue
		}
		i, seen := best[l.TrialID]
		if !seen {
			best[l.TrialID] = len(out)
			out = append(out, l)
			continue
		}
		if better(l, out[i]) {
			out[i] = l
		}
	}
	return out
}

// studyByArmSizes finds the published study with arm data whose group
// sizes equal n1 and n2 (within 2 participants each, in either order).
func studyByArmSizes(pub []StudyEffect, n1, n2 int) *StudyEffect {
	near := func(a, b int) bool { return a > 0 && b > 0 && a-b <= 2 && b-a <= 2 }
	for i := range pub {
		p := &pub[i]
		if p.TrialID == "" && (near(p.TreatN, n1) && near(p.CtrlN, n2) || near(p.TreatN, n2) && near(p.CtrlN, n1)) {
			return p
		}
	}
	return nil
}

// Explanation traces one registry trial's use in one review: the link
// used (the accepted one, else the best candidate) with its decision and
// who made it, the record, the outcome and groups as posted, every
// conversion step with its inputs and output, the posted between-group
// analysis and how it compares, the result or the reason it was not used,
// and the trial's other candidate outcomes, one line each.
type Explanation struct {
	ReviewID string            `json:"review_id"`
	Measure  string            `json:"measure"`
	Unit     string            `json:"unit"`
	Trial    ExplainedRecord   `json:"trial"`
	Link     ExplainedLink     `json:"link"`
	Outcome  *ExplainedOutcome `json:"outcome"`
	// Effect and SE on the review's measure, nil when rejected.
	Effect        *float64              `json:"effect"`
	SE            *float64              `json:"se"`
	ConvertedFrom string                `json:"converted_from,omitempty"`
	Design        string                `json:"design,omitempty"`
	Derivations   []analysis.Derivation `json:"derivations"`
	// PostedAnalysis is the record's own analysis of the linked groups,
	// used or not, beside the arm-based result.
	PostedAnalysis *PostedComparison `json:"posted_analysis"`
	Flags          []string          `json:"flags"`
	Rejected       string            `json:"rejected,omitempty"` // reason: detail
	// Candidates are the trial's other outcome links in this review.
	Candidates []ExplainedCandidate `json:"candidates"`
}

// ExplainedRecord is the registry record's identity and dates.
type ExplainedRecord struct {
	TrialID            string `json:"trial_id"`
	Registry           string `json:"registry"`
	Title              string `json:"title"`
	Sponsor            string `json:"sponsor"`
	SponsorClass       string `json:"sponsor_class"`
	Status             string `json:"status"`
	Start              string `json:"start_date"`
	PrimaryCompletion  string `json:"primary_completion_date"`
	Completion         string `json:"completion_date"`
	ResultsFirstPosted string `json:"results_first_posted"`
	HasResults         *bool  `json:"has_results"`
	Enrollment         *int   `json:"enrollment"`
	Allocation         string `json:"allocation"`
	InterventionModel  string `json:"intervention_model"`
}

// ExplainedLink is the link as stored. DecidedBy is "auto" (accepted by
// match --accept-above), "person" (a decision loaded from a links file)
// or "" (no decision).
type ExplainedLink struct {
	OutcomeIndex int      `json:"outcome_index"`
	TreatGroups  []string `json:"treat_groups"`
	CtrlGroups   []string `json:"ctrl_groups"`
	Flip         bool     `json:"flip"`
	UnitFrom     string   `json:"unit_from"`
	Decision     string   `json:"decision"`
	DecidedBy    string   `json:"decided_by"`
	Class        string   `json:"class"`
	Score        *float64 `json:"score"`
	Reasons      string   `json:"reasons"`
}

// ExplainedCandidate is another outcome link of the same trial and review,
// in one line: what it is, its decision and why it is not the one used.
type ExplainedCandidate struct {
	OutcomeIndex int      `json:"outcome_index"`
	OutcomeTitle string   `json:"outcome_title"`
	Score        *float64 `json:"score"`
	Decision     string   `json:"decision"`
	DecidedBy    string   `json:"decided_by"`
	Effect       *float64 `json:"effect"`
	SE           *float64 `json:"se"`
	Why          string   `json:"why"`
}

// ExplainedOutcome is the outcome measure as posted.
type ExplainedOutcome struct {
	Index      int            `json:"index"`
	Type       string         `json:"type"`
	Title      string         `json:"title"`
	TimeFrame  string         `json:"time_frame"`
	Unit       string         `json:"unit"`
	Param      string         `json:"param_type"`
	Dispersion string         `json:"dispersion"`
	Groups     []ExplainedArm `json:"groups"`
}

// ExplainedArm is one group's posted values (text as posted).
type ExplainedArm struct {
	GroupID string `json:"group_id"`
	Title   string `json:"title"`
	Role    string `json:"role"` // experimental, comparator or "" (not used)
	N       string `json:"n"`
	Value   string `json:"value"`
	Spread  string `json:"spread"`
	Lower   string `json:"lower"`
	Upper   string `json:"upper"`
}

// decidedBy says who made a link's decision.
func decidedBy(l ingest.Link) string {
	switch {
	case l.Decision == "":
		return ""
	case l.AutoAccepted:
		return "auto"
	default:
		return "person"
	}
}

// ExplainLink traces the conversion of one link with the default
// harmonization options (see ExplainLinkWith).
func ExplainLink(rv ingest.Review, t ingest.Trial, l ingest.Link) Explanation {
	return ExplainLinkWith(rv, t, l, HarmonizeOptions{})
}

// ExplainLinkWith traces the conversion of one link (see Explanation);
// Candidates is left empty.
func ExplainLinkWith(rv ingest.Review, t ingest.Trial, l ingest.Link, hopts HarmonizeOptions) Explanation {
	ex := Explanation{ReviewID: rv.ReviewID, Measure: rv.Measure, Unit: rv.Unit, Derivations: []analysis.Derivation{}, Flags: []string{},
		Candidates: []ExplainedCandidate{},
		Trial: ExplainedRecord{TrialID: t.TrialID, Registry: t.Registry, Title: t.BriefTitle, Sponsor: t.LeadSponsor.Name,
			SponsorClass: t.LeadSponsor.Class, Status: t.OverallStatus, Start: t.StartDate.Text,
			PrimaryCompletion: t.PrimaryCompletionDate.Text, Completion: t.CompletionDate.Text,
			ResultsFirstPosted: t.ResultsFirstPosted.Text, HasResults: t.HasResults, Enrollment: t.Enrollment,
			Allocation: t.Allocation, InterventionModel: t.InterventionModel},
		Link: ExplainedLink{OutcomeIndex: l.OutcomeIndex, TreatGroups: nonNil(l.TreatGroups), CtrlGroups: nonNil(l.CtrlGroups),
			Flip: l.Flip, UnitFrom: l.UnitFrom, Decision: l.Decision, DecidedBy: decidedBy(l), Class: l.Class, Score: l.Score, Reasons: l.Reasons}}
	for i := range t.Outcomes {
		o := &t.Outcomes[i]
		if o.Index != l.OutcomeIndex {
			continue
		}
		eo := &ExplainedOutcome{Index: o.Index, Type: o.Type, Title: o.Title, TimeFrame: o.TimeFrame, Unit: o.Unit,
			Param: o.ParamType, Dispersion: o.DispersionText, Groups: []ExplainedArm{}}
		role := map[string]string{}
		for _, g := range l.TreatGroups {
			role[g] = "experimental"
		}
		for _, g := range l.CtrlGroups {
			role[g] = "comparator"
		}
		// The row the conversion reads: the review's timepoint picks it
		// when the outcome is posted per visit.
		row := 0
		if c, _, _, err := selectRow(rv, o); err == nil {
			row = c
		}
		for _, g := range o.Groups {
			a := ExplainedArm{GroupID: g.ID, Title: g.Title, Role: role[g.ID]}
			if len(o.Classes) > row {
				if n, ok := groupN(o, row, g.ID); ok {
					a.N = fmt.Sprint(n)
				}
				if len(o.Classes[row].Categories) > 0 {
					for _, m := range o.Classes[row].Categories[0].Measurements {
						if m.GroupID == g.ID {
							a.Value, a.Spread, a.Lower, a.Upper = m.Value.Text, m.Spread.Text, m.Lower.Text, m.Upper.Text
						}
					}
				}
			}
			eo.Groups = append(eo.Groups, a)
		}
		ex.Outcome = eo
	}
	e, err := RegistryEffectWith(rv, t, l, hopts)
	ex.Design, ex.PostedAnalysis = e.Design, e.PostedAnalysis
	if err != nil {
		var re *RejectError
		if errors.As(err, &re) {
			ex.Rejected = re.Reason + ": " + re.Detail
		} else {
			ex.Rejected = err.Error()
		}
		return ex
	}
	ex.Effect, ex.SE, ex.ConvertedFrom = analysis.FiniteOrNil(e.Effect), analysis.FiniteOrNil(e.SE), e.ConvertedFrom
	if e.Derivations != nil {
		ex.Derivations = e.Derivations
	}
	if e.Flags != nil {
		ex.Flags = e.Flags
	}
	return ex
}

// linkRank orders a trial's links for explaining: accepted first, then
// undecided, then rejected; within each, higher score first, then lower
// outcome index.
func linkRank(links []ingest.Link) {
	rank := func(l ingest.Link) int {
		switch strings.ToLower(l.Decision) {
		case "accept":
			return 0
		case "reject":
			return 2
		}
		return 1
	}
	sort.SliceStable(links, func(i, j int) bool {
		a, b := links[i], links[j]
		if ra, rb := rank(a), rank(b); ra != rb {
			return ra < rb
		}
		sa, sb := -1.0, -1.0
		if a.Score != nil {
			sa = *a.Score
		}
		if b.Score != nil {
			sb = *b.Score
		}
		if sa != sb {
			return sa > sb
		}
		return a.OutcomeIndex < b.OutcomeIndex
	})
}

// ExplainTrialInReview explains one trial's links in one review: the
// first after linkRank in full, the others as candidates.
func ExplainTrialInReview(rv ingest.Review, t ingest.Trial, links []ingest.Link, hopts HarmonizeOptions) Explanation {
	linkRank(links)
	ex := ExplainLinkWith(rv, t, links[0], hopts)
	for _, l := range links[1:] {
		c := ExplainedCandidate{OutcomeIndex: l.OutcomeIndex, OutcomeTitle: l.OutcomeTitle, Score: l.Score, Decision: l.Decision, DecidedBy: decidedBy(l)}
		if o := outcomeByIndex(t, l.OutcomeIndex); o != nil {
			c.OutcomeTitle = o.Title
		}
		e, err := RegistryEffectWith(rv, t, l, hopts)
		if err == nil {
			c.Effect, c.SE = analysis.FiniteOrNil(e.Effect), analysis.FiniteOrNil(e.SE)
		}
		switch {
		case strings.EqualFold(l.Decision, "reject"):
			c.Why = "rejected"
			if c.DecidedBy != "" {
				c.Why += " by " + c.DecidedBy
			}
		case strings.EqualFold(l.Decision, "accept"):
			c.Why = "also accepted; one outcome per trial is pooled (the one above)"
		case err != nil:
			c.Why = "cannot be used: " + err.Error()
		default:
			c.Why = "not chosen: the link above ranks first"
		}
		if err != nil && !strings.HasPrefix(c.Why, "cannot") {
			c.Why += "; cannot be used: " + err.Error()
		}
		ex.Candidates = append(ex.Candidates, c)
	}
	return ex
}
