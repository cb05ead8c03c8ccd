package compare

import (
	"math"
	"unshelved/analysis"

	"gonum.org/v1/gonum/stat/distuv"
)

// Sources of a StudyRow.
const (
	RowPublished         = "published"
	RowRegistryOnly      = "registry-only"
	RowMissedPublication = "missed-publication"
)

// StudyRow is one study or registry trial of one review, for a
// supplementary table: its effect on the review's measure with a normal
// interval at the audit's level, and its share of the random-effects
// weight in the published-only and the augmented analysis (percent; nil
// when it is not in that analysis).
type StudyRow struct {
	ReviewID        string
	Source          string // RowPublished, RowRegistryOnly or RowMissedPublication
	Study           string
	TrialID         string
	Effect, SE      float64
	CILow, CIHigh   float64
	WeightPublished *float64
	WeightAugmented *float64
	ConvertedFrom   string
	Flags           []string
}

// StudyRows lists the studies of audit a: the published studies, the
// registry-only trials added, then the trials published but not in the
// review. The weight of study i in an analysis with between-study
// variance τ² is
//
//	100 · w_i / Σ w_j,  w_i = 1 / (SE_i² + τ²)
//
// over that analysis's studies (the random-effects inverse-variance
// weights). level is the confidence level of each study's interval
// (effect ± z·SE); zero means 0.95.
func StudyRows(a ReviewAudit, level float64) []StudyRow {
	if level == 0 {
		level = analysis.DefaultLevel
	}
	z := distuv.UnitNormal.Quantile(1 - (1-level)/2)
	kp := min(a.KPublished, len(a.Studies))
	pubW := reWeights(a.Studies[:kp], a.Published.Random.Tau2)
	augW := reWeights(a.Studies, a.Augmented.Random.Tau2)
	var out []StudyRow
	row := func(s StudyEffect, source string) StudyRow {
		return StudyRow{ReviewID: a.ReviewID, Source: source, Study: s.Study, TrialID: s.TrialID, Effect: s.Effect, SE: s.SE,
			CILow: s.Effect - z*s.SE, CIHigh: s.Effect + z*s.SE, ConvertedFrom: s.ConvertedFrom, Flags: s.Flags}
	}
	for i, s := range a.Studies {
		src := RowPublished
		if i >= kp {
			src = RowRegistryOnly
		}
		r := row(s, src)
		if i < kp {
			r.WeightPublished = pubW[i]
		}
		r.WeightAugmented = augW[i]
		out = append(out, r)
	}
	if m := a.WithMissedPublications; m != nil {
		for _, t := range m.Trials {
			out = append(out, row(t.StudyEffect, RowMissedPublication))
		}
	}
	return out
}

// reWeights gives each study's percentage of the random-effects weights,
// nil for all when τ² or an SE is not usable.
func reWeights(studies []StudyEffect, tau2 *float64) []*float64 {
	out := make([]*float64, len(studies))
	if tau2 == nil || len(studies) == 0 {
		return out
	}
	t2 := math.Max(*tau2, 0)
	w := make([]float64, len(studies))
	var sum float64
	for i, s := range studies {
		v := s.SE*s.SE + t2
		if !(v > 0) || math.IsInf(v, 0) {
			return out
		}
		w[i] = 1 / v
		sum += w[i]
	}
	for i := range w {
		out[i] = analysis.FiniteOrNil(100 * w[i] / sum)
	}
	return out
}
