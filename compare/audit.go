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

// Random-effects confidence interval methods of Options.CI. The p-value
// of an estimate always comes from the same test as its interval: the
// normal z for CIWald, t with k-1 df on the HKSJ SE for the HKSJ forms.
const (
	// CIHKSJ is Hartung-Knapp-Sidik-Jonkman with its scale factor floored
	// at 1, so the interval is never narrower than the Wald one (Röver,
	// Knapp & Friede 2015, BMC Med Res Methodol 15:99); t with k-1 df.
	CIHKSJ = "hksj"
	// CIHKSJUntruncated is HKSJ without the floor (Hartung & Knapp 2001;
	// Sidik & Jonkman 2002): narrower than Wald when the studies agree
	// more than their SEs suggest.
	CIHKSJUntruncated = "hksj-untruncated"
	CIWald            = "wald" // normal
)

// CIMethods lists the values Options.CI accepts, for flag checking.
var CIMethods = []string{CIHKSJ, CIHKSJUntruncated, CIWald}

// ValidCI reports whether m is one of CIMethods.
func ValidCI(m string) bool {
	for _, x := range CIMethods {
		if m == x {
			return true
		}
	}
	return false
}

// MinStudiesHKSJ is the smallest number of studies with which an audit
// compares analyses on an HKSJ interval. With fewer (in either analysis of
// a comparison) both analyses use the Wald interval of the same model:
// HKSJ on 1 df is many times wider than Wald, and a switch of method
// between the two analyses would itself move significance.
const MinStudiesHKSJ = 3

// DefaultSeed is the seed the command line records when --seed is not
// given. (Options.Seed is used as given, zero included.)
const DefaultSeed uint64 = 20260101

// Options control an audit. The zero value is a 95% level with REML
// random effects and Hartung-Knapp-Sidik-Jonkman intervals.
type Options struct {
	Level float64             // confidence level; zero means 0.95
	Tau2  analysis.Tau2Method // zero means REML
	// CI is the random-effects interval: CIHKSJ (floored), CIHKSJUntruncated
	// or CIWald; zero means CIHKSJ. Whatever it says, a review whose
	// published-only analysis has fewer than MinStudiesHKSJ studies is
	// compared on Wald intervals throughout (ReviewAudit.FewStudies).
	CI string
	// SkipBias leaves out the publication-bias battery; SkipSelection only
	// its selection model (the slowest part).
	SkipBias, SkipSelection bool
	// Bootstrap > 0 adds a parametric-bootstrap check of the shift's
	// interval with that many replicates (Shift.BootCILow/High); zero
	// leaves it out. The interval itself is analytic
	// (analysis.ShiftInterval).
	Bootstrap int
	// Seed fixes the bootstrap's draws (with the review id); recorded
	// with the run.
	Seed uint64
	// Tolerance for outcome-reporting discrepancies; zero means
	// DefaultDiscrepancy.
	Discrepancy DiscrepancyTolerance
	// Harmonize chooses how registry records are read (posted analysis or
	// arms; whether non-randomized records may be used).
	Harmonize HarmonizeOptions
}

// ciMethod resolves CI: CIHKSJ unless it names another valid method.
func (o Options) ciMethod() string {
	if o.CI == CIWald || o.CI == CIHKSJUntruncated {
		return o.CI
	}
	return CIHKSJ
}

// reviewCI is the interval method of every analysis of one review whose
// smallest analysis has k studies, and whether the few-studies rule
// replaced an HKSJ form by Wald.
func (o Options) reviewCI(k int) (string, bool) {
	m := o.ciMethod()
	if m != CIWald && k < MinStudiesHKSJ {
		return CIWald, true
	}
	return m, false
}

func (o Options) level() float64 {
	if o.Level == 0 {
		return 0.95
	}
	return o.Level
}

func (o Options) tau2() analysis.Tau2Method {
	if o.Tau2 == "" {
		return analysis.Tau2REML
	}
	return o.Tau2
}

