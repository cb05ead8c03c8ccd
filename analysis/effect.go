package analysis

import (
	"math"
)

// Derivation records how one number was derived, for the audit trail: the
// values that went in and the values that came out. JSON keys are
// snake_case like every other key of the output.
type Derivation struct {
	Method     string       `json:"method"`     // machine name, e.g. "sd_from_se", "md_from_arms", "hedges_g"
	Formula    string       `json:"formula"`    // human-readable formula
	Inputs     []NamedValue `json:"inputs"`     // in a fixed order documented by the producing function
	Output     []NamedValue `json:"output"`     // the step's result(s), in a fixed order
	Assumption string       `json:"assumption"` // "" when none
	Source     string       `json:"source"`     // citation
}

// NamedValue is one named input or output of a Derivation.
type NamedValue struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
}

// Arm holds the summary statistics of one group of a trial at one time
// point: the mean and standard deviation of the outcome, in the outcome's
// units, and the number of participants analysed.
type Arm struct {
	Mean, SD float64
	N        int
}

// Effect is a between-group effect estimate with its standard error (SE is
// the standard error of Estimate, on the same scale) and the derivations
// that produced it.
type Effect struct {
	Estimate, SE float64
	Derivations  []Derivation
}

const (
	sourceBorensteinCh4 = "Borenstein, Hedges, Higgins & Rothstein (2009) Introduction to Meta-Analysis, Wiley, chapter 4"
)

func checkArm(a Arm, name string) error {
	switch {
	case math.IsNaN(a.Mean) || math.IsInf(a.Mean, 0):
		return &ArmError{Arm: name, Field: "mean", Err: ErrNonFinite}
	case math.IsNaN(a.SD) || math.IsInf(a.SD, 0):
		return &ArmError{Arm: name, Field: "sd", Err: ErrNonFinite}
	case a.SD <= 0:
		return &ArmError{Arm: name, Field: "sd", Err: ErrNonPositiveSD}
	case a.N < 2:
		return &ArmError{Arm: name, Field: "n", Err: ErrTooFewN}
	}
	return nil
}

func armInputs(treat, ctrl Arm) []NamedValue {
	return []NamedValue{
		{"treat_mean", treat.Mean}, {"treat_sd", treat.SD}, {"treat_n", float64(treat.N)},
		{"ctrl_mean", ctrl.Mean}, {"ctrl_sd", ctrl.SD}, {"ctrl_n", float64(ctrl.N)},
	}
}

// MeanDifference returns the raw mean difference of two independent arms
// and its standard error, without assuming equal variances:
//
//	md   = mean_t - mean_c
//	seMD = sqrt(sd_t²/n_t + sd_c²/n_c)
//
// Scale: raw, in the outcome's units. The Derivation has Method
// "md_from_arms" and inputs treat_mean, treat_sd, treat_n, ctrl_mean,
// ctrl_sd, ctrl_n. Each arm needs a finite mean, SD > 0 and N >= 2, otherwise
// an *ArmError is returned. Source: Borenstein et al. (2009) chapter 4
// (the unequal-variance form of the standard error).
func MeanDifference(treat, ctrl Arm) (Effect, error) {
	if err := checkArm(treat, "treat"); err != nil {
		return Effect{}, err
	}
	if err := checkArm(ctrl, "ctrl"); err != nil {
		return Effect{}, err
	}
	md := treat.Mean - ctrl.Mean
	seMD := math.Sqrt(treat.SD*treat.SD/float64(treat.N) + ctrl.SD*ctrl.SD/float64(ctrl.N))
	return Effect{
		Estimate: md,
		SE:       seMD,
		Derivations: []Derivation{{
			Method:  "md_from_arms",
			Formula: "md = treat_mean - ctrl_mean; se = sqrt(treat_sd²/treat_n + ctrl_sd²/ctrl_n)",
			Inputs:  armInputs(treat, ctrl),
			Output:  []NamedValue{{"md", md}, {"se", seMD}},
			Source:  sourceBorensteinCh4,
		}},
	}, nil
}

// HedgesG returns the standardized mean difference with the small-sample
// correction (Hedges' g) and its standard error:
//
//	sdPooled = sqrt(((n_t-1) sd_t² + (n_c-1) sd_c²) / (n_t + n_c - 2))
//	d        = (mean_t - mean_c) / sdPooled
//	varD     = (n_t + n_c)/(n_t n_c) + d² / (2 (n_t + n_c))
//	J        = 1 - 3 / (4 (n_t + n_c) - 9)
//	g        = J d
//	varG     = J² varD,  seG = sqrt(varG)
//
// Scale: raw, in units of the pooled within-group SD. Source: Borenstein et
// al. (2009) chapter 4, equations 4.18 to 4.24.
//
// Other variance variants are in use: some divide d² by 2(n_t + n_c - 2)
// instead of 2(n_t + n_c), some compute the variance from g instead of d, and
// some use the exact gamma-function form of J instead of the approximation
// above. This function uses the approximate J and the d-based variance with
// 2(n_t + n_c) in the denominator, exactly as written in the book. Each arm
// needs a finite mean, SD > 0 and N >= 2 (so n_t + n_c >= 4 and J > 0),
// otherwise an *ArmError is returned. The Derivation has Method "hedges_g" and
// the same six inputs as MeanDifference.
func HedgesG(treat, ctrl Arm) (Effect, error) {
	if err := checkArm(treat, "treat"); err != nil {
		return Effect{}, err
	}
	if err := checkArm(ctrl, "ctrl"); err != nil {
		return Effect{}, err
	}
	n1, n2 := float64(treat.N), float64(ctrl.N)
	sdPooled := math.Sqrt(((n1-1)*treat.SD*treat.SD + (n2-1)*ctrl.SD*ctrl.SD) / (n1 + n2 - 2))
	d := (treat.Mean - ctrl.Mean) / sdPooled
	varD := (n1+n2)/(n1*n2) + d*d/(2*(n1+n2))
	j := 1 - 3/(4*(n1+n2)-9)
	g := j * d
	varG := j * j * varD
	return Effect{
		Estimate: g,
		SE:       math.Sqrt(varG),
		Derivations: []Derivation{{
			Method: "hedges_g",
			Formula: "sd_pooled = sqrt(((treat_n-1) treat_sd² + (ctrl_n-1) ctrl_sd²)/(treat_n+ctrl_n-2)); " +
				"d = (treat_mean-ctrl_mean)/sd_pooled; var_d = (treat_n+ctrl_n)/(treat_n ctrl_n) + d²/(2(treat_n+ctrl_n)); " +
				"J = 1 - 3/(4(treat_n+ctrl_n)-9); g = J d; se = J sqrt(var_d)",
			Inputs: armInputs(treat, ctrl),
			Output: []NamedValue{{"sd_pooled", sdPooled}, {"g", g}, {"se", math.Sqrt(varG)}},
			Source: sourceBorensteinCh4 + ", equations 4.18-4.24",
		}},
	}, nil
}
