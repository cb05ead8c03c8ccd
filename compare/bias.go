package compare

import (
	"math"
	"strings"

	"unshelved/analysis"
	"unshelved/analysis/bias"
)

// BiasOptions control the bias battery of a report.
type BiasOptions struct {
	Level float64             // zero means 0.95
	Tau2  analysis.Tau2Method // tau² of trim-and-fill's filled random-effects fit; zero means REML
	// Direction is the sign of the favourable effect (+1 or -1); zero means
	// the sign of the fixed-effect estimate.
	Direction float64
	// Cutpoints are the selection model's one-sided p cut points; nil means
	// the three-parameter model's single cut at 0.025.
	Cutpoints     []float64
	SkipSelection bool
	// Evidence is the registry evidence for the GRADE hint (oriented
	// overstatement with its interval, share of participants without
	// posted results); zero means none.
	Evidence bias.RegistryEvidence
}

// EggerJSON is Egger's regression test in the report.
type EggerJSON struct {
	Bias   *float64 `json:"bias"`
	BiasSE *float64 `json:"bias_se"`
	T      *float64 `json:"t"`
	DF     int      `json:"df"`
	P      *float64 `json:"p"`
	// EffectAtSE0 is the line's effect at SE = 0 (at x = 0 when
	// regressed on the sample-size based x), with its SE and interval.
	EffectAtSE0       *float64 `json:"effect_at_se0"`
	EffectAtSE0SE     *float64 `json:"effect_at_se0_se"`
	EffectAtSE0CILow  *float64 `json:"effect_at_se0_ci_low"`
	EffectAtSE0CIHigh *float64 `json:"effect_at_se0_ci_high"`
	Dispersion        *float64 `json:"dispersion"`
	// X is what the effects were regressed on: "se", or "n_based" for
	// √(1/n₁+1/n₂).
	X string `json:"x"`
}

// BeggJSON is the rank correlation test (Begg & Mazumdar 1994).
type BeggJSON struct {
	Tau  *float64 `json:"tau"`
	Z    *float64 `json:"z"`
	P    *float64 `json:"p"`
	Ties string   `json:"ties"`
}

// TrimFillJSON is trim-and-fill. CILow and CIHigh belong to the
// random-effects estimate of the filled data.
type TrimFillJSON struct {
	K0             int          `json:"k0"`
	Side           string       `json:"side"`
	Estimator      string       `json:"estimator"`
	FixedEstimate  *float64     `json:"fixed_estimate"`
	FixedCILow     *float64     `json:"fixed_ci_low"`
	FixedCIHigh    *float64     `json:"fixed_ci_high"`
	RandomEstimate *float64     `json:"random_estimate"`
	CILow          *float64     `json:"ci_low"`
	CIHigh         *float64     `json:"ci_high"`
	Tau2Method     string       `json:"tau2_method"`
	Filled         []FilledJSON `json:"filled"`
}

// FilledJSON is one imputed study.
type FilledJSON struct {
	Effect float64 `json:"effect"`
	SE     float64 `json:"se"`
}

// InterceptJSON is a PET or PEESE intercept.
type InterceptJSON struct {
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	P        *float64 `json:"p"`
}