// Estimate is one pooled estimate with its interval. Fields are nil where
// the model could not give them (never NaN, so that JSON stays valid).
type Estimate struct {
	Model    string   `json:"model"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	P        *float64 `json:"p"`
	// CIMethod names the test behind CILow, CIHigh and P (CIWald for
	// the fixed effect). Random-effects only: Tau2Method and Tau2.
	Tau2Method string   `json:"tau2_method,omitempty"`
	Tau2       *float64 `json:"tau2,omitempty"`
	CIMethod   string   `json:"ci_method,omitempty"`
}

// Pooled holds the fixed-effect and random-effects analyses of one set of
// studies, with the heterogeneity figures.
type Pooled struct {
	K      int      `json:"k"`
	Fixed  Estimate `json:"fixed"`
	Random Estimate `json:"random"`
	I2     *float64 `json:"i2"`
	Q      *float64 `json:"q"`
	PILow  *float64 `json:"pi_low"`
	PIHigh *float64 `json:"pi_high"`

	result *analysis.MetaResult
}

// Shift compares the augmented random-effects estimate with the
// published-only one.
type Shift struct {
	// Absolute is augmented minus published.
	Absolute *float64 `json:"absolute"`
	// Relative is 100 (augmented - published) / published, in percent.
	// Relative and Inflation are nil, with the reason in Warnings, when
	// the published-only interval includes 0 or the two estimates differ
	// in sign: a percentage of a value indistinguishable from 0, or across
	// 0, means nothing.
	Relative *float64 `json:"relative"`
	// Inflation is 100 (published - augmented) / augmented: by how many
	// percent the published literature overstates the fuller evidence.
	Inflation *float64 `json:"inflation"`
	// Warnings says why Relative or Inflation are nil.
	Warnings []string `json:"warnings"`
	// PublishedSEUnits is the absolute shift divided by the published-only
	// random-effects SE.
	PublishedSEUnits *float64 `json:"published_se_units"`
	// SDUnits is the absolute shift in units of the review's pooled SD
	// (for SMD reviews the shift itself), so reviews on different scales
	// compare; nil when no study gives arm SDs.
	SDUnits *float64 `json:"sd_units"`
	// PooledSD is the SD used for SDUnits (MD reviews).
	PooledSD *float64 `json:"pooled_sd,omitempty"`
	// Toward says whether the augmented estimate is more favourable
	// ("benefit"), less favourable ("harm") or equal ("none"), given the
	// review's better direction.
	Toward string `json:"toward"`
	// OverstatementSD is favourable · (published - augmented) / SD
	// (favourable = -1 when lower is better, +1 when higher): positive
	// when the published-only analysis overstates the benefit. Nil without
	// a better direction or an SD scale. See orientShift.
	OverstatementSD *float64 `json:"overstatement_sd"`
	// CILow and CIHigh are the confidence interval of the shift (effect
	// scale, augmented minus published) at the audit's level, centred on
	// the printed shift: CIEstimate, the interval's centre, equals
	// Absolute. CIMethod names the method (analysis.ShiftInterval). Nil
	// when nothing was added or it cannot be estimated (the reason is in
	// the warnings).
	CILow      *float64 `json:"ci_low"`
	CIHigh     *float64 `json:"ci_high"`
	CIMethod   string   `json:"ci_method"`
	CIEstimate *float64 `json:"ci_estimate"`
	// BootCILow and BootCIHigh are the parametric-bootstrap check of that
	// interval (analysis.ShiftBootstrap, BootMethod), given only when
	// Options.Bootstrap > 0 (BootReplicates drawn, BootFailed left out).
	BootCILow      *float64 `json:"boot_ci_low"`
	BootCIHigh     *float64 `json:"boot_ci_high"`
	BootMethod     string   `json:"boot_method,omitempty"`
	BootReplicates int      `json:"boot_replicates"`
	BootFailed     int      `json:"boot_failed"`
	// OverstatementCILow and OverstatementCIHigh are that interval on the
	// oriented scale of OverstatementSD.
	OverstatementCILow  *float64 `json:"overstatement_ci_low"`
	OverstatementCIHigh *float64 `json:"overstatement_ci_high"`
}

// PIChange is the change of the prediction interval, augmented minus
// published, of each limit and of the width.
type PIChange struct {
	Low   *float64 `json:"low"`
	High  *float64 `json:"high"`
	Width *float64 `json:"width"`
}

// MissedAnalysis is the published-only analysis plus the accepted trials
// that have a results publication but are not in the review, pooled with
// the same model and interval method as the published-only analysis.
// Shift is its random-effects estimate minus the published-only one.
type MissedAnalysis struct {
	K        int      `json:"k"`
	KMissed  int      `json:"k_missed"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	P        *float64 `json:"p"`
	CIMethod string   `json:"ci_method"`
	Tau2     *float64 `json:"tau2"`
	Shift    *float64 `json:"shift"`
	// Trials are the missed publications, each with its effect and the
	// PMIDs of its RESULT references.
	Trials []MissedTrial `json:"trials"`
}

