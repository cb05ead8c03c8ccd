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
		v := math.Round(i*step*1e9) / 1e9
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

// rect is an axis-aligned box in layout units.
type rect struct{ X0, Y0, X1, Y1 float64 }

// clipPolygon cuts a polygon to r (Sutherland-Hodgman: clip against each
// edge's half-plane in turn).
func clipPolygon(pts []pt, r rect) []pt {
	inside := []func(pt) bool{
		func(q pt) bool { return q.X >= r.X0 },
		func(q pt) bool { return q.X <= r.X1 },
		func(q pt) bool { return q.Y >= r.Y0 },
		func(q pt) bool { return q.Y <= r.Y1 },
	}
	cross := []func(a, b pt) pt{
		func(a, b pt) pt { return atX(a, b, r.X0) },
		func(a, b pt) pt { return atX(a, b, r.X1) },
		func(a, b pt) pt { return atY(a, b, r.Y0) },
		func(a, b pt) pt { return atY(a, b, r.Y1) },
	}
	out := pts
	for e := range inside {
		in := out
		out = nil
		for i, cur := range in {
			prev := in[(i+len(in)-1)%len(in)]
			switch ci, pi := inside[e](cur), inside[e](prev); {
			case ci && pi:
				out = append(out, cur)
			case ci && !pi:
				out = append(out, cross[e](prev, cur), cur)
			case !ci && pi:
				out = append(out, cross[e](prev, cur))
			}
		}
	}
	return out
}

// clipPolyline cuts a polyline to r, returning the pieces inside.
func clipPolyline(pts []pt, r rect) [][]pt {
	var out [][]pt
	var cur []pt
	for i := 1; i < len(pts); i++ {
		a, b, ok := clipSegment(pts[i-1], pts[i], r)
		if !ok {
			if len(cur) > 0 {
				out, cur = append(out, cur), nil
			}
			continue
		}
		if len(cur) == 0 {
			cur = append(cur, a)
		} else if cur[len(cur)-1] != a {
			out, cur = append(out, cur), []pt{a}
		}
		cur = append(cur, b)
	}
	if len(cur) > 0 {
		out = append(out, cur)
	}
	return out
}

// clipSegment cuts the segment a-b to r (Liang-Barsky).
func clipSegment(a, b pt, r rect) (pt, pt, bool) {
	t0, t1 := 0.0, 1.0
	dx, dy := b.X-a.X, b.Y-a.Y
	for _, c := range [][2]float64{{-dx, a.X - r.X0}, {dx, r.X1 - a.X}, {-dy, a.Y - r.Y0}, {dy, r.Y1 - a.Y}} {
		p, q := c[0], c[1]
		if p == 0 {
			if q < 0 {
				return a, b, false
			}
			continue
		}
		t := q / p
		if p < 0 {
			t0 = math.Max(t0, t)
		} else {
			t1 = math.Min(t1, t)
		}
		if t0 > t1 {
			return a, b, false
		}
	}
	return pt{a.X + t0*dx, a.Y + t0*dy}, pt{a.X + t1*dx, a.Y + t1*dy}, true
}

func atX(a, b pt, x float64) pt {
	t := (x - a.X) / (b.X - a.X)
	return pt{x, a.Y + t*(b.Y-a.Y)}
}

func atY(a, b pt, y float64) pt {
	t := (y - a.Y) / (b.Y - a.Y)
	return pt{a.X + t*(b.X-a.X), y}
}
