package bias

import (
	"cmp"

	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/analysis"
)

// Trim-and-fill estimators and sides.
const (
	EstimatorL0 = "L0"
	EstimatorR0 = "R0"
	SideLeft    = "left"
	SideRight   = "right"
)

// DefaultTrimFillMaxIter is the iteration cap of TrimFill when
// TrimFillSettings.MaxIter is zero. k0 usually settles within a handful of
// passes; it can only take k values, so 100 is generous.
const DefaultTrimFillMaxIter = 100

// FilledStudy is a study imputed by trim-and-fill, in effect units.
type FilledStudy struct {
	Effect, SE float64
}

// TrimFillResult is the outcome of trim-and-fill.
type TrimFillResult struct {
	// K0 is the estimated number of missing studies, Side the side of the
	// funnel on which they are missing ("left" = smaller effects) and
	// Estimator "L0" or "R0".
	K0        int
	Side      string
	Estimator string
	// Filled holds the K0 imputed studies: mirror images of the K0 most
	// extreme studies on the other side about Center.
	Filled []FilledStudy
	// Center is the fixed-effect estimate of the trimmed data at the final
	// iteration, the point about which studies are mirrored.
	Center float64
	// Fixed-effect estimate of the filled data (observed plus imputed) with
	// its SE and a normal confidence interval at Level.
	FixedEstimate, FixedSE, FixedCILow, FixedCIHigh float64
	// Random-effects estimate of the filled data with its SE and Wald
	// confidence interval, tau² under Tau2Method.
	RandomEstimate, RandomSE, RandomCILow, RandomCIHigh float64
	Tau2                                                float64
	Tau2Method                                          string
	// Iterations is the number of trimming passes; Converged says whether
	// k0 stopped changing.
	Iterations int
	Converged  bool
}

// TrimFillSettings configures TrimFill.
type TrimFillSettings struct {
	// Estimator is "L0" or "R0"; "" means "L0".
	Estimator string
	// Side is "left" or "right", the side on which studies are assumed
	// missing; "" means chosen from the data (see TrimFill).
	Side string
	// Level is the confidence level of the intervals; 0 means 0.95.
	Level float64
	// Tau2 is the tau² estimator for the random-effects fit of the filled
	// data; "" means analysis.Tau2REML.
	Tau2 analysis.Tau2Method
	// MaxIter caps the trimming passes; 0 means DefaultTrimFillMaxIter.
	MaxIter int
}

