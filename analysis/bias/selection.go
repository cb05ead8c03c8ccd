package bias

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Defaults of SelectionSettings.
const (
	// DefaultSelectionCutpoint is the one-sided p value of the single cut
	// point of the three-parameter selection model (McShane, Böckenholt &
	// Hansen 2016, Perspect Psychol Sci 11:730-749): two-sided 0.05 in the
	// favourable direction.
	DefaultSelectionCutpoint = 0.025
	// DefaultSelectionTol is the gradient tolerance of the optimizer when
	// SelectionSettings.Tol is zero: the largest absolute component of the
	// gradient of the negative log-likelihood, with effects divided by the
	// root mean within-study variance so the tolerance has no units. At
	// 1e-7 the estimates are stable to about seven digits, well above the
	// rounding error of the sums (about 1e-13 for k = 1000).
	DefaultSelectionTol = 1e-7
	// DefaultSelectionMaxIter caps the Newton iterations when
	// SelectionSettings.MaxIter is zero; fits of a handful of parameters
	// converge in well under 50, more when tau² heads to zero.
	DefaultSelectionMaxIter = 200
	// tau2BoundaryRel is tau², relative to the mean within-study variance,
	// below which tau² is treated as estimated at its boundary zero: its
	// log-scale parameter then drifts towards minus infinity and has no
	// usable standard error.
	tau2BoundaryRel = 1e-6
)

// SelectionSettings configures SelectionModel.
type SelectionSettings struct {
	// Cutpoints are one-sided p values in the favourable direction,
	// strictly increasing in (0, 1); nil means {0.025}.
	Cutpoints []float64
	// Direction is +1 if favourable effects are positive, -1 if negative,
	// 0 for the sign of the fixed-effect estimate.
	Direction float64
	// Tol is the gradient tolerance (see DefaultSelectionTol); 0 means the
	// default.
	Tol float64
	// MaxIter caps the optimizer iterations; 0 means the default.
	MaxIter int
}

// SelectionResult is the fit of a step-function selection model.
type SelectionResult struct {
	// Cutpoints are the one-sided p-value cut points used; interval j runs
	// from Cutpoints[j-1] (0 for the first) to Cutpoints[j] (1 for the last).
	Cutpoints []float64
	// Estimate is the selection-adjusted mean effect on the input scale and
	// SE its standard error; Tau2 the between-study variance (squared effect
	// units) and Tau2SE its standard error (NaN when tau² is at zero).
	Estimate, SE, Tau2, Tau2SE float64
	// Weights are the relative probabilities of publication of each p
	// interval, the first fixed at 1 (its WeightsSE is 0).
	Weights, WeightsSE []float64
	// Counts is the number of studies in each p interval.
	Counts []int
	// LogLik is the maximised log-likelihood of the selection model and
	// LogLikNull that of the random-effects model without selection (all
	// weights 1); LRT = 2 (LogLik - LogLikNull) on LRTDF = len(Cutpoints)
	// degrees of freedom, LRTP its chi-square p value.
	LogLik, LogLikNull, LRT float64
	LRTDF                   int
	LRTP                    float64
	// UnadjustedEstimate, UnadjustedSE and UnadjustedTau2 are the
	// maximum-likelihood random-effects fit without selection.
	UnadjustedEstimate, UnadjustedSE, UnadjustedTau2 float64
	// Direction is the sign of the favourable effect used.
	Direction float64
	// Converged says whether both fits met the gradient tolerance;
	// Iterations counts the Newton iterations of the selection fit;
	// Message says how the fit ended and notes boundary estimates.
	Converged  bool
	Iterations int
	Message    string
}

// CI is the Wald interval of the selection-adjusted estimate at level (0
// means 0.95), Estimate ± z_{1-α/2} SE with α = 1 - level: the usual
// normal-theory interval of a maximum-likelihood estimate (common practice,
// no source). Both limits are NaN when SE is.
func (r SelectionResult) CI(level float64) (lo, hi float64) {
	if level == 0 {
		level = defaultLevel
	}
	z := distuv.UnitNormal.Quantile(1 - (1-level)/2)
	return r.Estimate - z*r.SE, r.Estimate + z*r.SE
}

