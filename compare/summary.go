package compare

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"unshelved/analysis"
	"unshelved/analysis/bias"
)

// Truth rules of SummaryOptions.Truth: what counts as a real
// overstatement when scoring the bias diagnostics.
const (
	TruthThreshold = "threshold" // oriented overstatement in SD units above Threshold
	TruthQBetween  = "q-between" // subgroup Q-between p below 0.05, published more favourable
)

// DefaultTruthThreshold is the overstatement, in SD units, above which a
// review counts as overstated (a tenth of an SD; common practice, no
// source).
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

// Resolved is o with its defaults filled in.
func (o SummaryOptions) Resolved() SummaryOptions {
	if o.Truth == "" {
		o.Truth = TruthThreshold
	}
	if o.Threshold == 0 {
		o.Threshold = DefaultTruthThreshold
	}
	if o.Level == 0 {
		o.Level = analysis.DefaultLevel
	}
	if o.Tau2 == "" {
		o.Tau2 = analysis.Tau2REML
	}
	if o.CI == "" {
		o.CI = CIHKSJ
	}
	return o
}

// Summary is the cross-review view of a batch of audits. Every
// cross-review number is oriented by each review's better direction, so
// that positive always means the published-only analysis overstates the
// benefit.
type Summary struct {
	// Reviews audited; ReviewsWithAdditions those with at least one
	// registry trial added (the overstatement distribution, the pooled
	// overstatement and the adjusted errors use these only: a review with
	// nothing added has no registry evidence to compare).
	Reviews              int `json:"reviews"`
	ReviewsWithAdditions int `json:"reviews_with_additions"`
	// OverstatementSD is the distribution of Shift.OverstatementSD over
	// reviews with additions (and a better direction and an SD scale).
	OverstatementSD OverstatementDistribution `json:"overstatement_sd"`
	// ConclusionChangedShare is the share of reviews whose conclusion
	// changed (significance, direction or MID), among those where it is
	// known (registry trials were linked); the parts follow, over all
	// audited reviews.
	ConclusionChangedShare   *float64 `json:"conclusion_changed_share"`
	SignificanceChangedShare *float64 `json:"significance_changed_share"`
	DirectionChangedShare    *float64 `json:"direction_changed_share"`
	MIDCrossedShare          *float64 `json:"mid_crossed_share"`
	// PooledOverstatementSD is the random-effects meta-analysis over
	// reviews of the oriented subgroup difference in SD units:
	// favourable · (published - registry) / SD, positive when the
	// published studies are more favourable than the registry-only trials.
	PooledOverstatementSD PooledDifference `json:"pooled_overstatement_sd"`
	Detection             []Detection      `json:"detection"`
	AdjustedError         []AdjustedError  `json:"adjusted_error"`
	Truth                 string           `json:"truth"`
	TruthThreshold        float64          `json:"truth_threshold"`
	Warnings              []string         `json:"warnings"`
	// Cautions always apply to these figures (the package-level Cautions).
	Cautions []string `json:"cautions"`
}

// Cautions are printed wherever output may inform editorial or clinical
// decisions: with the audit and summary tables and in the summary JSON
// (common practice, no source).
var Cautions = []string{
	"Registry results are posted by sponsors and are not peer reviewed; check each added trial's record.",
	"A shift, or funnel-plot asymmetry, is not proof of publication bias: heterogeneity, chance and small-study effects can cause it.",
	"Defer to the review authors, their GRADE assessment and local practice before drawing clinical or editorial conclusions.",
}

