package analysis

import (
	"math"
	"strconv"
)

const (
	sourceHandbookCh6 = "Higgins, Li & Deeks (eds), Chapter 6: Choosing effect measures and computing estimates of effect, " +
		"Cochrane Handbook for Systematic Reviews of Interventions version 6, section 6.5.2"
	sourceHandbookCh6Sec63 = "Higgins, Li & Deeks (eds), Chapter 6: Choosing effect measures and computing estimates of effect, " +
		"Cochrane Handbook for Systematic Reviews of Interventions version 6, section 6.3"
	sourceHandbookTable65a = "Higgins, Li & Deeks (eds), Chapter 6, Cochrane Handbook for Systematic Reviews of Interventions version 6, " +
		"Table 6.5.a (combining groups)"
	sourceWanLuo = "Wan, Wang, Liu & Tong (2014) BMC Med Res Methodol 14:135 (SD); " +
		"Luo, Wan, Liu & Tong (2018) Stat Methods Med Res 27:1785 (mean)"
	assumptionNormal = "approximately normal, symmetric distribution of the outcome in the group"
)

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

func checkLevel(level float64) error {
	if !(level > 0 && level < 1) {
		return ErrLevel
	}
	return nil
}

// SDFromSE returns the standard deviation of one group from the standard
// error of its mean:
//
//	sd = seMean sqrt(n)
//
// Units: those of the outcome. Needs seMean > 0 (finite) and n >= 2,
// otherwise ErrNonPositiveSE, ErrNonFinite or ErrTooFewN. The Derivation has
// Method "sd_from_se" and inputs se_mean, n. Source: Cochrane Handbook
// chapter 6, section 6.5.2.
func SDFromSE(seMean float64, n int) (float64, Derivation, error) {
	switch {
	case !finite(seMean):
		return math.NaN(), Derivation{}, ErrNonFinite
	case seMean <= 0:
		return math.NaN(), Derivation{}, ErrNonPositiveSE
	case n < 2:
		return math.NaN(), Derivation{}, ErrTooFewN
	}
	return seMean * math.Sqrt(float64(n)), Derivation{
		Method:  "sd_from_se",
		Formula: "sd = se_mean sqrt(n)",
		Inputs:  []NamedValue{{"se_mean", seMean}, {"n", float64(n)}},
		Output:  []NamedValue{{"sd", seMean * math.Sqrt(float64(n))}},
		Source:  sourceHandbookCh6,
	}, nil
}

// SDFromCI returns the standard deviation of one group from a confidence
// interval for its mean, using the t distribution with n-1 degrees of
// freedom:
//
//	sd = sqrt(n) (upper - lower) / (2 t_{1-(1-level)/2, n-1})
//
// Units: those of the outcome. level is the interval's confidence level in
// (0, 1), e.g. 0.95. The t quantile is used at every n; for large n it
// approaches the normal value (3.92 = 2 × 1.96 at level 0.95) that the
// handbook suggests for big groups. Needs finite limits with upper > lower,
// n >= 2 and a level in (0, 1), otherwise ErrNonFinite, ErrBadInterval,
// ErrTooFewN or ErrLevel. The Derivation has Method "sd_from_ci_t" and inputs
// lower, upper, n, level, t_quantile. Source: Cochrane Handbook chapter 6,
// section 6.5.2.
func SDFromCI(lower, upper float64, n int, level float64) (float64, Derivation, error) {
	switch {
	case !finite(lower) || !finite(upper):
		return math.NaN(), Derivation{}, ErrNonFinite
	case !(upper > lower):
		return math.NaN(), Derivation{}, ErrBadInterval
	case n < 2:
		return math.NaN(), Derivation{}, ErrTooFewN
	}
	if err := checkLevel(level); err != nil {
		return math.NaN(), Derivation{}, err
	}
	tq := tQuantile(1-(1-level)/2, float64(n-1))
	sd := math.Sqrt(float64(n)) * (upper - lower) / (2 * tq)
	return sd, Derivation{
		Method:     "sd_from_ci_t",
		Formula:    "sd = sqrt(n) (upper - lower) / (2 t_quantile), t_quantile = t_{1-(1-level)/2, n-1}",
		Inputs:     []NamedValue{{"lower", lower}, {"upper", upper}, {"n", float64(n)}, {"level", level}, {"t_quantile", tq}},
		Output:     []NamedValue{{"sd", sd}},
		Assumption: "the interval is a t-based interval for the group mean",
		Source:     sourceHandbookCh6,
	}, nil
}

