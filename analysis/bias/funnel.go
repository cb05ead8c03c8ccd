package bias

import (
	"fmt"

	"gonum.org/v1/gonum/stat/distuv"
)

// DefaultGridPoints is the number of standard-error grid points of the
// fitted Egger line when FunnelData gets gridPoints = 0.
const DefaultGridPoints = 50

// contourLevels returns the two-sided significance levels of the funnel
// contours (common practice, no source).
func contourLevels() [3]float64 { return [3]float64{0.01, 0.05, 0.10} }

// Funnel holds the numbers behind a contour-enhanced funnel plot.
type Funnel struct {
	// Points are the studies, in input order.
	Points []FunnelPoint
	// Contours are the significance contours, from the 1% level to the 10%
	// level.
	Contours []Contour
	// FixedEstimate is the inverse-variance fixed-effect estimate, drawn as
	// a vertical line.
	FixedEstimate float64
	// EggerLine is the fitted line of Egger's weighted regression with its
	// 95% confidence band; nil when the regression cannot be fitted (k < 3,
	// equal standard errors, exact fit).
	EggerLine []EggerLinePoint
	// MaxSE is the largest standard error, the bottom of the plot.
	MaxSE float64
}

// FunnelPoint is one study of a funnel plot. Registry marks a result taken
// from a trial registry rather than from a publication.
type FunnelPoint struct {
	Effect, SE float64
	Registry   bool
}

// Contour is a pair of lines effect = ±Z·SE around zero: a study outside
// them has a two-sided p value below Level against no effect.
type Contour struct {
	Level float64
	Z     float64
}

// EggerLinePoint is one point of the fitted Egger line: at standard error SE
// the fitted effect b0 + b1·SE and the bounds of its 95% confidence band,
// b0 + b1·SE ± t_{k-2, 0.975} se(fit).
type EggerLinePoint struct {
	SE, Effect, Low, High float64
}

// FunnelData returns the numbers for a contour-enhanced funnel plot
// (effect on the horizontal axis, standard error on the vertical axis, zero
// at the top): the study points, significance contours at the two-sided 1%,
// 5% and 10% levels with
//
//	Z = Φ⁻¹(1 - level/2) = 2.576, 1.960, 1.645
//
// (contour-enhanced funnel plots: Peters et al. 2008, J Clin Epidemiol
// 61:991-996), the fixed-effect pooled line, and Egger's weighted regression
// line (see Egger) with its pointwise 95% confidence band on gridPoints
// evenly spaced standard errors from 0 to the largest standard error.
//
// Effects and standard errors on the raw scale. registry may be nil (no study
// is a registry result); otherwise it must have one entry per study (a
// different length panics). gridPoints = 0 means DefaultGridPoints; 1 or a
// negative number is an error. Edges: k = 0 is an error; with k < 3, or when
// the line cannot be fitted, EggerLine is nil and the rest is filled.
func FunnelData(effects, seEffects []float64, registry []bool, gridPoints int) (Funnel, error) {
	if registry != nil && len(registry) != len(effects) {
		panic("bias: slice length mismatch")
	}
	if err := checkStudies(effects, seEffects, 1); err != nil {
		return Funnel{}, fmt.Errorf("funnel data: %w", err)
	}
	if gridPoints == 0 {
		gridPoints = DefaultGridPoints
	}
	if gridPoints < 2 {
		return Funnel{}, fmt.Errorf("funnel data: %d grid points: %w", gridPoints, ErrBadSetting)
	}
	var fit *lineFit
	if len(effects) >= 3 {
		w := make([]float64, len(effects))
		for i, se := range seEffects {
			w[i] = 1 / (se * se)
		}
		if lf, err := fitLine(seEffects, effects, w); err == nil {
			fit = &lf
		}
	}
	var tq tQuantiles
	return funnelFrom(effects, seEffects, registry, gridPoints, fit, &tq), nil
}

// funnelFrom builds the funnel data on validated input; fit is the Egger
// fit, nil when it could not be computed.
func funnelFrom(effects, seEffects []float64, registry []bool, gridPoints int, fit *lineFit, cache *tQuantiles) Funnel {
	levels := contourLevels()
	f := Funnel{Points: make([]FunnelPoint, len(effects)), Contours: make([]Contour, len(levels))}
	for i, y := range effects {
		f.Points[i] = FunnelPoint{Effect: y, SE: seEffects[i], Registry: registry != nil && registry[i]}
		f.MaxSE = max(f.MaxSE, seEffects[i])
	}
	for i, level := range levels {
		f.Contours[i] = Contour{Level: level, Z: distuv.UnitNormal.Quantile(1 - level/2)}
	}
	f.FixedEstimate, _ = fixedEffect(effects, seEffects)
	if fit != nil {
		f.EggerLine = eggerLine(*fit, f.MaxSE, gridPoints, cache)
	}
	return f
}

// eggerBandLevel is the confidence level of the band around the Egger line.
const eggerBandLevel = 0.95

func eggerLine(fit lineFit, maxSE float64, gridPoints int, cache *tQuantiles) []EggerLinePoint {
	tq := cache.quantile(fit.df, 0.5+eggerBandLevel/2)
	line := make([]EggerLinePoint, gridPoints)
	for i := range line {
		se := maxSE * float64(i) / float64(gridPoints-1)
		y := fit.intercept + fit.slope*se
		half := tq * fit.seFitted(se)
		line[i] = EggerLinePoint{SE: se, Effect: y, Low: y - half, High: y + half}
	}
	return line
}