// PETPEESEJSON is the conditional PET-PEESE estimate.
type PETPEESEJSON struct {
	Chosen   string   `json:"chosen"`
	Estimate *float64 `json:"estimate"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
}

// SelectionJSON is the step-function selection model.
type SelectionJSON struct {
	Cutpoints []float64  `json:"cutpoints"`
	Estimate  *float64   `json:"estimate"`
	SE        *float64   `json:"se"`
	CILow     *float64   `json:"ci_low"`  // Wald, normal
	CIHigh    *float64   `json:"ci_high"` // Wald, normal
	Tau2      *float64   `json:"tau2"`
	Weights   []*float64 `json:"weights"`
	WeightsSE []*float64 `json:"weights_se"`
	Counts    []int      `json:"counts"`
	LRT       *float64   `json:"lrt"`
	LRTDF     int        `json:"lrt_df"`
	LRTP      *float64   `json:"lrt_p"`
	Converged bool       `json:"converged"`
	Message   string     `json:"message"`
}

// FunnelJSON is the data behind a contour-enhanced funnel plot.
type FunnelJSON struct {
	Points        []FunnelPointJSON `json:"points"`
	Contours      []ContourJSON     `json:"contours"`
	FixedEstimate *float64          `json:"fixed_estimate"`
	MaxSE         *float64          `json:"max_se"`
	EggerLine     []EggerLineJSON   `json:"egger_line"`
}

// FunnelPointJSON is one study of the funnel.
type FunnelPointJSON struct {
	Study    string  `json:"study"`
	Effect   float64 `json:"effect"`
	SE       float64 `json:"se"`
	Registry bool    `json:"registry"`
}

// ContourJSON is a pair of significance lines effect = ±z·SE.
type ContourJSON struct {
	Level float64 `json:"level"`
	Z     float64 `json:"z"`
}

// EggerLineJSON is one point of Egger's fitted line and its 95% band.
type EggerLineJSON struct {
	SE     float64 `json:"se"`
	Effect float64 `json:"effect"`
	Low    float64 `json:"low"`
	High   float64 `json:"high"`
}

// GradeJSON is the GRADE-style hint for the publication-bias domain.
type GradeJSON struct {
	Level    string   `json:"level"`
	Reasons  []string `json:"reasons"`
	Cautions []string `json:"cautions"`
}

// BiasReport is the publication-bias battery of one set of studies.
type BiasReport struct {
	K               int            `json:"k"`
	Egger           *EggerJSON     `json:"egger"`
	EggerSampleSize *EggerJSON     `json:"egger_sample_size"`
	Begg            *BeggJSON      `json:"begg"`
	TrimFill        *TrimFillJSON  `json:"trim_fill"`
	PET             *InterceptJSON `json:"pet"`
	PEESE           *InterceptJSON `json:"peese"`
	PETPEESE        *PETPEESEJSON  `json:"pet_peese"`
	Selection       *SelectionJSON `json:"selection"`
	Funnel          *FunnelJSON    `json:"funnel"`
	GradeHint       GradeJSON      `json:"grade_hint"`
	Warnings        []string       `json:"warnings"`
}

// BiasFor runs the publication-bias battery on a set of study effects.
// For SMD with arm sizes on every study it adds Egger's test with the
// sample-size based x = sqrt((n1+n2)/(n1 n2)). Registry-only studies are
// marked in the funnel data. With fewer than 3 studies no test can run: the
// report then holds only the GRADE hint ("cannot assess") and a warning.
func BiasFor(studies []StudyEffect, measure string, opts BiasOptions) BiasReport {
	rep := BiasReport{K: len(studies), Warnings: []string{}}
	effects := make([]float64, len(studies))
	seEffects := make([]float64, len(studies))
	registry := make([]bool, len(studies))
	var nBasedX []float64
	if strings.EqualFold(measure, "SMD") {
		nBasedX = make([]float64, len(studies))
	}
	for i, s := range studies {
		effects[i], seEffects[i], registry[i] = s.Effect, s.SE, s.Origin == OriginRegistry
		if nBasedX != nil {
			if s.TreatN > 0 && s.CtrlN > 0 {
				n1, n2 := float64(s.TreatN), float64(s.CtrlN)
				nBasedX[i] = math.Sqrt((n1 + n2) / (n1 * n2))
			} else {
				nBasedX = nil
			}
		}
	}
	if strings.EqualFold(measure, "SMD") && nBasedX == nil {
		rep.Warnings = append(rep.Warnings, "Egger's test regressed on √(1/n₁+1/n₂) needs arm sizes for every study; not run")
	}
	b, err := bias.Run(effects, seEffects, bias.Options{
		Level: opts.Level, Direction: opts.Direction, NBasedX: nBasedX, Tau2: opts.Tau2,
		Selection: bias.SelectionSettings{Cutpoints: opts.Cutpoints}, SkipSelection: opts.SkipSelection,
		Registry: registry, Evidence: opts.Evidence,
	})
	if err != nil {
		rep.Warnings = append(rep.Warnings, err.Error())
		g := bias.Grade(bias.GradeInput{K: len(studies), Direction: opts.Direction, Registry: opts.Evidence})
		rep.GradeHint = GradeJSON{Level: g.Level, Reasons: nonNil(g.Reasons), Cautions: nonNil(g.Cautions)}
		return rep
	}
	rep.Warnings = append(rep.Warnings, b.Warnings...)
	if !math.IsNaN(b.Egger.P) && b.Egger.DF > 0 {
		rep.Egger = eggerJSON(b.Egger, "se")
	}
	if b.EggerSampleSize != nil {
		rep.EggerSampleSize = eggerJSON(*b.EggerSampleSize, "n_based")
	}
	if b.Begg.Ties != "" || !math.IsNaN(b.Begg.P) && b.Begg.P != 0 {
		rep.Begg = &BeggJSON{Tau: analysis.FiniteOrNil(b.Begg.Tau), Z: analysis.FiniteOrNil(b.Begg.Z), P: analysis.FiniteOrNil(b.Begg.P), Ties: b.Begg.Ties}
	}
	if b.TrimFill.Estimator != "" {
		t := b.TrimFill
		tf := &TrimFillJSON{K0: t.K0, Side: t.Side, Estimator: t.Estimator,
			FixedEstimate: analysis.FiniteOrNil(t.FixedEstimate), FixedCILow: analysis.FiniteOrNil(t.FixedCILow), FixedCIHigh: analysis.FiniteOrNil(t.FixedCIHigh),
			RandomEstimate: analysis.FiniteOrNil(t.RandomEstimate), CILow: analysis.FiniteOrNil(t.RandomCILow), CIHigh: analysis.FiniteOrNil(t.RandomCIHigh),
			Tau2Method: t.Tau2Method, Filled: []FilledJSON{}}
		for _, f := range t.Filled {
			tf.Filled = append(tf.Filled, FilledJSON{Effect: f.Effect, SE: f.SE})
		}
		rep.TrimFill = tf
	}
	if b.PETPEESE.Chosen != "" {
		rep.PET, rep.PEESE = interceptJSON(b.PET), interceptJSON(b.PEESE)
		rep.PETPEESE = &PETPEESEJSON{Chosen: b.PETPEESE.Chosen, Estimate: analysis.FiniteOrNil(b.PETPEESE.Estimate), CILow: analysis.FiniteOrNil(b.PETPEESE.CILow), CIHigh: analysis.FiniteOrNil(b.PETPEESE.CIHigh)}
	}
	if s := b.Selection; s != nil {
		sj := &SelectionJSON{Cutpoints: s.Cutpoints, Estimate: analysis.FiniteOrNil(s.Estimate), SE: analysis.FiniteOrNil(s.SE), Tau2: analysis.FiniteOrNil(s.Tau2),
			Counts: s.Counts, LRT: analysis.FiniteOrNil(s.LRT), LRTDF: s.LRTDF, LRTP: analysis.FiniteOrNil(s.LRTP), Converged: s.Converged, Message: s.Message}
		lo, hi := s.CI(opts.Level)
		sj.CILow, sj.CIHigh = analysis.FiniteOrNil(lo), analysis.FiniteOrNil(hi)
		for i := range s.Weights {
			sj.Weights = append(sj.Weights, analysis.FiniteOrNil(s.Weights[i]))
			if i < len(s.WeightsSE) {
				sj.WeightsSE = append(sj.WeightsSE, analysis.FiniteOrNil(s.WeightsSE[i]))
			}
		}
		rep.Selection = sj
	}
	f := b.Funnel
	fj := &FunnelJSON{FixedEstimate: analysis.FiniteOrNil(f.FixedEstimate), MaxSE: analysis.FiniteOrNil(f.MaxSE), Points: []FunnelPointJSON{}, Contours: []ContourJSON{}, EggerLine: []EggerLineJSON{}}
	for i, p := range f.Points {
		fj.Points = append(fj.Points, FunnelPointJSON{Study: studies[i].Study, Effect: p.Effect, SE: p.SE, Registry: p.Registry})
	}
	for _, c := range f.Contours {
		fj.Contours = append(fj.Contours, ContourJSON{Level: c.Level, Z: c.Z})
	}
	for _, l := range f.EggerLine {
		fj.EggerLine = append(fj.EggerLine, EggerLineJSON{SE: l.SE, Effect: l.Effect, Low: l.Low, High: l.High})
	}
	rep.Funnel = fj
	rep.GradeHint = GradeJSON{Level: b.Grade.Level, Reasons: nonNil(b.Grade.Reasons), Cautions: nonNil(b.Grade.Cautions)}
	return rep
}

// reviewBias runs the battery on a review's published studies (what a
// reader of the published literature could have seen), giving the GRADE
// hint the registry evidence: the oriented overstatement with its interval
// when registry trials were added, and the share of randomized
// participants in eligible trials without posted results.
func reviewBias(a ReviewAudit, opts Options) BiasReport {
	var ev bias.RegistryEvidence
	if a.KAdded > 0 {
		ev.Overstatement, ev.CILow, ev.CIHigh = a.Shift.OverstatementSD, a.Shift.OverstatementCILow, a.Shift.OverstatementCIHigh
	}
	ev.MissingShare = a.Missing.Share
	ev.PublishedWithoutN = a.Missing.PublishedWithoutN
	return BiasFor(a.Studies[:a.KPublished], a.Measure, BiasOptions{
		Level: opts.level(), Tau2: opts.tau2(), Direction: favourable(a.Better), Evidence: ev,
		SkipSelection: opts.SkipSelection,
	})
}

func eggerJSON(r bias.Regression, x string) *EggerJSON {
	return &EggerJSON{Bias: analysis.FiniteOrNil(r.Bias), BiasSE: analysis.FiniteOrNil(r.BiasSE), T: analysis.FiniteOrNil(r.T), DF: r.DF, P: analysis.FiniteOrNil(r.P),
		EffectAtSE0: analysis.FiniteOrNil(r.EffectAtSE0), EffectAtSE0SE: analysis.FiniteOrNil(r.EffectAtSE0SE), EffectAtSE0CILow: analysis.FiniteOrNil(r.EffectAtSE0CILow), EffectAtSE0CIHigh: analysis.FiniteOrNil(r.EffectAtSE0CIHigh),
		Dispersion: analysis.FiniteOrNil(r.Dispersion), X: x}
}

func interceptJSON(i bias.Intercept) *InterceptJSON {
	return &InterceptJSON{Estimate: analysis.FiniteOrNil(i.Estimate), SE: analysis.FiniteOrNil(i.SE), CILow: analysis.FiniteOrNil(i.CILow), CIHigh: analysis.FiniteOrNil(i.CIHigh), P: analysis.FiniteOrNil(i.P)}
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}