// MeanSDFromMedianIQR estimates the mean and standard deviation of one group
// from its median and quartiles:
//
//	mean = (0.7 + 0.39/n) (q1 + q3)/2 + (0.3 - 0.39/n) median
//	sd   = (q3 - q1) / (2 Φ⁻¹((0.75 n - 0.125) / (n + 0.25)))
//
// Units: those of the outcome. The estimates assume an approximately normal,
// symmetric distribution (Assumption says so); for skewed outcomes they are
// biased. Needs finite values with q1 <= median <= q3, q1 < q3 and n >= 2,
// otherwise ErrNonFinite, ErrBadQuartiles or ErrTooFewN. The Derivation has
// Method "mean_sd_from_median_iqr" and inputs q1, median, q3, n. Sources:
// Wan et al. (2014) BMC Med Res Methodol 14:135 for the SD, Luo et al. (2018)
// Stat Methods Med Res 27:1785 for the mean.
func MeanSDFromMedianIQR(q1, median, q3 float64, n int) (mean, sd float64, d Derivation, err error) {
	nan := math.NaN()
	switch {
	case !finite(q1) || !finite(median) || !finite(q3):
		return nan, nan, Derivation{}, ErrNonFinite
	case !(q1 <= median && median <= q3 && q1 < q3):
		return nan, nan, Derivation{}, ErrBadQuartiles
	case n < 2:
		return nan, nan, Derivation{}, ErrTooFewN
	}
	nf := float64(n)
	mean = (0.7+0.39/nf)*(q1+q3)/2 + (0.3-0.39/nf)*median
	sd = (q3 - q1) / (2 * normalQuantile((0.75*nf-0.125)/(nf+0.25)))
	return mean, sd, Derivation{
		Method: "mean_sd_from_median_iqr",
		Formula: "mean = (0.7 + 0.39/n)(q1 + q3)/2 + (0.3 - 0.39/n) median; " +
			"sd = (q3 - q1) / (2 Φ⁻¹((0.75 n - 0.125)/(n + 0.25)))",
		Inputs:     []NamedValue{{"q1", q1}, {"median", median}, {"q3", q3}, {"n", nf}},
		Output:     []NamedValue{{"mean", mean}, {"sd", sd}},
		Assumption: assumptionNormal,
		Source:     sourceWanLuo,
	}, nil
}

// MeanSDFromMedianRange estimates the mean and standard deviation of one
// group from its median, minimum and maximum:
//
//	mean = 4/(4 + n^0.75) (min + max)/2 + n^0.75/(4 + n^0.75) median
//	sd   = (max - min) / (2 Φ⁻¹((n - 0.375) / (n + 0.25)))
//
// Units: those of the outcome. Same assumption, checks and sources as
// MeanSDFromMedianIQR (min <= median <= max, min < max, n >= 2). The
// Derivation has Method "mean_sd_from_median_range" and inputs min, median,
// max, n.
func MeanSDFromMedianRange(min, median, max float64, n int) (mean, sd float64, d Derivation, err error) {
	nan := math.NaN()
	switch {
	case !finite(min) || !finite(median) || !finite(max):
		return nan, nan, Derivation{}, ErrNonFinite
	case !(min <= median && median <= max && min < max):
		return nan, nan, Derivation{}, ErrBadQuartiles
	case n < 2:
		return nan, nan, Derivation{}, ErrTooFewN
	}
	nf := float64(n)
	p := math.Pow(nf, 0.75)
	mean = 4/(4+p)*(min+max)/2 + p/(4+p)*median
	sd = (max - min) / (2 * normalQuantile((nf-0.375)/(nf+0.25)))
	return mean, sd, Derivation{
		Method: "mean_sd_from_median_range",
		Formula: "mean = 4/(4 + n^0.75) (min + max)/2 + n^0.75/(4 + n^0.75) median; " +
			"sd = (max - min) / (2 Φ⁻¹((n - 0.375)/(n + 0.25)))",
		Inputs:     []NamedValue{{"min", min}, {"median", median}, {"max", max}, {"n", nf}},
		Output:     []NamedValue{{"mean", mean}, {"sd", sd}},
		Assumption: assumptionNormal,
		Source:     sourceWanLuo,
	}, nil
}