// OverstatementDistribution summarizes oriented overstatements in SD
// units. Quartiles are sample quantiles of type 7 (Hyndman & Fan 1996,
// definition 7); SharePositive is the share of reviews whose published-only
// analysis overstates the benefit (overstatement above 0).
type OverstatementDistribution struct {
	N             int      `json:"n"`
	Median        *float64 `json:"median"`
	Q1            *float64 `json:"q1"`
	Q3            *float64 `json:"q3"`
	Mean          *float64 `json:"mean"`
	SharePositive *float64 `json:"share_positive"`
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
// Wilson score intervals (see analysis.Wilson) for sensitivity and specificity.
// MinK is the least number of published studies of the reviews in the
// table (0: all reviews; 10: the tests' advised minimum, Sterne et al.
// 2011, BMJ 343:d4002). Reviews whose truth is unknown (nothing added but
// eligible trials without results) are counted in Unknown and left out of
// the table; reviews where the diagnostic could not run, or whose truth
// cannot be computed (no SD scale, no better direction, no subgroup test),
// are counted in Skipped.
type Detection struct {
	Test              string   `json:"test"`
	Rule              string   `json:"rule"`
	MinK              int      `json:"min_k"`
	TP                int      `json:"tp"`
	FP                int      `json:"fp"`
	FN                int      `json:"fn"`
	TN                int      `json:"tn"`
	Unknown           int      `json:"unknown"`
	Skipped           int      `json:"skipped"`
	Sensitivity       *float64 `json:"sensitivity"`
	SensitivityCILow  *float64 `json:"sensitivity_ci_low"`
	SensitivityCIHigh *float64 `json:"sensitivity_ci_high"`
	Specificity       *float64 `json:"specificity"`
	SpecificityCILow  *float64 `json:"specificity_ci_low"`
	SpecificityCIHigh *float64 `json:"specificity_ci_high"`
}

// AdjustedError is the error of a bias-adjusted estimate (from the
// published studies) against the augmented random-effects estimate, over
// reviews with registry additions and a better direction, oriented and in
// SD units: error = favourable · (adjusted - augmented) / SD, positive when
// the estimate still overstates the benefit. "published" is the unadjusted
// published-only estimate, for comparison (its error is the overstatement).
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
// overstatement reuses analysis.Pool on the per-review oriented subgroup
// differences divided by each review's SD scale.
func Summarize(audits []ReviewAudit, opts SummaryOptions) Summary {
	o := opts.Resolved()
	s := Summary{Reviews: len(audits), Truth: o.Truth, TruthThreshold: o.Threshold, Warnings: []string{},
		Detection: []Detection{}, AdjustedError: []AdjustedError{}, Cautions: append([]string(nil), Cautions...)}
	var over []float64
	var positive, concl, known, sig, dir, mid, undirected int
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
		f := favourable(a.Better)
		if f == 0 {
			undirected++
			continue
		}
		if x := a.Shift.OverstatementSD; x != nil {
			over = append(over, *x)
			if *x > 0 {
				positive++
			}
		}
		sd := sdScale(a)
		if sg := a.Subgroup; sg != nil && sg.Difference != nil && sg.SE != nil && *sg.SE > 0 && sd > 0 {
			// Difference is registry - published; oriented published - registry.
			diffs = append(diffs, -f**sg.Difference/sd)
			seDiffs = append(seDiffs, *sg.SE/sd)
			labels = append(labels, a.ReviewID)
		}
	}
	if undirected > 0 {
		s.Warnings = append(s.Warnings, fmt.Sprintf("%d reviews with registry additions have no better direction (lower or higher) and are left out of every oriented figure", undirected))
	}
	share := func(n, d int) *float64 {
		if d == 0 {
			return nil
		}
		return analysis.FiniteOrNil(float64(n) / float64(d))
	}
	s.ConclusionChangedShare, s.SignificanceChangedShare = share(concl, known), share(sig, len(audits))
	s.DirectionChangedShare, s.MIDCrossedShare = share(dir, len(audits)), share(mid, len(audits))

	s.OverstatementSD.N = len(over)
	if len(over) > 0 {
		slices.Sort(over)
		var sum float64
		for _, x := range over {
			sum += x
		}
		d := &s.OverstatementSD
		d.Median, d.Q1, d.Q3 = analysis.FiniteOrNil(quantile7(over, 0.5)), analysis.FiniteOrNil(quantile7(over, 0.25)), analysis.FiniteOrNil(quantile7(over, 0.75))
		d.Mean = analysis.FiniteOrNil(sum / float64(len(over)))
		d.SharePositive = share(positive, len(over))
	}

	s.PooledOverstatementSD = PooledDifference{K: len(diffs), Tau2Method: string(o.Tau2), CIMethod: o.CI}
	if len(diffs) > 0 {
		res, err := analysis.Pool(diffs, seDiffs, analysis.Settings{Level: o.Level, Tau2: o.Tau2, Labels: labels, SkipLeaveOneOut: true,
			TruncateHKSJ: o.CI == CIHKSJ})
		if err != nil {
			s.Warnings = append(s.Warnings, "pooled overstatement across reviews: "+err.Error())
		} else {
			r := res.Random
			p := &s.PooledOverstatementSD
			iv := randomInterval(r, len(diffs), o.CI)
			p.Estimate, p.SE, p.CILow, p.CIHigh, p.CIMethod = analysis.FiniteOrNil(r.Estimate), analysis.FiniteOrNil(iv.SE), analysis.FiniteOrNil(iv.Low), analysis.FiniteOrNil(iv.High), iv.Method
			p.Tau2, p.I2, p.Q, p.QP, p.PILow, p.PIHigh = analysis.FiniteOrNil(r.Tau2), analysis.FiniteOrNil(res.Het.I2), analysis.FiniteOrNil(res.Het.Q), analysis.FiniteOrNil(res.Het.QP), analysis.FiniteOrNil(r.PILow), analysis.FiniteOrNil(r.PIHigh)
			s.Warnings = append(s.Warnings, prefixed("pooled overstatement across reviews: ", reviewsNotStudies(res.Warnings))...)
		}
	}
	s.Detection = detections(audits, o)
	s.AdjustedError = adjustedErrors(audits)
	return s
}

