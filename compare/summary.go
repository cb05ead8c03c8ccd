package compare

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/analysis"
	"unshelved/store"
)

// Truth rules of SummaryOptions.Truth: what counts as a real shift when
// scoring the bias diagnostics.
const (
	TruthThreshold = "threshold" // |shift| in SD units above Threshold
	TruthQBetween  = "q-between" // subgroup Q-between p below 0.05
)

// DefaultTruthThreshold is the shift, in SD units, above which a review
// counts as shifted (a tenth of an SD; common practice, no source).
const DefaultTruthThreshold = 0.1

// SummaryOptions control Summarize. Zero values: Truth TruthThreshold with
// Threshold DefaultTruthThreshold; the pooled difference uses REML with
// the HKSJ interval at 95%.
type SummaryOptions struct {
	Truth     string
	Threshold float64
	Level     float64
	Tau2      analysis.Tau2Method
	CI        string // CIHKSJ (zero, floored), CIHKSJUntruncated or CIWald
}

func (o SummaryOptions) resolve() SummaryOptions {
	if o.Truth == "" {
		o.Truth = TruthThreshold
	}
	if o.Threshold == 0 {
		o.Threshold = DefaultTruthThreshold
	}
	if o.Level == 0 {
		o.Level = 0.95
	}
	if o.Tau2 == "" {
		o.Tau2 = analysis.Tau2REML
	}
	if o.CI == "" {
		o.CI = CIHKSJ
	}
	return o
}

// Summary is the cross-review view of a batch of audits.
type Summary struct {
	// Reviews audited; ReviewsWithAdditions those with at least one
	// registry trial added (the shift distribution and the pooled
	// difference use these only: a review with nothing added has no
	// registry evidence to compare).
	Reviews              int `json:"reviews"`
	ReviewsWithAdditions int `json:"reviews_with_additions"`
	// ShiftSMD is the distribution of Shift.SDUnits over reviews with
	// additions (and a pooled SD).
	ShiftSMD ShiftDistribution `json:"shift_smd"`
	// ConclusionChangedShare is the share of reviews whose conclusion
	// changed (significance, direction or MID), among those where it is
	// known (registry trials were linked); the parts follow, over all
	// audited reviews.
	ConclusionChangedShare   *float64 `json:"conclusion_changed_share"`
	SignificanceChangedShare *float64 `json:"significance_changed_share"`
	DirectionChangedShare    *float64 `json:"direction_changed_share"`
	MIDCrossedShare          *float64 `json:"mid_crossed_share"`
	// PooledDifferenceSMD is the random-effects meta-analysis of the
	// per-review subgroup difference (registry - published) in SD units.
	PooledDifferenceSMD PooledDifference `json:"pooled_difference_smd"`
	Detection           []Detection      `json:"detection"`
	AdjustedError       []AdjustedError  `json:"adjusted_error"`
	Truth               string           `json:"truth"`
	TruthThreshold      float64          `json:"truth_threshold"`
	Warnings            []string         `json:"warnings"`
}

// ShiftDistribution summarizes shifts in SD units. Quartiles are sample
// quantiles of type 7 (Hyndman & Fan 1996, definition 7).
type ShiftDistribution struct {
	N                  int      `json:"n"`
	Median             *float64 `json:"median"`
	Q1                 *float64 `json:"q1"`
	Q3                 *float64 `json:"q3"`
	Mean               *float64 `json:"mean"`
	TowardBenefitShare *float64 `json:"toward_benefit_share"`
	TowardHarmShare    *float64 `json:"toward_harm_share"`
}

// PooledDifference is a random-effects pooled estimate across reviews.
type PooledDifference struct {
	K          int      `json:"k"`
	Estimate   *float64 `json:"estimate"`
	SE         *float64 `json:"se"`
	CILow      *float64 `json:"ci_low"`
	CIHigh     *float64 `json:"ci_high"`
	CIMethod   string   `json:"ci_method"`
	Tau2       *float64 `json:"tau2"`
	Tau2Method string   `json:"tau2_method"`
	I2         *float64 `json:"i2"`
	Q          *float64 `json:"q"`
	QP         *float64 `json:"q_p"`
	PILow      *float64 `json:"pi_low"`
	PIHigh     *float64 `json:"pi_high"`
}