// MissedTrial is one trial published but not in the review.
type MissedTrial struct {
	StudyEffect
	PMIDs []string `json:"pmids"`
}

// Registry search states of RegistrySearch.Status.
const (
	SearchNotLinked    = "not-linked"    // no link at all: match was not run or found nothing
	SearchNoneEligible = "none-eligible" // links exist, every one rejected
	SearchLinked       = "linked"        // at least one link not rejected
)

// RegistrySearch is what the links say about the registry search of one
// review. LinkedTrials counts distinct trials with a link of any
// decision; EligibleTrials those with a link not rejected. Note is the
// sentence the command line and the report show (empty when linked).
type RegistrySearch struct {
	Status         string `json:"status"`
	LinkedTrials   int    `json:"linked_trials"`
	EligibleTrials int    `json:"eligible_trials"`
	Note           string `json:"note,omitempty"`
}

// registrySearchOf classifies the links of review id.
func registrySearchOf(id string, links []ingest.Link) RegistrySearch {
	all, ok := map[string]bool{}, map[string]bool{}
	for _, l := range links {
		if l.ReviewID != id {
			continue
		}
		all[l.TrialID] = true
		if !strings.EqualFold(l.Decision, "reject") {
			ok[l.TrialID] = true
		}
	}
	rs := RegistrySearch{Status: SearchLinked, LinkedTrials: len(all), EligibleTrials: len(ok)}
	switch {
	case len(all) == 0:
		rs.Status, rs.Note = SearchNotLinked, "no registry trials were linked: run `unshelved match`"
	case len(ok) == 0:
		rs.Status, rs.Note = SearchNoneEligible, fmt.Sprintf("%d %s examined, none eligible", len(all), plural(len(all), "trial", "trials"))
	}
	return rs
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// Rejected is a registry link that could not be used, with its reason.
type Rejected struct {
	TrialID      string `json:"trial_id"`
	OutcomeIndex int    `json:"outcome_index"`
	Reason       string `json:"reason"`
	Detail       string `json:"detail"`
}

// ReviewAudit is the result of auditing one review.
type ReviewAudit struct {
	ReviewID   string `json:"review_id"`
	Title      string `json:"title"`
	Measure    string `json:"measure"`
	Unit       string `json:"unit"`
	Better     string `json:"better"`
	KPublished int    `json:"k_published"`
	KAdded     int    `json:"k_added"`
	// Published is the published studies alone; Augmented adds the
	// registry-only (unpublished) trials, so Shift is the
	// publication-bias shift. Trials published but missed by the review
	// are kept apart in WithMissedPublications.
	Published Pooled `json:"published"`
	Augmented Pooled `json:"augmented"`
	// FewStudies is true when the published-only analysis has fewer than
	// MinStudiesHKSJ studies, so every analysis of the review (published,
	// augmented, with missed publications, what-if) uses the Wald
	// interval whatever Options.CI asked for; each analysis names its
	// method in random.ci_method.
	FewStudies bool  `json:"few_studies"`
	Shift      Shift `json:"shift"`
	// SignificanceChanged: the published-only and augmented random-effects
	// intervals (same method) differ in excluding 0.
	SignificanceChanged bool `json:"significance_changed"`
	// DirectionChanged: the two estimates have opposite signs and at
	// least one of the two intervals excludes 0.
	DirectionChanged bool `json:"direction_changed"`
	// WithMissedPublications pools the published studies with the
	// accepted trials that are published but not in the review (links
	// classed missed-publication): a search gap, not publication bias.
	// nil when there is none.
	WithMissedPublications *MissedAnalysis `json:"with_missed_publications"`
	// RegistrySearch says whether registry trials were linked to the
	// review at all.
	RegistrySearch RegistrySearch `json:"registry_search"`
	// MID is the review's minimal important difference (nil when none is
	// given); MIDCrossed says whether the favourable magnitude of the
	// random-effects estimate was at or beyond it in one analysis and not
	// in the other (nil without a MID or a better direction).
	MID        *float64 `json:"mid"`
	MIDCrossed *bool    `json:"mid_crossed"`
	// ConclusionChanged is significance, direction or MID changed; nil
	// when no registry trial was linked or none of the linked ones was
	// eligible (RegistrySearch.Status), since nothing was compared.
	ConclusionChanged *bool `json:"conclusion_changed"`
	// Tau2Change is augmented minus published tau²; PIChange the change
	// of the prediction interval.
	Tau2Change *float64  `json:"tau2_change"`
	PIChange   *PIChange `json:"pi_change"`
	// Subgroup is the published vs registry-only subgroup comparison;
	// nil when nothing was added.
	Subgroup *Subgroup `json:"subgroup"`
	// Missing is the registered evidence that cannot be added.
	Missing Missing `json:"missing"`
	// Discrepancies compare published values with the registry's for
	// trials that are both in the review and in the registry.
	Discrepancies []Discrepancy `json:"discrepancies"`
	Studies       []StudyEffect `json:"studies"`
	// Bias is the publication-bias battery on the published studies: what
	// a reader of the published literature could have seen.
	Bias     *BiasReport `json:"bias"`
	Rejected []Rejected  `json:"rejected"`
	Warnings []string    `json:"warnings"`
}

// AuditInput is everything AuditReview needs about one review.
type AuditInput struct {
	Review  ingest.Review
	Studies []ingest.ReviewStudy
	Links   []ingest.Link           // links of this review; only accepted ones are used
	Trials  map[string]ingest.Trial // registry records by trial id, for the links
	// PublishedEffects are studies already on the review's measure that
	// take the place of published studies (the linked trials of a scan);
	// they come before Studies.
	PublishedEffects []StudyEffect
}

// AuditReview pools a review's published studies alone and together with
// its accepted registry-only links, and reports the shift. A review with no
// usable published study is an error; links that cannot be used are listed
// in Rejected with their reason.
func AuditReview(in AuditInput, opts Options) (ReviewAudit, error) {
	rv := in.Review
	out := ReviewAudit{ReviewID: rv.ReviewID, Title: rv.Title, Measure: rv.Measure, Unit: rv.Unit, Better: rv.Better,
		Rejected: []Rejected{}, Warnings: []string{}}

	included := map[string]bool{}
	for _, e := range in.PublishedEffects {
		included[strings.ToUpper(e.TrialID)] = true
		out.Studies = append(out.Studies, e)
	}
	for _, s := range in.Studies {
		for _, id := range RegistryIDs(s.RegistryID) {
			included[id] = true
		}
		e, err := PublishedEffect(rv, s)
		if err != nil {
			out.Warnings = append(out.Warnings, fmt.Sprintf("published study %q left out: %v", s.Study, err))
			continue
		}
		out.Studies = append(out.Studies, e)
	}
	out.KPublished = len(out.Studies)
	if out.KPublished == 0 {
		return out, fmt.Errorf("review %s: no usable published study", rv.ReviewID)
	}

	links := append([]ingest.Link(nil), in.Links...)
	sort.SliceStable(links, func(i, j int) bool {
		if links[i].TrialID != links[j].TrialID {
			return links[i].TrialID < links[j].TrialID
		}
		return links[i].OutcomeIndex < links[j].OutcomeIndex
	})
	added := map[string]bool{}
	var incLinks, missingLinks []ingest.Link
	var missed []MissedTrial
	for _, l := range links {
		if l.ReviewID != rv.ReviewID || strings.EqualFold(l.Decision, "reject") {
			continue
		}
		switch l.Class {
		case ClassIncluded:
			incLinks = append(incLinks, l)
			continue
		case ClassNoResults:
			missingLinks = append(missingLinks, l)
			continue
		}
		if !Accepted(l.Decision) {
			continue
		}
		t, ok := in.Trials[l.TrialID]
		if !ok {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: ReasonNoOutcome,
				Detail: fmt.Sprintf("%s is not in the workspace; ingest its registry record", l.TrialID)})
			continue
		}
		if isIncluded(t, included) {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: ReasonIncluded,
				Detail: fmt.Sprintf("%s is already among the review's published studies", l.TrialID)})
			continue
		}
		if rej, warn, dup := duplicateGuard(rv, in.Studies, t, l); dup {
			out.Rejected = append(out.Rejected, rej)
			out.Warnings = append(out.Warnings, warn)
			continue
		}
		if added[t.TrialID] {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: "duplicate-trial",
				Detail: fmt.Sprintf("%s already contributes another outcome to this review; one outcome per trial is pooled", l.TrialID)})
			continue
		}
		e, err := RegistryEffectWith(rv, t, l, opts.Harmonize)
		if err != nil {
			var re *RejectError
			if !errors.As(err, &re) {
				return out, fmt.Errorf("review %s: trial %s: %w", rv.ReviewID, l.TrialID, err)
			}
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: re.Reason, Detail: re.Detail})
			continue
		}
		if e.Design != "" && e.Design != DesignRandomized {
			out.Warnings = append(out.Warnings, fmt.Sprintf("%s is %s and pooled as if randomized (--allow-nonrandomized)", l.TrialID, e.Design))
		}
		added[t.TrialID] = true
		if missedPublication(l, t) {
			e.Origin = "missed-publication"
			missed = append(missed, MissedTrial{StudyEffect: e, PMIDs: resultPMIDs(t)})
			continue
		}
		out.Studies = append(out.Studies, e)
	}
	out.KAdded = len(out.Studies) - out.KPublished
	out.RegistrySearch = registrySearchOf(rv.ReviewID, in.Links)

	// One interval method for every analysis of the review; the published
	// analysis is the smallest of them.
	method, few := opts.reviewCI(out.KPublished)
	out.FewStudies = few
	if few {
		out.Warnings = append(out.Warnings, fmt.Sprintf("only %d published %s: every analysis of this review uses the Wald interval (HKSJ is used from %d studies)",
			out.KPublished, plural(out.KPublished, "study", "studies"), MinStudiesHKSJ))
	}
	var err error
	out.Published, err = pool(out.Studies[:out.KPublished], opts, method)
	if err != nil {
		return out, fmt.Errorf("review %s: pool published studies: %w", rv.ReviewID, err)
	}
	out.Augmented, err = pool(out.Studies, opts, method)
	if err != nil {
		return out, fmt.Errorf("review %s: pool augmented studies: %w", rv.ReviewID, err)
	}
	out.Warnings = append(out.Warnings, prefixed("published-only: ", out.Published.result.Warnings)...)
	if out.KAdded > 0 {
		out.Warnings = append(out.Warnings, prefixed("augmented: ", out.Augmented.result.Warnings)...)
	}
	if len(missed) > 0 {
		out.WithMissedPublications, err = missedAnalysis(out.Studies[:out.KPublished], missed, out.Published, opts, method)
		if err != nil {
			return out, fmt.Errorf("review %s: pool with missed publications: %w", rv.ReviewID, err)
		}
	}
	out.Shift = shiftOf(out.Published, out.Augmented, rv.Better)
	out.Warnings = append(out.Warnings, prefixed("shift: ", out.Shift.Warnings)...)
	if out.Shift.Absolute != nil {
		if strings.EqualFold(rv.Measure, "SMD") {
			out.Shift.SDUnits = opt(*out.Shift.Absolute)
		} else if sd := reviewPooledSD(out.Studies, out.KPublished); sd > 0 {
			out.Shift.PooledSD = opt(sd)
			out.Shift.SDUnits = opt(*out.Shift.Absolute / sd)
		}
	}
	out.Warnings = append(out.Warnings, completeShift(&out, opts)...)
	out.SignificanceChanged = significant(out.Published.Random) != significant(out.Augmented.Random)
	out.DirectionChanged = directionChanged(out.Published.Random, out.Augmented.Random)
	out.MID = rv.MID
	out.MIDCrossed = midCrossed(out.Published.Random.Estimate, out.Augmented.Random.Estimate, rv.MID, rv.Better)
	if out.RegistrySearch.Status == SearchLinked {
		c := out.SignificanceChanged || out.DirectionChanged || (out.MIDCrossed != nil && *out.MIDCrossed)
		out.ConclusionChanged = &c
	}
	out.Tau2Change = diffPtr(out.Augmented.Random.Tau2, out.Published.Random.Tau2)
	if out.Published.PILow != nil && out.Augmented.PILow != nil {
		out.PIChange = &PIChange{Low: diffPtr(out.Augmented.PILow, out.Published.PILow), High: diffPtr(out.Augmented.PIHigh, out.Published.PIHigh),
			Width: opt((*out.Augmented.PIHigh - *out.Augmented.PILow) - (*out.Published.PIHigh - *out.Published.PILow))}
	}
	if out.KAdded > 0 {
		sg := subgroupOf(out.Studies[:out.KPublished], out.Studies[out.KPublished:], opts)
		out.Subgroup = &sg
	}
	out.Missing = missingOf(rv, out, missingLinks, in.Trials, included, added, opts)
	out.Discrepancies = discrepanciesOf(rv, out.Studies[:out.KPublished], incLinks, in.Trials, opts)
	if !opts.SkipBias {
		b := reviewBias(out, opts)
		out.Bias = &b
	}
	return out, nil
}