// SelectionModel fits the step-function selection model of Vevea and
// Hedges (1995, Psychometrika 60:419-435) with random effects. Before
// selection y_i ~ N(mu, tau² + se_i²). A study is observed with a
// probability proportional to the weight ω_j of the interval j that holds
// its one-sided p value in the favourable direction,
//
//	p_i = 1 - Φ(d·y_i / se_i),   d = Direction,
//
// with intervals cut at the one-sided Cutpoints a_1 < ... < a_J and ω_1 = 1.
// The log-likelihood is
//
//	ℓ = Σ_i [ log ω_j(i) + log φ((y_i - mu)/σ_i) - log σ_i - log A_i ],
//	σ_i² = tau² + se_i²,  A_i = Σ_j ω_j P(p in interval j | mu, σ_i),
//
// where interval j corresponds to d·y between se_i·Φ⁻¹(1 - a_j) and
// se_i·Φ⁻¹(1 - a_{j-1}). It is maximised by Newton's method with the
// analytic gradient and Hessian, a modified Hessian where it is not
// positive definite and a backtracking line search (see selModel.minimize)
// over (mu, log tau², log ω_2, ..., log ω_{J+1}), on
// effects divided by the root mean within-study variance. The default one
// cut at 0.025 is the three-parameter model (McShane, Böckenholt & Hansen
// 2016, Perspect Psychol Sci 11:730-749).
//
// Standard errors come from the inverse of the observed information: the
// analytic Hessian of the negative log-likelihood on the optimizer scale,
// carried to the natural scale by the delta method (SE(tau²) =
// tau²·SE(log tau²), SE(ω) = ω·SE(log ω)). When tau² is at its boundary
// (below 1e-6 of the mean within-study variance) its row is dropped, the
// other standard errors are conditional on tau² = 0, Tau2SE is NaN and
// Message says so.
//
// The likelihood-ratio test compares with the same model with all weights
// fixed at 1 (the maximum-likelihood random-effects model, also returned
// as Unadjusted*), chi-square with J degrees of freedom.
//
// Units: effects and standard errors on the raw scale; Estimate and SE in
// effect units, Tau2 in squared units; weights are unitless. Edges: k < 3
// and fewer studies than free parameters + 1 are errors; a p interval that
// holds no study is an error wrapping ErrEmptyInterval naming the interval
// (its weight is not identified). If the optimizer stops before the
// gradient tolerance is met the result is returned with Converged false and
// an error wrapping ErrNoConvergence.
func SelectionModel(effects, seEffects []float64, s SelectionSettings) (SelectionResult, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return SelectionResult{}, fmt.Errorf("selection model: %w", err)
	}
	cuts := s.Cutpoints
	if cuts == nil {
		cuts = []float64{DefaultSelectionCutpoint}
	}
	for i, a := range cuts {
		if !(a > 0 && a < 1) || (i > 0 && !(a > cuts[i-1])) {
			return SelectionResult{}, fmt.Errorf("selection model: cut points %v not strictly increasing in (0, 1): %w", cuts, ErrBadSetting)
		}
	}
	tol := s.Tol
	if tol == 0 {
		tol = DefaultSelectionTol
	}
	maxIter := s.MaxIter
	if maxIter == 0 {
		maxIter = DefaultSelectionMaxIter
	}
	if !(tol > 0) || maxIter < 0 {
		return SelectionResult{}, fmt.Errorf("selection model: tolerance %g, max iterations %d: %w", tol, maxIter, ErrBadSetting)
	}
	k := len(effects)
	nParam := len(cuts) + 2
	if k < nParam+1 {
		return SelectionResult{}, fmt.Errorf("selection model: %d studies for %d parameters: %w", k, nParam, ErrTooFewStudies)
	}
	direction := s.Direction
	if direction == 0 {
		fe, _ := fixedEffect(effects, seEffects)
		direction = sign(fe)
	} else {
		direction = sign(direction)
	}

	m := newSelModel(effects, seEffects, cuts, direction)
	r := SelectionResult{
		Cutpoints: append([]float64(nil), cuts...),
		Direction: direction,
		LRTDF:     len(cuts),
		Counts:    make([]int, m.nInt),
	}
	for _, j := range m.interval {
		r.Counts[j]++
	}
	for j, c := range r.Counts {
		if c == 0 {
			lo, hi := 0.0, 1.0
			if j > 0 {
				lo = cuts[j-1]
			}
			if j < len(cuts) {
				hi = cuts[j]
			}
			return r, fmt.Errorf("selection model: no study with one-sided p in [%g, %g): %w", lo, hi, ErrEmptyInterval)
		}
	}
	// Null fit: weights fixed at 1.
	nullX, nullOK, nullMsg := m.fitNull(tol, maxIter)
	r.LogLikNull = -m.nll(nullX, nil) - float64(k)*math.Log(m.scale)
	r.UnadjustedEstimate = direction * nullX[0] * m.scale
	r.UnadjustedTau2 = math.Exp(nullX[1]) * m.scale * m.scale
	if seNull, ok := m.standardErrors(nullX); ok {
		r.UnadjustedSE = seNull[0] * m.scale
	} else {
		r.UnadjustedSE = math.NaN()
	}

	// Selection fit, started at the null fit with all weights 1.
	m.free = true
	x := make([]float64, nParam)
	copy(x, nullX)
	iter, ok, msg := m.minimize(x, tol, maxIter)
	r.Iterations = iter
	r.LogLik = -m.nll(x, nil) - float64(k)*math.Log(m.scale)
	r.LRT = max(0, 2*(r.LogLik-r.LogLikNull))
	r.LRTP = distuv.ChiSquared{K: float64(len(cuts))}.Survival(r.LRT)
	r.Estimate = direction * x[0] * m.scale
	tau2Scaled := math.Exp(x[1])
	r.Tau2 = tau2Scaled * m.scale * m.scale
	r.Weights = make([]float64, m.nInt)
	r.WeightsSE = make([]float64, m.nInt)
	r.Weights[0] = 1
	for j := 1; j < m.nInt; j++ {
		r.Weights[j] = math.Exp(x[j+1])
	}
	boundary := tau2Scaled < tau2BoundaryRel
	if boundary {
		r.Tau2 = 0
	}
	seX, seOK := m.standardErrorsMaybeBoundary(x, boundary)
	r.SE, r.Tau2SE = math.NaN(), math.NaN()
	for j := 1; j < m.nInt; j++ {
		r.WeightsSE[j] = math.NaN()
	}
	if seOK {
		r.SE = seX[0] * m.scale
		if !boundary {
			r.Tau2SE = r.Tau2 * seX[1]
		}
		for j := 1; j < m.nInt; j++ {
			r.WeightsSE[j] = r.Weights[j] * seX[j+1]
		}
	}

	r.Converged = ok && nullOK
	switch {
	case !nullOK:
		r.Message = "fit without selection did not converge: " + nullMsg
	case !ok:
		r.Message = "selection fit did not converge: " + msg
	default:
		r.Message = fmt.Sprintf("converged in %d iterations", r.Iterations)
	}
	if boundary {
		r.Message += "; tau² estimated at zero, its standard error is not reported and the other standard errors assume tau² = 0"
	}
	if !seOK {
		r.Message += "; observed information not positive definite, standard errors not reported"
	}
	if !r.Converged {
		return r, fmt.Errorf("selection model: %s: %w", r.Message, ErrNoConvergence)
	}
	return r, nil
}

