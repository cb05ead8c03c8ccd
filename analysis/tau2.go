package analysis

import (
	"math"
)

// scaleOf returns the mean within-study variance, the yardstick of the
// relative convergence criterion (see DefaultTol).
func scaleOf(varY []float64) float64 {
	var s float64
	for _, v := range varY {
		s += v
	}
	return s / float64(len(varY))
}

// tau2DL is the DerSimonian-Laird estimator on validated variances.
func tau2DL(y, varY []float64) float64 {
	k := len(y)
	if k < 2 {
		return 0
	}
	var sumW, sumW2 float64
	for _, v := range varY {
		w := 1 / v
		sumW += w
		sumW2 += w * w
	}
	_, _, q := fixedCore(y, varY, 0)
	c := sumW - sumW2/sumW
	t := (q - float64(k-1)) / c
	if !(t > 0) {
		return 0
	}
	return t
}

// qUpperBound returns a tau² at which the generalized Q statistic is at
// most target (> 0). Because Q(tau²) = min over mu of sum (y-mu)²/(v+tau²)
// is at most sum (y - ybar)² / (min v + tau²), any tau² >= S/target - min v
// qualifies, where S is the unweighted sum of squares about the plain mean.
func qUpperBound(y, varY []float64, target float64) float64 {
	var mean, vMin float64
	vMin = math.Inf(1)
	for i, yi := range y {
		mean += yi
		vMin = math.Min(vMin, varY[i])
	}
	mean /= float64(len(y))
	var ss float64
	for _, yi := range y {
		ss += (yi - mean) * (yi - mean)
	}
	return math.Max(0, ss/target-vMin)
}

// solveGenQ finds tau² >= 0 with generalized Q(tau²) = target, given that
// Q(0) > target > 0. Q is strictly decreasing in tau² (Viechtbauer 2007), so
// the root is unique. It uses Newton steps with
//
//	dQ/dtau² = -sum w_i² (y_i - mu)²
//
// safeguarded by bisection inside a bracket that always holds the root. It
// allocates nothing.
func solveGenQ(y, varY []float64, target, start, tol float64, maxIter int) (tau2 float64, converged bool, iter int) {
	lo, hi := 0.0, qUpperBound(y, varY, target)
	scale := scaleOf(varY)
	t := start
	if !(t > lo && t < hi) {
		t = 0.5 * (lo + hi)
	}
	for iter = 1; iter <= maxIter; iter++ {
		mu, _, q := fixedCore(y, varY, t)
		f := q - target
		if f > 0 {
			lo = t
		} else {
			hi = t
		}
		var dq float64
		for i, yi := range y {
			w := 1 / (varY[i] + t)
			r := yi - mu
			dq -= w * w * r * r
		}
		next := t - f/dq
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		step := math.Abs(next - t)
		t = next
		if step <= tol*(t+scale) || hi-lo <= tol*(lo+scale) {
			return t, true, iter
		}
	}
	return t, false, maxIter
}

// tau2PM is the Paule-Mandel estimator on validated variances.
func tau2PM(y, varY []float64, tol float64, maxIter int) (float64, bool, int) {
	k := len(y)
	if k < 2 {
		return 0, true, 0
	}
	target := float64(k - 1)
	_, _, q0 := fixedCore(y, varY, 0)
	if q0 <= target {
		return 0, true, 0
	}
	return solveGenQ(y, varY, target, tau2DL(y, varY), tol, maxIter)
}