// SEFromCI returns the standard error of a between-group estimate from its
// confidence interval:
//
//	se = (upper - lower) / (2 q),  q = z_{1-(1-level)/2}      (df <= 0)
//	                               q = t_{1-(1-level)/2, df}  (df > 0)
//
// Units: those of the estimate. The interval must be symmetric on the scale
// given (raw for a mean difference). Needs finite limits with upper > lower
// and a level in (0, 1). The Derivation has Method "se_from_ci_normal" or
// "se_from_ci_t" and inputs lower, upper, level, df, quantile. Source:
// Cochrane Handbook chapter 6, section 6.3.
func SEFromCI(lower, upper, level float64, df int) (float64, Derivation, error) {
	switch {
	case !finite(lower) || !finite(upper):
		return math.NaN(), Derivation{}, ErrNonFinite
	case !(upper > lower):
		return math.NaN(), Derivation{}, ErrBadInterval
	}
	if err := checkLevel(level); err != nil {
		return math.NaN(), Derivation{}, err
	}
	p := 1 - (1-level)/2
	method, q := "se_from_ci_normal", normalQuantile(p)
	formula := "se = (upper - lower) / (2 z_{1-(1-level)/2})"
	if df > 0 {
		method, q = "se_from_ci_t", tQuantile(p, float64(df))
		formula = "se = (upper - lower) / (2 t_{1-(1-level)/2, df})"
	}
	return (upper - lower) / (2 * q), Derivation{
		Method:     method,
		Formula:    formula,
		Inputs:     []NamedValue{{"lower", lower}, {"upper", upper}, {"level", level}, {"df", float64(df)}, {"quantile", q}},
		Output:     []NamedValue{{"se", (upper - lower) / (2 * q)}},
		Assumption: "the interval is symmetric about the estimate",
		Source:     sourceHandbookCh6Sec63,
	}, nil
}

// SEFromP returns the standard error of a between-group estimate from its
// two-sided p-value:
//
//	se = |estimate| / q,  q = z_{1-p/2} (df <= 0)  or  t_{1-p/2, df} (df > 0)
//
// Units: those of the estimate. A p-value reported as a bound ("p < 0.001")
// or rounded gives only an approximate SE; the caller decides whether to use
// it. Needs a finite, non-zero estimate and 0 < p < 1, otherwise
// ErrNonFinite, ErrZeroEstimate or ErrBadP. The Derivation has Method
// "se_from_p_normal" or "se_from_p_t" and inputs estimate, p, df, quantile.
// Source: Cochrane Handbook chapter 6, section 6.3.
func SEFromP(estimate, p float64, df int) (float64, Derivation, error) {
	switch {
	case !finite(estimate) || math.IsNaN(p):
		return math.NaN(), Derivation{}, ErrNonFinite
	case estimate == 0:
		return math.NaN(), Derivation{}, ErrZeroEstimate
	case !(p > 0 && p < 1):
		return math.NaN(), Derivation{}, ErrBadP
	}
	method, q := "se_from_p_normal", normalQuantile(1-p/2)
	formula := "se = |estimate| / z_{1-p/2}"
	if df > 0 {
		method, q = "se_from_p_t", tQuantile(1-p/2, float64(df))
		formula = "se = |estimate| / t_{1-p/2, df}"
	}
	if !(q > 0) || math.IsInf(q, 0) {
		// p so close to 0 or 1 that the quantile is 0 or infinite.
		return math.NaN(), Derivation{}, ErrBadP
	}
	return math.Abs(estimate) / q, Derivation{
		Method:     method,
		Formula:    formula,
		Inputs:     []NamedValue{{"estimate", estimate}, {"p", p}, {"df", float64(df)}, {"quantile", q}},
		Output:     []NamedValue{{"se", math.Abs(estimate) / q}},
		Assumption: "the p-value is two-sided and exact, from a Wald-type test",
		Source:     sourceHandbookCh6Sec63,
	}, nil
}