// selModel holds the working-scale data of a selection-model fit: effects
// multiplied by the direction and divided by scale.
type selModel struct {
	y, se, varY []float64
	// cutZ[j] is Φ⁻¹(1 - a_j) for the J cut points (decreasing in j);
	// interval j holds d·y/se in (cutZ[j], cutZ[j-1]] with cutZ[-1] = +Inf
	// and cutZ[J] = -Inf.
	cutZ     []float64
	interval []int
	nInt     int
	scale    float64
	free     bool // weights are free parameters (else all fixed at 1)
	// scratch for the per-interval terms of one study
	omega, dA []float64
}

func newSelModel(effects, seEffects, cuts []float64, direction float64) *selModel {
	k := len(effects)
	var sumVar float64
	for _, se := range seEffects {
		sumVar += se * se
	}
	scale := math.Sqrt(sumVar / float64(k))
	nInt := len(cuts) + 1
	buf := make([]float64, 3*k+len(cuts)+2*nInt)
	m := &selModel{
		y: buf[:k], se: buf[k : 2*k], varY: buf[2*k : 3*k],
		cutZ:     buf[3*k : 3*k+len(cuts)],
		omega:    buf[3*k+len(cuts) : 3*k+len(cuts)+nInt],
		dA:       buf[3*k+len(cuts)+nInt:],
		interval: make([]int, k),
		nInt:     nInt,
		scale:    scale,
	}
	for j, a := range cuts {
		m.cutZ[j] = distuv.UnitNormal.Quantile(1 - a)
	}
	for i, y := range effects {
		m.y[i] = direction * y / scale
		m.se[i] = seEffects[i] / scale
		m.varY[i] = m.se[i] * m.se[i]
		z := m.y[i] / m.se[i]
		j := 0
		for j < len(m.cutZ) && !(z > m.cutZ[j]) {
			j++
		}
		m.interval[i] = j
	}
	return m
}