// Detection is one diagnostic's 2x2 table against the registry truth, with
// Wilson score intervals (see Wilson) for sensitivity and specificity.
// Reviews where the diagnostic could not run are left out (Skipped).
type Detection struct {
	Test              string   `json:"test"`
	Rule              string   `json:"rule"`
	TP                int      `json:"tp"`
	FP                int      `json:"fp"`
	FN                int      `json:"fn"`
	TN                int      `json:"tn"`
	Skipped           int      `json:"skipped"`
	Sensitivity       *float64 `json:"sensitivity"`
	SensitivityCILow  *float64 `json:"sensitivity_ci_low"`
	SensitivityCIHigh *float64 `json:"sensitivity_ci_high"`
	Specificity       *float64 `json:"specificity"`
	SpecificityCILow  *float64 `json:"specificity_ci_low"`
	SpecificityCIHigh *float64 `json:"specificity_ci_high"`
}

// AdjustedError is the error of a bias-adjusted estimate (from the
// published studies) against the augmented random-effects estimate, in SD
// units: error = (adjusted - augmented) / SD. "published" is the
// unadjusted published-only estimate, for comparison.
type AdjustedError struct {
	Method    string   `json:"method"`
	N         int      `json:"n"`
	MeanError *float64 `json:"mean_error"`
	RMSE      *float64 `json:"rmse"`
}

// sdScale is the divisor that puts a review's numbers in SD units: 1 for
// SMD reviews, the pooled SD of the shift for MD reviews; 0 when unknown.
func sdScale(a ReviewAudit) float64 {
	if strings.EqualFold(a.Measure, "SMD") {
		return 1
	}
	if a.Shift.PooledSD != nil {
		return *a.Shift.PooledSD
	}
	return 0
}

