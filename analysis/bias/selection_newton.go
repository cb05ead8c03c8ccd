package bias

import (
	"fmt"
	"math"
)

// maxSelParams bounds the parameters held in fixed-size scratch: mu,
// log tau² and one log weight per cut point.
const maxSelParams = 10

// maxLogWeight is the log weight beyond which a weight counts as not
// identified: the likelihood keeps improving as it heads to 0 or to
// infinity (e^20 ≈ 5e8), so the fit stops early instead of drifting for
// hundreds of iterations.
const maxLogWeight = 20

// log tau² (working scale) below which tau² counts as at its boundary 0
// when the gradient still pushes it down, and to which a fit in the
// exponential tail of tau² jumps: the likelihood then changes by about
// tau² times its slope, below the gradient tolerance, while Newton's method
// on log tau² would creep down by about one unit per iteration.
const (
	logTau2Freeze = -18.42 // log(1e-8)
	logTau2Jump   = -23.03 // log(1e-10)
)

// boundary holds Φ and φ terms at one interval boundary u, with the
// powers u^k φ(u) the derivatives need; all are 0 at ±Inf except the
// probabilities.
type boundary struct {
	cdf, sf                 float64
	pdf, updf, u2pdf, u3pdf float64
}

func boundaryAt(u float64) boundary {
	switch {
	case math.IsInf(u, 1):
		return boundary{cdf: 1}
	case math.IsInf(u, -1):
		return boundary{sf: 1}
	}
	tail := 0.5 * math.Erfc(math.Abs(u)/math.Sqrt2)
	b := boundary{cdf: tail, sf: 1 - tail}
	if u > 0 {
		b.cdf, b.sf = 1-tail, tail
	}
	b.pdf = math.Exp(-0.5*u*u) / math.Sqrt(2*math.Pi)
	b.updf = u * b.pdf
	b.u2pdf = u * b.updf
	b.u3pdf = u * b.u2pdf
	return b
}

// nll returns the negative log-likelihood on the working scale at x, and
// its gradient in grad when grad is not nil. x = (mu, log tau², log ω_2,
// ...) when m.free, (mu, log tau²) otherwise.
func (m *selModel) nll(x, grad []float64) float64 { return m.eval(x, grad, nil) }

