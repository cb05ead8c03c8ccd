package compare

import (
	"math"
	"sort"
	"strings"

	"unshelved/analysis"
	"unshelved/ingest"
)

// Missing is the registered evidence that cannot be added to a review:
// eligible trials linked with class "no-results" (and not rejected) that
// are neither among the published studies nor added from the registry.
type Missing struct {
	// Trials lists them by trial id.
	Trials []MissingTrial `json:"trials"`
	// K is their number; Enrollment the sum of their registered enrolment
	// (trials without one add nothing and are counted in NoEnrollment).
	K            int `json:"k"`
	Enrollment   int `json:"enrollment"`
	NoEnrollment int `json:"no_enrollment"`
	// Randomized is the denominator of Share:
	//
	//	published arm Ns + added trials' arm Ns + missed publications'
	//	arm Ns + missing enrolment
	//
	// Published studies given only as effect and SE carry no N; they add
	// nothing and are counted in PublishedWithoutN.
	Randomized        int      `json:"randomized"`
	PublishedWithoutN int      `json:"published_without_n"`
	Share             *float64 `json:"share"`
	// WhatIf re-pools the augmented evidence with each missing trial
	// imputed as a null effect; nil when there is nothing to impute.
	WhatIf *WhatIf `json:"what_if"`
}

// MissingTrial is one registered trial without results.
type MissingTrial struct {
	TrialID    string `json:"trial_id"`
	Title      string `json:"title"`
	Status     string `json:"status"`
	Enrollment *int   `json:"enrollment"`
	InRecord   bool   `json:"in_workspace"`
}

// WhatIf is the null-imputation sensitivity analysis of Missing. Each
// missing trial with an enrolment n >= 4 enters with effect 0 and
//
//	SE = SD · sqrt(1/n1 + 1/n2),  n1 = n2 = n/2  (so SE = 2 SD / sqrt(n))
//
// with SD the review's pooled SD for MD reviews (the same SD as
// Shift.SDUnits) and SD = 1 for SMD reviews (the SE of a standardized
// difference of zero, up to the small-sample factor). Pooling uses the
// audit's model and the review's interval method (the one its published
// and augmented analyses use, Wald when ReviewAudit.FewStudies), so the
// significance comparisons are like with like. P comes from the same test
// as the interval.
type WhatIf struct {
	KImputed    int      `json:"k_imputed"`
	SD          *float64 `json:"sd"`
	Estimate    *float64 `json:"estimate"`
	CILow       *float64 `json:"ci_low"`
	CIHigh      *float64 `json:"ci_high"`
	P           *float64 `json:"p"`
	Tau2        *float64 `json:"tau2"`
	CIMethod    string   `json:"ci_method"`
	Shift       *float64 `json:"shift"` // estimate minus the published-only estimate
	Significant bool     `json:"significant"`
	// SignificanceChanged compares with the augmented analysis;
	// SignificanceChangedVsPublished with the published-only one.
	SignificanceChanged            bool `json:"significance_changed"`
	SignificanceChangedVsPublished bool `json:"significance_changed_vs_published"`
}

func missingOf(rv ingest.Review, a ReviewAudit, links []ingest.Link, trials map[string]ingest.Trial,
	included, added map[string]bool, opts Options) Missing {
	m := Missing{Trials: []MissingTrial{}}
	seen := map[string]bool{}
	ids := make([]string, 0, len(links))
	for _, l := range links {
		id := l.TrialID
		if seen[id] || added[id] || included[strings.ToUpper(id)] {
			continue
		}
		if t, ok := trials[id]; ok && (isIncluded(t, included) || added[t.TrialID]) {
			continue
		}
		seen[id] = true
		ids = append(ids, id)
	}
	sort.Strings(ids)
	for _, id := range ids {
		mt := MissingTrial{TrialID: id}
		if t, ok := trials[id]; ok {
			mt.InRecord = true
			mt.Title, mt.Status, mt.Enrollment = t.BriefTitle, t.OverallStatus, t.Enrollment
		}
		if mt.Enrollment != nil && *mt.Enrollment > 0 {
			m.Enrollment += *mt.Enrollment
		} else {
			m.NoEnrollment++
		}
		m.Trials = append(m.Trials, mt)
	}
	m.K = len(m.Trials)
	for i, s := range a.Studies {
		if i < a.KPublished && s.TreatN+s.CtrlN == 0 {
			m.PublishedWithoutN++
		}
		m.Randomized += s.TreatN + s.CtrlN
	}
	if w := a.WithMissedPublications; w != nil {
		for _, t := range w.Trials {
			m.Randomized += t.TreatN + t.CtrlN
		}
	}
	m.Randomized += m.Enrollment
	if m.K > 0 && m.Randomized > 0 {
		m.Share = analysis.FiniteOrNil(float64(m.Enrollment) / float64(m.Randomized))
	}
	if m.K > 0 {
		m.WhatIf = whatIf(rv, a, m.Trials, opts)
	}
	return m
}

func whatIf(rv ingest.Review, a ReviewAudit, missing []MissingTrial, opts Options) *WhatIf {
	sd := 1.0
	if !strings.EqualFold(rv.Measure, "SMD") {
		sd = reviewPooledSD(a.Studies, a.KPublished)
	}
	w := &WhatIf{SD: analysis.FiniteOrNil(sd)}
	if !(sd > 0) {
		return w
	}
	studies := append([]StudyEffect(nil), a.Studies...)
	for _, t := range missing {
		if t.Enrollment == nil || *t.Enrollment < 4 {
			continue
		}
		n := float64(*t.Enrollment)
		studies = append(studies, StudyEffect{Study: t.TrialID, TrialID: t.TrialID, Origin: "imputed",
			Effect: 0, SE: sd * math.Sqrt(2/(n/2))})
		w.KImputed++
	}
	if w.KImputed == 0 {
		return w
	}
	method, _ := opts.reviewCI(a.KPublished)
	p, err := pool(studies, opts, method)
	if err != nil {
		return w
	}
	w.Estimate, w.CILow, w.CIHigh, w.P, w.Tau2, w.CIMethod = p.Random.Estimate, p.Random.CILow, p.Random.CIHigh, p.Random.P, p.Random.Tau2, p.Random.CIMethod
	w.Shift = diffPtr(p.Random.Estimate, a.Published.Random.Estimate)
	w.Significant = significant(p.Random)
	w.SignificanceChanged = w.Significant != significant(a.Augmented.Random)
	w.SignificanceChangedVsPublished = w.Significant != significant(a.Published.Random)
	return w
}