// missedPublication says whether an accepted link brings a trial that is
// published but not in the review: classed missed-publication by matching,
// or, for a link without a class, a trial with a results publication (the
// rule matching uses). Such trials measure a search gap, not publication
// bias, and are pooled apart (ReviewAudit.WithMissedPublications).
func missedPublication(l ingest.Link, t ingest.Trial) bool {
	if l.Class != "" {
		return l.Class == ClassMissedPublication
	}
	return hasResultReference(t)
}

// resultPMIDs lists the PMIDs of a trial's RESULT references, in record
// order, without repeats.
func resultPMIDs(t ingest.Trial) []string {
	out := []string{}
	seen := map[string]bool{}
	for _, r := range t.References {
		id := strings.TrimSpace(r.PMID)
		if strings.EqualFold(r.Type, "RESULT") && id != "" && !seen[id] {
			seen[id] = true
			out = append(out, id)
		}
	}
	return out
}

// missedAnalysis pools the published studies with the missed publications.
func missedAnalysis(pub []StudyEffect, missed []MissedTrial, published Pooled, opts Options, method string) (*MissedAnalysis, error) {
	studies := append([]StudyEffect(nil), pub...)
	for _, m := range missed {
		studies = append(studies, m.StudyEffect)
	}
	p, err := pool(studies, opts, method)
	if err != nil {
		return nil, err
	}
	r := p.Random
	return &MissedAnalysis{K: p.K, KMissed: len(missed), Estimate: r.Estimate, SE: r.SE, CILow: r.CILow, CIHigh: r.CIHigh, P: r.P,
		CIMethod: r.CIMethod, Tau2: r.Tau2, Shift: diffPtr(r.Estimate, published.Random.Estimate), Trials: missed}, nil
}

