package compare

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/analysis"
)

// Subgroup compares the published studies with the registry-only trials
// of a review, each subgroup pooled on its own under the audit's tau²
// estimator (its own tau²), with Wald standard errors.
//
// The difference runs registry minus published, the same sign as the shift
// (augmented minus published): a negative difference means the registry
// trials show a smaller (more negative) effect than the published ones.
//
//	d      = mu_registry - mu_published
//	se     = sqrt(se_registry² + se_published²)
//	CI     = d ± z_{1-α/2} se
//	Q_b    = sum_g w_g (mu_g - mu_·)²,  w_g = 1/se_g²,  mu_· = sum w_g mu_g / sum w_g
//	       = d² / se²  (two subgroups)
//	p      = P(χ²_1 > Q_b)
//
// (the test for subgroup differences with a separate tau² in each
// subgroup: Borenstein et al. 2009, Introduction to Meta-Analysis, ch. 19;
// Cochrane Handbook, chapter 10, subgroup analyses). With one registry trial the
// registry subgroup is that trial (tau² = 0, its own SE); likewise for one
// published study. Fields are nil when a subgroup cannot be pooled.
type Subgroup struct {
	PublishedEstimate *float64 `json:"published_estimate"`
	PublishedSE       *float64 `json:"published_se"`
	PublishedTau2     *float64 `json:"published_tau2"`
	PublishedK        int      `json:"published_k"`
	RegistryEstimate  *float64 `json:"registry_estimate"`
	RegistrySE        *float64 `json:"registry_se"`
	RegistryTau2      *float64 `json:"registry_tau2"`
	RegistryK         int      `json:"registry_k"`
	Difference        *float64 `json:"difference"`
	SE                *float64 `json:"se"`
	CILow             *float64 `json:"ci_low"`
	CIHigh            *float64 `json:"ci_high"`
	QBetween          *float64 `json:"q_between"`
	P                 *float64 `json:"p"`
}

func subgroupOf(pub, reg []StudyEffect, opts Options) Subgroup {
	sg := Subgroup{PublishedK: len(pub), RegistryK: len(reg)}
	muP, seP, tauP, okP := poolSubgroup(pub, opts.tau2())
	muR, seR, tauR, okR := poolSubgroup(reg, opts.tau2())
	if okP {
		sg.PublishedEstimate, sg.PublishedSE, sg.PublishedTau2 = analysis.FiniteOrNil(muP), analysis.FiniteOrNil(seP), analysis.FiniteOrNil(tauP)
	}
	if okR {
		sg.RegistryEstimate, sg.RegistrySE, sg.RegistryTau2 = analysis.FiniteOrNil(muR), analysis.FiniteOrNil(seR), analysis.FiniteOrNil(tauR)
	}
	if !okP || !okR {
		return sg
	}
	d, se, lo, hi, q, p := subgroupTest(muP, seP, muR, seR, opts.level())
	sg.Difference, sg.SE, sg.CILow, sg.CIHigh, sg.QBetween, sg.P = analysis.FiniteOrNil(d), analysis.FiniteOrNil(se), analysis.FiniteOrNil(lo), analysis.FiniteOrNil(hi), analysis.FiniteOrNil(q), analysis.FiniteOrNil(p)
	return sg
}

// subgroupTest is the two-subgroup comparison of Subgroup.
func subgroupTest(muP, seP, muR, seR, level float64) (d, se, lo, hi, q, p float64) {
	d = muR - muP
	se = math.Hypot(seP, seR)
	z := distuv.UnitNormal.Quantile(1 - (1-level)/2)
	q = d * d / (se * se)
	p = distuv.ChiSquared{K: 1}.Survival(q)
	return d, se, d - z*se, d + z*se, q, p
}

// poolSubgroup is one subgroup's random-effects estimate under the tau²
// estimator m (analysis.RandomEstimate); ok is false when the studies
// cannot be pooled or tau² did not converge.
func poolSubgroup(studies []StudyEffect, m analysis.Tau2Method) (mu, seMu, tau2 float64, ok bool) {
	if len(studies) == 0 {
		return 0, 0, 0, false
	}
	y, seY := make([]float64, len(studies)), make([]float64, len(studies))
	for i, s := range studies {
		y[i], seY[i] = s.Effect, s.SE
	}
	mu, seMu, tau2, ok, err := analysis.RandomEstimate(y, seY, analysis.Settings{Tau2: m})
	return mu, seMu, tau2, ok && err == nil
}