// Truth states of a review for the detection tables.
const (
	truthNegative = iota
	truthPositive
	truthUnknown // nothing added, but eligible trials posted no results
	truthNone    // cannot be computed (no direction, SD scale or subgroup test)
)

// truthOf is a review's directional truth under the summary's rule.
// Reviews with nothing added are negative when no eligible registered
// trial lacks results, and unknown otherwise, or when no registry trial
// was linked at all (the registry was not searched: no search is not no
// bias). With additions: threshold,
// Shift.OverstatementSD > Threshold; q-between, the subgroup test p < 0.05
// with the published subgroup more favourable (favourable · (published -
// registry) > 0).
func truthOf(a ReviewAudit, o SummaryOptions) int {
	if a.KAdded == 0 {
		if a.Missing.K > 0 || a.RegistrySearch.Status == SearchNotLinked {
			return truthUnknown
		}
		return truthNegative
	}
	f := favourable(a.Better)
	if f == 0 {
		return truthNone
	}
	if o.Truth == TruthQBetween {
		sg := a.Subgroup
		if sg == nil || sg.P == nil || sg.Difference == nil {
			return truthNone
		}
		if *sg.P < 0.05 && -f**sg.Difference > 0 {
			return truthPositive
		}
		return truthNegative
	}
	if a.Shift.OverstatementSD == nil {
		return truthNone
	}
	if *a.Shift.OverstatementSD > o.Threshold {
		return truthPositive
	}
	return truthNegative
}

// diagnostic is one bias test's directional verdict on a review:
// positive only when its asymmetry points to missing unfavourable small
// studies (see analysis/bias/direction.go), and whether it ran. direction
// is the sign of a favourable effect.
type diagnostic struct {
	name, rule string
	verdict    func(b *BiasReport, direction float64) (positive, ran bool)
}

func eggerVerdict(e *EggerJSON, direction float64) (bool, bool) {
	if e == nil || e.P == nil || e.Bias == nil {
		return false, false
	}
	return *e.P < 0.10 && bias.SmallStudiesFavourable(bias.Regression{Bias: *e.Bias}, direction), true
}

var diagnostics = []diagnostic{
	{"egger", "Egger p < 0.10, small studies more favourable", func(b *BiasReport, d float64) (bool, bool) { return eggerVerdict(b.Egger, d) }},
	{"egger_sample_size", "Egger regressed on √(1/n₁+1/n₂) (SMD) p < 0.10, small studies more favourable", func(b *BiasReport, d float64) (bool, bool) {
		return eggerVerdict(b.EggerSampleSize, d)
	}},
	{"begg", "rank correlation test (Begg & Mazumdar 1994) p < 0.10, small studies more favourable", func(b *BiasReport, d float64) (bool, bool) {
		if b.Begg == nil || b.Begg.P == nil || b.Begg.Tau == nil {
			return false, false
		}
		return *b.Begg.P < 0.10 && bias.RankFavourable(bias.RankCorrelation{Tau: *b.Begg.Tau}, d), true
	}},
	{"trim_fill", "trim-and-fill k0 > 0 on the unfavourable side", func(b *BiasReport, d float64) (bool, bool) {
		if b.TrimFill == nil {
			return false, false
		}
		return bias.FilledUnfavourable(bias.TrimFillResult{K0: b.TrimFill.K0, Side: b.TrimFill.Side}, d), true
	}},
	{"selection", "selection model LRT p < 0.10, weight below 1", func(b *BiasReport, d float64) (bool, bool) {
		s := b.Selection
		if s == nil || !s.Converged || s.LRTP == nil {
			return false, false
		}
		r := bias.SelectionResult{Converged: true}
		for _, w := range s.Weights {
			if w == nil {
				return false, false
			}
			r.Weights = append(r.Weights, *w)
		}
		return *s.LRTP < 0.10 && bias.SelectsFavourable(r), true
	}},
}

