package bias

import (
	"errors"
	"fmt"
	"math"
	"unshelved/analysis"

	"gonum.org/v1/gonum/stat/distuv"
)

// Errors returned (wrapped) by the functions of this package.
var (
	// ErrTooFewStudies means the method needs more studies than given.
	ErrTooFewStudies = errors.New("too few studies")
	// ErrBadEffect means an effect is NaN or infinite.
	ErrBadEffect = errors.New("effect is not finite")
	// ErrBadSE means a standard error is not positive and finite.
	ErrBadSE = errors.New("standard error is not positive and finite")
	// ErrConstantRegressor means the regressor of a regression does not vary.
	ErrConstantRegressor = errors.New("regressor does not vary across studies")
	// ErrPerfectFit means the weighted residuals are all zero, so the
	// dispersion and every standard error would be zero.
	ErrPerfectFit = errors.New("regression fits the data exactly")
	// ErrNoConvergence means an iterative method stopped before converging.
	ErrNoConvergence = errors.New("no convergence")
	// ErrEmptyInterval means a p-value interval of a selection model holds
	// no study, so its weight is not identified.
	ErrEmptyInterval = errors.New("p-value interval holds no study")
	// ErrBadSetting means an option is out of its allowed range.
	ErrBadSetting = errors.New("bad setting")
)

// StudyError reports a problem with one study, named by its 1-based
// position in the input slices.
type StudyError struct {
	Study int // 1-based position
	Field string
	Value float64
	Err   error
}

func (e *StudyError) Error() string {
	return fmt.Sprintf("study %d: %s %g: %v", e.Study, e.Field, e.Value, e.Err)
}

func (e *StudyError) Unwrap() error { return e.Err }

const (
	// defaultLevel is the confidence level used when a Level is zero.
	defaultLevel = analysis.DefaultLevel
	// perfectFitRel is the ratio of weighted residual to weighted total sum
	// of squares below which a regression is treated as an exact fit: a
	// relative 1e-20 is far below the rounding error of real data (about
	// 1e-16 relative per value, squared) yet far above zero.
	perfectFitRel = 1e-20
	// constantRegressorRel is the ratio of the weighted spread of a
	// regressor to its weighted squared mean below which the regressor is
	// treated as constant; 1e-24 corresponds to values equal to about
	// twelve significant digits.
	constantRegressorRel = 1e-24
)

// checkStudies validates effects and standard errors and panics when the
// slices differ in length (programmer error).
func checkStudies(effects, seEffects []float64, minK int) error {
	if len(effects) != len(seEffects) {
		panic("bias: slice length mismatch")
	}
	if len(effects) < minK {
		return fmt.Errorf("%d studies, need at least %d: %w", len(effects), minK, ErrTooFewStudies)
	}
	for i, y := range effects {
		if math.IsNaN(y) || math.IsInf(y, 0) {
			return &StudyError{Study: i + 1, Field: "effect", Value: y, Err: ErrBadEffect}
		}
		s := seEffects[i]
		if !(s > 0) || math.IsInf(s, 0) {
			return &StudyError{Study: i + 1, Field: "standard error", Value: s, Err: ErrBadSE}
		}
	}
	return nil
}

// checkLevel returns the confidence level to use: defaultLevel for zero, an
// error outside (0, 1).
func checkLevel(level float64) (float64, error) {
	if level == 0 {
		return defaultLevel, nil
	}
	if !(level > 0 && level < 1) {
		return 0, fmt.Errorf("confidence level %g not in (0, 1): %w", level, ErrBadSetting)
	}
	return level, nil
}

// fixedEffect returns the inverse-variance fixed-effect estimate and its
// variance,
//
//	mu = Σ w_i y_i / Σ w_i,  var(mu) = 1 / Σ w_i,  w_i = 1 / se_i².
func fixedEffect(effects, seEffects []float64) (estimate, varEstimate float64) {
	var sumW, sumWY float64
	for i, y := range effects {
		w := 1 / (seEffects[i] * seEffects[i])
		sumW += w
		sumWY += w * y
	}
	return sumWY / sumW, 1 / sumW
}

// lineFit is a weighted least-squares fit of y = intercept + slope·x with a
// multiplicative dispersion parameter.
type lineFit struct {
	intercept, slope         float64
	seIntercept, seSlope     float64
	covInterceptSlope        float64
	dispersion               float64
	meanX, sumW, sumWXXCentr float64
	df                       int
}