// Summarize summarizes a batch of audits (see Summary). The shares use the
// reviews as denominators as documented on each field; the pooled
// difference reuses analysis.Pool on the per-review differences divided by
// each review's SD scale.
func Summarize(audits []ReviewAudit, opts SummaryOptions) Summary {
	o := opts.resolve()
	s := Summary{Reviews: len(audits), Truth: o.Truth, TruthThreshold: o.Threshold, Warnings: []string{},
		Detection: []Detection{}, AdjustedError: []AdjustedError{}}
	var shifts []float64
	var benefit, harm, concl, known, sig, dir, mid int
	var diffs, seDiffs []float64
	var labels []string
	for _, a := range audits {
		if a.ConclusionChanged != nil {
			known++
			if *a.ConclusionChanged {
				concl++
			}
		}
		if a.SignificanceChanged {
			sig++
		}
		if a.DirectionChanged {
			dir++
		}
		if a.MIDCrossed != nil && *a.MIDCrossed {
			mid++
		}
		if a.KAdded == 0 {
			continue
		}
		s.ReviewsWithAdditions++
		if a.Shift.SDUnits != nil {
			shifts = append(shifts, *a.Shift.SDUnits)
			switch a.Shift.Toward {
			case "benefit":
				benefit++
			case "harm":
				harm++
			}
		}
		sd := sdScale(a)
		if sg := a.Subgroup; sg != nil && sg.Difference != nil && sg.SE != nil && *sg.SE > 0 && sd > 0 {
			diffs = append(diffs, *sg.Difference/sd)
			seDiffs = append(seDiffs, *sg.SE/sd)
			labels = append(labels, a.ReviewID)
		}
	}
	share := func(n, d int) *float64 {
		if d == 0 {
			return nil
		}
		return opt(float64(n) / float64(d))
	}
	s.ConclusionChangedShare, s.SignificanceChangedShare = share(concl, known), share(sig, len(audits))
	s.DirectionChangedShare, s.MIDCrossedShare = share(dir, len(audits)), share(mid, len(audits))

	s.ShiftSMD.N = len(shifts)
	if len(shifts) > 0 {
		slices.Sort(shifts)
		var sum float64
		for _, x := range shifts {
			sum += x
		}
		s.ShiftSMD.Median, s.ShiftSMD.Q1, s.ShiftSMD.Q3 = opt(quantile7(shifts, 0.5)), opt(quantile7(shifts, 0.25)), opt(quantile7(shifts, 0.75))
		s.ShiftSMD.Mean = opt(sum / float64(len(shifts)))
		s.ShiftSMD.TowardBenefitShare, s.ShiftSMD.TowardHarmShare = share(benefit, len(shifts)), share(harm, len(shifts))
	}

	s.PooledDifferenceSMD = PooledDifference{K: len(diffs), Tau2Method: string(o.Tau2), CIMethod: o.CI}
	if len(diffs) > 0 {
		res, err := analysis.Pool(diffs, seDiffs, analysis.Settings{Level: o.Level, Tau2: o.Tau2, Labels: labels, SkipLeaveOneOut: true,
			TruncateHKSJ: o.CI == CIHKSJ})
		if err != nil {
			s.Warnings = append(s.Warnings, "pooled difference: "+err.Error())
		} else {
			r := res.Random
			p := &s.PooledDifferenceSMD
			iv := randomInterval(r, len(diffs), o.CI)
			p.Estimate, p.SE, p.CILow, p.CIHigh, p.CIMethod = opt(r.Estimate), opt(iv.SE), opt(iv.Low), opt(iv.High), iv.Method
			p.Tau2, p.I2, p.Q, p.QP, p.PILow, p.PIHigh = opt(r.Tau2), opt(res.Het.I2), opt(res.Het.Q), opt(res.Het.QP), opt(r.PILow), opt(r.PIHigh)
			s.Warnings = append(s.Warnings, prefixed("pooled difference: ", reviewsNotStudies(res.Warnings))...)
		}
	}
	s.Detection = detections(audits, o)
	s.AdjustedError = adjustedErrors(audits)
	return s
}

// truthOf says whether a review's registry evidence shows a real shift
// under the summary's rule; reviews with nothing added are negatives.
func truthOf(a ReviewAudit, o SummaryOptions) (bool, bool) {
	if a.KAdded == 0 {
		return false, true
	}
	if o.Truth == TruthQBetween {
		if a.Subgroup == nil || a.Subgroup.P == nil {
			return false, false
		}
		return *a.Subgroup.P < 0.05, true
	}
	if a.Shift.SDUnits == nil {
		return false, false
	}
	return math.Abs(*a.Shift.SDUnits) > o.Threshold, true
}

// diagnostic is one bias test's verdict on a review: positive, and
// whether it ran.
type diagnostic struct {
	name, rule string
	verdict    func(b *BiasReport) (positive, ran bool)
}

var diagnostics = []diagnostic{
	{"egger", "Egger p < 0.10", func(b *BiasReport) (bool, bool) { return pBelow(b.Egger.p(), 0.10) }},
	{"egger_sample_size", "Egger regressed on √(1/n₁+1/n₂) (SMD) p < 0.10", func(b *BiasReport) (bool, bool) { return pBelow(b.EggerSampleSize.p(), 0.10) }},
	{"begg", "rank correlation test (Begg & Mazumdar 1994) p < 0.10", func(b *BiasReport) (bool, bool) {
		if b.Begg == nil {
			return false, false
		}
		return pBelow(b.Begg.P, 0.10)
	}},
	{"trim_fill", "trim-and-fill k0 > 0", func(b *BiasReport) (bool, bool) {
		if b.TrimFill == nil {
			return false, false
		}
		return b.TrimFill.K0 > 0, true
	}},
	{"selection", "selection model LRT p < 0.10", func(b *BiasReport) (bool, bool) {
		if b.Selection == nil || !b.Selection.Converged {
			return false, false
		}
		return pBelow(b.Selection.LRTP, 0.10)
	}},
}

