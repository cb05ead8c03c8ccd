package bias

import (
	"fmt"
	"math"
)

// Regression is the result of a regression test for funnel-plot asymmetry.
type Regression struct {
	// Bias is the asymmetry coefficient: the slope of the effect on its
	// standard error (or on the regressor x of EggerOn), in effect units per unit of
	// standard error. Positive means smaller studies report larger effects.
	Bias, BiasSE float64
	// T is Bias / BiasSE, referred to Student's t on DF = k - 2 degrees of
	// freedom; P is its two-sided p value.
	T  float64
	DF int
	P  float64
	// EffectAtSE0 is the intercept: the effect predicted for a study of
	// infinite size (standard error zero), with its standard error and a
	// confidence interval at Level from Student's t on DF degrees of freedom.
	EffectAtSE0, EffectAtSE0SE, EffectAtSE0CILow, EffectAtSE0CIHigh float64
	// Dispersion is the multiplicative residual variance parameter phi.
	Dispersion float64
	// K is the number of studies and Level the confidence level used.
	K     int
	Level float64
	// Warnings holds plain sentences about the use of the test.
	Warnings []string
}

const (
	// eggerMinRecommendedK is the number of studies below which the
	// Cochrane Handbook advises against tests for funnel-plot asymmetry
	// (Higgins et al., Cochrane Handbook v6.4, ch. 13.3.5.4; Sterne et al.
	// 2011, BMJ 343:d4002).
	eggerMinRecommendedK = 10
	// AsymmetryAlpha is the significance level commonly used for tests of
	// funnel-plot asymmetry, which have low power (Egger et al. 1997, BMJ
	// 315:629-634; Sterne et al. 2011, BMJ 343:d4002).
	AsymmetryAlpha = 0.10
)

// Egger runs Egger's regression test for funnel-plot asymmetry in its
// weighted form: a weighted least-squares regression of the effects on their
// standard errors with weights 1/se² and a multiplicative dispersion
// parameter estimated from the residuals,
//
//	y_i = b0 + b1·se_i + e_i,  var(e_i) = phi·se_i²,
//	phi = Σ (y_i - b0 - b1 se_i)² / se_i² / (k - 2),
//	t = b1 / se(b1) on k - 2 df,  effect at SE = 0: b0 ± t_{k-2} se(b0).
//
// This is the same model as the original form, the ordinary regression of
// the standard normal deviate y_i/se_i on the precision 1/se_i, with the
// roles of intercept and slope exchanged: the asymmetry coefficient b1 is the
// original intercept and the effect at SE = 0, b0, the original slope (Egger,
// Davey Smith, Schneider & Minder 1997, BMJ 315:629-634; Sterne & Egger 2005,
// in Rothstein, Sutton & Borenstein, Publication Bias in Meta-Analysis,
// ch. 6).
//
// Effects and standard errors are on the raw scale in the outcome's units (or
// SD units for a standardized mean difference; for that measure see
// EggerOn). A level of 0 means 0.95.
//
// Edges: k < 3 is an error (no residual degrees of freedom); standard errors
// that are all equal give ErrConstantRegressor; data lying exactly on a line
// give ErrPerfectFit. With fewer than 10 studies the test runs but Warnings
// says it is not recommended (Cochrane Handbook ch. 13; Sterne et al. 2011,
// BMJ 343:d4002); Warnings always notes that a 0.10 significance level is
// common for this test.
func Egger(effects, seEffects []float64, level float64) (Regression, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return Regression{}, fmt.Errorf("egger test: %w", err)
	}
	level, err := checkLevel(level)
	if err != nil {
		return Regression{}, fmt.Errorf("egger test: %w", err)
	}
	k := len(effects)
	w := make([]float64, k)
	for i, s := range seEffects {
		w[i] = 1 / (s * s)
	}
	fit, err := fitLine(seEffects, effects, w)
	if err != nil {
		return Regression{}, fmt.Errorf("egger test: %w", err)
	}
	var tq tQuantiles
	return regressionFrom(fit, k, level, "Egger's test regressed on SE", &tq), nil
}