// TrimFill runs the trim-and-fill method of Duval and Tweedie (2000,
// Biometrics 56:455-463; JASA 95:89-98). Assuming studies are missing on
// the left (the other side is handled by negating the effects), it iterates:
//
//  1. mu = fixed-effect estimate of the studies left after removing the k0
//     largest effects (k0 = 0 at the start);
//  2. d_i = y_i - mu for all k studies, ranked by |d_i| (average ranks for
//     ties); T = sum of the ranks of positive d_i; γ = k - h, with h the
//     rank of the negative d_i of largest |d_i| (h = 0 if none): without
//     ties, the length of the run of positive d_i at the top of the ranking;
//  3. L0 = (4T - k(k+1)) / (2k - 1)  or  R0 = γ - 1, and the new k0 is the
//     estimator rounded to the nearest integer (halves away from zero) and
//     floored at 0 (capped at k - 1);
//
// until k0 no longer changes. The k0 trimmed studies are then mirrored about
// the final mu (effect 2·mu - y_i, same SE) and the observed plus imputed
// studies are pooled by fixed effect (normal CI) and by random effects
// (analysis.RandomEffects with the chosen tau² estimator, Wald CI).
//
// Side rule when Side is "": the sign of the asymmetry coefficient of
// Egger's weighted regression decides: a positive slope (smaller studies
// show larger effects) means studies are missing on the left, a negative
// slope on the right. When the slope is exactly zero or cannot be computed
// (all standard errors equal), both sides are tried and the one with the
// larger k0 is taken, the left on a tie.
//
// Units: effects and standard errors on the raw scale; results in effect
// units. Edges: k < 3 is an error. If k0 keeps changing after MaxIter
// passes the result (with Converged false) is returned together with an
// error wrapping ErrNoConvergence. If the random-effects fit of the filled
// data fails the error is returned.
func TrimFill(effects, seEffects []float64, s TrimFillSettings) (TrimFillResult, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return TrimFillResult{}, fmt.Errorf("trim-and-fill: %w", err)
	}
	level, err := checkLevel(s.Level)
	if err != nil {
		return TrimFillResult{}, fmt.Errorf("trim-and-fill: %w", err)
	}
	estimator := s.Estimator
	if estimator == "" {
		estimator = EstimatorL0
	}
	if estimator != EstimatorL0 && estimator != EstimatorR0 {
		return TrimFillResult{}, fmt.Errorf("trim-and-fill: estimator %q: %w", estimator, ErrBadSetting)
	}
	maxIter := s.MaxIter
	if maxIter == 0 {
		maxIter = DefaultTrimFillMaxIter
	}
	if maxIter < 0 {
		return TrimFillResult{}, fmt.Errorf("trim-and-fill: max iterations %d: %w", maxIter, ErrBadSetting)
	}
	tau2Method := s.Tau2
	if tau2Method == "" {
		tau2Method = analysis.Tau2REML
	}

	k := len(effects)
	work := newTrimWork(k)
	side := s.Side
	var tr trimRun
	switch side {
	case SideLeft, SideRight:
		tr = work.run(effects, seEffects, side == SideRight, estimator, maxIter)
	case "":
		side = SideLeft
		w := work.dev // scratch, overwritten by run
		for i, se := range seEffects {
			w[i] = 1 / (se * se)
		}
		fit, ferr := fitLine(seEffects, effects, w)
		switch {
		case ferr == nil && fit.slope > 0:
			tr = work.run(effects, seEffects, false, estimator, maxIter)
		case ferr == nil && fit.slope < 0:
			side = SideRight
			tr = work.run(effects, seEffects, true, estimator, maxIter)
		default:
			left := work.run(effects, seEffects, false, estimator, maxIter)
			right := work.run(effects, seEffects, true, estimator, maxIter)
			tr = left
			if right.k0 > left.k0 {
				side, tr = SideRight, right
			} else {
				// rerun so work holds the order of the chosen side
				tr = work.run(effects, seEffects, false, estimator, maxIter)
			}
		}
	default:
		return TrimFillResult{}, fmt.Errorf("trim-and-fill: side %q: %w", side, ErrBadSetting)
	}

	r := TrimFillResult{
		K0:         tr.k0,
		Side:       side,
		Estimator:  estimator,
		Center:     tr.center,
		Tau2Method: string(tau2Method),
		Iterations: tr.iter,
		Converged:  tr.converged,
	}
	// Filled data: observed studies followed by the mirror images of the k0
	// studies trimmed last (the k0 largest working-scale effects).
	n := k + tr.k0
	buf := make([]float64, 2*n)
	allY, allSE := buf[:n], buf[n:]
	copy(allY, effects)
	copy(allSE, seEffects)
	r.Filled = make([]FilledStudy, tr.k0)
	for j := 0; j < tr.k0; j++ {
		i := work.order[k-1-j]
		f := FilledStudy{Effect: 2*tr.center - effects[i], SE: seEffects[i]}
		r.Filled[j] = f
		allY[k+j], allSE[k+j] = f.Effect, f.SE
	}
	fe, varFE := fixedEffect(allY, allSE)
	z := distuv.UnitNormal.Quantile(0.5 + level/2)
	r.FixedEstimate, r.FixedSE = fe, math.Sqrt(varFE)
	r.FixedCILow, r.FixedCIHigh = fe-z*r.FixedSE, fe+z*r.FixedSE
	re, err := analysis.RandomEffects(allY, allSE, analysis.Settings{Level: level, Tau2: tau2Method, SkipLeaveOneOut: true})
	if err != nil {
		return r, fmt.Errorf("trim-and-fill: random effects of filled data: %w", err)
	}
	if !re.Converged {
		return r, fmt.Errorf("trim-and-fill: random effects of filled data: tau² (%s): %w", tau2Method, ErrNoConvergence)
	}
	r.RandomEstimate, r.RandomSE = re.Estimate, re.SE
	r.RandomCILow, r.RandomCIHigh = re.CILow, re.CIHigh
	r.Tau2 = re.Tau2
	if !tr.converged {
		return r, fmt.Errorf("trim-and-fill: k0 still changing after %d passes: %w", maxIter, ErrNoConvergence)
	}
	return r, nil
}

