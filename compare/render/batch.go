package render

import (
	"fmt"
	"io"
	"math"
)

// ShiftHistogram is the distribution across reviews of the oriented
// overstatement of the benefit in SD units (compare.Shift.OverstatementSD:
// favourable · (published - augmented) / SD, positive when the
// published-only analysis overstates the benefit).
type ShiftHistogram struct {
	Title    string
	ShiftsSD []float64 // NaN and infinite values are skipped
}

// ShiftScatter is each review's oriented overstatement against its
// published-only estimate. Published should be on a common oriented scale
// across reviews (favourable · estimate in SD units, as SMD or MD / pooled
// SD, positive favouring the intervention) for the picture to compare
// reviews; ShiftSD holds the overstatements (positive: published
// overstates).
type ShiftScatter struct {
	Title     string
	XLabel    string // zero means the oriented published-only estimate in SD units
	Published []float64
	ShiftSD   []float64
	Labels    []string // optional, one per point
}

// ShiftHistogramSVG writes the histogram of shiftsSD as SVG.
func ShiftHistogramSVG(w io.Writer, shiftsSD []float64) error {
	return SVG(w, ShiftHistogram{ShiftsSD: shiftsSD})
}

// ShiftScatterSVG writes shift against published-only estimate as SVG. The
// slices must have the same length (labels may be nil).
func ShiftScatterSVG(w io.Writer, published, shiftSD []float64, labels []string) error {
	if len(published) != len(shiftSD) || labels != nil && len(labels) != len(published) {
		return fmt.Errorf("shift scatter: %d published estimates, %d shifts and %d labels", len(published), len(shiftSD), len(labels))
	}
	return SVG(w, ShiftScatter{Published: published, ShiftSD: shiftSD, Labels: labels})
}

// Geometry of the batch figures.
const (
	batchW      = 640.0
	batchH      = 420.0
	batchLeft   = 70.0
	batchRight  = 616.0
	batchTop    = 50.0
	batchBottom = 350.0
)

func finite(xs []float64) []float64 {
	out := make([]float64, 0, len(xs))
	for _, x := range xs {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			out = append(out, x)
		}
	}
	return out
}

func (h ShiftHistogram) size() (float64, float64) { return batchW, batchH }
func (h ShiftHistogram) title() string {
	if h.Title != "" {
		return h.Title
	}
	return "Overstatement of the benefit across reviews"
}

// histogramBins chooses bins with edges at multiples of a nice width,
// about 8 bins over the range, always including 0 as an edge:
//
//	[lo, hi] = niceRange(min(xs, 0), max(xs, 0), 8), width = step,
//	bin i holds lo + i·width ≤ x < lo + (i+1)·width (the last bin is closed).
func histogramBins(xs []float64) (lo, width float64, counts []int) {
	var ex extent
	ex.add(0)
	ex.add(xs...)
	lo, hi, width := niceRange(ex.lo, ex.hi, 8)
	n := int(math.Round((hi - lo) / width))
	if n < 1 {
		n = 1
	}
	counts = make([]int, n)
	for _, x := range xs {
		i := int(math.Floor((x - lo) / width))
		if i >= n {
			i = n - 1
		}
		if i < 0 {
			i = 0
		}
		counts[i]++
	}
	return lo, width, counts
}

func (h ShiftHistogram) draw(p painter) {
	xs := finite(h.ShiftsSD)
	p.text(pt{batchLeft, 28}, truncate(h.title(), batchRight-batchLeft, 15), textStyle{Size: 15, Bold: true, Color: colInk})
	lo, width, counts := histogramBins(xs)
	hi := lo + width*float64(len(counts))
	maxC := 1
	for _, c := range counts {
		if c > maxC {
			maxC = c
		}
	}
	cStep := niceStep(float64(maxC) / 5)
	if cStep < 1 {
		cStep = 1
	}
	cTop := math.Ceil(float64(maxC)/cStep) * cStep
	x := scale{Lo: lo, Hi: hi, From: batchLeft, To: batchRight}
	y := scale{Lo: 0, Hi: cTop, From: batchBottom, To: batchTop}
	p.begin("grid")
	for _, v := range ticks(0, cTop, cStep) {
		p.line(pt{batchLeft, y.at(v)}, pt{batchRight, y.at(v)}, style{Stroke: colRule, Width: 0.8})
		p.text(pt{batchLeft - 8, y.at(v) + 4}, tickLabel(v, cStep), textStyle{Size: 11, Anchor: anchorEnd, Color: colInk})
	}
	p.end()
	p.begin("bars")
	for i, c := range counts {
		if c == 0 {
			continue
		}
		x0, x1 := x.at(lo+float64(i)*width)+1, x.at(lo+float64(i+1)*width)-1
		// One colour, with an outline so that greyscale keeps the edges;
		// the side of 0 says which way the published evidence errs.
		p.poly([]pt{{x0, y.at(0)}, {x1, y.at(0)}, {x1, y.at(float64(c))}, {x0, y.at(float64(c))}}, true,
			style{Fill: colSky, FillOpacity: 1, Stroke: colBlue, Width: 1.2})
	}
	p.end()
	drawBatchXAxis(p, x, width, "Overstatement, SD: \u2190 published understates | published overstates the benefit \u2192")
	p.begin("null")
	p.line(pt{x.at(0), batchTop}, pt{x.at(0), batchBottom}, style{Stroke: colInk, Width: 1.2, Dash: []float64{5, 3}})
	p.end()
	p.text(pt{18, (batchTop + batchBottom) / 2}, "Reviews", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk, Up: true})
	note := fmt.Sprintf("%d reviews", len(xs))
	if len(xs) == 0 {
		note = "No review has an overstatement in SD units"
	}
	p.text(pt{batchRight, 28}, note, textStyle{Size: 11.5, Anchor: anchorEnd, Color: colMuted})
}

