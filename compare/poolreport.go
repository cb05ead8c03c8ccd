package compare

import (
	"errors"
	"fmt"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/analysis"
	"unshelved/ingest"
)

// PoolOptions control PoolStudies.
type PoolOptions struct {
	Measure string              // MD or SMD; zero means MD
	Level   float64             // zero means 0.95
	Tau2    analysis.Tau2Method // zero means REML
	// CI is the interval and p of the headline random-effects result:
	// CIHKSJ (zero; floored at 1), CIHKSJUntruncated or CIWald. With fewer
	// than MinStudiesHKSJ studies the headline uses Wald (FewStudies).
	CI string
	// TruncateHKSJ is kept for older callers: true is the same as CI =
	// CIHKSJ.
	TruncateHKSJ bool
	// Bias configures the publication-bias battery (its Level defaults to
	// Level); SkipBias leaves it out.
	Bias     BiasOptions
	SkipBias bool
}

// PoolStudyRow is one study of a pool report.
type PoolStudyRow struct {
	Study         string   `json:"study"`
	Effect        float64  `json:"effect"`
	SE            float64  `json:"se"`
	CILow         float64  `json:"ci_low"`
	CIHigh        float64  `json:"ci_high"`
	WeightFixed   *float64 `json:"weight_fixed"`
	WeightRandom  *float64 `json:"weight_random"`
	ConvertedFrom string   `json:"converted_from"`
	TreatN        int      `json:"treat_n,omitempty"`
	CtrlN         int      `json:"ctrl_n,omitempty"`
}

// PoolFixed is the fixed-effect block of a pool report.
type PoolFixed struct {
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	Z        *float64 `json:"z"`
	P        *float64 `json:"p"`
}

// PoolHeterogeneity is the heterogeneity block of a pool report.
type PoolHeterogeneity struct {
	Q          *float64 `json:"q"`
	DF         int      `json:"df"`
	QP         *float64 `json:"q_p"`
	I2         *float64 `json:"i2"`
	H2         *float64 `json:"h2"`
	Tau2       *float64 `json:"tau2"`
	Tau2CILow  *float64 `json:"tau2_ci_low"`
	Tau2CIHigh *float64 `json:"tau2_ci_high"`
	Tau2Method string   `json:"tau2_method"`
}

// PoolRandom is the random-effects block of a pool report. SE, CILow,
// CIHigh and P are the headline, from one test named by CIMethod; the
// Wald and HKSJ forms follow, each with its own p. The HKSJ form is the
// floored one unless CIMethod is CIHKSJUntruncated; HKSJScale is its scale
// factor (at least 1 when floored).
type PoolRandom struct {
	Estimate   *float64 `json:"estimate"`
	SE         *float64 `json:"se"`
	CILow      *float64 `json:"ci_low"`
	CIHigh     *float64 `json:"ci_high"`
	P          *float64 `json:"p"`
	CIMethod   string   `json:"ci_method"`
	FewStudies bool     `json:"few_studies"`
	WaldSE     *float64 `json:"wald_se"`
	WaldCILow  *float64 `json:"wald_ci_low"`
	WaldCIHigh *float64 `json:"wald_ci_high"`
	WaldP      *float64 `json:"wald_p"`
	HKSJSE     *float64 `json:"hksj_se"`
	HKSJCILow  *float64 `json:"hksj_ci_low"`
	HKSJCIHigh *float64 `json:"hksj_ci_high"`
	HKSJP      *float64 `json:"hksj_p"`
	HKSJScale  *float64 `json:"hksj_scale"`
	PILow      *float64 `json:"pi_low"`
	PIHigh     *float64 `json:"pi_high"`
	Converged  bool     `json:"converged"`
}

// PoolMethodRow is one tau² estimator's random-effects result.
type PoolMethodRow struct {
	Tau2      *float64 `json:"tau2"`
	Estimate  *float64 `json:"estimate"`
	SE        *float64 `json:"se"`
	CILow     *float64 `json:"ci_low"`
	CIHigh    *float64 `json:"ci_high"`
	Converged bool     `json:"converged"`
}

