package analysis

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// ShiftCIMethod names the interval of ShiftInterval in outputs.
const ShiftCIMethod = "shift-contrast-kh"

// ShiftBootMethod names the check interval of ShiftBootstrap in outputs.
const ShiftBootMethod = "parametric-refit-basic"

// ErrShiftDF is returned by ShiftInterval when the studies leave no
// degree of freedom for the between-study variance (k - 2 < 1).
var ErrShiftDF = errors.New("no degree of freedom left for the between-study variance: the shift interval needs at least 3 studies in all")

// ShiftCI is the interval of ShiftInterval.
//
// Estimate is the shift of the two fits (augmented minus published
// random-effects estimate, at Tau2Published and Tau2Augmented), the centre
// of the interval; SE its standard error, Low and High the interval, DF
// the degrees of freedom of the t quantile and Scale the Knapp-Hartung
// factor before it is floored at 1. Tau2Within is the between-study
// variance of the subgroup model (pooled within the published and the
// added studies), MeanPublished and MeanAdded its subgroup means, Share
// the weight share of the added studies in the augmented fit. Estimand is
// the shift of the two fits had every study sat at its subgroup's fitted
// mean: Share (MeanAdded - MeanPublished).
type ShiftCI struct {
	Estimate, SE, Low, High      float64
	Tau2Published, Tau2Augmented float64
	Tau2Within                   float64
	MeanPublished, MeanAdded     float64
	Share, Estimand              float64
	Scale                        float64
	DF                           int
}

