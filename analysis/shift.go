package analysis

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// ShiftCIMethod names the interval of ShiftInterval in outputs.
const ShiftCIMethod = "subgroup-model-kh"

// ErrShiftDF is returned by ShiftInterval when the studies leave no
// degree of freedom for the between-study variance (k - 2 < 1).
var ErrShiftDF = errors.New("no degree of freedom left for the between-study variance: the shift interval needs at least 3 studies in all")

// ShiftCI is the interval of ShiftInterval. Tau2 is the between-study
// variance pooled within the two subgroups, Share the weight share of the
// added studies, Difference the subgroup difference (added minus
// published), Estimate = Share · Difference, SE its standard error, DF the
// degrees of freedom of the t quantile and Scale the Knapp-Hartung factor
// before it is floored at 1.
type ShiftCI struct {
	Estimate, SE, Low, High float64
	Tau2, Share, Difference float64
	Scale                   float64
	DF                      int
}

// ShiftInterval is a confidence interval for the shift of a random-effects
// estimate when studies are added: effects[:kPublished] are the published
// studies, effects[kPublished:] the added ones, both on the same scale.
//
// Estimand. Each subgroup g (published P, added R) has its own mean mu_g
// and the same between-study variance tau²; study i has the within-study
// variance s_i². With the random-effects weights w_i = 1/(s_i² + tau²) and
// W_g their sum in subgroup g, W = W_P + W_R, the pooled mean of all
// studies is (W_P mu_P + W_R mu_R)/W, so adding the studies moves the
// pooled mean by
//
//	Delta = (W_R / W) (mu_R - mu_P)
//
// the shift the two analyses would show if every study sat at its
// subgroup's mean. It is the population quantity behind the shift of the
// two pooled estimates, and the truth the coverage simulation compares with.
//
// Estimate. tau² is the method-of-moments estimate pooled within the
// subgroups (Borenstein, Hedges, Higgins & Rothstein 2009, Introduction to
// Meta-Analysis, ch. 19, tau² pooled across subgroups):
//
//	tau² = max(0, (Q_P + Q_R - (k - 2)) / (C_P + C_R)),  C_g = sum v_i - sum v_i² / sum v_i,  v_i = 1/s_i²
//
// with Q_g Cochran's Q of subgroup g about its fixed-effect mean. mu_g are
// the weighted means, d = mu_R - mu_P and Estimate = (W_R/W) d. The shift is
// a linear contrast of the subgroup model, with variance (hand derivation:
// Var = (W_R/W)² (1/W_R + 1/W_P))
//
//	V_d = W_R / (W W_P)
//
// scaled by the Knapp-Hartung factor of the subgroup model, floored at 1 so
// that it never narrows the interval (Knapp & Hartung 2003, Stat Med
// 22:2693; floor: Röver, Knapp & Friede 2015, BMC Med Res Methodol 15:99),
//
//	q = sum_i w_i (y_i - mu_g(i))² / (k - 2)
//
// plus a delta-method term for the share's dependence on the estimated tau²
// (the weights, hence the estimand's share, move with tau²), with the
// asymptotic variance of a likelihood estimate of tau², 2 / sum w_i²
// (Viechtbauer 2005, J Educ Behav Stat 30:261; from memory):
//
//	SE² = max(1, q) V_d + d² (dShare/dtau²)² 2 / sum w_i²
//	dShare/dtau² = (W_P dW_R - W_R dW_P) / W²,  dW_g = -sum_g w_i²
//
// and the interval is Estimate ± t_{k-2, 1-α/2} SE. The coverage of this
// interval is checked by simulation in TestShiftIntervalCoverage
// (analysis/shift_test.go; figures in the README).
//
// Edges: fewer than 3 studies, or kPublished not in [1, k-1], is an error
// (ErrShiftDF when k - 2 < 1); invalid effects or SEs are errors naming the
// study. The estimate differs from the plain difference of two separately
// fitted random-effects estimates only through tau², and equals it when all
// SEs are equal.
func ShiftInterval(effects, seEffects []float64, kPublished int, level float64) (ShiftCI, error) {
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
	varY := make([]float64, k)
	if err := checkStudies(effects, seEffects, nil, varY); err != nil {
		return ShiftCI{}, err
	}
	groups := [2][2]int{{0, kPublished}, {kPublished, k}}
	var r ShiftCI
	var num, den float64
	for _, g := range groups {
		_, sumV, q := fixedCore(effects[g[0]:g[1]], varY[g[0]:g[1]], 0)
		var sumV2 float64
		for _, v := range varY[g[0]:g[1]] {
			sumV2 += 1 / (v * v)
		}
		num += q - float64(g[1]-g[0]-1)
		den += sumV - sumV2/sumV
	}
	if den > 0 && num > 0 {
		r.Tau2 = num / den
	}
	var mu, sumW, dW [2]float64
	var q, sumW2All float64
	for gi, g := range groups {
		var qg float64
		mu[gi], sumW[gi], qg = fixedCore(effects[g[0]:g[1]], varY[g[0]:g[1]], r.Tau2)
		q += qg
		for _, v := range varY[g[0]:g[1]] {
			w := 1 / (v + r.Tau2)
			dW[gi] -= w * w
		}
		sumW2All -= dW[gi]
	}
	r.DF = k - 2
	r.Scale = q / float64(r.DF)
	wAll := sumW[0] + sumW[1]
	r.Share = sumW[1] / wAll
	r.Difference = mu[1] - mu[0]
	r.Estimate = r.Share * r.Difference
	dShare := (sumW[0]*dW[1] - sumW[1]*dW[0]) / (wAll * wAll)
	v := math.Max(1, r.Scale)*sumW[1]/(wAll*sumW[0]) + r.Difference*r.Difference*dShare*dShare*2/sumW2All
	r.SE = math.Sqrt(v)
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(r.DF)}.Quantile(1 - (1-level)/2)
	r.Low, r.High = r.Estimate-t*r.SE, r.Estimate+t*r.SE
	return r, nil
}