// CombineArms merges several arms of one trial (for example two doses) into
// a single group, applying the two-group formula pairwise from left to right:
//
//	n    = n1 + n2
//	mean = (n1 mean1 + n2 mean2) / (n1 + n2)
//	sd   = sqrt(((n1-1) sd1² + (n2-1) sd2² + n1 n2/(n1+n2) (mean1 - mean2)²) / (n1 + n2 - 1))
//
// The result is the exact mean and SD of the pooled participants, so the
// order of the arms does not matter. Units: those of the outcome. One arm is
// returned unchanged. Each arm needs a finite mean, SD > 0 and N >= 2,
// otherwise an *ArmError naming "arm i" (1-based); no arms give ErrNoArms.
// The Derivation has Method "combine_arms" and inputs mean_i, sd_i, n_i for
// each arm in order. Source: Cochrane Handbook chapter 6, Table 6.5.a.
func CombineArms(arms []Arm) (Arm, Derivation, error) {
	if len(arms) == 0 {
		return Arm{}, Derivation{}, ErrNoArms
	}
	inputs := make([]NamedValue, 0, 3*len(arms))
	var acc Arm
	for i, a := range arms {
		name := "arm " + strconv.Itoa(i+1)
		if err := checkArm(a, name); err != nil {
			return Arm{}, Derivation{}, err
		}
		suffix := "_" + strconv.Itoa(i+1)
		inputs = append(inputs, NamedValue{"mean" + suffix, a.Mean}, NamedValue{"sd" + suffix, a.SD}, NamedValue{"n" + suffix, float64(a.N)})
		if i == 0 {
			acc = a
			continue
		}
		n1, n2 := float64(acc.N), float64(a.N)
		diff := acc.Mean - a.Mean
		ss := (n1-1)*acc.SD*acc.SD + (n2-1)*a.SD*a.SD + n1*n2/(n1+n2)*diff*diff
		acc = Arm{
			Mean: (n1*acc.Mean + n2*a.Mean) / (n1 + n2),
			SD:   math.Sqrt(ss / (n1 + n2 - 1)),
			N:    acc.N + a.N,
		}
	}
	return acc, Derivation{
		Method: "combine_arms",
		Formula: "pairwise: n = n1 + n2; mean = (n1 mean1 + n2 mean2)/(n1 + n2); " +
			"sd = sqrt(((n1-1) sd1² + (n2-1) sd2² + n1 n2/(n1+n2) (mean1 - mean2)²)/(n1 + n2 - 1))",
		Inputs: inputs,
		Output: []NamedValue{{"mean", acc.Mean}, {"sd", acc.SD}, {"n", float64(acc.N)}},
		Source: sourceHandbookTable65a,
	}, nil
}

// ChangeSD returns the standard deviation of the change from baseline from
// the baseline and final SDs and their correlation:
//
//	sdChange = sqrt(sdBaseline² + sdFinal² - 2 corr sdBaseline sdFinal)
//
// Units: those of the outcome. corr is the within-participant correlation of
// baseline and final values; it is rarely reported, and choosing a value
// (often 0.5) is the caller's decision, recorded in the Derivation. Needs
// finite SDs > 0 and corr in [-1, 1], otherwise ErrNonFinite,
// ErrNonPositiveSD or ErrBadCorrelation; a result of 0 (corr = 1 with equal
// SDs) is ErrDegenerateResult. The Derivation has Method
// "sd_change_from_correlation" and inputs sd_baseline, sd_final, corr.
// Source: Cochrane Handbook chapter 6, section 6.5.2 (imputing SDs of
// changes from baseline).
func ChangeSD(sdBaseline, sdFinal, corr float64) (float64, Derivation, error) {
	switch {
	case !finite(sdBaseline) || !finite(sdFinal) || math.IsNaN(corr):
		return math.NaN(), Derivation{}, ErrNonFinite
	case sdBaseline <= 0 || sdFinal <= 0:
		return math.NaN(), Derivation{}, ErrNonPositiveSD
	case corr < -1 || corr > 1:
		return math.NaN(), Derivation{}, ErrBadCorrelation
	}
	v := sdBaseline*sdBaseline + sdFinal*sdFinal - 2*corr*sdBaseline*sdFinal
	if !(v > 0) {
		return math.NaN(), Derivation{}, ErrDegenerateResult
	}
	return math.Sqrt(v), Derivation{
		Method:     "sd_change_from_correlation",
		Formula:    "sd_change = sqrt(sd_baseline² + sd_final² - 2 corr sd_baseline sd_final)",
		Inputs:     []NamedValue{{"sd_baseline", sdBaseline}, {"sd_final", sdFinal}, {"corr", corr}},
		Output:     []NamedValue{{"sd_change", math.Sqrt(v)}},
		Assumption: "the correlation between baseline and final values is as given",
		Source:     sourceHandbookCh6,
	}, nil
}
