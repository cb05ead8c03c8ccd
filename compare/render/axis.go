package render

import "math"

// scale maps data values on [Lo, Hi] linearly to layout positions on
// [From, To]; To < From flips the direction.
type scale struct {
	Lo, Hi   float64
	From, To float64
}

func (s scale) at(v float64) float64 {
	if s.Hi == s.Lo {
		return (s.From + s.To) / 2
	}
	return s.From + (v-s.Lo)/(s.Hi-s.Lo)*(s.To-s.From)
}

// niceStep rounds a raw tick step up to 1, 2 or 5 times a power of ten.
//
//	e = floor(log10(raw)), f = raw / 10^e,
//	step = 10^e × (1 if f ≤ 1, 2 if f ≤ 2, 5 if f ≤ 5, else 10)
func niceStep(raw float64) float64 {
	if !(raw > 0) || math.IsInf(raw, 0) {
		return 1
	}
	e := math.Floor(math.Log10(raw))
	f := raw / math.Pow(10, e)
	var m float64
	switch {
	case f <= 1:
		m = 1
	case f <= 2:
		m = 2
	case f <= 5:
		m = 5
	default:
		m = 10
	}
	return m * math.Pow(10, e)
}

// niceRange widens [lo, hi] to whole multiples of a nice step chosen so
// that about n intervals cover it:
//
//	step = niceStep((hi - lo) / n),
//	[floor(lo/step)·step, ceil(hi/step)·step]
//
// A degenerate range (lo == hi) is widened by one unit of its magnitude
// (or by 1 around zero) first.
func niceRange(lo, hi float64, n int) (nlo, nhi, step float64) {
	if hi < lo {
		lo, hi = hi, lo
	}
	if hi == lo {
		d := math.Abs(lo)
		if d == 0 {
			d = 1
		}
		lo, hi = lo-d/2, hi+d/2
	}
	step = niceStep((hi - lo) / float64(n))
	nlo = math.Floor(lo/step+1e-9) * step
	nhi = math.Ceil(hi/step-1e-9) * step
	return nlo, nhi, step
}

// ticks lists the multiples of step on [lo, hi], cleaned of rounding
// noise.
func ticks(lo, hi, step float64) []float64 {
	var out []float64
	for i := math.Ceil(lo/step - 1e-9); i*step <= hi+step*1e-9; i++ {
		v := math.Round(i*step/step*1e9) / 1e9 * step
		v = math.Round(i*step*1e9) / 1e9
		if v == 0 {
			v = 0
		}
		out = append(out, v)
	}
	return out
}

// tickLabel formats a tick value with as many decimals as its step needs.
func tickLabel(v, step float64) string {
	d := 0
	for s := step; d < 6 && math.Abs(s-math.Round(s)) > 1e-9; s *= 10 {
		d++
	}
	return fmtFixed(v, d)
}

// extent tracks the smallest and largest of the values it is given,
// ignoring NaN and infinities.
type extent struct {
	lo, hi float64
	ok     bool
}

func (e *extent) add(vs ...float64) {
	for _, v := range vs {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		if !e.ok {
			e.lo, e.hi, e.ok = v, v, true
			continue
		}
		e.lo = math.Min(e.lo, v)
		e.hi = math.Max(e.hi, v)
	}
}

func (e *extent) addPtr(ps ...*float64) {
	for _, p := range ps {
		if p != nil {
			e.add(*p)
		}
	}
}
