package compare

import (
	"errors"
	"fmt"
	"maps"
	"slices"
	"sort"
	"strings"

	"unshelved/analysis"
	"unshelved/ingest"
)

// A scan measures selective publication inside the registry. For one
// question (a review row with no published studies), the eligible trials
// that posted results are split by whether their record links a results
// publication. Pooling the linked trials' posted results gives what a
// review of the published trials would have seen; pooling all of them the
// fuller evidence. The question is then audited as a review whose
// "published studies" are the linked trials and whose registry additions
// are the unlinked ones, so every figure (model, interval method, shift,
// orientation, subgroup test, missing evidence, bias battery) is the
// audit's own.

// DefaultScanAcceptAbove is the score above which a scan accepts a trial's
// best outcome when no links file decides for the trial.
const DefaultScanAcceptAbove = 0.8

// ScanComparison names what a scan compares, on every result and page.
const ScanComparison = "registry-internal comparison"

// ScanCaution is stated with every scan.
const ScanCaution = "A trial without a RESULT reference is not proof of non-publication: registry links to publications " +
	"are incomplete, so some 'unlinked' trials are published, and the shift measures the registry's links, not publication itself. " +
	"Registry results are unreviewed; defer to review authors, GRADE and local practice."

// ScanOptions control a scan.
type ScanOptions struct {
	Audit Options
	// AcceptAbove accepts each trial's best outcome whose score is above
	// it; zero means DefaultScanAcceptAbove. Trials that are not
	// randomized, crossover or possibly included are never accepted
	// automatically.
	AcceptAbove float64
	// HighestDose keeps only the highest dose (see MatchOptions).
	HighestDose bool
}

// AcceptAboveOrDefault is AcceptAbove, or DefaultScanAcceptAbove when it is zero.
func (o ScanOptions) AcceptAboveOrDefault() float64 {
	if o.AcceptAbove <= 0 {
		return DefaultScanAcceptAbove
	}
	return o.AcceptAbove
}