// eggerCached is Egger on validated input with a shared quantile cache; it
// also returns the fit for the funnel line.
func eggerCached(effects, seEffects, w []float64, level float64, tq *tQuantiles) (Regression, lineFit, error) {
	for i, s := range seEffects {
		w[i] = 1 / (s * s)
	}
	fit, err := fitLine(seEffects, effects, w)
	if err != nil {
		return Regression{}, lineFit{}, fmt.Errorf("egger test: %w", err)
	}
	return regressionFrom(fit, len(effects), level, "Egger's test regressed on SE", tq), fit, nil
}

// EggerOn runs the weighted regression test of Egger regressed on x, a
// per-study quantity of the caller's choosing, in place of the standard
// error. For standardized mean differences the intended x is the
// sample-size based
//
//	W_i = sqrt((n1_i + n2_i) / (n1_i n2_i)),
//
// because the standard error of g depends on g itself, which makes the usual
// test reject too often (Pustejovsky & Rodgers 2019, Research Synthesis
// Methods 10:57-71). x replaces the standard error both as the
// regressor and in the weights:
//
//	y_i = b0 + b1·W_i + e_i,  weights 1/W_i²,  var(e_i) = phi·W_i²,
//
// so neither side of the regression depends on the effects. seEffects is
// validated (positive and finite) but does not enter the fit; x must be
// positive and finite too. Bias is the slope on x, EffectAtSE0 the effect
// predicted at x = 0. Edges, level and warnings as for
// Egger.
func EggerOn(effects, seEffects, x []float64, level float64) (Regression, error) {
	if len(x) != len(effects) {
		panic("bias: slice length mismatch")
	}
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return Regression{}, fmt.Errorf("egger test regressed on x: %w", err)
	}
	level, err := checkLevel(level)
	if err != nil {
		return Regression{}, fmt.Errorf("egger test regressed on x: %w", err)
	}
	k := len(effects)
	w := make([]float64, k)
	for i, xi := range x {
		if !(xi > 0) || math.IsInf(xi, 0) {
			return Regression{}, fmt.Errorf("egger test regressed on x: %w",
				&StudyError{Study: i + 1, Field: "x", Value: xi, Err: ErrBadSE})
		}
		w[i] = 1 / (xi * xi)
	}
	fit, err := fitLine(x, effects, w)
	if err != nil {
		return Regression{}, fmt.Errorf("egger test regressed on x: %w", err)
	}
	var tq tQuantiles
	return regressionFrom(fit, k, level, "Egger's test regressed on √(1/n₁+1/n₂)", &tq), nil
}

func regressionFrom(fit lineFit, k int, level float64, what string, cache *tQuantiles) Regression {
	dist := studentT(fit.df)
	tq := cache.quantile(fit.df, 0.5+level/2)
	t := fit.slope / fit.seSlope
	r := Regression{
		Bias:              fit.slope,
		BiasSE:            fit.seSlope,
		T:                 t,
		DF:                fit.df,
		P:                 twoSidedP(t, dist),
		EffectAtSE0:       fit.intercept,
		EffectAtSE0SE:     fit.seIntercept,
		EffectAtSE0CILow:  fit.intercept - tq*fit.seIntercept,
		EffectAtSE0CIHigh: fit.intercept + tq*fit.seIntercept,
		Dispersion:        fit.dispersion,
		K:                 k,
		Level:             level,
	}
	r.Warnings = append(r.Warnings, fmt.Sprintf(
		"%s: a significance level of %.2f is common for asymmetry tests, which have low power", what, AsymmetryAlpha))
	if k < eggerMinRecommendedK {
		r.Warnings = append(r.Warnings, fmt.Sprintf(
			"%s with %d studies: tests for funnel-plot asymmetry are not recommended with fewer than %d studies",
			what, k, eggerMinRecommendedK))
	}
	return r
}

// Intercept is the intercept of a meta-regression used as a bias-adjusted
// estimate: the effect predicted for a study with standard error zero.
type Intercept struct {
	// Estimate and SE are in effect units; CILow and CIHigh bound a
	// confidence interval from Student's t on DF = k - 2 degrees of freedom.
	Estimate, SE, CILow, CIHigh float64
	// T is Estimate / SE and P its two-sided p value on DF degrees of freedom.
	T  float64
	DF int
	P  float64
	// OneSidedP is the one-sided p value of T in the favourable direction.
	OneSidedP float64
}

