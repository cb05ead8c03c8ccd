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
	var buf reBuffer
	muP, seP, tauP, okP := buf.poolStudies(pub, opts.tau2())
	muR, seR, tauR, okR := buf.poolStudies(reg, opts.tau2())
	if okP {
		sg.PublishedEstimate, sg.PublishedSE, sg.PublishedTau2 = opt(muP), opt(seP), opt(tauP)
	}
	if okR {
		sg.RegistryEstimate, sg.RegistrySE, sg.RegistryTau2 = opt(muR), opt(seR), opt(tauR)
	}
	if !okP || !okR {
		return sg
	}
	d, se, lo, hi, q, p := subgroupTest(muP, seP, muR, seR, opts.level())
	sg.Difference, sg.SE, sg.CILow, sg.CIHigh, sg.QBetween, sg.P = opt(d), opt(se), opt(lo), opt(hi), opt(q), opt(p)
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

// reBuffer holds the scratch slices of repeated random-effects fits, so
// that they allocate only what analysis.Tau2 does.
type reBuffer struct {
	y, seY []float64
}

func (b *reBuffer) poolStudies(studies []StudyEffect, m analysis.Tau2Method) (mu, seMu, tau2 float64, ok bool) {
	b.y, b.seY = b.y[:0], b.seY[:0]
	for _, s := range studies {
		b.y = append(b.y, s.Effect)
		b.seY = append(b.seY, s.SE)
	}
	return poolRE(b.y, b.seY, m)
}

// poolRE is the random-effects inverse-variance estimate with the tau²
// estimator m (analysis.Tau2) and its Wald SE:
//
//	w_i = 1/(se_i² + tau²),  mu = sum w_i y_i / sum w_i,  seMu = 1/sqrt(sum w_i)
//
// ok is false when the inputs are unusable or tau² did not converge. It
// skips what analysis.Pool adds (intervals, Q-profile, leave-one-out), so it
// is cheap enough to run many times.
func poolRE(y, seY []float64, m analysis.Tau2Method) (mu, seMu, tau2 float64, ok bool) {
	if len(y) == 0 {
		return 0, 0, 0, false
	}
	tau2, conv, _, err := analysis.Tau2(y, seY, m, analysis.Settings{})
	if err != nil || !conv {
		return 0, 0, 0, false
	}
	var sw, swy float64
	for i := range y {
		w := 1 / (seY[i]*seY[i] + tau2)
		sw += w
		swy += w * y[i]
	}
	return swy / sw, 1 / math.Sqrt(sw), tau2, true
}