// fitNull fits the model with every weight fixed at 1, the
// maximum-likelihood random-effects model, from the fixed-effect estimate
// and the moment estimate of tau² (at least 0.01 of the mean within-study
// variance). It leaves m.free false.
func (m *selModel) fitNull(tol float64, maxIter int) (x []float64, ok bool, msg string) {
	fe, _ := fixedEffect(m.y, m.se)
	x = []float64{fe, math.Log(max(m.tau2Start(fe), 0.01))}
	m.free = false
	_, ok, msg = m.minimize(x, tol, maxIter)
	return x, ok, msg
}

// tau2Start is the DerSimonian-Laird moment estimate of tau² on the working
// scale, used only as a starting value.
func (m *selModel) tau2Start(fe float64) float64 {
	var q, sumW, sumW2 float64
	for i, y := range m.y {
		w := 1 / m.varY[i]
		q += w * (y - fe) * (y - fe)
		sumW += w
		sumW2 += w * w
	}
	return (q - float64(len(m.y)-1)) / (sumW - sumW2/sumW)
}

// standardErrors returns the standard errors of the optimizer-scale
// parameters from the inverse of the numerical Hessian at x.
func (m *selModel) standardErrors(x []float64) ([]float64, bool) {
	return m.standardErrorsMaybeBoundary(x, false)
}

// standardErrorsMaybeBoundary is standardErrors; with dropTau2 the log tau²
// row and column are removed first (SEs conditional on tau² at x[1]) and the
// returned slice holds 0 in place of its SE.
func (m *selModel) standardErrorsMaybeBoundary(x []float64, dropTau2 bool) ([]float64, bool) {
	n := len(x)
	var g [maxSelParams]float64
	hess := make([]float64, n*n)
	m.eval(x, g[:n], hess)
	full := mat.NewSymDense(n, hess)
	keep := make([]int, 0, n)
	for i := 0; i < n; i++ {
		if !(dropTau2 && i == 1) {
			keep = append(keep, i)
		}
	}
	h := mat.NewSymDense(len(keep), nil)
	for a, i := range keep {
		for b, j := range keep[a:] {
			h.SetSym(a, a+b, full.At(i, j))
		}
	}
	var chol mat.Cholesky
	if !chol.Factorize(h) {
		return nil, false
	}
	var inv mat.SymDense
	if err := chol.InverseTo(&inv); err != nil {
		return nil, false
	}
	se := make([]float64, n)
	for a, i := range keep {
		d := inv.At(a, a)
		if !(d > 0) {
			return nil, false
		}
		se[i] = math.Sqrt(d)
	}
	return se, true
}