// ShiftInterval is a confidence interval for the shift of a random-effects
// estimate when studies are added, centred on the shift the two analyses
// print: effects[:kPublished] are the published studies, effects[kPublished:]
// the added ones, both on the same scale; tau2Published and tau2Augmented
// are the between-study variances the published-only and the augmented
// analyses were fitted with (by whatever estimator the caller used).
//
// The shift as a contrast. With the weights of the two fits,
// w_i = 1/(s_i² + tau²_pub) over the published studies (sum W) and
// w'_i = 1/(s_i² + tau²_aug) over all studies (sum W'), the printed shift is
//
//	D = sum_i c_i y_i,   c_i = w'_i/W' - w_i/W (published),   c_j = w'_j/W' (added)
//
// and the c_i sum to 0.
//
// Model and estimand. Each subgroup g (published P, added R) has its own
// mean mu_g and the studies share a between-study variance tau² about
// their subgroup's mean: y_i = mu_g(i) + u_i + e_i, Var(u_i + e_i) =
// s_i² + tau². Given the weights, D estimates
//
//	theta = sum_i c_i mu_g(i) = (W'_R / W') (mu_R - mu_P)
//
// the shift the two analyses would print if every study sat at its
// subgroup's mean, with the weights of the two fits (W'_R the added
// studies' share of the augmented weights). It differs from the shift at
// the true tau² only through the augmented fit's tau² (which also absorbs
// the difference between the subgroups); the coverage simulation reports
// both.
//
// Variance. Given the weights, Var(D) = sum_i c_i² (s_i² + tau²), with
// tau² the method-of-moments estimate pooled within the subgroups
// (Borenstein, Hedges, Higgins & Rothstein 2009, Introduction to
// Meta-Analysis, ch. 19):
//
//	tau² = max(0, (Q_P + Q_R - (k - 2)) / (C_P + C_R)),  C_g = sum v_i - sum v_i² / sum v_i,  v_i = 1/s_i²
//
// scaled by the Knapp-Hartung factor of the subgroup model floored at 1
// (Knapp & Hartung 2003, Stat Med 22:2693; floor: Röver, Knapp & Friede
// 2015, BMC Med Res Methodol 15:99),
//
//	q = sum_i (y_i - m_g(i))² / (s_i² + tau²) / (k - 2)
//
// with m_g the subgroups' weighted means; the interval is
// D ± t_{k-2, 1-α/2} sqrt(max(1, q) Var(D)). The weights' own dependence on
// the data is left out: sum c_i = 0 makes its first-order term vanish
// about the subgroup means (hand derivation), and the coverage simulation
// (TestShiftIntervalCoverage) checks that nothing else is needed.
//
// Edges: fewer than 3 studies, or kPublished not in [1, k-1], is an error
// (ErrShiftDF when k - 2 < 1); invalid effects, SEs or tau² are errors.
func ShiftInterval(effects, seEffects []float64, kPublished int, tau2Published, tau2Augmented, level float64) (ShiftCI, error) {
	k := len(effects)
	if len(seEffects) != k {
		panic("analysis: slice length mismatch")
	}
	if err := checkLevel(level); err != nil {
		return ShiftCI{}, err
	}
	if kPublished < 1 || kPublished >= k {
		return ShiftCI{}, fmt.Errorf("shift interval: %d published of %d studies: need at least one of each", kPublished, k)
	}
	if k-2 < 1 {
		return ShiftCI{}, ErrShiftDF
	}
	if !(tau2Published >= 0) || !(tau2Augmented >= 0) || math.IsInf(tau2Published, 0) || math.IsInf(tau2Augmented, 0) {
		return ShiftCI{}, fmt.Errorf("shift interval: tau² of the fits %v and %v: need finite values >= 0", tau2Published, tau2Augmented)
	}
	varY := make([]float64, k)
	if err := checkStudies(effects, seEffects, nil, varY); err != nil {
		return ShiftCI{}, err
	}
	r := shiftModel(effects, varY, kPublished)
	r.Tau2Published, r.Tau2Augmented = tau2Published, tau2Augmented
	muPub, wPub, _ := fixedCore(effects[:kPublished], varY[:kPublished], tau2Published)
	muAug, wAug, _ := fixedCore(effects, varY, tau2Augmented)
	r.Estimate = muAug - muPub
	var wAdd, v float64
	for i, vi := range varY {
		c := 1 / ((vi + tau2Augmented) * wAug)
		if i < kPublished {
			c -= 1 / ((vi + tau2Published) * wPub)
		} else {
			wAdd += 1 / (vi + tau2Augmented)
		}
		v += c * c * (vi + r.Tau2Within)
	}
	r.Share = wAdd / wAug
	r.Estimand = r.Share * (r.MeanAdded - r.MeanPublished)
	r.SE = math.Sqrt(math.Max(1, r.Scale) * v)
	t := tQuantile(1-(1-level)/2, float64(r.DF))
	r.Low, r.High = r.Estimate-t*r.SE, r.Estimate+t*r.SE
	return r, nil
}

// shiftModel fits the subgroup model of ShiftInterval on validated
// variances: the pooled within-subgroup tau², the subgroup means and the
// Knapp-Hartung factor with its degrees of freedom.
func shiftModel(y, varY []float64, kPub int) ShiftCI {
	k := len(y)
	groups := [2][2]int{{0, kPub}, {kPub, k}}
	var r ShiftCI
	var num, den float64
	for _, g := range groups {
		_, sumV, q := fixedCore(y[g[0]:g[1]], varY[g[0]:g[1]], 0)
		var sumV2 float64
		for _, v := range varY[g[0]:g[1]] {
			sumV2 += 1 / (v * v)
		}
		num += q - float64(g[1]-g[0]-1)
		den += sumV - sumV2/sumV
	}
	if den > 0 && num > 0 {
		r.Tau2Within = num / den
	}
	var mu [2]float64
	var q float64
	for gi, g := range groups {
		var qg float64
		mu[gi], _, qg = fixedCore(y[g[0]:g[1]], varY[g[0]:g[1]], r.Tau2Within)
		q += qg
	}
	r.MeanPublished, r.MeanAdded = mu[0], mu[1]
	r.DF = k - 2
	r.Scale = q / float64(r.DF)
	return r
}

// ShiftBoot is the check interval of ShiftBootstrap: Low and High, the
// replicates drawn and those whose tau² did not converge (left out).
type ShiftBoot struct {
	Low, High          float64
	Replicates, Failed int
}

