package analysis

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Tau2Method names an estimator of the between-study variance tau².
type Tau2Method string

// The tau² estimators offered by Tau2, RandomEffects and Pool.
const (
	Tau2REML Tau2Method = "reml" // restricted maximum likelihood
	Tau2DL   Tau2Method = "dl"   // DerSimonian-Laird method of moments
	Tau2PM   Tau2Method = "pm"   // Paule-Mandel generalized Q
)

// Defaults used when a Settings field is zero.
const (
	// DefaultLevel is the confidence level used when Settings.Level is zero.
	DefaultLevel = 0.95
	// DefaultTol is the convergence tolerance of the iterative tau²
	// estimators when Settings.Tol is zero. Iteration stops when a step
	// changes tau² by at most Tol (tau² + mean within-study variance), a
	// relative criterion that does not depend on the units of the outcome.
	// 1e-10 leaves about six significant digits of headroom above rounding
	// error in the sums.
	DefaultTol = 1e-10
	// DefaultMaxIter is the iteration cap of each phase of an iterative tau²
	// estimator when Settings.MaxIter is zero. Newton-type steps converge in
	// well under 20 iterations on ordinary data; bisection fallbacks need
	// about 40 to reach DefaultTol.
	DefaultMaxIter = 100
)

// Settings configures RandomEffects and Pool.
type Settings struct {
	// Level is the confidence level of every interval (the fixed and
	// random-effects CIs, the HKSJ CI, the prediction interval and the
	// Q-profile CI of tau²). Zero means DefaultLevel (0.95).
	Level float64
	// Tau2 is the tau² estimator of RandomResult and of the leave-one-out
	// analyses. Zero means Tau2REML.
	Tau2 Tau2Method
	// Tol is the relative convergence tolerance of the iterative tau²
	// estimators (see DefaultTol). Zero means DefaultTol.
	Tol float64
	// MaxIter caps each phase of an iterative tau² estimator. Zero means
	// DefaultMaxIter.
	MaxIter int
	// TruncateHKSJ, when true, floors the Hartung-Knapp-Sidik-Jonkman
	// scale factor at 1 so the HKSJ interval is never narrower than the
	// Wald interval. False (the zero value) leaves it untruncated.
	TruncateHKSJ bool
	// Labels are optional study names used in error messages; nil means
	// studies are named by their 1-based position. When given it must have
	// one entry per study (a different length panics).
	Labels []string
	// SkipLeaveOneOut, when true, makes Pool skip the leave-one-out
	// analyses (MetaResult.LeaveOneOut is nil, MostInfluential is -1).
	SkipLeaveOneOut bool
}

// FixedResult is a fixed-effect (common-effect) inverse-variance pooled
// estimate. Weights are in percent and sum to 100.
type FixedResult struct {
	Estimate, SE, CILow, CIHigh, Z, P float64
	Weights                           []float64
}

// Heterogeneity holds Cochran's Q with its degrees of freedom and p-value,
// I² in percent and H².
type Heterogeneity struct {
	Q  float64
	DF int
	QP float64
	I2 float64
	H2 float64
}

// settings is Settings with defaults filled in and checked.
type settings struct {
	level   float64
	method  Tau2Method
	tol     float64
	maxIter int
	trunc   bool
}

func (s Settings) resolve() (settings, error) {
	r := settings{level: s.Level, method: s.Tau2, tol: s.Tol, maxIter: s.MaxIter, trunc: s.TruncateHKSJ}
	if r.level == 0 {
		r.level = DefaultLevel
	}
	if !(r.level > 0 && r.level < 1) {
		return r, ErrLevel
	}
	if r.method == "" {
		r.method = Tau2REML
	}
	if methodIndex(r.method) < 0 {
		return r, ErrUnknownTau2
	}
	if r.tol == 0 {
		r.tol = DefaultTol
	}
	if r.maxIter == 0 {
		r.maxIter = DefaultMaxIter
	}
	if !(r.tol > 0) || math.IsInf(r.tol, 0) || r.maxIter < 0 {
		return r, ErrBadSettings
	}
	return r, nil
}

// methodIndex gives the position of m in MetaResult.ByMethod, or -1.
func methodIndex(m Tau2Method) int {
	switch m {
	case Tau2DL:
		return 0
	case Tau2PM:
		return 1
	case Tau2REML:
		return 2
	}
	return -1
}

// checkStudies validates the inputs of a meta-analysis and writes the
// within-study variances into dstVar. It panics if the slice lengths differ.
func checkStudies(effects, seEffects []float64, labels []string, dstVar []float64) error {
	if len(effects) != len(seEffects) {
		panic("analysis: slice length mismatch")
	}
	if labels != nil && len(labels) != len(effects) {
		panic("analysis: label count does not match study count")
	}
	if len(effects) == 0 {
		return ErrNoStudies
	}
	label := func(i int) string {
		if labels != nil {
			return labels[i]
		}
		return ""
	}
	for i, y := range effects {
		if math.IsNaN(y) || math.IsInf(y, 0) {
			return &StudyError{Index: i, Label: label(i), Field: "effect", Err: ErrNonFinite}
		}
		s := seEffects[i]
		if math.IsNaN(s) || math.IsInf(s, 0) {
			return &StudyError{Index: i, Label: label(i), Field: "se_effect", Err: ErrNonFinite}
		}
		if s <= 0 {
			return &StudyError{Index: i, Label: label(i), Field: "se_effect", Err: ErrNonPositiveSE}
		}
		v := s * s
		if v == 0 || math.IsInf(1/v, 0) || math.IsInf(v, 0) {
			// The variance under- or overflows; inverse-variance
			// weights cannot be formed.
			return &StudyError{Index: i, Label: label(i), Field: "se_effect", Err: ErrNonFinite}
		}
		dstVar[i] = v
	}
	return nil
}