// ScanPool is one pooled analysis of a scan, from the audit's
// random-effects model.
type ScanPool struct {
	K        int      `json:"k"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	Tau2     *float64 `json:"tau2"`
	P        *float64 `json:"p"`
	CIMethod string   `json:"ci_method,omitempty"`
}

func scanPool(p Pooled) ScanPool {
	r := p.Random
	return ScanPool{K: p.K, Estimate: r.Estimate, SE: r.SE, CILow: r.CILow, CIHigh: r.CIHigh, Tau2: r.Tau2, P: r.P, CIMethod: r.CIMethod}
}

// ScanTrial is one pooled trial of a scan.
type ScanTrial struct {
	TrialID      string `json:"trial_id"`
	Linked       bool   `json:"linked"`
	PMID         string `json:"pmid,omitempty"`
	OutcomeIndex int    `json:"outcome_index"`
	// TreatGroups and CtrlGroups are the record's group ids pooled into
	// the experimental and comparator arms.
	TreatGroups []string `json:"treat_groups"`
	CtrlGroups  []string `json:"ctrl_groups"`
	Effect      float64  `json:"effect"`
	SE          float64  `json:"se"`
	N           int      `json:"n"`
	// Chosen is "auto" (best outcome above the threshold) or "links-file".
	Chosen string `json:"chosen"`
}

// ScanFlow counts what happened to the candidate trials of a question.
type ScanFlow struct {
	Examined int `json:"examined"`
	Eligible int `json:"eligible"` // fit the question (with or without results)
	Accepted int `json:"accepted"` // an outcome accepted, automatically or by the links file
	// NotAccepted counts eligible trials with results left out, by reason:
	// low-score, not-randomized, crossover, possibly-included,
	// no-fitting-outcome, not-converted, links-file (rejected there), or a
	// harmonization reason code.
	NotAccepted map[string]int `json:"not_accepted"`
}

// ScanResult is the scan of one question.
type ScanResult struct {
	QuestionID string `json:"question_id"`
	Title      string `json:"title"`
	Measure    string `json:"measure"`
	Unit       string `json:"unit"`
	Better     string `json:"better"`
	Comparison string `json:"comparison"`
	// Linked pools the trials whose record links a results publication,
	// All every accepted trial.
	Linked ScanPool `json:"linked"`
	All    ScanPool `json:"all"`
	// Shift is all minus linked, exactly the audit's shift with the linked
	// trials as the published studies; nil without both linked and
	// unlinked trials.
	Shift *Shift `json:"shift"`
	// Subgroup is unlinked minus linked (the audit's subgroup test).
	Subgroup *Subgroup `json:"subgroup"`
	// UnlinkedShare is the share of randomized participants (arm Ns of the
	// pooled trials) in unlinked trials.
	UnlinkedShare *float64 `json:"unlinked_share"`
	// LinkedByPMIDRate is the share of pooled trials whose record carries a
	// PMID in a RESULT reference.
	LinkedByPMIDRate *float64 `json:"linked_by_pmid_rate"`
	// Missing is the eligible trials with no results posted.
	Missing Missing `json:"missing"`
	// Bias is the publication-bias battery on the linked trials.
	Bias     *BiasReport `json:"bias"`
	Trials   []ScanTrial `json:"trials"`
	Flow     ScanFlow    `json:"flow"`
	Rejected []Rejected  `json:"rejected"`
	Caution  string      `json:"caution"`
	Warnings []string    `json:"warnings"`

	// Audit is the audit behind the figures (linked trials as published
	// studies), for summaries and report pages; nil when nothing was
	// pooled or no trial is linked.
	Audit *ReviewAudit `json:"-"`
}

// PublicationLink says whether a registry record links a results
// publication: a RESULT reference with a PMID (API records), or, for
// neutral CSV records, publication "yes" or a publication id. pmid is the
// first PMID of a RESULT reference.
func PublicationLink(t ingest.Trial) (linked bool, pmid string) {
	for _, r := range t.References {
		if strings.EqualFold(r.Type, "RESULT") && strings.TrimSpace(r.PMID) != "" {
			return true, strings.TrimSpace(r.PMID)
		}
	}
	if strings.EqualFold(t.Publication, "yes") {
		return true, ""
	}
	if t.Publication != "" {
		for _, r := range t.References {
			if strings.EqualFold(r.Type, "RESULT") && strings.TrimSpace(r.Citation) != "" {
				return true, ""
			}
		}
	}
	return false, ""
}

// ScanQuestion scans one question. candidates are the registry records to
// examine (typically a TrialIndex search); links are the links-file rows
// of this question, which decide for their trials in place of the
// automatic choice (rows with decision accept are used; a trial whose rows
// accept nothing is left out). It is a pure function.
func ScanQuestion(q ingest.Review, candidates []ingest.Trial, links []ingest.Link, opts ScanOptions) (ScanResult, error) {
	res := ScanResult{QuestionID: q.ReviewID, Title: q.Title, Measure: q.Measure, Unit: q.Unit, Better: q.Better,
		Comparison: ScanComparison, Caution: ScanCaution, Trials: []ScanTrial{}, Rejected: []Rejected{}, Warnings: []string{},
		Missing: Missing{Trials: []MissingTrial{}}, Flow: ScanFlow{NotAccepted: map[string]int{}}}
	rp := ProposeForReview(q, nil, candidates, MatchOptions{AcceptAbove: opts.AcceptAboveOrDefault(), HighestDose: opts.HighestDose})
	res.Flow.Examined = rp.Flow.Examined
	byID := make(map[string]ingest.Trial, len(candidates))
	for _, t := range candidates {
		byID[strings.ToUpper(t.TrialID)] = t
	}
	override := map[string][]ingest.Link{}
	for _, l := range links {
		if l.ReviewID == q.ReviewID {
			override[strings.ToUpper(l.TrialID)] = append(override[strings.ToUpper(l.TrialID)], l)
		}
	}
	in := AuditInput{Review: q, Trials: map[string]ingest.Trial{}}
	var unlinked []ingest.Link
	chosen := map[string]ingest.Link{}
	proposed := map[string]bool{}
	take := func(t ingest.Trial, l ingest.Link, how string) {
		l.ReviewID, l.TrialID, l.Decision = q.ReviewID, t.TrialID, "accept"
		e, err := RegistryEffectWith(q, t, l, opts.Audit.Harmonize)
		if err != nil {
			var re *RejectError
			reason := "not-converted"
			if errors.As(err, &re) {
				reason = re.Reason
			}
			res.Flow.NotAccepted[reason]++
			res.Rejected = append(res.Rejected, Rejected{TrialID: t.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: reason, Detail: err.Error()})
			return
		}
		res.Flow.Accepted++
		l.Reasons = how
		chosen[t.TrialID] = l
		in.Trials[t.TrialID] = t
		if ok, _ := PublicationLink(t); ok {
			e.Origin = OriginPublished
			e.Study = t.TrialID
			in.PublishedEffects = append(in.PublishedEffects, e)
			return
		}
		l.Class = ClassRegistryOnly // unlinked: pooled as a registry-only addition
		unlinked = append(unlinked, l)
	}
	for _, tp := range rp.Trials {
		t := byID[strings.ToUpper(tp.TrialID)]
		proposed[strings.ToUpper(tp.TrialID)] = true
		res.Flow.Eligible++
		if rows, ok := override[strings.ToUpper(tp.TrialID)]; ok {
			useOverride(t, rows, take, &res.Flow)
			continue
		}
		if tp.Class == ClassNoResults {
			in.Links = append(in.Links, ingest.Link{ReviewID: q.ReviewID, TrialID: t.TrialID, OutcomeIndex: NoOutcome, Class: ClassNoResults})
			in.Trials[t.TrialID] = t
			continue
		}
		switch {
		case len(tp.Outcomes) == 0:
			res.Flow.NotAccepted["no-fitting-outcome"]++
		case tp.Class == ClassPossiblyIncluded:
			res.Flow.NotAccepted[ClassPossiblyIncluded]++
		case tp.Design != DesignRandomized:
			res.Flow.NotAccepted[tp.Design]++
		case !tp.Outcomes[0].Converted:
			res.Flow.NotAccepted["not-converted"]++
		case !tp.Outcomes[0].AutoAccepted:
			res.Flow.NotAccepted["low-score"]++
		default:
			b := tp.Outcomes[0]
			take(t, ingest.Link{OutcomeIndex: b.OutcomeIndex, TreatGroups: b.TreatGroups, CtrlGroups: b.CtrlGroups, Flip: b.Flip, UnitFrom: b.UnitFrom, Class: tp.Class}, "auto")
		}
	}
	// Links-file rows for trials the matcher did not find eligible: the
	// file decides, as in match --apply.
	for _, id := range slices.Sorted(maps.Keys(override)) {
		if proposed[id] {
			continue
		}
		t, ok := byID[id]
		if !ok {
			res.Warnings = append(res.Warnings, fmt.Sprintf("links file names %s, which is not in the workspace; row ignored", override[id][0].TrialID))
			continue
		}
		res.Flow.Eligible++
		useOverride(t, override[id], take, &res.Flow)
	}
	in.Links = append(in.Links, unlinked...)
	return finishScan(res, in, chosen, opts)
}

// useOverride applies a trial's links-file rows: the first accepted row
// (by outcome index) is used; none accepted leaves the trial out.
func useOverride(t ingest.Trial, rows []ingest.Link, take func(ingest.Trial, ingest.Link, string), flow *ScanFlow) {
	sort.SliceStable(rows, func(i, j int) bool { return rows[i].OutcomeIndex < rows[j].OutcomeIndex })
	for _, l := range rows {
		if Accepted(l.Decision) && l.OutcomeIndex != NoOutcome {
			take(t, l, "links-file")
			return
		}
	}
	flow.NotAccepted["links-file"]++
}

// finishScan audits the question (linked trials as published studies) and
// copies the figures into the result.
func finishScan(res ScanResult, in AuditInput, chosen map[string]ingest.Link, opts ScanOptions) (ScanResult, error) {
	kLinked := len(in.PublishedEffects)
	if res.Flow.Accepted == 0 {
		res.Warnings = append(res.Warnings, "no trial with results was accepted: nothing to pool")
		res.Missing = missingOnly(in, opts.Audit)
		return res, nil
	}
	if kLinked == 0 {
		// Pool all trials as one set: there is no linked analysis.
		res.Warnings = append(res.Warnings, "no pooled trial links a results publication: no linked analysis and no shift")
		for _, l := range in.Links {
			if l.Class == ClassNoResults {
				continue
			}
			e, err := RegistryEffectWith(in.Review, in.Trials[l.TrialID], l, opts.Audit.Harmonize)
			if err == nil {
				in.PublishedEffects = append(in.PublishedEffects, e)
			}
		}
		keep := in.Links[:0]
		for _, l := range in.Links {
			if l.Class == ClassNoResults {
				keep = append(keep, l)
			}
		}
		in.Links = keep
	}
	a, err := AuditReview(in, opts.Audit)
	if err != nil {
		return res, err
	}
	// The registry was searched: every eligible trial is a link of the
	// question, the linked ones included (the audit sees only the links of
	// the unlinked and no-results trials).
	if a.RegistrySearch.Status != SearchLinked {
		a.RegistrySearch = RegistrySearch{Status: SearchLinked, LinkedTrials: res.Flow.Eligible, EligibleTrials: res.Flow.Eligible}
		c := a.SignificanceChanged || a.DirectionChanged || (a.MIDCrossed != nil && *a.MIDCrossed)
		a.ConclusionChanged = &c
	}
	res.Missing = a.Missing
	for _, w := range a.Warnings {
		// The audit's analyses are named for reviews; here they are the
		// linked trials and all trials.
		w = strings.Replace(w, "published-only: ", "linked: ", 1)
		w = strings.Replace(w, "augmented: ", "all: ", 1)
		res.Warnings = append(res.Warnings, w)
	}
	res.Rejected = append(res.Rejected, a.Rejected...)
	if kLinked == 0 {
		res.All = scanPool(a.Published)
		res.Linked = ScanPool{}
		res.Bias = nil
	} else {
		res.Linked, res.All = scanPool(a.Published), scanPool(a.Augmented)
		if a.KAdded > 0 {
			sh := a.Shift
			res.Shift = &sh
		}
		res.Subgroup, res.Bias = a.Subgroup, a.Bias
		res.Audit = &a
	}
	var nAll, nUnlinked, withPMID int
	for _, s := range a.Studies {
		t := in.Trials[s.TrialID]
		linked, pmid := PublicationLink(t)
		if pmid != "" {
			withPMID++
		}
		idx := -1
		if s.OutcomeIndex != nil {
			idx = *s.OutcomeIndex
		}
		n := s.TreatN + s.CtrlN
		nAll += n
		if !linked {
			nUnlinked += n
		}
		l := chosen[s.TrialID]
		res.Trials = append(res.Trials, ScanTrial{TrialID: s.TrialID, Linked: linked, PMID: pmid, OutcomeIndex: idx,
			TreatGroups: l.TreatGroups, CtrlGroups: l.CtrlGroups, Effect: s.Effect, SE: s.SE, N: n, Chosen: l.Reasons})
	}
	if nAll > 0 {
		res.UnlinkedShare = analysis.FiniteOrNil(float64(nUnlinked) / float64(nAll))
	}
	if len(a.Studies) > 0 {
		res.LinkedByPMIDRate = analysis.FiniteOrNil(float64(withPMID) / float64(len(a.Studies)))
	}
	sort.SliceStable(res.Trials, func(i, j int) bool { return res.Trials[i].TrialID < res.Trials[j].TrialID })
	return res, nil
}

// missingOnly counts the no-results trials when nothing was pooled.
func missingOnly(in AuditInput, opts Options) Missing {
	var links []ingest.Link
	for _, l := range in.Links {
		if l.Class == ClassNoResults {
			links = append(links, l)
		}
	}
	m := missingOf(in.Review, ReviewAudit{}, links, in.Trials, map[string]bool{}, map[string]bool{}, opts)
	m.WhatIf = nil
	return m
}
