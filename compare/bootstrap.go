package compare

import (
	"hash/fnv"
	"math/rand/v2"
	"slices"
)

// bootstrapShift fills the percentile bootstrap interval of the shift.
//
// Each replicate draws k_published studies with replacement from the
// published studies and k_added from the registry-only trials (resampling
// within each subgroup, so every replicate has both), pools the published
// draw and the published plus registry draw with the audit's tau²
// estimator (random effects, inverse variance) and records
//
//	shift* = mu*(augmented) - mu*(published)
//
// The interval is the α/2 and 1-α/2 quantiles of the replicates that could
// be pooled (sample quantile type 7, linear interpolation), with α = 1 -
// level (Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 13).
// Replicates whose tau² does not converge are counted in BootFailed and
// left out; when more than half fail no interval is given.
//
// Randomness: a PCG generator seeded with (opts.Seed, FNV-1a hash of the
// review id), so a review's interval does not depend on which other
// reviews are audited or in which order.
func bootstrapShift(s *Shift, studies []StudyEffect, kPub int, reviewID string, opts Options) {
	n := opts.Bootstrap
	s.BootReplicates = n
	rng := reviewRand(opts.Seed, reviewID)
	k := len(studies)
	kAdd := k - kPub
	y := make([]float64, k)
	seY := make([]float64, k)
	shifts := make([]float64, 0, n)
	m := opts.tau2()
	for range n {
		for i := range kPub {
			j := rng.IntN(kPub)
			y[i], seY[i] = studies[j].Effect, studies[j].SE
		}
		for i := range kAdd {
			j := kPub + rng.IntN(kAdd)
			y[kPub+i], seY[kPub+i] = studies[j].Effect, studies[j].SE
		}
		muP, _, _, okP := poolRE(y[:kPub], seY[:kPub], m)
		muA, _, _, okA := poolRE(y, seY, m)
		if !okP || !okA {
			s.BootFailed++
			continue
		}
		shifts = append(shifts, muA-muP)
	}
	if len(shifts) == 0 || 2*s.BootFailed > n {
		return
	}
	slices.Sort(shifts)
	a := 1 - opts.level()
	s.BootCILow, s.BootCIHigh = opt(quantile7(shifts, a/2)), opt(quantile7(shifts, 1-a/2))
}

// reviewRand is the review's own random stream.
func reviewRand(seed uint64, reviewID string) *rand.Rand {
	h := fnv.New64a()
	h.Write([]byte(reviewID))
	return rand.New(rand.NewPCG(seed, h.Sum64()))
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