// remlParts returns, at tau², the restricted log-likelihood (without its
// constant), the score and the expected (Fisher) information:
//
//	w_i   = 1 / (v_i + tau²),  mu = sum w_i y_i / sum w_i
//	ll    = -1/2 [sum log(v_i + tau²) + log(sum w_i) + sum w_i (y_i - mu)²]
//	score = 1/2 [sum w_i² (y_i - mu)² - sum w_i + sum w_i² / sum w_i]
//	info  = 1/2 [sum w_i² - 2 sum w_i³ / sum w_i + (sum w_i² / sum w_i)²]
//
// The score is 1/2 [r' P P r - tr P] and the information 1/2 tr(P P) with
// P = W - W 1 1' W / sum w, as in Viechtbauer (2005) J Educ Behav Stat 30:261.
func remlParts(y, varY []float64, tau2 float64) (ll, score, info float64) {
	mu, sumW, q := fixedCore(y, varY, tau2)
	var sumLog, sumW2, sumW3, sumW2R2 float64
	for i, yi := range y {
		u := varY[i] + tau2
		w := 1 / u
		w2 := w * w
		r := yi - mu
		sumLog += math.Log(u)
		sumW2 += w2
		sumW3 += w2 * w
		sumW2R2 += w2 * r * r
	}
	ll = -0.5 * (sumLog + math.Log(sumW) + q)
	a := sumW2 / sumW
	score = 0.5 * (sumW2R2 - sumW + a)
	info = 0.5 * (sumW2 - 2*sumW3/sumW + a*a)
	return ll, score, info
}

// remlStep returns, at tau², the REML score S, its derivative dS/dtau² and
// the expected information I (see remlParts), without the log-likelihood:
//
//	c     = sum w_i² r_i / sum w_i,  r_i = y_i - mu
//	dS    = 1/2 [-2 sum w_i³ r_i² + 2 c sum w_i² r_i + sum w_i²
//	             - 2 sum w_i³ / sum w_i + (sum w_i² / sum w_i)²]
//
// It allocates nothing.
func remlStep(y, varY []float64, tau2 float64) (score, dScore, info float64) {
	mu, sumW, _ := fixedCore(y, varY, tau2)
	var sumW2, sumW3, sumW2R, sumW2R2, sumW3R2 float64
	for i, yi := range y {
		w := 1 / (varY[i] + tau2)
		w2 := w * w
		r := yi - mu
		sumW2 += w2
		sumW3 += w2 * w
		sumW2R += w2 * r
		sumW2R2 += w2 * r * r
		sumW3R2 += w2 * w * r * r
	}
	a := sumW2 / sumW
	score = 0.5 * (sumW2R2 - sumW + a)
	info = 0.5 * (sumW2 - 2*sumW3/sumW + a*a)
	dScore = 0.5 * (-2*sumW3R2 + 2*sumW2R*sumW2R/sumW + sumW2 - 2*sumW3/sumW + a*a)
	return score, dScore, info
}

// tau2REML is the REML estimator on validated variances. It solves the
// score equation S(tau²) = 0 on tau² >= 0: tau² = 0 when S(0) <= 0 (the
// maximum is on the boundary); otherwise Newton steps on S from start,
// replaced by a Fisher-scoring step where S is not decreasing, and by
// bisection whenever a step would leave the bracket [lo, hi] that is known
// to hold the root (S(lo) > 0 > S(hi)). While no upper end is known, a
// step is capped at doubling tau² + mean variance.
func tau2REML(y, varY []float64, start, tol float64, maxIter int) (float64, bool, int) {
	k := len(y)
	if k < 2 {
		return 0, true, 0
	}
	s0, ds0, info0 := remlStep(y, varY, 0)
	if s0 <= 0 {
		return 0, true, 1
	}
	scale := scaleOf(varY)
	lo, hi := 0.0, math.Inf(1)
	t := start
	score, dScore, info := s0, ds0, info0
	if t > 0 {
		score, dScore, info = remlStep(y, varY, t)
	}
	for iter := 1; iter <= maxIter; iter++ {
		if score > 0 {
			lo = t
		} else {
			hi = t
		}
		var next float64
		switch {
		case dScore < 0:
			next = t - score/dScore
		case info > 0:
			next = t + score/info
		default:
			next = math.NaN()
		}
		if math.IsInf(hi, 1) {
			if limit := 2*t + scale; !(next <= limit) {
				next = limit
			}
		}
		if !(next > lo && next < hi) {
			if math.IsInf(hi, 1) {
				next = 2*t + scale
			} else {
				next = 0.5 * (lo + hi)
			}
		}
		moved := math.Abs(next - t)
		t = next
		if moved <= tol*(t+scale) || hi-lo <= tol*(lo+scale) {
			return t, true, iter
		}
		score, dScore, info = remlStep(y, varY, t)
	}
	return math.NaN(), false, maxIter
}