// PoolLeaveOneOut is one leave-one-out row.
type PoolLeaveOneOut struct {
	Omitted  string   `json:"omitted"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	Tau2     *float64 `json:"tau2"`
	I2       *float64 `json:"i2"`
}

// PoolReport is the full analysis of one meta-analysis file.
type PoolReport struct {
	K               int                      `json:"k"`
	Measure         string                   `json:"measure"`
	Level           float64                  `json:"level"`
	Studies         []PoolStudyRow           `json:"studies"`
	Fixed           PoolFixed                `json:"fixed"`
	Heterogeneity   PoolHeterogeneity        `json:"heterogeneity"`
	Random          PoolRandom               `json:"random"`
	RandomByMethod  map[string]PoolMethodRow `json:"random_by_method"`
	LeaveOneOut     []PoolLeaveOneOut        `json:"leave_one_out"`
	MostInfluential *string                  `json:"most_influential"`
	Bias            *BiasReport              `json:"bias"`
	Warnings        []string                 `json:"warnings"`
}

// PoolStudies analyses one meta-analysis given as studies.csv rows (either
// input style). Rows whose review_id differs are pooled together all the
// same: the file is one meta-analysis. A row that cannot be used is an
// error naming the study.
func PoolStudies(studies []ingest.ReviewStudy, opts PoolOptions) (PoolReport, error) {
	measure := strings.ToUpper(opts.Measure)
	if measure == "" {
		measure = "MD"
	}
	if measure != "MD" && measure != "SMD" {
		return PoolReport{}, fmt.Errorf("measure %q is not MD or SMD", opts.Measure)
	}
	if len(studies) == 0 {
		return PoolReport{}, errors.New("no studies to pool")
	}
	rv := ingest.Review{Measure: measure}
	effs := make([]StudyEffect, 0, len(studies))
	for _, s := range studies {
		e, err := PublishedEffect(rv, s)
		if err != nil {
			return PoolReport{}, withSource(s.Source, err)
		}
		effs = append(effs, e)
	}
	effects := make([]float64, len(effs))
	seEffects := make([]float64, len(effs))
	labels := make([]string, len(effs))
	for i, e := range effs {
		effects[i], seEffects[i], labels[i] = e.Effect, e.SE, e.Study
	}
	ci := opts.CI
	if ci == "" || opts.TruncateHKSJ {
		ci = CIHKSJ
	}
	if !ValidCI(ci) {
		return PoolReport{}, fmt.Errorf("interval %q is not one of %s", ci, strings.Join(CIMethods, ", "))
	}
	res, err := analysis.Pool(effects, seEffects, analysis.Settings{
		Level: opts.Level, Tau2: opts.Tau2, TruncateHKSJ: ci != CIHKSJUntruncated, Labels: labels,
	})
	if err != nil {
		return PoolReport{}, err
	}
	rep := PoolReport{K: res.K, Measure: measure, Level: res.Level, Warnings: append([]string{}, res.Warnings...)}
	z := distuv.UnitNormal.Quantile(1 - (1-res.Level)/2)
	for i, e := range effs {
		rep.Studies = append(rep.Studies, PoolStudyRow{
			Study: e.Study, Effect: e.Effect, SE: e.SE, CILow: e.Effect - z*e.SE, CIHigh: e.Effect + z*e.SE,
			WeightFixed: analysis.FiniteOrNil(res.Fixed.Weights[i]), WeightRandom: analysis.FiniteOrNil(res.Random.Weights[i]),
			ConvertedFrom: e.ConvertedFrom, TreatN: e.TreatN, CtrlN: e.CtrlN,
		})
	}
	f := res.Fixed
	rep.Fixed = PoolFixed{Estimate: analysis.FiniteOrNil(f.Estimate), SE: analysis.FiniteOrNil(f.SE), CILow: analysis.FiniteOrNil(f.CILow), CIHigh: analysis.FiniteOrNil(f.CIHigh), Z: analysis.FiniteOrNil(f.Z), P: analysis.FiniteOrNil(f.P)}
	r := res.Random
	rep.Heterogeneity = PoolHeterogeneity{Q: analysis.FiniteOrNil(res.Het.Q), DF: res.Het.DF, QP: analysis.FiniteOrNil(res.Het.QP), I2: analysis.FiniteOrNil(res.Het.I2), H2: analysis.FiniteOrNil(res.Het.H2),
		Tau2: analysis.FiniteOrNil(r.Tau2), Tau2CILow: analysis.FiniteOrNil(r.Tau2CILow), Tau2CIHigh: analysis.FiniteOrNil(r.Tau2CIHigh), Tau2Method: string(r.Method)}
	few := ci != CIWald && res.K < MinStudiesHKSJ
	method := ci
	if few {
		method = CIWald
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("Only %d %s: the headline random-effects interval and p are Wald (HKSJ is used from %d studies).",
			res.K, plural(res.K, "study", "studies"), MinStudiesHKSJ))
	}
	iv := randomInterval(r, res.K, method)
	rep.Random = PoolRandom{Estimate: analysis.FiniteOrNil(r.Estimate), SE: analysis.FiniteOrNil(iv.SE), CILow: analysis.FiniteOrNil(iv.Low), CIHigh: analysis.FiniteOrNil(iv.High), P: analysis.FiniteOrNil(iv.P),
		CIMethod: iv.Method, FewStudies: few,
		WaldSE: analysis.FiniteOrNil(r.SE), WaldCILow: analysis.FiniteOrNil(r.CILow), WaldCIHigh: analysis.FiniteOrNil(r.CIHigh), WaldP: analysis.FiniteOrNil(r.P),
		HKSJSE: analysis.FiniteOrNil(r.HKSJSE), HKSJCILow: analysis.FiniteOrNil(r.HKSJLow), HKSJCIHigh: analysis.FiniteOrNil(r.HKSJHigh), HKSJP: analysis.FiniteOrNil(r.HKSJP), HKSJScale: analysis.FiniteOrNil(r.HKSJScale),
		PILow: analysis.FiniteOrNil(r.PILow), PIHigh: analysis.FiniteOrNil(r.PIHigh), Converged: r.Converged}
	rep.RandomByMethod = map[string]PoolMethodRow{}
	for _, m := range []analysis.Tau2Method{analysis.Tau2DL, analysis.Tau2PM, analysis.Tau2REML} {
		x, _ := res.ByTau2(m)
		rep.RandomByMethod[string(m)] = PoolMethodRow{Tau2: analysis.FiniteOrNil(x.Tau2), Estimate: analysis.FiniteOrNil(x.Estimate), SE: analysis.FiniteOrNil(x.SE),
			CILow: analysis.FiniteOrNil(x.CILow), CIHigh: analysis.FiniteOrNil(x.CIHigh), Converged: x.Converged}
	}
	for _, l := range res.LeaveOneOut {
		rep.LeaveOneOut = append(rep.LeaveOneOut, PoolLeaveOneOut{Omitted: labels[l.Omitted], Estimate: analysis.FiniteOrNil(l.Estimate), SE: analysis.FiniteOrNil(l.SE),
			CILow: analysis.FiniteOrNil(l.CILow), CIHigh: analysis.FiniteOrNil(l.CIHigh), Tau2: analysis.FiniteOrNil(l.Tau2), I2: analysis.FiniteOrNil(l.I2)})
	}
	if res.MostInfluential >= 0 {
		rep.MostInfluential = &labels[res.MostInfluential]
	}
	if !opts.SkipBias {
		bo := opts.Bias
		if bo.Level == 0 {
			bo.Level = opts.Level
		}
		b := BiasFor(effs, measure, bo)
		rep.Bias = &b
	}
	return rep, nil
}

// withSource names the file and line of the row an error is about, as an
// *ingest.ParseError, so a caller can tell with errors.As that the error
// already says where it comes from.
func withSource(src ingest.Source, err error) error {
	if src.Path == "" {
		return err
	}
	pos := strings.TrimPrefix(src.Position, "line ")
	if line, convErr := strconv.Atoi(pos); convErr == nil && line > 0 {
		return &ingest.ParseError{File: src.Path, Line: line, Err: err}
	}
	return &ingest.ParseError{File: src.Path, Position: pos, Err: err}
}