// ShiftBootstrap is a parametric-bootstrap check of ShiftInterval. Each
// replicate draws y*_i = m_g(i) + sqrt(s_i² + tau²) z_i, z_i standard
// normal, from the subgroup model fitted as in ShiftInterval (subgroup
// means m_g, pooled within-subgroup tau²), and refits both analyses as the
// audit does: tau² of the published studies and of all studies by the
// estimator m, then the shift D* of the two random-effects estimates. The
// pivot D* - theta*, with theta* = Share* (m_R - m_P) the replicate's
// estimand (Share* from its augmented tau²), gives the basic bootstrap
// interval (Davison & Hinkley 1997, Bootstrap Methods and their
// Application, eq. 5.6)
//
//	[D - p_{1-α/2}, D - p_{α/2}],  p the pivot's quantiles
//
// around the printed shift D = effects' shift at tau2Published and
// tau2Augmented. Replicates whose tau² does not converge are counted in
// Failed and left out; more than a tenth failing is an error. The stream
// of draws is fixed by seed, so the result is reproducible.
func ShiftBootstrap(effects, seEffects []float64, kPublished int, tau2Published, tau2Augmented float64, m Tau2Method, reps int, seed [2]uint64, level float64) (ShiftBoot, error) {
	if reps < 1 {
		return ShiftBoot{}, fmt.Errorf("shift bootstrap: %d replicates: need at least 1", reps)
	}
	ci, err := ShiftInterval(effects, seEffects, kPublished, tau2Published, tau2Augmented, level)
	if err != nil {
		return ShiftBoot{}, err
	}
	s, err := Settings{Tau2: m}.resolve()
	if err != nil {
		return ShiftBoot{}, err
	}
	k := len(effects)
	varY := make([]float64, k)
	sd := make([]float64, k)
	for i, se := range seEffects {
		varY[i] = se * se
		sd[i] = math.Sqrt(varY[i] + ci.Tau2Within)
	}
	d := ci.MeanAdded - ci.MeanPublished
	rng := rand.New(rand.NewPCG(seed[0], seed[1]))
	y := make([]float64, k)
	pivots := make([]float64, 0, reps)
	out := ShiftBoot{Replicates: reps}
	for range reps {
		for i := range y {
			mu := ci.MeanPublished
			if i >= kPublished {
				mu = ci.MeanAdded
			}
			y[i] = mu + sd[i]*rng.NormFloat64()
		}
		tPub, ok1, _ := tau2By(y[:kPublished], varY[:kPublished], s.method, s)
		tAug, ok2, _ := tau2By(y, varY, s.method, s)
		if !ok1 || !ok2 {
			out.Failed++
			continue
		}
		muPub, _, _ := fixedCore(y[:kPublished], varY[:kPublished], tPub)
		muAug, wAug, _ := fixedCore(y, varY, tAug)
		var wAdd float64
		for _, v := range varY[kPublished:] {
			wAdd += 1 / (v + tAug)
		}
		pivots = append(pivots, muAug-muPub-wAdd/wAug*d)
	}
	if out.Failed*10 > reps {
		return out, fmt.Errorf("shift bootstrap: tau² did not converge in %d of %d replicates", out.Failed, reps)
	}
	slices.Sort(pivots)
	alpha := 1 - level
	out.Low = ci.Estimate - empiricalQuantile(pivots, 1-alpha/2)
	out.High = ci.Estimate - empiricalQuantile(pivots, alpha/2)
	return out, nil
}

// empiricalQuantile is the quantile at p of sorted x by linear
// interpolation between order statistics (Hyndman & Fan 1996, Am Stat
// 50:361, definition 7).
func empiricalQuantile(x []float64, p float64) float64 {
	h := p * float64(len(x)-1)
	lo := int(math.Floor(h))
	if lo >= len(x)-1 {
		return x[len(x)-1]
	}
	return x[lo] + (h-float64(lo))*(x[lo+1]-x[lo])
}
