package bias

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// RankCorrelation is the result of Begg's rank-correlation test.
type RankCorrelation struct {
	// Tau is Kendall's tau-b between the standardized deviates and the
	// variances; Z is Kendall's S divided by its tie-corrected standard
	// deviation and P its two-sided normal p value.
	Tau, Z, P float64
	// S is Kendall's S: concordant minus discordant pairs.
	S float64
	// TiedDeviatePairs and TiedVariancePairs count pairs of studies with
	// equal deviates or equal variances.
	TiedDeviatePairs, TiedVariancePairs int
	// Ties says in words how ties were handled.
	Ties string
	// K is the number of studies.
	K int
	// Warnings holds plain sentences about the use of the test.
	Warnings []string
}

// Begg runs the rank-correlation test for funnel-plot asymmetry of Begg and
// Mazumdar (1994, Biometrics 50:1088-1101). Each effect is standardized
// against the fixed-effect estimate,
//
//	t_i = (y_i - mu_FE) / sqrt(v_i - v_FE),  v_i = se_i²,  v_FE = 1/Σ(1/v_i),
//
// and Kendall's rank correlation between t_i and v_i is computed. With
// C concordant and D discordant pairs, S = C - D,
//
//	tau-b = S / sqrt((n0 - n1)(n0 - n2)),  n0 = k(k-1)/2,
//	n1 = Σ t(t-1)/2 over groups of tied deviates, n2 likewise for variances,
//
// and the p value comes from the normal approximation Z = S / sd(S) without
// continuity correction, with the variance of S corrected for ties in both
// rankings (Kendall & Gibbons, Rank Correlation Methods, 5th ed., 1990,
// ch. 4):
//
//	var(S) = [k(k-1)(2k+5) - Σ t(t-1)(2t+5) - Σ u(u-1)(2u+5)] / 18
//	       + [Σ t(t-1)(t-2)] [Σ u(u-1)(u-2)] / [9 k(k-1)(k-2)]
//	       + [Σ t(t-1)] [Σ u(u-1)] / [2 k(k-1)],
//
// t and u being the sizes of tied groups of deviates and of variances. This
// is the tau-b variant with the asymptotic p value of
// scipy.stats.kendalltau(variant="b", method="asymptotic"). Ties are exact
// equality of the floating-point values; a pair tied in both counts neither
// as concordant nor as discordant.
//
// Positive Tau means larger variances go with larger standardized effects.
// Units: effects and standard errors on the raw scale. Edges: k < 3 is an
// error; all variances equal (or all deviates equal) leaves var(S)
// undefined and is an error. With fewer than 10 studies the test runs but
// Warnings says it has very low power.
func Begg(effects, seEffects []float64) (RankCorrelation, error) {
	if err := checkStudies(effects, seEffects, 3); err != nil {
		return RankCorrelation{}, fmt.Errorf("rank correlation test: %w", err)
	}
	k := len(effects)
	fe, varFE := fixedEffect(effects, seEffects)
	buf := make([]float64, 3*k)
	dev, varEffect, sorted := buf[:k], buf[k:2*k], buf[2*k:]
	for i, y := range effects {
		varEffect[i] = seEffects[i] * seEffects[i]
		dev[i] = (y - fe) / math.Sqrt(varEffect[i]-varFE)
	}
	var c, d int
	for i := 0; i < k; i++ {
		for j := i + 1; j < k; j++ {
			p := (dev[i] - dev[j]) * (varEffect[i] - varEffect[j])
			switch {
			case p > 0:
				c++
			case p < 0:
				d++
			}
		}
	}
	copy(sorted, dev)
	a1, a2, a3 := tieSums(sorted)
	copy(sorted, varEffect)
	b1, b2, b3 := tieSums(sorted)
	n := float64(k)
	n0 := n * (n - 1) / 2
	// a1 = Σ t(t-1), a2 = Σ t(t-1)(t-2), a3 = Σ t(t-1)(2t+5); likewise b.
	varS := (n*(n-1)*(2*n+5)-a3-b3)/18 +
		a2*b2/(9*n*(n-1)*(n-2)) +
		a1*b1/(2*n*(n-1))
	denomTau := math.Sqrt((n0 - a1/2) * (n0 - b1/2))
	if !(varS > 0) || !(denomTau > 0) {
		return RankCorrelation{}, fmt.Errorf("rank correlation test: all deviates or all variances tied: %w", ErrConstantRegressor)
	}
	s := float64(c - d)
	z := s / math.Sqrt(varS)
	r := RankCorrelation{
		Tau:               s / denomTau,
		Z:                 z,
		P:                 2 * distuv.UnitNormal.Survival(math.Abs(z)),
		S:                 s,
		TiedDeviatePairs:  int(a1 / 2),
		TiedVariancePairs: int(b1 / 2),
		K:                 k,
	}
	if a1 == 0 && b1 == 0 {
		r.Ties = "no ties; tau-b equals tau-a"
	} else {
		r.Ties = fmt.Sprintf("%d tied pairs of deviates, %d of variances; tau-b with tie-corrected variance of S",
			r.TiedDeviatePairs, r.TiedVariancePairs)
	}
	if k < eggerMinRecommendedK {
		r.Warnings = append(r.Warnings, fmt.Sprintf(
			"rank correlation test (Begg & Mazumdar 1994) with %d studies: it has very low power, and tests for funnel-plot asymmetry are not recommended with fewer than %d studies",
			k, eggerMinRecommendedK))
	}
	return r, nil
}

// tieSums sorts x in place and returns, over groups of t equal values,
// Σ t(t-1), Σ t(t-1)(t-2) and Σ t(t-1)(2t+5).
func tieSums(x []float64) (s1, s2, s3 float64) {
	slices.Sort(x)
	for i := 0; i < len(x); {
		j := i + 1
		for j < len(x) && x[j] == x[i] {
			j++
		}
		if t := float64(j - i); t > 1 {
			s1 += t * (t - 1)
			s2 += t * (t - 1) * (t - 2)
			s3 += t * (t - 1) * (2*t + 5)
		}
		i = j
	}
	return s1, s2, s3
}
