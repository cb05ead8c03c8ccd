package bias

import (
	"fmt"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// minimizeGonum minimises the negative log-likelihood from x (updated in
// place) with gonum's optimize.Newton: the analytic gradient, the Hessian
// by central differences of that gradient, and gonum's Hessian
// modification and line search. It stops only when every gradient
// component is within tol (or after maxIter major iterations).
func (m *selModel) minimizeGonum(x []float64, tol float64, maxIter int) (iter int, ok bool, msg string) {
	n := len(x)
	trial, gTrial := make([]float64, n), make([]float64, n)
	p := optimize.Problem{
		Func: func(x []float64) float64 { return m.nll(x, nil) },
		Grad: func(grad, x []float64) { m.nll(x, grad) },
		Hess: func(h *mat.SymDense, x []float64) { m.hessian(h, x, trial, gTrial) },
	}
	settings := &optimize.Settings{
		GradientThreshold: tol,
		MajorIterations:   maxIter,
		Converger:         optimize.NeverTerminate{},
	}
	res, err := optimize.Minimize(p, x, settings, &optimize.Newton{})
	if res == nil {
		return 0, false, fmt.Sprintf("optimizer failed: %v", err)
	}
	copy(x, res.X)
	iter = res.Stats.MajorIterations
	if res.Status == optimize.GradientThreshold {
		return iter, true, fmt.Sprintf("converged in %d iterations", iter)
	}
	if err != nil {
		return iter, false, fmt.Sprintf("%v (status %v)", err, res.Status)
	}
	return iter, false, fmt.Sprintf("stopped with status %v after %d iterations", res.Status, iter)
}
