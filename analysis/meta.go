package analysis

import (
	"fmt"
	"math"
)

// LeaveOneOut is the random-effects result (with Settings.Tau2) after
// omitting study Omitted (zero-based). The CI is the Wald (normal) interval;
// I2 is in percent and NaN when one study is left.
type LeaveOneOut struct {
	Omitted                               int
	Estimate, SE, CILow, CIHigh, Tau2, I2 float64
}

// MetaResult is the full analysis of one meta-analysis, as returned by Pool.
type MetaResult struct {
	K     int
	Level float64
	Fixed FixedResult
	Het   Heterogeneity
	// Random is the random-effects result with Settings.Tau2; it equals
	// the matching entry of ByMethod but has its own Weights slice.
	Random RandomResult
	// ByMethod holds the random-effects results for every tau² estimator
	// in the order DL, PM, REML; see MetaResult.ByTau2.
	ByMethod [3]RandomResult
	// LeaveOneOut has one entry per study (for k >= 2), in input order,
	// unless Settings.SkipLeaveOneOut is set.
	LeaveOneOut []LeaveOneOut
	// MostInfluential is the index of the study whose omission moves the
	// random-effects estimate furthest (ties: the lowest index); -1 when
	// k < 3 or leave-one-out was skipped.
	MostInfluential int
	// Warnings are plain sentences about what could not be computed and
	// why, non-convergence and small-k cautions.
	Warnings []string
}

// ByTau2 returns the random-effects result for the tau² estimator m and
// false if m is not one of Tau2DL, Tau2PM, Tau2REML.
func (r MetaResult) ByTau2(m Tau2Method) (RandomResult, bool) {
	i := methodIndex(m)
	if i < 0 {
		return RandomResult{}, false
	}
	return r.ByMethod[i], true
}

var methodNames = [3]string{"DerSimonian-Laird", "Paule-Mandel", "REML"}

// Pool runs the whole analysis of one meta-analysis: the fixed-effect
// estimate with Cochran's Q, I² and H² (see FixedEffect), random-effects
// estimates under the DerSimonian-Laird, Paule-Mandel and REML tau²
// estimators with Wald and HKSJ intervals, prediction interval and Q-profile
// CI of tau² (see RandomEffects and Tau2), and leave-one-out random-effects
// estimates under s.Tau2 with the most influential study.
//
// Scale: the scale of the effects (raw MD in outcome units or SMD); tau² is
// in squared units, weights and I² in percent.
//
// Edges: k = 1 returns that study as fixed and random estimate with tau² = 0
// and warns that heterogeneity and the random-effects spread cannot be
// estimated; k = 2 warns that tau² rests on one degree of freedom, that the
// HKSJ interval is very wide and that no prediction interval exists; when
// tau² is 0 the random-effects estimate equals the fixed-effect one. Every
// NaN in the result comes with a sentence in Warnings. Input errors are as
// for FixedEffect, with study names from s.Labels.
//
// Pool allocates its result slices in one block and reuses a scratch buffer
// for the leave-one-out fits; the tau² iterations allocate nothing.
func Pool(effects, seEffects []float64, s Settings) (MetaResult, error) {
	rs, err := s.resolve()
	if err != nil {
		return MetaResult{}, err
	}
	k := len(effects)
	if len(seEffects) != k {
		panic("analysis: slice length mismatch")
	}
	// Layout of buf: variances (k), fixed weights (k), random weights
	// (k), three method weights (3k), two leave-one-out scratch slices
	// (2(k-1)) and one for leave-one-out weights (k-1).
	buf := make([]float64, 6*k+3*max(k-1, 0))
	varY := buf[:k]
	if err := checkStudies(effects, seEffects, s.Labels, varY); err != nil {
		return MetaResult{}, err
	}
	off := k
	next := func(n int) []float64 {
		b := buf[off : off+n : off+n]
		off += n
		return b
	}
	c := newCritical(rs.level, k)
	res := MetaResult{K: k, Level: rs.level, MostInfluential: -1}
	res.Fixed, res.Het = fixedEffect(effects, varY, c.z, next(k))
	randomW := next(k)
	tauLo, tauHi := qProfileCI(effects, varY, c, rs)
	for i, m := range [3]Tau2Method{Tau2DL, Tau2PM, Tau2REML} {
		res.ByMethod[i] = randomEffects(effects, varY, m, c, rs, tauLo, tauHi, next(k))
	}
	res.Random = res.ByMethod[methodIndex(rs.method)]
	copy(randomW, res.Random.Weights)
	res.Random.Weights = randomW

	res.Warnings = poolWarnings(res, s.TruncateHKSJ)
	if !s.SkipLeaveOneOut && k >= 2 {
		looY, looVar, looW := next(k-1), next(k-1), next(k-1)
		res.LeaveOneOut = make([]LeaveOneOut, k)
		failed := 0
		for i := range k {
			copy(looY, effects[:i])
			copy(looY[i:], effects[i+1:])
			copy(looVar, varY[:i])
			copy(looVar[i:], varY[i+1:])
			res.LeaveOneOut[i] = leaveOneOut(looY, looVar, i, c, rs, looW)
			if math.IsNaN(res.LeaveOneOut[i].Estimate) {
				failed++
			}
		}
		if failed > 0 {
			res.Warnings = append(res.Warnings, fmt.Sprintf(
				"The %s tau² estimate did not converge in %d of the %d leave-one-out analyses; their estimates are missing.",
				methodNames[methodIndex(rs.method)], failed, k))
		}
		if k >= 3 && !math.IsNaN(res.Random.Estimate) {
			best := -1.0
			for i, l := range res.LeaveOneOut {
				if d := math.Abs(l.Estimate - res.Random.Estimate); d > best {
					best, res.MostInfluential = d, i
				}
			}
		}
	}
	return res, nil
}