// tau2By runs the estimator m on validated variances.
func tau2By(y, varY []float64, m Tau2Method, s settings) (float64, bool, int) {
	switch m {
	case Tau2DL:
		return tau2DL(y, varY), true, 0
	case Tau2PM:
		t, ok, n := tau2PM(y, varY, s.tol, s.maxIter)
		if !ok {
			return math.NaN(), false, n
		}
		return t, true, n
	case Tau2REML:
		return tau2REML(y, varY, tau2DL(y, varY), s.tol, s.maxIter)
	}
	panic("analysis: unknown tau² method " + string(m))
}

// Tau2 estimates the between-study variance tau² of effects (raw scale,
// standard errors seEffects in the same units); tau² is in squared units.
//
// DerSimonian-Laird (Tau2DL), a one-step method of moments, floored at 0:
//
//	w_i  = 1/se_i²,  Q = sum w_i (y_i - mu_FE)²
//	tau² = max(0, (Q - (k-1)) / (sum w_i - sum w_i² / sum w_i))
//
// (DerSimonian & Laird 1986, Control Clin Trials 7:177).
//
// Paule-Mandel (Tau2PM): the root of the generalized Q statistic
//
//	Q(tau²) = sum (y_i - mu(tau²))² / (se_i² + tau²) = k - 1
//
// with mu(tau²) the weighted mean under weights 1/(se_i² + tau²); tau² = 0
// when Q(0) <= k-1 (Paule & Mandel 1982, J Res Natl Bur Stand 87:377;
// DerSimonian & Kacker 2007, Contemp Clin Trials 28:105). Solved by Newton
// steps safeguarded with bisection.
//
// REML (Tau2REML): the maximiser over tau² >= 0 of the restricted
// log-likelihood
//
//	ll(tau²) = -1/2 [sum log(se_i² + tau²) + log sum w_i + sum w_i (y_i - mu)²]
//
// found as the root of its score (derivative) on tau² >= 0 by Newton steps
// from the DL value, with Fisher-scoring steps where the score is not
// decreasing and bisection inside a bracket that always holds the root
// (Viechtbauer 2005, J Educ Behav Stat 30:261, for the score and the
// information); tau² = 0 when the score at 0 is not positive.
//
// Convergence: iteration stops when a step moves tau² by at most
// Tol (tau² + mean se²); each root search is capped at MaxIter iterations. When an
// iterative method does not converge, tau2 is NaN and converged is false:
// no last guess is returned. DL always reports converged with 0 iterations.
//
// Edges: k = 1 gives tau² = 0 (converged, 0 iterations) because there is no
// between-study information; k = 2 is computable but rests on one degree of
// freedom and is very imprecise. Identical effects give tau² = 0.
// Input errors are as for FixedEffect; s.Labels name the studies; an unknown
// method returns ErrUnknownTau2. Only s.Tol, s.MaxIter and s.Labels are used.
func Tau2(effects, seEffects []float64, m Tau2Method, s Settings) (tau2 float64, converged bool, iterations int, err error) {
	if m == "" {
		m = Tau2REML
	}
	s.Tau2 = m
	rs, err := s.resolve()
	if err != nil {
		return math.NaN(), false, 0, err
	}
	varY := make([]float64, len(effects))
	if err := checkStudies(effects, seEffects, s.Labels, varY); err != nil {
		return math.NaN(), false, 0, err
	}
	tau2, converged, iterations = tau2By(effects, varY, m, rs)
	return tau2, converged, iterations, nil
}