func drawBatchXAxis(p painter, x scale, step float64, label string) {
	p.begin("axis x")
	p.line(pt{batchLeft, batchBottom}, pt{batchRight, batchBottom}, style{Stroke: colInk, Width: 1})
	for _, v := range ticks(x.Lo, x.Hi, step) {
		xx := x.at(v)
		p.line(pt{xx, batchBottom}, pt{xx, batchBottom + 5}, style{Stroke: colInk, Width: 1})
		p.text(pt{xx, batchBottom + 19}, tickLabel(v, step), textStyle{Size: 11, Anchor: anchorMiddle, Color: colInk})
	}
	p.text(pt{(batchLeft + batchRight) / 2, batchBottom + 42}, label, textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk})
	p.end()
}

func (s ShiftScatter) size() (float64, float64) { return batchW, batchH }
func (s ShiftScatter) title() string {
	if s.Title != "" {
		return s.Title
	}
	return "Overstatement against the published-only estimate"
}

func (s ShiftScatter) draw(p painter) {
	p.text(pt{batchLeft, 28}, truncate(s.title(), batchRight-batchLeft, 15), textStyle{Size: 15, Bold: true, Color: colInk})
	n := len(s.Published)
	if len(s.ShiftSD) < n {
		n = len(s.ShiftSD)
	}
	var ex, ey extent
	ex.add(0)
	ey.add(0)
	for i := 0; i < n; i++ {
		if finite([]float64{s.Published[i], s.ShiftSD[i]}) == nil || len(finite([]float64{s.Published[i], s.ShiftSD[i]})) < 2 {
			continue
		}
		ex.add(s.Published[i])
		ey.add(s.ShiftSD[i])
	}
	xlo, xhi, xstep := niceRange(ex.lo, ex.hi, 6)
	ylo, yhi, ystep := niceRange(ey.lo, ey.hi, 5)
	x := scale{Lo: xlo, Hi: xhi, From: batchLeft, To: batchRight}
	y := scale{Lo: ylo, Hi: yhi, From: batchBottom, To: batchTop}
	p.begin("grid")
	for _, v := range ticks(ylo, yhi, ystep) {
		p.line(pt{batchLeft, y.at(v)}, pt{batchRight, y.at(v)}, style{Stroke: colRule, Width: 0.8})
		p.text(pt{batchLeft - 8, y.at(v) + 4}, tickLabel(v, ystep), textStyle{Size: 11, Anchor: anchorEnd, Color: colInk})
	}
	p.end()
	xl := s.XLabel
	if xl == "" {
		xl = "Published-only estimate (SD units, positive favours the intervention)"
	}
	drawBatchXAxis(p, x, xstep, xl)
	p.begin("null")
	p.line(pt{batchLeft, y.at(0)}, pt{batchRight, y.at(0)}, style{Stroke: colInk, Width: 1.2, Dash: []float64{5, 3}})
	p.line(pt{x.at(0), batchTop}, pt{x.at(0), batchBottom}, style{Stroke: colInk, Width: 0.9})
	p.end()
	p.text(pt{18, (batchTop + batchBottom) / 2}, "Overstatement (SD; up: published overstates)", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk, Up: true})
	drawn := 0
	for i := 0; i < n; i++ {
		if len(finite([]float64{s.Published[i], s.ShiftSD[i]})) < 2 {
			continue
		}
		c := pt{x.at(s.Published[i]), y.at(s.ShiftSD[i])}
		p.begin("mark review")
		drawMark(p, MarkPublished, c, 5)
		if i < len(s.Labels) && s.Labels[i] != "" {
			p.text(pt{c.X + 8, c.Y - 6}, truncate(s.Labels[i], 140, 10.5), textStyle{Size: 10.5, Color: colMuted})
		}
		p.end()
		drawn++
	}
	if drawn == 0 {
		p.text(pt{(batchLeft + batchRight) / 2, (batchTop + batchBottom) / 2}, "No review to draw", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk})
	}
}