// detectionMinK are the MinK of the detection tables.
var detectionMinK = []int{0, 10}

func detections(audits []ReviewAudit, o SummaryOptions) []Detection {
	out := make([]Detection, 0, len(detectionMinK)*len(diagnostics))
	for _, minK := range detectionMinK {
		for _, d := range diagnostics {
			det := Detection{Test: d.name, Rule: d.rule, MinK: minK}
			for _, a := range audits {
				if a.KPublished < minK {
					continue
				}
				truth := truthOf(a, o)
				if truth == truthUnknown {
					det.Unknown++
					continue
				}
				f := favourable(a.Better)
				if a.Bias == nil || truth == truthNone || f == 0 {
					det.Skipped++
					continue
				}
				pos, ran := d.verdict(a.Bias, f)
				switch {
				case !ran:
					det.Skipped++
				case pos && truth == truthPositive:
					det.TP++
				case pos:
					det.FP++
				case truth == truthPositive:
					det.FN++
				default:
					det.TN++
				}
			}
			if n := det.TP + det.FN; n > 0 {
				est, lo, hi := analysis.Wilson(det.TP, n, analysis.DefaultLevel)
				det.Sensitivity, det.SensitivityCILow, det.SensitivityCIHigh = analysis.FiniteOrNil(est), analysis.FiniteOrNil(lo), analysis.FiniteOrNil(hi)
			}
			if n := det.TN + det.FP; n > 0 {
				est, lo, hi := analysis.Wilson(det.TN, n, analysis.DefaultLevel)
				det.Specificity, det.SpecificityCILow, det.SpecificityCIHigh = analysis.FiniteOrNil(est), analysis.FiniteOrNil(lo), analysis.FiniteOrNil(hi)
			}
			out = append(out, det)
		}
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
			sd, f := sdScale(a), favourable(a.Better)
			x, ref := m.get(a), a.Augmented.Random.Estimate
			if a.KAdded == 0 || f == 0 || x == nil || ref == nil || !(sd > 0) {
				continue
			}
			d := f * (*x - *ref) / sd
			sum += d
			sum2 += d * d
			e.N++
		}
		if e.N > 0 {
			e.MeanError, e.RMSE = analysis.FiniteOrNil(sum/float64(e.N)), analysis.FiniteOrNil(math.Sqrt(sum2/float64(e.N)))
		}
		out = append(out, e)
	}
	return out
}

// ShiftPoints returns, for the audits with registry additions and an
// oriented overstatement, the published-only random-effects estimate
// oriented and in SD units (favourable · estimate / SD, so that positive is
// a benefit whichever way is better; SD is 1 for SMD, the pooled SD for
// MD), the overstatement in SD units (Shift.OverstatementSD, positive when
// the published-only analysis overstates the benefit), and the review ids:
// the data of the batch figures.
func ShiftPoints(audits []ReviewAudit) (publishedSD, overstatementSD []float64, labels []string) {
	for _, a := range audits {
		sd, f := sdScale(a), favourable(a.Better)
		if a.KAdded == 0 || f == 0 || a.Shift.OverstatementSD == nil || a.Published.Random.Estimate == nil || !(sd > 0) {
			continue
		}
		publishedSD = append(publishedSD, f**a.Published.Random.Estimate/sd)
		overstatementSD = append(overstatementSD, *a.Shift.OverstatementSD)
		labels = append(labels, a.ReviewID)
	}
	return publishedSD, overstatementSD, labels
}

// quantile7 is the sample quantile of sorted x at probability p by linear
// interpolation between order statistics (Hyndman & Fan 1996, Am Stat
// 50:361, definition 7; R's default):
//
//	h = (n-1) p,  Q = x[floor h] + (h - floor h) (x[floor h + 1] - x[floor h])
//
// x must be sorted and non-empty.
func quantile7(x []float64, p float64) float64 {
	h := float64(len(x)-1) * p
	lo := int(h)
	if lo >= len(x)-1 {
		return x[len(x)-1]
	}
	return x[lo] + (h-float64(lo))*(x[lo+1]-x[lo])
}