// eval returns the negative log-likelihood at x, with its gradient in grad
// and its Hessian in hess (n×n, row major) when they are not nil. The
// derivatives are analytic. Per study, with σ² = tau² + se², r = y - mu,
// u_b = (se·z_b - mu)/σ at each cut z_b and P_j = Φ(u_{j-1}) - Φ(u_j),
//
//	f_i = log σ + r²/(2σ²) - log ω_j(i) + log A,  A = Σ_j ω_j P_j
//	∂P_j/∂mu = (φ(u_j) - φ(u_{j-1}))/σ,  ∂P_j/∂σ = (u_jφ(u_j) - u_{j-1}φ(u_{j-1}))/σ
//
// and, from φ' = -uφ, ∂u/∂mu = -1/σ and ∂u/∂σ = -u/σ, the second
// derivatives of P_j in (mu, σ) follow from those of φ(u) and uφ(u):
//
//	∂φ/∂mu = uφ/σ,  ∂φ/∂σ = u²φ/σ,  ∂(uφ)/∂mu = (u² - 1)φ/σ,  ∂(uφ)/∂σ = (u³ - u)φ/σ.
//
// log A has derivatives A_a/A and A_ab/A - A_a A_b/A², with ∂A/∂log ω_j =
// ω_j P_j. σ depends on log tau² = t through dσ/dt = tau²/(2σ) = s1 and
// d²σ/dt² = s1 - s1²/σ (chain rule).
func (m *selModel) eval(x, grad, hess []float64) float64 {
	n := len(x)
	mu, tau2 := x[0], math.Exp(x[1])
	for j := range m.omega {
		m.omega[j] = 1
	}
	if m.free {
		for j := 1; j < m.nInt; j++ {
			m.omega[j] = math.Exp(x[j+1])
		}
	}
	for j := range grad {
		grad[j] = 0
	}
	for j := range hess {
		hess[j] = 0
	}
	nCut := len(m.cutZ)
	var bs [maxSelParams]boundary
	var pj, pmj, psj [maxSelParams]float64
	const halfLog2Pi = 0.91893853320467274178 // log(2π)/2
	var f float64
	for i, y := range m.y {
		varTot := tau2 + m.varY[i]
		sigma := math.Sqrt(varTot)
		r := y - mu
		f += halfLog2Pi + math.Log(sigma) + r*r/(2*varTot)
		fm := -r / varTot
		fs := 1/sigma - r*r/(varTot*sigma)
		fmm := 1 / varTot
		fms := 2 * r / (varTot * sigma)
		fss := -1/varTot + 3*r*r/(varTot*varTot)
		var a, amA, asA float64 // A, A_mu/A, A_σ/A
		if m.free {
			if jObs := m.interval[i]; jObs > 0 {
				f -= x[jObs+1]
				if grad != nil {
					grad[jObs+1]--
				}
			}
			for b := 0; b < nCut; b++ {
				bs[b] = boundaryAt((m.se[i]*m.cutZ[b] - mu) / sigma)
			}
			var am, as, amm, ams, ass float64
			for j := 0; j < m.nInt; j++ {
				hi, lo := boundary{cdf: 1}, boundary{sf: 1} // u = +Inf, -Inf
				if j > 0 {
					hi = bs[j-1]
				}
				if j < nCut {
					lo = bs[j]
				}
				var p float64
				if j < nCut && lo.cdf > 0.5 { // u_lo > 0: both tails on the right
					p = lo.sf - hi.sf
				} else {
					p = hi.cdf - lo.cdf
				}
				w := m.omega[j]
				pm := (lo.pdf - hi.pdf) / sigma
				ps := (lo.updf - hi.updf) / sigma
				pj[j], pmj[j], psj[j] = p, pm, ps
				a += w * p
				am += w * pm
				as += w * ps
				amm += w * (lo.updf - hi.updf) / varTot
				ams += w * ((lo.u2pdf - lo.pdf) - (hi.u2pdf - hi.pdf)) / varTot
				ass += w * ((lo.u3pdf - lo.updf) - (hi.u3pdf - hi.updf) - (lo.updf - hi.updf)) / varTot
			}
			f += math.Log(a)
			amA, asA = am/a, as/a
			fm += amA
			fs += asA
			fmm += amm/a - am*am/(a*a)
			fms += ams/a - am*as/(a*a)
			fss += ass/a - as*as/(a*a)
		}
		if grad == nil {
			continue
		}
		s1 := tau2 / (2 * sigma)
		s2 := s1 - s1*s1/sigma
		grad[0] += fm
		grad[1] += fs * s1
		if m.free {
			for j := 1; j < m.nInt; j++ {
				grad[j+1] += m.omega[j] * pj[j] / a
			}
		}
		if hess == nil {
			continue
		}
		hess[0] += fmm
		hess[1] += fms * s1
		hess[n+1] += fss*s1*s1 + fs*s2
		if !m.free {
			continue
		}
		for j := 1; j < m.nInt; j++ {
			wp := m.omega[j] * pj[j] / a
			hess[j+1] += m.omega[j]*pmj[j]/a - wp*amA
			hess[n+j+1] += (m.omega[j]*psj[j]/a - wp*asA) * s1
			for k := j; k < m.nInt; k++ {
				wq := m.omega[k] * pj[k] / a
				h := -wp * wq
				if k == j {
					h += wp
				}
				hess[(j+1)*n+k+1] += h
			}
		}
	}
	for i := 0; i < n; i++ { // fill the lower triangle
		for j := 0; j < i; j++ {
			if hess != nil {
				hess[i*n+j] = hess[j*n+i]
			}
		}
	}
	return f
}