// twoSidedP returns the two-sided normal p-value of z.
func twoSidedP(z float64) float64 {
	return math.Erfc(math.Abs(z) / math.Sqrt2)
}

// twoSidedTP returns the two-sided p-value of t on df degrees of freedom;
// NaN when t is NaN (a zero SE with a zero estimate).
func twoSidedTP(t, df float64) float64 {
	if math.IsNaN(t) {
		return math.NaN()
	}
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(math.Abs(t))
}

// fixedCore computes the inverse-variance weighted mean of y with weights
// 1/(varY[i] + tau2), the sum of the weights and the generalized Q
// statistic sum w (y - mu)². It allocates nothing.
func fixedCore(y, varY []float64, tau2 float64) (mu, sumW, q float64) {
	var sumWY float64
	for i, yi := range y {
		w := 1 / (varY[i] + tau2)
		sumW += w
		sumWY += w * yi
	}
	mu = sumWY / sumW
	if len(y) == 1 {
		// Exact, without the rounding of w y / w.
		return y[0], sumW, 0
	}
	for i, yi := range y {
		r := yi - mu
		q += r * r / (varY[i] + tau2)
	}
	return mu, sumW, q
}

// fillWeights writes percent weights 100 w_i / sum w into dst.
func fillWeights(dst, varY []float64, tau2, sumW float64) {
	if len(dst) == 1 {
		dst[0] = 100
		return
	}
	for i, v := range varY {
		dst[i] = 100 / ((v + tau2) * sumW)
	}
}

// heterogeneity computes Cochran's Q summary from Q and k.
func heterogeneity(q float64, k int) Heterogeneity {
	h := Heterogeneity{Q: q, DF: k - 1}
	if k < 2 {
		h.QP, h.I2, h.H2 = math.NaN(), math.NaN(), math.NaN()
		return h
	}
	df := float64(k - 1)
	h.QP = distuv.ChiSquared{K: df}.Survival(q)
	h.I2 = i2Percent(q, k)
	h.H2 = q / df
	return h
}

// i2Percent is I² = max(0, (Q - df)/Q) in percent; 0 when Q is 0 and NaN
// when k < 2.
func i2Percent(q float64, k int) float64 {
	if k < 2 {
		return math.NaN()
	}
	df := float64(k - 1)
	if q <= df {
		return 0
	}
	return 100 * (q - df) / q
}

// FixedEffect pools effects with fixed-effect (common-effect) inverse-variance
// weights and computes Cochran's Q:
//
//	w_i   = 1 / se_i²
//	mu    = sum w_i y_i / sum w_i
//	seMu  = 1 / sqrt(sum w_i)
//	CI    = mu ± z_{1-(1-level)/2} seMu,  Z = mu / seMu,  P = 2 (1 - Φ(|Z|))
//	Q     = sum w_i (y_i - mu)²,  df = k - 1,  QP = P(χ²_df > Q)
//	I²    = 100 max(0, (Q - df) / Q),  H² = Q / df
//
// Scale: whatever scale the effects are on (raw MD or SMD here); seEffects
// are standard errors in the same units. Level zero means 0.95.
//
// Edges: k = 1 returns that study (weight 100) with Q = 0, DF = 0 and QP,
// I², H² NaN. When every effect is equal Q = 0 and I² = 0. A study with a
// tiny SE dominates the weights; nothing is truncated. Bad input (k = 0, a
// non-finite effect, an SE that is not positive or not finite) returns a
// *StudyError or ErrNoStudies; a level outside (0, 1) returns ErrLevel. The
// function panics if the slices differ in length.
//
// Source: Borenstein, Hedges, Higgins & Rothstein (2009) Introduction to
// Meta-Analysis, chapters 11 and 16; Higgins & Thompson (2002) Stat Med
// 21:1539 for I² and H².
func FixedEffect(effects, seEffects []float64, level float64) (FixedResult, Heterogeneity, error) {
	if level == 0 {
		level = DefaultLevel
	}
	if !(level > 0 && level < 1) {
		return FixedResult{}, Heterogeneity{}, ErrLevel
	}
	k := len(effects)
	buf := make([]float64, 2*k)
	varY := buf[:k]
	if err := checkStudies(effects, seEffects, nil, varY); err != nil {
		return FixedResult{}, Heterogeneity{}, err
	}
	z := normalQuantile(1 - (1-level)/2)
	fe, het := fixedEffect(effects, varY, z, buf[k:])
	return fe, het, nil
}

// fixedEffect is FixedEffect on validated variances; dstWeights receives the
// percent weights and is kept in the result.
func fixedEffect(y, varY []float64, z float64, dstWeights []float64) (FixedResult, Heterogeneity) {
	mu, sumW, q := fixedCore(y, varY, 0)
	seMu := 1 / math.Sqrt(sumW)
	fillWeights(dstWeights, varY, 0, sumW)
	zStat := mu / seMu
	fe := FixedResult{
		Estimate: mu,
		SE:       seMu,
		CILow:    mu - z*seMu,
		CIHigh:   mu + z*seMu,
		Z:        zStat,
		P:        twoSidedP(zStat),
		Weights:  dstWeights,
	}
	if len(y) == 1 {
		q = 0
	}
	return fe, heterogeneity(q, len(y))
}
