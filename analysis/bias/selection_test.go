package bias

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Values from R 4.2.2, testdata/reference/bias_regression.R: optim(c(mean(y),
// log(var(y))), nll, method = "BFGS", control = list(reltol = 1e-14)) on the
// random-effects negative log-likelihood. Both optimizers stop at their own
// tolerance, so the estimates agree to about 1e-7 relative (square root of
// the function tolerance), the log-likelihood much closer; tau² at the
// boundary (sym12, smd15) agrees to within 1e-8 absolute.
func TestUnadjustedAgainstOptim(t *testing.T) {
	t.Parallel()
	const (
		estTol    = 1e-6
		logLikTol = 1e-10
		tau2Abs   = 1e-8
		// boundaryLogLikTol: with tau² heading to 0 the log-likelihood
		// rises by about tau² times its slope (~1e-7 here).
		boundaryLogLikTol = 1e-6
	)
	for _, c := range []struct {
		set              string
		mu, tau2, logLik float64
	}{
		{"asym10", 0.26102260691084928, 0.0018826436738244483, 1.6016834492068865},
		{"negmd7", -2.1165643713956919, 0.78086348400995487, -13.742121714132246},
		{"sym12", 0.059242326474668185, 7.6638336735594831e-10, 9.5806630508023236},
		{"smd15", 0.31021194782453354, 3.0753286771458785e-09, 2.6359931628718449},
	} {
		t.Run(c.set, func(t *testing.T) {
			d := setByName(c.set)
			m := newSelModel(d.effects, d.seEffects, []float64{DefaultSelectionCutpoint}, 1)
			x, ok, msg := m.fitNull(DefaultSelectionTol, DefaultSelectionMaxIter)
			if !ok {
				t.Fatalf("null fit: %s", msg)
			}
			mu := x[0] * m.scale
			tau2 := math.Exp(x[1]) * m.scale * m.scale
			logLik := -m.nll(x, nil) - float64(len(d.effects))*math.Log(m.scale)
			checkClose(t, "mu", mu, c.mu, estTol)
			if c.tau2 < 1e-6 {
				// At the boundary optim stops while the log-likelihood is
				// still creeping up; ours must be at least as high and close.
				if math.Abs(tau2-c.tau2) > tau2Abs {
					t.Errorf("tau2 = %g, want %g", tau2, c.tau2)
				}
				if logLik < c.logLik-logLikTol || logLik-c.logLik > boundaryLogLikTol {
					t.Errorf("logLik = %.17g, want at least %.17g and within %g", logLik, c.logLik, boundaryLogLikTol)
				}
				return
			}
			checkClose(t, "tau2", tau2, c.tau2, estTol)
			checkClose(t, "logLik", logLik, c.logLik, logLikTol)
		})
	}
}

// TestSelectionReducesToRandomEffects checks that with every weight at 1
// the selection likelihood is the random-effects likelihood: the interval
// probabilities of each study sum to 1 (common practice, no source), and
// that SelectionModel reports that fit as its unadjusted estimate.
func TestSelectionReducesToRandomEffects(t *testing.T) {
	t.Parallel()
	d := setByName("asym10")
	m := newSelModel(d.effects, d.seEffects, []float64{0.025, 0.2, 0.5}, 1)
	x := []float64{0.7, math.Log(0.3)}
	m.free = false
	fNull := m.nll(x, nil)
	m.free = true
	fSel := m.nll([]float64{0.7, math.Log(0.3), 0, 0, 0}, nil)
	checkClose(t, "negative log-likelihood", fSel, fNull, 1e-13)

	got, err := SelectionModel(d.effects, d.seEffects, SelectionSettings{})
	if err != nil {
		t.Fatal(err)
	}
	// R 4.2.2 optim values as in TestUnadjustedAgainstOptim.
	checkClose(t, "UnadjustedEstimate", got.UnadjustedEstimate, 0.26102260691084928, 1e-6)
	checkClose(t, "LogLikNull", got.LogLikNull, 1.6016834492068865, 1e-10)
}

// TestSelectionGradient compares the analytic gradient with gonum's
// diff/fd central-difference gradient (gonum v0.17.0, fd.Gradient with
// fd.Central).
func TestSelectionGradient(t *testing.T) {
	t.Parallel()
	// gradTol: central differences with the default step are accurate to
	// about 1e-7 relative here.
	const gradTol = 1e-6
	d := setByName("asym10")
	for _, c := range []struct {
		name string
		cuts []float64
		x    []float64
	}{
		{"one cut", []float64{0.025}, []float64{0.2, math.Log(0.4), math.Log(0.3)}},
		{"three cuts", []float64{0.01, 0.1, 0.5}, []float64{-0.3, math.Log(2), 0.5, -1, 0.2}},
	} {
		t.Run(c.name, func(t *testing.T) {
			m := newSelModel(d.effects, d.seEffects, c.cuts, 1)
			m.free = true
			analytic := make([]float64, len(c.x))
			m.nll(c.x, analytic)
			numeric := fd.Gradient(nil, func(x []float64) float64 { return m.nll(x, nil) }, c.x,
				&fd.Settings{Formula: fd.Central})
			for i := range analytic {
				checkClose(t, "gradient", analytic[i], numeric[i], gradTol)
			}
		})
	}
}

// simulateSelected draws k published studies from a random-effects model
// (mean mu, between-study variance tau2, SE sqrt(4/n) for n uniform in
// [20, 200]) in which a study with one-sided p >= 0.025 is published with
// probability keep and every other study always (selection by rejection).
func simulateSelected(rng *rand.Rand, k int, mu, tau2, keep float64) (effects, seEffects []float64) {
	for len(effects) < k {
		n := 20 + rng.Float64()*180
		se := math.Sqrt(4 / n)
		y := mu + math.Sqrt(tau2)*rng.NormFloat64() + se*rng.NormFloat64()
		p := distuv.UnitNormal.Survival(y / se)
		if p >= 0.025 && rng.Float64() >= keep {
			continue
		}
		effects = append(effects, y)
		seEffects = append(seEffects, se)
	}
	return effects, seEffects
}

// TestSelectionRecovery checks on large simulated data (k = 200, seeded)
// that the three-parameter model recovers the generating mean, tau² and
// weight within 3 of its reported standard errors (a 99.7% band if the
// standard errors are right), and that the unadjusted estimate is biased
// upwards as selection makes it.
func TestSelectionRecovery(t *testing.T) {
	t.Parallel()
	const (
		mu, tau2, keep = 0.15, 0.02, 0.3
		nSE            = 3.0
	)
	for _, seed := range []uint64{1, 2} {
		rng := rand.New(rand.NewPCG(seed, 2026))
		y, se := simulateSelected(rng, 200, mu, tau2, keep)
		got, err := SelectionModel(y, se, SelectionSettings{Direction: 1})
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		for _, c := range []struct {
			name          string
			got, se, want float64
		}{
			{"mean", got.Estimate, got.SE, mu},
			{"tau2", got.Tau2, got.Tau2SE, tau2},
			{"weight", got.Weights[1], got.WeightsSE[1], keep},
		} {
			if !(math.Abs(c.got-c.want) <= nSE*c.se) {
				t.Errorf("seed %d: %s = %g (SE %g), want %g within %g SE", seed, c.name, c.got, c.se, c.want, nSE)
			}
		}
		if !(got.UnadjustedEstimate > got.Estimate) {
			t.Errorf("seed %d: unadjusted %g not above adjusted %g", seed, got.UnadjustedEstimate, got.Estimate)
		}
		if !(got.LRTP < 0.05) {
			t.Errorf("seed %d: LRT p = %g, want selection detected", seed, got.LRTP)
		}
		if !got.Converged || got.LRTDF != 1 {
			t.Errorf("seed %d: converged %v, LRTDF %d", seed, got.Converged, got.LRTDF)
		}
	}
}

func TestSelectionErrors(t *testing.T) {
	t.Parallel()
	sym := setByName("sym12")
	asym := setByName("asym10")
	for _, c := range []struct {
		name string
		y    []float64
		se   []float64
		s    SelectionSettings
		want error
	}{
		// sym12 has no study with y/se > 1.96, so the first interval of
		// the default model is empty.
		{"empty interval", sym.effects, sym.seEffects, SelectionSettings{Direction: 1}, ErrEmptyInterval},
		{"cut points not increasing", asym.effects, asym.seEffects, SelectionSettings{Cutpoints: []float64{0.5, 0.025}}, ErrBadSetting},
		{"cut point outside (0, 1)", asym.effects, asym.seEffects, SelectionSettings{Cutpoints: []float64{1}}, ErrBadSetting},
		{"fewer studies than parameters", asym.effects[:4], asym.seEffects[:4], SelectionSettings{Cutpoints: []float64{0.025, 0.5}}, ErrTooFewStudies},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := SelectionModel(c.y, c.se, c.s); !errors.Is(err, c.want) {
				t.Errorf("error %v, want %v", err, c.want)
			}
		})
	}
}