func (e *EggerJSON) p() *float64 {
	if e == nil {
		return nil
	}
	return e.P
}

func pBelow(p *float64, alpha float64) (bool, bool) {
	if p == nil {
		return false, false
	}
	return *p < alpha, true
}

func detections(audits []ReviewAudit, o SummaryOptions) []Detection {
	out := make([]Detection, 0, len(diagnostics))
	for _, d := range diagnostics {
		det := Detection{Test: d.name, Rule: d.rule}
		for _, a := range audits {
			truth, known := truthOf(a, o)
			if a.Bias == nil || !known {
				det.Skipped++
				continue
			}
			pos, ran := d.verdict(a.Bias)
			switch {
			case !ran:
				det.Skipped++
			case pos && truth:
				det.TP++
			case pos:
				det.FP++
			case truth:
				det.FN++
			default:
				det.TN++
			}
		}
		if n := det.TP + det.FN; n > 0 {
			est, lo, hi := Wilson(det.TP, n, 0.95)
			det.Sensitivity, det.SensitivityCILow, det.SensitivityCIHigh = opt(est), opt(lo), opt(hi)
		}
		if n := det.TN + det.FP; n > 0 {
			est, lo, hi := Wilson(det.TN, n, 0.95)
			det.Specificity, det.SpecificityCILow, det.SpecificityCIHigh = opt(est), opt(lo), opt(hi)
		}
		out = append(out, det)
	}
	return out
}

func adjustedErrors(audits []ReviewAudit) []AdjustedError {
	methods := []struct {
		name string
		get  func(a ReviewAudit) *float64
	}{
		{"published", func(a ReviewAudit) *float64 { return a.Published.Random.Estimate }},
		{"trim_fill", func(a ReviewAudit) *float64 {
			if a.Bias == nil || a.Bias.TrimFill == nil {
				return nil
			}
			return a.Bias.TrimFill.RandomEstimate
		}},
		{"pet_peese", func(a ReviewAudit) *float64 {
			if a.Bias == nil || a.Bias.PETPEESE == nil {
				return nil
			}
			return a.Bias.PETPEESE.Estimate
		}},
		{"selection", func(a ReviewAudit) *float64 {
			if a.Bias == nil || a.Bias.Selection == nil || !a.Bias.Selection.Converged {
				return nil
			}
			return a.Bias.Selection.Estimate
		}},
	}
	out := make([]AdjustedError, 0, len(methods))
	for _, m := range methods {
		e := AdjustedError{Method: m.name}
		var sum, sum2 float64
		for _, a := range audits {
			sd := sdScale(a)
			x, ref := m.get(a), a.Augmented.Random.Estimate
			if x == nil || ref == nil || !(sd > 0) {
				continue
			}
			d := (*x - *ref) / sd
			sum += d
			sum2 += d * d
			e.N++
		}
		if e.N > 0 {
			e.MeanError, e.RMSE = opt(sum/float64(e.N)), opt(math.Sqrt(sum2/float64(e.N)))
		}
		out = append(out, e)
	}
	return out
}

// Wilson is the Wilson score interval of a binomial proportion x/n at the
// given level (Wilson 1927, J Am Stat Assoc 22:209; method 3 of Newcombe
// 1998, Stat Med 17:857), without continuity correction:
//
//	p̂ = x/n,  z = z_{1-α/2}
//	centre = (p̂ + z²/(2n)) / (1 + z²/n)
//	half   = z sqrt(p̂(1-p̂)/n + z²/(4n²)) / (1 + z²/n)
//
// It returns p̂ and the limits, which stay within [0, 1] (x = 0 gives a
// lower limit of 0, x = n an upper limit of 1). n must be positive.
func Wilson(x, n int, level float64) (est, lo, hi float64) {
	nf := float64(n)
	p := float64(x) / nf
	z := distuv.UnitNormal.Quantile(1 - (1-level)/2)
	z2 := z * z
	den := 1 + z2/nf
	centre := (p + z2/(2*nf)) / den
	half := z * math.Sqrt(p*(1-p)/nf+z2/(4*nf*nf)) / den
	lo, hi = max(0, centre-half), min(1, centre+half)
	if x == 0 {
		lo = 0
	}
	if x == n {
		hi = 1
	}
	return p, lo, hi
}