// trimWork holds the scratch slices of one trim-and-fill run.
type trimWork struct {
	y     []float64 // working-scale effects (negated for the right side)
	dev   []float64 // deviations from the current centre
	order []int     // study indices by increasing working-scale effect
	byAbs []int     // study indices by increasing |deviation|
}

func newTrimWork(k int) *trimWork {
	f := make([]float64, 2*k)
	ix := make([]int, 2*k)
	return &trimWork{y: f[:k], dev: f[k:], order: ix[:k], byAbs: ix[k:]}
}

type trimRun struct {
	k0        int
	center    float64 // on the original scale
	iter      int
	converged bool
}

// run performs the trimming passes with studies assumed missing on the left
// of the working scale; flip negates the effects first.
func (w *trimWork) run(effects, seEffects []float64, flip bool, estimator string, maxIter int) trimRun {
	k := len(effects)
	for i, y := range effects {
		if flip {
			y = -y
		}
		w.y[i] = y
		w.order[i] = i
	}
	slices.SortStableFunc(w.order, func(a, b int) int { return cmp.Compare(w.y[a], w.y[b]) })
	k0 := 0
	var center float64
	out := trimRun{}
	for iter := 1; iter <= maxIter; iter++ {
		var sumW, sumWY float64
		for _, i := range w.order[:k-k0] {
			wt := 1 / (seEffects[i] * seEffects[i])
			sumW += wt
			sumWY += wt * w.y[i]
		}
		center = sumWY / sumW
		next := w.estimate(center, estimator)
		out.iter = iter
		if next == k0 {
			out.converged = true
			break
		}
		k0 = next
	}
	out.k0 = k0
	if flip {
		out.center = -center
	} else {
		out.center = center
	}
	return out
}

// estimate returns the k0 implied by the deviations from center.
func (w *trimWork) estimate(center float64, estimator string) int {
	k := len(w.y)
	for i, y := range w.y {
		w.dev[i] = y - center
		w.byAbs[i] = i
	}
	slices.SortFunc(w.byAbs, func(a, b int) int { return cmp.Compare(math.Abs(w.dev[a]), math.Abs(w.dev[b])) })
	var est float64
	switch estimator {
	case EstimatorL0:
		var rankSum float64 // sum of the (average) ranks of positive deviations
		for i := 0; i < k; {
			j := i + 1
			a := math.Abs(w.dev[w.byAbs[i]])
			for j < k && math.Abs(w.dev[w.byAbs[j]]) == a {
				j++
			}
			rank := float64(i+j+1) / 2 // average of ranks i+1 .. j
			for _, ix := range w.byAbs[i:j] {
				if w.dev[ix] > 0 {
					rankSum += rank
				}
			}
			i = j
		}
		n := float64(k)
		est = (4*rankSum - n*(n+1)) / (2*n - 1)
	default: // R0
		// γ = k - h, h the (average) rank of the most extreme negative
		// deviation, 0 when none is negative.
		h := 0.0
		for i := 0; i < k; {
			j := i + 1
			a := math.Abs(w.dev[w.byAbs[i]])
			for j < k && math.Abs(w.dev[w.byAbs[j]]) == a {
				j++
			}
			for _, ix := range w.byAbs[i:j] {
				if w.dev[ix] < 0 {
					h = float64(i+j+1) / 2
				}
			}
			i = j
		}
		est = float64(k) - h - 1
	}
	k0 := int(math.Round(est))
	return max(0, min(k0, k-1))
}