// How AuditReview uses link classes (ingest.Link.Class, set by automatic
// matching): links with ClassIncluded are compared with the published
// study (Discrepancies); links with ClassNoResults count as missing
// evidence (Missing); neither is pooled. Links of any other class, or of
// none, are pooled when accepted: into the augmented analysis, unless they
// are missed publications (see missedPublication).

// midCrossed reports whether the favourable magnitude of the estimate was
// at or beyond the MID in one analysis and not in the other:
//
//	beyond(x) = dir · x >= MID,  dir = -1 when lower is better, +1 when higher
//
// nil when there is no MID, no better direction or a missing estimate.
func midCrossed(pub, aug, mid *float64, better string) *bool {
	dir := favourable(better)
	if mid == nil || dir == 0 || pub == nil || aug == nil {
		return nil
	}
	m := math.Abs(*mid)
	b := (dir**pub >= m) != (dir**aug >= m)
	return &b
}

func diffPtr(a, b *float64) *float64 {
	if a == nil || b == nil {
		return nil
	}
	return opt(*a - *b)
}

// reviewPooledSD is the SD that puts a review's mean differences on a
// standard scale: the df-weighted pooled SD of the published studies with
// arm data, or of all studies when no published one has them.
//
//	SD = sqrt( Σ df_i SD_i² / Σ df_i ),  df_i = n1_i + n2_i - 2
func reviewPooledSD(studies []StudyEffect, kPublished int) float64 {
	for _, set := range [][]StudyEffect{studies[:kPublished], studies} {
		var num, den float64
		for _, s := range set {
			if s.PooledSD > 0 && s.TreatN+s.CtrlN > 2 {
				df := float64(s.TreatN + s.CtrlN - 2)
				num += df * s.PooledSD * s.PooledSD
				den += df
			}
		}
		if den > 0 {
			return math.Sqrt(num / den)
		}
	}
	return 0
}