// fitLine fits y = b0 + b1·x by weighted least squares with weights w and
// residual variance dispersion/w_i, where the dispersion is estimated as
//
//	phi = Σ w_i (y_i - b0 - b1 x_i)² / (k - 2).
//
// Sums are taken about the weighted means (two passes) for accuracy:
//
//	b1 = Σ w (x - x̄)(y - ȳ) / Σ w (x - x̄)²,  b0 = ȳ - b1 x̄,
//	var(b1) = phi / Sxx,  var(b0) = phi (1/Σw + x̄²/Sxx),  cov = -phi x̄ / Sxx.
//
// These are the textbook weighted-regression formulas (e.g. Draper & Smith,
// Applied Regression Analysis, 3rd ed., 1998, ch. 9). It needs k >= 3.
func fitLine(x, y, w []float64) (lineFit, error) {
	k := len(x)
	if k < 3 {
		return lineFit{}, fmt.Errorf("%d studies, need at least 3: %w", k, ErrTooFewStudies)
	}
	var sumW, sumWX, sumWY float64
	for i := range x {
		sumW += w[i]
		sumWX += w[i] * x[i]
		sumWY += w[i] * y[i]
	}
	meanX, meanY := sumWX/sumW, sumWY/sumW
	var sxx, sxy, syy float64
	for i := range x {
		dx, dy := x[i]-meanX, y[i]-meanY
		sxx += w[i] * dx * dx
		sxy += w[i] * dx * dy
		syy += w[i] * dy * dy
	}
	if !(sxx > constantRegressorRel*sumW*meanX*meanX) || sxx == 0 {
		return lineFit{}, ErrConstantRegressor
	}
	slope := sxy / sxx
	intercept := meanY - slope*meanX
	var rss float64
	for i := range x {
		r := y[i] - intercept - slope*x[i]
		rss += w[i] * r * r
	}
	if !(rss > perfectFitRel*(syy+sumW*meanY*meanY)) {
		return lineFit{}, ErrPerfectFit
	}
	df := k - 2
	phi := rss / float64(df)
	return lineFit{
		intercept:         intercept,
		slope:             slope,
		seIntercept:       math.Sqrt(phi * (1/sumW + meanX*meanX/sxx)),
		seSlope:           math.Sqrt(phi / sxx),
		covInterceptSlope: -phi * meanX / sxx,
		dispersion:        phi,
		meanX:             meanX,
		sumW:              sumW,
		sumWXXCentr:       sxx,
		df:                df,
	}, nil
}

// seFitted returns the standard error of the fitted value b0 + b1·x.
func (f lineFit) seFitted(x float64) float64 {
	dx := x - f.meanX
	return math.Sqrt(f.dispersion * (1/f.sumW + dx*dx/f.sumWXXCentr))
}

// studentT returns Student's t distribution with df degrees of freedom.
func studentT(df int) distuv.StudentsT {
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(df)}
}

// tQuantiles remembers Student's t quantiles already computed during one
// call (the inverse incomplete beta function is the costliest step of the
// regression methods), so Run computes each (df, p) pair once. The zero
// value is ready to use; it is never shared between calls.
type tQuantiles struct {
	n    int
	df   [4]int
	p    [4]float64
	q    [4]float64
	next int
}

// quantile returns the p quantile of Student's t with df degrees of freedom.
func (c *tQuantiles) quantile(df int, p float64) float64 {
	for i := 0; i < c.n; i++ {
		if c.df[i] == df && c.p[i] == p {
			return c.q[i]
		}
	}
	q := studentT(df).Quantile(p)
	c.df[c.next], c.p[c.next], c.q[c.next] = df, p, q
	c.next = (c.next + 1) % len(c.df)
	c.n = min(c.n+1, len(c.df))
	return q
}

// twoSidedP returns the two-sided p value of a t statistic on df degrees of
// freedom.
func twoSidedP(t float64, dist distuv.StudentsT) float64 {
	return 2 * dist.Survival(math.Abs(t))
}

// sign returns +1 for x >= 0 and -1 otherwise.
func sign(x float64) float64 {
	if x < 0 {
		return -1
	}
	return 1
}
