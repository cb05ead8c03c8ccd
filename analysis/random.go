package analysis

import (
	"math"
)

// RandomResult is a random-effects inverse-variance pooled estimate under
// one tau² estimator. Quantities that cannot be computed are NaN (see
// RandomEffects).
type RandomResult struct {
	Method Tau2Method
	// Tau2 is the between-study variance, in squared effect units;
	// Tau2CILow and Tau2CIHigh its Q-profile confidence interval.
	Tau2, Tau2CILow, Tau2CIHigh float64
	// Estimate, SE, the Wald CI (normal), Z and the two-sided P.
	Estimate, SE, CILow, CIHigh, Z, P float64
	// HKSJ interval (t with k-1 df), its SE and the scale factor that
	// multiplies the Wald variance: HKSJSE² = HKSJScale · SE². HKSJP is
	// the two-sided p of the same test, Estimate/HKSJSE on t with k-1 df,
	// so HKSJP < 1-level exactly when the HKSJ interval excludes 0.
	HKSJLow, HKSJHigh, HKSJSE, HKSJScale, HKSJP float64
	// Prediction interval for the effect in a new study (t with k-2 df).
	PILow, PIHigh float64
	// Weights in percent, summing to 100.
	Weights []float64
	// Converged is false when the iterative tau² estimator did not
	// converge; all numbers except Method and Iterations are then NaN.
	Converged  bool
	Iterations int
}

// critical holds the quantiles shared by every random-effects fit of one
// meta-analysis.
type critical struct {
	level  float64
	z      float64 // normal, 1-(1-level)/2
	tHKSJ  float64 // t with k-1 df, NaN when k < 2
	tPI    float64 // t with k-2 df, NaN when k < 3
	chiLow float64 // χ²_{k-1} quantile at (1-level)/2, NaN when k < 2
	chiUp  float64 // χ²_{k-1} quantile at 1-(1-level)/2, NaN when k < 2
}

func newCritical(level float64, k int) critical {
	p := 1 - (1-level)/2
	c := critical{level: level, z: normalQuantile(p), tHKSJ: math.NaN(), tPI: math.NaN(), chiLow: math.NaN(), chiUp: math.NaN()}
	if k >= 2 {
		c.tHKSJ = tQuantile(p, float64(k-1))
		c.chiLow = chiSquareQuantile(1-p, float64(k-1))
		c.chiUp = chiSquareQuantile(p, float64(k-1))
	}
	if k >= 3 {
		c.tPI = tQuantile(p, float64(k-2))
	}
	return c
}

// qProfileCI returns the Q-profile confidence interval of tau²
// (Viechtbauer 2007, Stat Med 26:37): the set of tau² >= 0 with
//
//	χ²_{k-1}((1-level)/2) <= Q(tau²) <= χ²_{k-1}(1-(1-level)/2)
//
// where Q(tau²) is the generalized Q statistic. A bound whose equation has no
// root in tau² >= 0 is 0. Both bounds are NaN when k < 2 or when a root
// search does not converge.
func qProfileCI(y, varY []float64, c critical, s settings) (lo, hi float64) {
	if len(y) < 2 {
		return math.NaN(), math.NaN()
	}
	_, _, q0 := fixedCore(y, varY, 0)
	bound := func(target float64) float64 {
		if q0 <= target {
			return 0
		}
		t, ok, _ := solveGenQ(y, varY, target, 0, s.tol, s.maxIter)
		if !ok {
			return math.NaN()
		}
		return t
	}
	return bound(c.chiUp), bound(c.chiLow)
}

// randomFromTau2 fills the random-effects result for a given tau²; the
// Q-profile CI is left to the caller. dstWeights receives the weights.
func randomFromTau2(y, varY []float64, tau2 float64, c critical, s settings, dstWeights []float64) RandomResult {
	k := len(y)
	mu, sumW, q := fixedCore(y, varY, tau2)
	seMu := 1 / math.Sqrt(sumW)
	fillWeights(dstWeights, varY, tau2, sumW)
	z := mu / seMu
	r := RandomResult{
		Tau2:      tau2,
		Estimate:  mu,
		SE:        seMu,
		CILow:     mu - c.z*seMu,
		CIHigh:    mu + c.z*seMu,
		Z:         z,
		P:         twoSidedP(z),
		HKSJLow:   math.NaN(),
		HKSJHigh:  math.NaN(),
		HKSJSE:    math.NaN(),
		HKSJScale: math.NaN(),
		HKSJP:     math.NaN(),
		PILow:     math.NaN(),
		PIHigh:    math.NaN(),
		Weights:   dstWeights,
		Converged: true,
	}
	if k >= 2 {
		scale := q / float64(k-1)
		if s.trunc && scale < 1 {
			scale = 1
		}
		r.HKSJScale = scale
		r.HKSJSE = seMu * math.Sqrt(scale)
		r.HKSJLow = mu - c.tHKSJ*r.HKSJSE
		r.HKSJHigh = mu + c.tHKSJ*r.HKSJSE
		r.HKSJP = twoSidedTP(mu/r.HKSJSE, float64(k-1))
	}
	if k >= 3 {
		half := c.tPI * math.Sqrt(tau2+seMu*seMu)
		r.PILow, r.PIHigh = mu-half, mu+half
	}
	return r
}