// favourable is the sign of a beneficial effect: -1 when lower is better.
func favourable(better string) float64 {
	if strings.EqualFold(better, "lower") {
		return -1
	}
	if strings.EqualFold(better, "higher") {
		return 1
	}
	return 0
}

// isIncluded reports whether a registry trial is among the review's
// published studies, by its id, its aliases or its secondary ids.
func isIncluded(t ingest.Trial, included map[string]bool) bool {
	if included[strings.ToUpper(t.TrialID)] {
		return true
	}
	for _, a := range t.Aliases {
		if included[strings.ToUpper(a)] {
			return true
		}
	}
	for _, s := range t.SecondaryIDs {
		if included[strings.ToUpper(strings.TrimSpace(s.ID))] {
			return true
		}
	}
	return false
}

// pool runs the fixed-effect and random-effects analyses of studies, the
// random-effects interval and p by method (see randomInterval).
func pool(studies []StudyEffect, opts Options, method string) (Pooled, error) {
	effects := make([]float64, len(studies))
	seEffects := make([]float64, len(studies))
	labels := make([]string, len(studies))
	for i, s := range studies {
		effects[i], seEffects[i], labels[i] = s.Effect, s.SE, s.Study
	}
	res, err := analysis.Pool(effects, seEffects, analysis.Settings{
		Level: opts.level(), Tau2: opts.tau2(), Labels: labels, SkipLeaveOneOut: true, TruncateHKSJ: method == CIHKSJ,
	})
	if err != nil {
		return Pooled{}, err
	}
	if method == CIWald {
		res.Warnings = withoutHKSJWarnings(res.Warnings)
	}
	p := Pooled{K: len(studies), result: &res}
	f := res.Fixed
	p.Fixed = Estimate{Model: "fixed", Estimate: opt(f.Estimate), SE: opt(f.SE), CILow: opt(f.CILow), CIHigh: opt(f.CIHigh), P: opt(f.P),
		CIMethod: CIWald}
	r := res.Random
	iv := randomInterval(r, len(studies), method)
	p.Random = Estimate{Model: "random", Estimate: opt(r.Estimate), SE: opt(iv.SE), CILow: opt(iv.Low), CIHigh: opt(iv.High), P: opt(iv.P),
		Tau2Method: string(r.Method), Tau2: opt(r.Tau2), CIMethod: iv.Method}
	p.I2, p.Q = opt(res.Het.I2), opt(res.Het.Q)
	p.PILow, p.PIHigh = opt(r.PILow), opt(r.PIHigh)
	return p, nil
}