// PETPEESEResult holds PET, PEESE and the conditional choice between them.
type PETPEESEResult struct {
	PET, PEESE Intercept
	// Chosen is "PET" or "PEESE"; Estimate, CILow and CIHigh repeat the
	// chosen intercept and its confidence interval.
	Chosen                  string
	Estimate, CILow, CIHigh float64
	// Direction is the sign of the favourable effect used for the choice.
	Direction float64
}

// petPEESEAlpha is the one-sided significance level of the PET intercept
// that switches the conditional estimator to PEESE (Stanley & Doucouliagos
// 2014, Research Synthesis Methods 5:60-78).
const petPEESEAlpha = 0.05

// PETPEESE computes the precision-effect test (PET) and the precision-effect
// estimate with standard error (PEESE), and the conditional PET-PEESE
// estimate (Stanley & Doucouliagos 2014, Research Synthesis Methods
// 5:60-78). Both are weighted least-squares regressions with weights 1/se²
// and a multiplicative dispersion parameter:
//
//	PET:   y_i = b0 + b1·se_i  + e_i
//	PEESE: y_i = b0 + b1·se_i² + e_i,   var(e_i) = phi·se_i²,
//
// and the bias-adjusted estimate is the intercept b0, with a confidence
// interval b0 ± t_{k-2} se(b0). Conditional rule: if PET's intercept differs
// from zero at the one-sided 5% level in the direction of the favourable
// effect (t·direction > 0 and one-sided p < 0.05), the effect is taken to be
// real and PEESE is reported, otherwise PET.
//
// direction is the sign of the favourable effect (+1 or -1); 0 means the sign
// of the fixed-effect estimate. Effects and standard errors on the raw scale.
// A level of 0 means 0.95. Edges: k < 3 is an error; equal standard errors
// give ErrConstantRegressor.
func PETPEESE(effects, seEffects []float64, level float64, direction float64) (PETPEESEResult, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return PETPEESEResult{}, fmt.Errorf("pet-peese: %w", err)
	}
	level, err := checkLevel(level)
	if err != nil {
		return PETPEESEResult{}, fmt.Errorf("pet-peese: %w", err)
	}
	if direction == 0 {
		fe, _ := fixedEffect(effects, seEffects)
		direction = sign(fe)
	} else {
		direction = sign(direction)
	}
	var tq tQuantiles
	return petPEESECached(effects, seEffects, level, direction, &tq)
}

// petPEESECached is PETPEESE on validated input with a resolved direction
// and a shared quantile cache.
func petPEESECached(effects, seEffects []float64, level, direction float64, cache *tQuantiles) (PETPEESEResult, error) {
	k := len(effects)
	buf := make([]float64, 2*k)
	w, se2 := buf[:k], buf[k:]
	for i, s := range seEffects {
		w[i] = 1 / (s * s)
		se2[i] = s * s
	}
	pet, err := fitLine(seEffects, effects, w)
	if err != nil {
		return PETPEESEResult{}, fmt.Errorf("pet-peese: pet: %w", err)
	}
	peese, err := fitLine(se2, effects, w)
	if err != nil {
		return PETPEESEResult{}, fmt.Errorf("pet-peese: peese: %w", err)
	}
	tq := cache.quantile(pet.df, 0.5+level/2)
	r := PETPEESEResult{
		PET:       interceptFrom(pet, tq, direction),
		PEESE:     interceptFrom(peese, tq, direction),
		Direction: direction,
	}
	chosen := r.PET
	r.Chosen = "PET"
	if r.PET.OneSidedP < petPEESEAlpha {
		chosen = r.PEESE
		r.Chosen = "PEESE"
	}
	r.Estimate, r.CILow, r.CIHigh = chosen.Estimate, chosen.CILow, chosen.CIHigh
	return r, nil
}

func interceptFrom(fit lineFit, tq, direction float64) Intercept {
	dist := studentT(fit.df)
	t := fit.intercept / fit.seIntercept
	return Intercept{
		Estimate:  fit.intercept,
		SE:        fit.seIntercept,
		CILow:     fit.intercept - tq*fit.seIntercept,
		CIHigh:    fit.intercept + tq*fit.seIntercept,
		T:         t,
		DF:        fit.df,
		P:         twoSidedP(t, dist),
		OneSidedP: dist.Survival(direction * t),
	}
}