// failedRandom is the result of a fit whose tau² did not converge.
func failedRandom(m Tau2Method, iter int, dstWeights []float64) RandomResult {
	nan := math.NaN()
	for i := range dstWeights {
		dstWeights[i] = nan
	}
	return RandomResult{
		Method: m, Tau2: nan, Tau2CILow: nan, Tau2CIHigh: nan,
		Estimate: nan, SE: nan, CILow: nan, CIHigh: nan, Z: nan, P: nan,
		HKSJLow: nan, HKSJHigh: nan, HKSJSE: nan, HKSJScale: nan, HKSJP: nan,
		PILow: nan, PIHigh: nan, Weights: dstWeights, Iterations: iter,
	}
}

// randomEffects fits one method on validated variances.
func randomEffects(y, varY []float64, m Tau2Method, c critical, s settings, tauLo, tauHi float64, dstWeights []float64) RandomResult {
	tau2, ok, iter := tau2By(y, varY, m, s)
	if !ok {
		return failedRandom(m, iter, dstWeights)
	}
	r := randomFromTau2(y, varY, tau2, c, s, dstWeights)
	r.Method, r.Iterations = m, iter
	r.Tau2CILow, r.Tau2CIHigh = tauLo, tauHi
	return r
}

// RandomEffects pools effects under a random-effects model with the tau²
// estimator s.Tau2 (see Tau2):
//
//	w*_i  = 1 / (se_i² + tau²)
//	mu    = sum w*_i y_i / sum w*_i,  seMu = 1 / sqrt(sum w*_i)
//	Wald  = mu ± z_{1-α/2} seMu,  Z = mu/seMu,  P = 2 (1 - Φ(|Z|))
//	HKSJ  : q = sum w*_i (y_i - mu)² / (k-1),  seHKSJ = sqrt(q) seMu,
//	        mu ± t_{k-1, 1-α/2} seHKSJ,  P = 2 P(T_{k-1} > |mu / seHKSJ|)
//	PI    = mu ± t_{k-2, 1-α/2} sqrt(tau² + seMu²)
//	tau² CI (Q-profile): {tau² >= 0 : χ²_{k-1, α/2} <= Q(tau²) <= χ²_{k-1, 1-α/2}}
//
// with α = 1 - s.Level. Scale: the scale of the effects; tau² is in squared
// units. The HKSJ scale factor q is not truncated at 1 unless
// s.TruncateHKSJ is set, so the HKSJ interval can be narrower than the Wald
// interval when the studies agree more than their SEs suggest; with the
// floor, max(1, q), it never is (Röver, Knapp & Friede 2015, BMC Med Res
// Methodol 15:99).
//
// Edges: k = 1 gives tau² = 0, the study itself as estimate, and NaN for
// the HKSJ interval, the prediction interval and the tau² CI. k = 2 gives a
// prediction interval of NaN and an HKSJ interval with one degree of
// freedom (very wide). tau² = 0 makes the estimate equal the fixed-effect
// one. If an iterative tau² estimator does not converge, every number is NaN
// and Converged is false.
//
// Sources: DerSimonian & Laird (1986) Control Clin Trials 7:177; Hartung &
// Knapp (2001) Stat Med 20:3875 and Sidik & Jonkman (2002) Stat Med
// 21:3153 for HKSJ; Higgins, Thompson & Spiegelhalter (2009) J R Stat Soc A
// 172:137 for the prediction interval; Viechtbauer (2007) Stat Med 26:37
// for the Q-profile interval.
func RandomEffects(effects, seEffects []float64, s Settings) (RandomResult, error) {
	rs, err := s.resolve()
	if err != nil {
		return RandomResult{}, err
	}
	k := len(effects)
	buf := make([]float64, 2*k)
	varY := buf[:k]
	if err := checkStudies(effects, seEffects, s.Labels, varY); err != nil {
		return RandomResult{}, err
	}
	c := newCritical(rs.level, k)
	lo, hi := qProfileCI(effects, varY, c, rs)
	return randomEffects(effects, varY, rs.method, c, rs, lo, hi, buf[k:]), nil
}

// RandomEstimate is the estimate of RandomEffects with the tau² estimator
// s.Tau2, without the intervals, tests, weights and tau² CI:
//
//	w*_i = 1 / (se_i² + tau²),  mu = sum w*_i y_i / sum w*_i,  seMu = 1 / sqrt(sum w*_i)
//
// so that it is cheap enough to run many times (a subgroup at a time). The
// numbers are those of RandomEffects' Tau2, Estimate and SE. converged is
// false, and the numbers NaN, when an iterative tau² estimator did not
// converge. Input errors are those of RandomEffects. Sources as for
// RandomEffects (DerSimonian & Laird 1986).
func RandomEstimate(effects, seEffects []float64, s Settings) (mu, seMu, tau2 float64, converged bool, err error) {
	nan := math.NaN()
	rs, err := s.resolve()
	if err != nil {
		return nan, nan, nan, false, err
	}
	varY := make([]float64, len(effects))
	if err := checkStudies(effects, seEffects, s.Labels, varY); err != nil {
		return nan, nan, nan, false, err
	}
	tau2, ok, _ := tau2By(effects, varY, rs.method, rs)
	if !ok {
		return nan, nan, nan, false, nil
	}
	mu, sumW, _ := fixedCore(effects, varY, tau2)
	return mu, 1 / math.Sqrt(sumW), tau2, true, nil
}