// withoutHKSJWarnings drops the pooling warnings about the HKSJ interval
// (its scale factor below 1, its t on 1 df), which mislead where the
// review's analyses use the Wald interval.
func withoutHKSJWarnings(ws []string) []string {
	out := ws[:0:0]
	for _, w := range ws {
		if strings.HasPrefix(w, "The Hartung-Knapp-Sidik-Jonkman scale factor") ||
			strings.HasPrefix(w, "Only two studies: the Hartung-Knapp-Sidik-Jonkman") {
			continue
		}
		out = append(out, w)
	}
	return out
}

// interval is a random-effects SE, interval and p from one test.
type interval struct {
	SE, Low, High, P float64
	Method           string
}

// randomInterval picks the SE, interval and two-sided p of the
// random-effects result r of k studies for method: the normal (Wald) test
// for CIWald, t with k-1 df on the HKSJ SE for CIHKSJ and
// CIHKSJUntruncated (r must have been fitted with TruncateHKSJ set for the
// floored form). HKSJ needs k >= 2; below that the Wald test is used and
// Method says so. p < 1 - level exactly when the interval excludes 0.
func randomInterval(r analysis.RandomResult, k int, method string) interval {
	if method != CIWald && k >= 2 {
		return interval{SE: r.HKSJSE, Low: r.HKSJLow, High: r.HKSJHigh, P: r.HKSJP, Method: method}
	}
	return interval{SE: r.SE, Low: r.CILow, High: r.CIHigh, P: r.P, Method: CIWald}
}

