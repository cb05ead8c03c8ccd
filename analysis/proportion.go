package analysis

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

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
