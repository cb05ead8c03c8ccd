package analysis

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// quantileTol is the relative step at which the Newton refinements of the t
// and chi-square quantiles stop: a few units in the last place.
const quantileTol = 4e-16

// quantileMaxIter caps the Newton refinements; from the starting values
// below they need two to five steps.
const quantileMaxIter = 50

// normalQuantile returns the standard normal quantile at p.
func normalQuantile(p float64) float64 {
	return distuv.UnitNormal.Quantile(p)
}

// tQuantile returns the quantile at p in (0, 1) of Student's t with df > 0
// degrees of freedom. df = 1 and 2 use the closed forms; otherwise the
// Cornish-Fisher expansion about the normal quantile (Abramowitz & Stegun
// 1964, 26.7.5) is refined by Newton steps on the upper-tail probability,
// which is several times faster than inverting the incomplete beta function
// directly and as accurate.
func tQuantile(p float64, df float64) float64 {
	if p == 0.5 {
		return 0
	}
	// Work with the upper-tail probability of |x| so that neither tail
	// loses digits to 1 - p.
	sign, tail := 1.0, 1-p
	if p < 0.5 {
		sign, tail = -1, p
	}
	switch df {
	case 1:
		return sign / math.Tan(math.Pi*tail)
	case 2:
		return sign * (1 - 2*tail) / math.Sqrt(2*tail*(1-tail))
	}
	z := -normalQuantile(tail)
	z2 := z * z
	g1 := (z2 + 1) * z / 4
	g2 := ((5*z2+16)*z2 + 3) * z / 96
	g3 := (((3*z2+19)*z2+17)*z2 - 15) * z / 384
	g4 := ((((79*z2+776)*z2+1482)*z2-1920)*z2 - 945) * z / 92160
	x := z + (g1+(g2+(g3+g4/df)/df)/df)/df
	dist := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}
	for range quantileMaxIter {
		// d/dx Survival(x) = -pdf(x).
		step := (dist.Survival(x) - tail) / dist.Prob(x)
		if math.IsNaN(step) || math.IsInf(step, 0) {
			return dist.Quantile(p)
		}
		next := x + step
		if next <= 0 {
			next = x / 2
		}
		if math.Abs(next-x) <= quantileTol*next {
			return sign * next
		}
		x = next
	}
	return dist.Quantile(p)
}

// chiSquareQuantile returns the quantile at p in (0, 1) of the chi-square
// distribution with df > 0 degrees of freedom. df = 1 and 2 use closed forms
// (the squared normal quantile and the exponential); otherwise the
// Wilson-Hilferty approximation is refined by Newton steps on log x, which
// keep x positive.
func chiSquareQuantile(p float64, df float64) float64 {
	switch df {
	case 1:
		z := normalQuantile(0.5 + p/2)
		return z * z
	case 2:
		return -2 * math.Log1p(-p)
	}
	dist := distuv.ChiSquared{K: df}
	z := normalQuantile(p)
	c := 2 / (9 * df)
	x := df * math.Pow(math.Max(1-c+z*math.Sqrt(c), 0.1), 3)
	upper := p > 0.5
	for range quantileMaxIter {
		// Newton on u = log x: d/du CDF(e^u) = x pdf(x).
		var diff float64
		if upper {
			diff = (1 - p) - dist.Survival(x)
		} else {
			diff = dist.CDF(x) - p
		}
		step := diff / (x * dist.Prob(x))
		if math.IsNaN(step) || math.IsInf(step, 0) {
			return dist.Quantile(p)
		}
		step = math.Max(-1, math.Min(1, step)) // at most a factor e per step
		next := x * math.Exp(-step)
		if math.Abs(next-x) <= quantileTol*next {
			return next
		}
		x = next
	}
	return dist.Quantile(p)
}
