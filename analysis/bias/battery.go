package bias

import (
	"fmt"

	"unshelved/analysis"
)

// Options configures Run. The zero value runs everything with defaults.
type Options struct {
	// Level is the confidence level of every interval; 0 means 0.95.
	Level float64
	// Direction is the sign of the favourable effect (+1 or -1) for
	// PET-PEESE and the selection model; 0 means the sign of the
	// fixed-effect estimate.
	Direction float64
	// NBasedX, when not nil, adds Egger's test regressed on this x
	// (Battery.EggerSampleSize); meant for standardized mean differences
	// with arm sizes, sqrt((n1+n2)/(n1 n2)) (see EggerOn). It must
	// have one entry per study (a different length panics).
	NBasedX []float64
	// Tau2 is the tau² estimator of the random-effects fit of the filled
	// trim-and-fill data; "" means analysis.Tau2REML.
	Tau2 analysis.Tau2Method
	// Selection configures the selection model; its zero Direction is
	// replaced by Options.Direction.
	Selection SelectionSettings
	// SkipSelection leaves the selection model out (Battery.Selection nil).
	SkipSelection bool
	// Registry marks registry results for the funnel plot; nil means none.
	Registry []bool
	// GridPoints is the number of points of the fitted Egger line; 0 means
	// DefaultGridPoints.
	GridPoints int
	// Evidence is the registry evidence passed to Grade (see
	// RegistryEvidence); its zero value means none.
	Evidence RegistryEvidence
}

// Battery holds the results of every method Run executes. A method that
// could not run leaves its zero value (nil for pointers) and a sentence in
// Warnings.
type Battery struct {
	Egger           Regression
	EggerSampleSize *Regression
	Begg            RankCorrelation
	TrimFill        TrimFillResult
	PET, PEESE      Intercept
	PETPEESE        PETPEESEResult
	Selection       *SelectionResult
	Funnel          Funnel
	Grade           GradeHint
	// FixedEstimate is the fixed-effect estimate of the input studies.
	FixedEstimate float64
	Warnings      []string
}

// Run executes the publication-bias battery on one meta-analysis: Egger's
// test (and its variant regressed on √(1/n₁+1/n₂) when Options.NBasedX is
// set), the rank correlation test (Begg & Mazumdar 1994), trim-and-fill (L0, side from the data), PET, PEESE and the
// conditional PET-PEESE estimate, the step-function selection model (unless
// skipped), the funnel-plot data and the GRADE hint, which is given the
// fixed-effect estimate as its Estimate. See each function for formulas,
// units and sources.
//
// Edges: fewer than 3 studies, or an invalid effect or standard error, is an
// error, since no method but the funnel could run. A method that fails on
// valid input (equal standard errors, a p interval without studies, no
// convergence) is left out with a sentence in Warnings; the warnings of the
// methods themselves (few studies) are gathered there too.
func Run(effects, seEffects []float64, opts Options) (Battery, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return Battery{}, fmt.Errorf("bias battery: %w", err)
	}
	level, err := checkLevel(opts.Level)
	if err != nil {
		return Battery{}, fmt.Errorf("bias battery: %w", err)
	}
	var b Battery
	fe, _ := fixedEffect(effects, seEffects)
	b.FixedEstimate = fe
	direction := opts.Direction
	if direction == 0 {
		direction = sign(fe)
	}
	warn := func(err error) { b.Warnings = append(b.Warnings, err.Error()) }
	in := GradeInput{K: len(effects), Estimate: fe, Direction: sign(direction), Registry: opts.Evidence}

	if opts.Registry != nil && len(opts.Registry) != len(effects) {
		panic("bias: slice length mismatch")
	}
	gridPoints := opts.GridPoints
	if gridPoints == 0 {
		gridPoints = DefaultGridPoints
	}
	if gridPoints < 2 {
		return Battery{}, fmt.Errorf("bias battery: %d grid points: %w", gridPoints, ErrBadSetting)
	}
	var tq tQuantiles
	var eggerFit *lineFit
	w := make([]float64, len(effects))
	if r, fit, err := eggerCached(effects, seEffects, w, level, &tq); err != nil {
		warn(err)
	} else {
		eggerFit = &fit
		b.Egger = r
		in.Egger = &b.Egger
		b.Warnings = append(b.Warnings, r.Warnings...)
	}
	if opts.NBasedX != nil {
		if r, err := EggerOn(effects, seEffects, opts.NBasedX, level); err != nil {
			warn(err)
		} else {
			b.EggerSampleSize = &r
			// For SMDs the sample-size test replaces the SE-based one
			// in the hint (Pustejovsky & Rodgers 2019).
			in.Egger = b.EggerSampleSize
		}
	}
	if r, err := Begg(effects, seEffects); err != nil {
		warn(err)
	} else {
		b.Begg = r
		in.Begg = &b.Begg
		b.Warnings = append(b.Warnings, r.Warnings...)
	}
	if r, err := TrimFill(effects, seEffects, TrimFillSettings{Level: level, Tau2: opts.Tau2}); err != nil {
		warn(err)
	} else {
		b.TrimFill = r
		in.TrimFill = &b.TrimFill
	}
	if r, err := petPEESECached(effects, seEffects, level, sign(direction), &tq); err != nil {
		warn(err)
	} else {
		b.PETPEESE = r
		b.PET, b.PEESE = r.PET, r.PEESE
	}
	if !opts.SkipSelection {
		s := opts.Selection
		if s.Direction == 0 {
			s.Direction = direction
		}
		if r, err := SelectionModel(effects, seEffects, s); err != nil {
			warn(err)
		} else {
			b.Selection = &r
			in.Selection = b.Selection
		}
	}
	b.Funnel = funnelFrom(effects, seEffects, opts.Registry, gridPoints, eggerFit, &tq)
	b.Grade = Grade(in)
	return b, nil
}