func TestSelectionReportsNonConvergence(t *testing.T) {
	t.Parallel()
	d := setByName("asym10")
	got, err := SelectionModel(d.effects, d.seEffects, SelectionSettings{MaxIter: 1})
	if !errors.Is(err, ErrNoConvergence) {
		t.Fatalf("error %v, want ErrNoConvergence", err)
	}
	if got.Converged || got.Message == "" {
		t.Errorf("Converged %v, Message %q", got.Converged, got.Message)
	}
}

// TestSelectionHessian compares the analytic Hessian with gonum's
// diff/fd central-difference Jacobian of the analytic gradient (gonum
// v0.17.0, fd.Jacobian with fd.Central), in the interior and with tau²
// near its boundary, with and without selection.
func TestSelectionHessian(t *testing.T) {
	t.Parallel()
	const tol = 1e-6 // central differences of the gradient: about 1e-8 relative here
	d := setByName("asym10")
	for _, c := range []struct {
		name string
		cuts []float64
		free bool
		x    []float64
	}{
		{"null", []float64{0.025}, false, []float64{0.3, math.Log(0.2)}},
		{"one cut", []float64{0.025}, true, []float64{0.2, math.Log(0.4), math.Log(0.3)}},
		{"one cut, tau² small", []float64{0.025}, true, []float64{0.5, math.Log(1e-5), math.Log(2)}},
		{"three cuts", []float64{0.01, 0.1, 0.5}, true, []float64{-0.3, math.Log(2), 0.5, -1, 0.2}},
	} {
		t.Run(c.name, func(t *testing.T) {
			m := newSelModel(d.effects, d.seEffects, c.cuts, 1)
			m.free = c.free
			n := len(c.x)
			g := make([]float64, n)
			h := make([]float64, n*n)
			m.eval(c.x, g, h)
			jac := mat.NewDense(n, n, nil)
			fd.Jacobian(jac, func(dst, x []float64) { m.nll(x, dst) }, c.x, &fd.JacobianSettings{Formula: fd.Central})
			for i := range n {
				for j := range n {
					if !near(h[i*n+j], jac.At(i, j), tol) {
						t.Errorf("H[%d][%d] = %.12g, finite differences %.12g", i, j, h[i*n+j], jac.At(i, j))
					}
				}
			}
		})
	}
}