func shiftOf(pub, aug Pooled, better string) Shift {
	s := Shift{Toward: "none", Warnings: []string{}}
	if pub.Random.Estimate == nil || aug.Random.Estimate == nil {
		return s
	}
	p, a := *pub.Random.Estimate, *aug.Random.Estimate
	d := a - p
	s.Absolute = opt(d)
	switch {
	case !significant(pub.Random):
		s.Warnings = append(s.Warnings, "relative and inflation not given: the published-only interval includes 0, so a percentage of it means nothing")
	case sign(&p)*sign(&a) < 0:
		s.Warnings = append(s.Warnings, "relative and inflation not given: the published-only and augmented estimates have opposite signs")
	default:
		s.Relative = opt(100 * d / p)
		if a != 0 {
			s.Inflation = opt(100 * (p - a) / a)
		}
	}
	if pub.Random.SE != nil && *pub.Random.SE > 0 {
		s.PublishedSEUnits = opt(d / *pub.Random.SE)
	}
	switch {
	case d == 0:
		s.Toward = "none"
	case (d < 0) == strings.EqualFold(better, "lower"):
		s.Toward = "benefit"
	default:
		s.Toward = "harm"
	}
	return s
}

// directionChanged: the estimates have opposite signs and at least one
// interval excludes 0 (a sign flip between two estimates both
// indistinguishable from 0 is noise).
func directionChanged(pub, aug Estimate) bool {
	return sign(pub.Estimate)*sign(aug.Estimate) < 0 && (significant(pub) || significant(aug))
}

// significant reports whether the interval excludes zero.
func significant(e Estimate) bool {
	if e.CILow == nil || e.CIHigh == nil {
		return false
	}
	return *e.CILow > 0 || *e.CIHigh < 0
}

func sign(x *float64) int {
	switch {
	case x == nil || *x == 0:
		return 0
	case *x > 0:
		return 1
	default:
		return -1
	}
}

// opt turns NaN and infinities into nil so that JSON stays valid.
func opt(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func prefixed(p string, s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = p + x
	}
	return out
}

// ReviewError is a review that could not be audited, with the reason.
type ReviewError struct {
	ReviewID string
	Err      error
}

// Error names the review once, even when the reason names it too.
func (e *ReviewError) Error() string {
	msg := e.Err.Error()
	if strings.HasPrefix(msg, "review "+e.ReviewID+":") {
		return msg
	}
	return "review " + e.ReviewID + ": " + msg
}
func (e *ReviewError) Unwrap() error { return e.Err }

// optionsRecord is Options as stored with a run.
type optionsRecord struct {
	Level         float64 `json:"level"`
	Tau2          string  `json:"tau2"`
	CI            string  `json:"ci"`
	Bootstrap     int     `json:"bootstrap"`
	Seed          uint64  `json:"seed"`
	SkipBias      bool    `json:"skip_bias"`
	SkipSelection bool    `json:"skip_selection"`
	DiscrepancySD float64 `json:"discrepancy_sd_units"`
}

func (o Options) record() optionsRecord {
	d := o.Discrepancy.resolve()
	return optionsRecord{Level: o.level(), Tau2: string(o.tau2()), CI: o.ciMethod(), Bootstrap: o.Bootstrap, Seed: o.Seed,
		SkipBias: o.SkipBias, SkipSelection: o.SkipSelection, DiscrepancySD: d.SDUnits}
}