// minimize minimises the negative log-likelihood from x (updated in place)
// by Newton's method with the analytic Hessian: where the Hessian is not
// positive definite a multiple of the identity is added until it is
// (Nocedal & Wright, Numerical Optimization, 2nd ed., 2006, sec. 3.4), and
// a backtracking line search with the Armijo condition (sec. 3.1) keeps
// each step a descent. It stops when every gradient component is within
// tol, after maxIter iterations, or early when a log weight passes
// ±maxLogWeight (the weight is not identified).
func (m *selModel) minimize(x []float64, tol float64, maxIter int) (iter int, ok bool, msg string) {
	n := len(x)
	var gBuf, gTryBuf, xTrialBuf, xTryBuf, dBuf [maxSelParams]float64
	var hBuf, hTryBuf, lBuf [maxSelParams * maxSelParams]float64
	gTry, hTry := gTryBuf[:n], hTryBuf[:n*n]
	g, xTrial, xTry, d := gBuf[:n], xTrialBuf[:n], xTryBuf[:n], dBuf[:n]
	h, l := hBuf[:n*n], lBuf[:n*n]
	f := m.eval(x, g, h)
	escaped := false
	for iter = 0; ; iter++ {
		if traceFit {
			fmt.Println("iter", iter, x, g, f)
		}
		if !finite(f) {
			return iter, false, "negative log-likelihood not finite"
		}
		if x[1] < logTau2Freeze && g[1] < 0 && !escaped {
			// At the boundary the likelihood rises with tau² however
			// little the gradient: not a maximum. Restart tau² inside,
			// at 1% of the mean within-study variance (once).
			escaped = true
			x[1] = math.Log(0.01)
			f = m.eval(x, g, h)
			continue
		}
		// tau² at its boundary: log tau² is held where it is.
		frozen := x[1] < logTau2Freeze && g[1] > 0
		if frozen {
			g[1] = 0
			for i := 0; i < n; i++ {
				h[i*n+1], h[n+i] = 0, 0
			}
			h[n+1] = 1
		}
		if maxAbs(g) <= tol {
			return iter, true, fmt.Sprintf("converged in %d iterations", iter)
		}
		if iter >= maxIter {
			return iter, false, fmt.Sprintf("stopped after %d iterations with gradient %.3g", iter, maxAbs(g))
		}
		if m.free {
			for j := 2; j < n; j++ {
				if math.Abs(x[j]) > maxLogWeight {
					dir := "infinity"
					if x[j] < 0 {
						dir = "zero"
					}
					return iter, false, fmt.Sprintf("the weight of p interval %d is not identified: it heads to %s", j, dir)
				}
			}
		}
		// Newton direction with a modified Hessian.
		shift := 0.0
		for {
			copy(l, h)
			for i := 0; i < n; i++ {
				l[i*n+i] += shift
			}
			if cholesky(l, n) {
				break
			}
			shift = max(2*shift, 1e-3*(1+maxAbsDiag(h, n)))
		}
		for i := range d {
			d[i] = -g[i]
		}
		cholSolve(l, n, d)
		slope := dot(g, d)
		step := 1.0
		accepted := false
		fTrial := f
		for range 60 {
			for i := range x {
				xTrial[i] = x[i] + step*d[i]
			}
			fTrial = m.eval(xTrial, nil, nil)
			if finite(fTrial) && fTrial <= f+1e-4*step*slope {
				accepted = true
				break
			}
			step /= 2
		}
		if !accepted {
			return iter, false, fmt.Sprintf("line search failed after %d iterations with gradient %.3g", iter, maxAbs(g))
		}
		// In the exponential tail, f ≈ c + b·tau², the first and second
		// derivatives in log tau² agree.
		tail := g[1] > 0 && math.Abs(h[n+1]-g[1]) <= 0.1*g[1]
		switch {
		case !frozen && tail && d[1] <= -0.5 && x[1] > logTau2Jump:
			// In the exponential tail of tau², try the boundary at once;
			// keep it if the function is lower there and still falls
			// towards the boundary.
			copy(xTry, xTrial)
			xTry[1] = logTau2Jump
			if fTry := m.eval(xTry, gTry, hTry); finite(fTry) && fTry < fTrial && gTry[1] > 0 {
				copy(x, xTry)
				copy(g, gTry)
				copy(h, hTry)
				f = fTry
				continue
			}
		case shift > 0 && step == 1 && h[n+1] < 0:
			// Where the curvature in log tau² is negative the modified
			// step in it can be far too short: extend that step while the
			// function keeps falling.
			dt := xTrial[1] - x[1]
			copy(xTry, xTrial)
			for range 60 {
				dt *= 2
				xTry[1] = x[1] + dt
				fTry := m.eval(xTry, nil, nil)
				if !(finite(fTry) && fTry < fTrial) {
					break
				}
				fTrial = fTry
				xTrial[1] = xTry[1]
			}
		}
		copy(x, xTrial)
		f = m.eval(x, g, h)
	}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func maxAbs(v []float64) float64 {
	var m float64
	for _, x := range v {
		m = max(m, math.Abs(x))
	}
	if math.IsNaN(dot(v, v)) {
		return math.NaN()
	}
	return m
}

func maxAbsDiag(h []float64, n int) float64 {
	var m float64
	for i := 0; i < n; i++ {
		m = max(m, math.Abs(h[i*n+i]))
	}
	return m
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

// cholesky overwrites the lower triangle of the symmetric n×n matrix a
// (row major) with its Cholesky factor L (a = L Lᵀ); false when a is not
// positive definite.
func cholesky(a []float64, n int) bool {
	for j := 0; j < n; j++ {
		s := a[j*n+j]
		for k := 0; k < j; k++ {
			s -= a[j*n+k] * a[j*n+k]
		}
		if !(s > 0) {
			return false
		}
		ljj := math.Sqrt(s)
		a[j*n+j] = ljj
		for i := j + 1; i < n; i++ {
			s := a[i*n+j]
			for k := 0; k < j; k++ {
				s -= a[i*n+k] * a[j*n+k]
			}
			a[i*n+j] = s / ljj
		}
	}
	return true
}

// cholSolve solves L Lᵀ x = b in place, L from cholesky.
func cholSolve(l []float64, n int, b []float64) {
	for i := 0; i < n; i++ {
		s := b[i]
		for k := 0; k < i; k++ {
			s -= l[i*n+k] * b[k]
		}
		b[i] = s / l[i*n+i]
	}
	for i := n - 1; i >= 0; i-- {
		s := b[i]
		for k := i + 1; k < n; k++ {
			s -= l[k*n+i] * b[k]
		}
		b[i] = s / l[i*n+i]
	}
}

var traceFit = false
