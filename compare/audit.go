package compare

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"unshelved/analysis"
	"unshelved/ingest"
)

// Options control an audit. The zero value is a 95% level with
// DerSimonian-Laird random effects and Wald intervals.
type Options struct {
	Level float64             // confidence level; zero means 0.95
	Tau2  analysis.Tau2Method // zero means DerSimonian-Laird
	HKSJ  bool                // random-effects CI by Hartung-Knapp-Sidik-Jonkman instead of Wald
	// SkipBias leaves out the publication-bias battery; SkipSelection only
	// its selection model (the slowest part).
	SkipBias, SkipSelection bool
}

func (o Options) level() float64 {
	if o.Level == 0 {
		return 0.95
	}
	return o.Level
}

func (o Options) tau2() analysis.Tau2Method {
	if o.Tau2 == "" {
		return analysis.Tau2DL
	}
	return o.Tau2
}

// Estimate is one pooled estimate with its interval. Fields are nil where
// the model could not give them (never NaN, so that JSON stays valid).
type Estimate struct {
	Model    string   `json:"model"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	CILow    *float64 `json:"ci_low"`
	CIHigh   *float64 `json:"ci_high"`
	P        *float64 `json:"p"`
	// Random-effects only.
	Tau2Method string   `json:"tau2_method,omitempty"`
	Tau2       *float64 `json:"tau2,omitempty"`
	CIMethod   string   `json:"ci_method,omitempty"`
}

// Pooled holds the fixed-effect and random-effects analyses of one set of
// studies, with the heterogeneity figures.
type Pooled struct {
	K      int      `json:"k"`
	Fixed  Estimate `json:"fixed"`
	Random Estimate `json:"random"`
	I2     *float64 `json:"i2"`
	Q      *float64 `json:"q"`
	PILow  *float64 `json:"pi_low"`
	PIHigh *float64 `json:"pi_high"`

	result *analysis.MetaResult
}

// Shift compares the augmented random-effects estimate with the
// published-only one.
type Shift struct {
	// Absolute is augmented minus published.
	Absolute *float64 `json:"absolute"`
	// Relative is 100 (augmented - published) / published, in percent.
	Relative *float64 `json:"relative"`
	// Inflation is 100 (published - augmented) / augmented: by how many
	// percent the published literature overstates the fuller evidence.
	Inflation *float64 `json:"inflation"`
	// PublishedSEUnits is the absolute shift divided by the published-only
	// random-effects SE.
	PublishedSEUnits *float64 `json:"published_se_units"`
	// SDUnits is the absolute shift in units of the review's pooled SD
	// (for SMD reviews the shift itself), so reviews on different scales
	// compare; nil when no study gives arm SDs.
	SDUnits *float64 `json:"sd_units"`
	// PooledSD is the SD used for SDUnits (MD reviews).
	PooledSD *float64 `json:"pooled_sd,omitempty"`
	// Toward says whether the augmented estimate is more favourable
	// ("benefit"), less favourable ("harm") or equal ("none"), given the
	// review's better direction.
	Toward string `json:"toward"`
}

// Rejected is a registry link that could not be used, with its reason.
type Rejected struct {
	TrialID      string `json:"trial_id"`
	OutcomeIndex int    `json:"outcome_index"`
	Reason       string `json:"reason"`
	Detail       string `json:"detail"`
}

// ReviewAudit is the result of auditing one review.
type ReviewAudit struct {
	ReviewID            string        `json:"review_id"`
	Title               string        `json:"title"`
	Measure             string        `json:"measure"`
	Unit                string        `json:"unit"`
	Better              string        `json:"better"`
	KPublished          int           `json:"k_published"`
	KAdded              int           `json:"k_added"`
	Published           Pooled        `json:"published"`
	Augmented           Pooled        `json:"augmented"`
	Shift               Shift         `json:"shift"`
	SignificanceChanged bool          `json:"significance_changed"`
	DirectionChanged    bool          `json:"direction_changed"`
	Studies             []StudyEffect `json:"studies"`
	// Bias is the publication-bias battery on the published studies: what
	// a reader of the published literature could have seen.
	Bias     *BiasReport `json:"bias"`
	Rejected []Rejected  `json:"rejected"`
	Warnings []string    `json:"warnings"`
}

// AuditInput is everything AuditReview needs about one review.
type AuditInput struct {
	Review  ingest.Review
	Studies []ingest.ReviewStudy
	Links   []ingest.Link           // links of this review; only accepted ones are used
	Trials  map[string]ingest.Trial // registry records by trial id, for the links
}

// AuditReview pools a review's published studies alone and together with
// its accepted registry-only links, and reports the shift. A review with no
// usable published study is an error; links that cannot be used are listed
// in Rejected with their reason.
func AuditReview(in AuditInput, opts Options) (ReviewAudit, error) {
	rv := in.Review
	out := ReviewAudit{ReviewID: rv.ReviewID, Title: rv.Title, Measure: rv.Measure, Unit: rv.Unit, Better: rv.Better,
		Rejected: []Rejected{}, Warnings: []string{}}

	included := map[string]bool{}
	for _, s := range in.Studies {
		if s.RegistryID != "" {
			included[strings.ToUpper(strings.TrimSpace(s.RegistryID))] = true
		}
		e, err := PublishedEffect(rv, s)
		if err != nil {
			out.Warnings = append(out.Warnings, fmt.Sprintf("published study %q left out: %v", s.Study, err))
			continue
		}
		out.Studies = append(out.Studies, e)
	}
	out.KPublished = len(out.Studies)
	if out.KPublished == 0 {
		return out, fmt.Errorf("review %s: no usable published study", rv.ReviewID)
	}

	links := append([]ingest.Link(nil), in.Links...)
	sort.SliceStable(links, func(i, j int) bool {
		if links[i].TrialID != links[j].TrialID {
			return links[i].TrialID < links[j].TrialID
		}
		return links[i].OutcomeIndex < links[j].OutcomeIndex
	})
	added := map[string]bool{}
	for _, l := range links {
		if l.ReviewID != rv.ReviewID || !strings.EqualFold(l.Decision, "accept") {
			continue
		}
		t, ok := in.Trials[l.TrialID]
		if !ok {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: ReasonNoOutcome,
				Detail: fmt.Sprintf("%s is not in the workspace; ingest its registry record", l.TrialID)})
			continue
		}
		if isIncluded(t, included) {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: ReasonIncluded,
				Detail: fmt.Sprintf("%s is already among the review's published studies", l.TrialID)})
			continue
		}
		if added[t.TrialID] {
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: "duplicate-trial",
				Detail: fmt.Sprintf("%s already contributes another outcome to this review; one outcome per trial is pooled", l.TrialID)})
			continue
		}
		e, err := RegistryEffect(rv, t, l)
		if err != nil {
			var re *RejectError
			if !errors.As(err, &re) {
				return out, fmt.Errorf("review %s: trial %s: %w", rv.ReviewID, l.TrialID, err)
			}
			out.Rejected = append(out.Rejected, Rejected{TrialID: l.TrialID, OutcomeIndex: l.OutcomeIndex, Reason: re.Reason, Detail: re.Detail})
			continue
		}
		added[t.TrialID] = true
		out.Studies = append(out.Studies, e)
	}
	out.KAdded = len(out.Studies) - out.KPublished

	var err error
	out.Published, err = pool(out.Studies[:out.KPublished], opts)
	if err != nil {
		return out, fmt.Errorf("review %s: pool published studies: %w", rv.ReviewID, err)
	}
	out.Augmented, err = pool(out.Studies, opts)
	if err != nil {
		return out, fmt.Errorf("review %s: pool augmented studies: %w", rv.ReviewID, err)
	}
	out.Warnings = append(out.Warnings, prefixed("published-only: ", out.Published.result.Warnings)...)
	if out.KAdded > 0 {
		out.Warnings = append(out.Warnings, prefixed("augmented: ", out.Augmented.result.Warnings)...)
	}
	out.Shift = shiftOf(out.Published, out.Augmented, rv.Better)
	if out.Shift.Absolute != nil {
		if strings.EqualFold(rv.Measure, "SMD") {
			out.Shift.SDUnits = opt(*out.Shift.Absolute)
		} else if sd := reviewPooledSD(out.Studies, out.KPublished); sd > 0 {
			out.Shift.PooledSD = opt(sd)
			out.Shift.SDUnits = opt(*out.Shift.Absolute / sd)
		}
	}
	if !opts.SkipBias {
		b := BiasFor(out.Studies[:out.KPublished], rv.Measure, BiasOptions{
			Level: opts.level(), Tau2: opts.tau2(), Direction: favourable(rv.Better), ShiftSDUnits: out.Shift.SDUnits,
			SkipSelection: opts.SkipSelection,
		})
		out.Bias = &b
	}
	out.SignificanceChanged = significant(out.Published.Random) != significant(out.Augmented.Random)
	out.DirectionChanged = sign(out.Published.Random.Estimate) != sign(out.Augmented.Random.Estimate)
	return out, nil
}

// reviewPooledSD is the SD that puts a review's mean differences on a
// standard scale: the df-weighted pooled SD of the published studies with
// arm data, or of all studies when no published one has them.
//
//	SD = sqrt( Σ df_i SD_i² / Σ df_i ),  df_i = n1_i + n2_i - 2
func reviewPooledSD(studies []StudyEffect, kPublished int) float64 {
	for _, set := range [][]StudyEffect{studies[:kPublished], studies} {
		var num, den float64
		for _, s := range set {
			if s.PooledSD > 0 && s.TreatN+s.CtrlN > 2 {
				df := float64(s.TreatN + s.CtrlN - 2)
				num += df * s.PooledSD * s.PooledSD
				den += df
			}
		}
		if den > 0 {
			return math.Sqrt(num / den)
		}
	}
	return 0
}

// favourable is the sign of a beneficial effect: -1 when lower is better.
func favourable(better string) float64 {
	if strings.EqualFold(better, "lower") {
		return -1
	}
	if strings.EqualFold(better, "higher") {
		return 1
	}
	return 0
}

// isIncluded reports whether a registry trial is among the review's
// published studies, by its id, its aliases or its secondary ids.
func isIncluded(t ingest.Trial, included map[string]bool) bool {
	if included[strings.ToUpper(t.TrialID)] {
		return true
	}
	for _, a := range t.Aliases {
		if included[strings.ToUpper(a)] {
			return true
		}
	}
	for _, s := range t.SecondaryIDs {
		if included[strings.ToUpper(strings.TrimSpace(s.ID))] {
			return true
		}
	}
	return false
}

func pool(studies []StudyEffect, opts Options) (Pooled, error) {
	effects := make([]float64, len(studies))
	seEffects := make([]float64, len(studies))
	labels := make([]string, len(studies))
	for i, s := range studies {
		effects[i], seEffects[i], labels[i] = s.Effect, s.SE, s.Study
	}
	res, err := analysis.Pool(effects, seEffects, analysis.Settings{
		Level: opts.level(), Tau2: opts.tau2(), Labels: labels, SkipLeaveOneOut: true,
	})
	if err != nil {
		return Pooled{}, err
	}
	p := Pooled{K: len(studies), result: &res}
	f := res.Fixed
	p.Fixed = Estimate{Model: "fixed", Estimate: opt(f.Estimate), SE: opt(f.SE), CILow: opt(f.CILow), CIHigh: opt(f.CIHigh), P: opt(f.P)}
	r := res.Random
	p.Random = Estimate{Model: "random", Estimate: opt(r.Estimate), SE: opt(r.SE), CILow: opt(r.CILow), CIHigh: opt(r.CIHigh), P: opt(r.P),
		Tau2Method: string(r.Method), Tau2: opt(r.Tau2), CIMethod: "wald"}
	if opts.HKSJ {
		p.Random.CILow, p.Random.CIHigh, p.Random.CIMethod = opt(r.HKSJLow), opt(r.HKSJHigh), "hksj"
		p.Random.SE = opt(r.HKSJSE)
	}
	p.I2, p.Q = opt(res.Het.I2), opt(res.Het.Q)
	p.PILow, p.PIHigh = opt(r.PILow), opt(r.PIHigh)
	return p, nil
}

func shiftOf(pub, aug Pooled, better string) Shift {
	var s Shift
	s.Toward = "none"
	if pub.Random.Estimate == nil || aug.Random.Estimate == nil {
		return s
	}
	p, a := *pub.Random.Estimate, *aug.Random.Estimate
	d := a - p
	s.Absolute = opt(d)
	if p != 0 {
		s.Relative = opt(100 * d / p)
	}
	if a != 0 {
		s.Inflation = opt(100 * (p - a) / a)
	}
	if pub.Random.SE != nil && *pub.Random.SE > 0 {
		s.PublishedSEUnits = opt(d / *pub.Random.SE)
	}
	switch {
	case d == 0:
		s.Toward = "none"
	case (d < 0) == strings.EqualFold(better, "lower"):
		s.Toward = "benefit"
	default:
		s.Toward = "harm"
	}
	return s
}

// significant reports whether the interval excludes zero.
func significant(e Estimate) bool {
	if e.CILow == nil || e.CIHigh == nil {
		return false
	}
	return *e.CILow > 0 || *e.CIHigh < 0
}

func sign(x *float64) int {
	switch {
	case x == nil || *x == 0:
		return 0
	case *x > 0:
		return 1
	default:
		return -1
	}
}

// opt turns NaN and infinities into nil so that JSON stays valid.
func opt(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func prefixed(p string, s []string) []string {
	out := make([]string, len(s))
	for i, x := range s {
		out[i] = p + x
	}
	return out
}