// leaveOneOut fits the random-effects model to the studies in y, varY (one
// study omitted) with the method of s.
func leaveOneOut(y, varY []float64, omitted int, c critical, s settings, dstWeights []float64) LeaveOneOut {
	tau2, ok, _ := tau2By(y, varY, s.method, s)
	if !ok {
		nan := math.NaN()
		return LeaveOneOut{Omitted: omitted, Estimate: nan, SE: nan, CILow: nan, CIHigh: nan, Tau2: nan, I2: nan}
	}
	mu, sumW, _ := fixedCore(y, varY, tau2)
	seMu := 1 / math.Sqrt(sumW)
	_, _, q := fixedCore(y, varY, 0)
	return LeaveOneOut{
		Omitted:  omitted,
		Estimate: mu,
		SE:       seMu,
		CILow:    mu - c.z*seMu,
		CIHigh:   mu + c.z*seMu,
		Tau2:     tau2,
		I2:       i2Percent(q, len(y)),
	}
}

// poolWarnings returns the sentences that explain the NaNs and cautions of
// a pooled result.
func poolWarnings(r MetaResult, truncated bool) []string {
	var w []string
	switch r.K {
	case 1:
		w = append(w,
			"Only one study: heterogeneity (Q, I², H², tau²) and the random-effects spread cannot be estimated, so tau² is set to 0 and the random-effects result equals the single study.",
			"Only one study: the Hartung-Knapp-Sidik-Jonkman interval, the prediction interval and the confidence interval of tau² are not defined.")
	case 2:
		w = append(w,
			"Only two studies: tau² and I² rest on a single degree of freedom and are very unstable.",
			"Only two studies: the Hartung-Knapp-Sidik-Jonkman interval uses a t distribution with 1 degree of freedom and is very wide.",
			"Only two studies: the prediction interval needs at least three studies and is not defined.")
	case 3, 4:
		w = append(w, fmt.Sprintf("Only %d studies: tau² is imprecise and the prediction interval is wide.", r.K))
	}
	for i, m := range r.ByMethod {
		if !m.Converged {
			w = append(w, fmt.Sprintf(
				"The %s tau² estimate did not converge after %d iterations; its random-effects results are missing.",
				methodNames[i], m.Iterations))
		}
	}
	if r.K >= 2 && (math.IsNaN(r.Random.Tau2CILow) || math.IsNaN(r.Random.Tau2CIHigh)) && r.Random.Converged {
		w = append(w, "The Q-profile confidence interval of tau² could not be found within the iteration limit.")
	}
	if r.K >= 2 && !truncated && r.Random.HKSJScale < 1 {
		w = append(w, "The Hartung-Knapp-Sidik-Jonkman scale factor is below 1, so its interval is narrower than the Wald interval; it was not truncated.")
	}
	return w
}