// SummaryRun is a stored summary run.
type SummaryRun struct {
	RunID   int64
	Summary Summary
	Audits  []ReviewAudit // the audits summarized, in review order
	Failed  []error
}

// ShiftPoints returns, for the audits with a shift in SD units, the
// published-only random-effects estimate in SD units (the estimate divided
// by the review's SD scale: 1 for SMD, the pooled SD for MD), the shift in
// SD units, and the review ids: the data of the batch figures.
func ShiftPoints(audits []ReviewAudit) (publishedSD, shiftSD []float64, labels []string) {
	for _, a := range audits {
		sd := sdScale(a)
		if a.Shift.SDUnits == nil || a.Published.Random.Estimate == nil || !(sd > 0) {
			continue
		}
		publishedSD = append(publishedSD, *a.Published.Random.Estimate/sd)
		shiftSD = append(shiftSD, *a.Shift.SDUnits)
		labels = append(labels, a.ReviewID)
	}
	return publishedSD, shiftSD, labels
}

// RunSummary audits every review with auditOpts (not stored as an audit
// run), summarizes them with opts, and records the run in the store with
// kind "summary": its options (both sets) as JSON, version and
// auditOpts.Seed; the summary JSON is saved as the run's single result
// under the empty review id. Status as for RunAudit.
func RunSummary(ctx context.Context, db *store.DB, auditOpts Options, opts SummaryOptions, version string, workers int) (SummaryRun, error) {
	o := opts.resolve()
	optJSON, err := json.Marshal(map[string]any{"audit": auditOpts.record(), "summary": summaryRecord(o)})
	if err != nil {
		return SummaryRun{}, fmt.Errorf("encode options: %w", err)
	}
	runID, err := db.StartRun(ctx, "summary", string(optJSON), version, auditOpts.Seed)
	if err != nil {
		return SummaryRun{}, err
	}
	run := SummaryRun{RunID: runID}
	err = func() error {
		inputs, err := LoadAuditInputs(ctx, db, nil)
		if err != nil {
			return err
		}
		audits, failed, err := AuditAll(ctx, inputs, auditOpts, workers)
		if err != nil {
			return err
		}
		run.Failed, run.Audits = failed, audits
		run.Summary = Summarize(audits, o)
		b, err := json.Marshal(run.Summary)
		if err != nil {
			return fmt.Errorf("encode summary: %w", err)
		}
		return db.SaveRunResult(ctx, runID, "", string(b))
	}()
	return run, finishRun(db, runID, ctx, err)
}

func summaryRecord(o SummaryOptions) map[string]any {
	return map[string]any{"truth": o.Truth, "truth_threshold": o.Threshold, "level": o.Level, "tau2": string(o.Tau2), "ci": o.CI}
}

// StoredSummary reads the summary saved by run id (kind "summary").
func StoredSummary(ctx context.Context, db *store.DB, runID int64) (store.Run, Summary, error) {
	runs, err := db.Runs(ctx, "summary")
	if err != nil {
		return store.Run{}, Summary{}, err
	}
	for _, r := range runs {
		if r.ID != runID {
			continue
		}
		res, err := db.RunResults(ctx, runID)
		if err != nil {
			return r, Summary{}, err
		}
		js, ok := res[""]
		if !ok {
			return r, Summary{}, fmt.Errorf("summary run %d (%s) holds no result", runID, r.Status)
		}
		var s Summary
		if err := json.Unmarshal([]byte(js), &s); err != nil {
			return r, Summary{}, fmt.Errorf("decode summary run %d: %w", runID, err)
		}
		return r, s, nil
	}
	return store.Run{}, Summary{}, fmt.Errorf("no summary run %d in the workspace", runID)
}
