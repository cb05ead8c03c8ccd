package render

import (
	"math"

	"unshelved/compare"
)

// FunnelPoint is one study of a funnel plot.
type FunnelPoint struct {
	Study  string
	Effect float64 // on the review's measure
	SE     float64 // standard error of Effect; must be > 0
	Kind   MarkKind
}

// Contour is a pair of significance lines effect = ±Z·SE around the null;
// Level is the two-sided p value they mark (0.05 for 5%).
type Contour struct {
	Level float64
	Z     float64
}

// EggerPoint is one point of Egger's fitted line, drawn in funnel
// coordinates: at standard error SE the line's effect is Effect, with a
// 95% band from Low to High.
type EggerPoint struct {
	SE, Effect, Low, High float64
}

// DefaultContours are the two-sided 10%, 5% and 1% lines. The z values are
// the normal quantiles Φ⁻¹(1 − p/2) (Python 3.11:
// statistics.NormalDist().inv_cdf(0.95), (0.975), (0.995)).
var DefaultContours = []Contour{
	{Level: 0.10, Z: 1.6448536269514722},
	{Level: 0.05, Z: 1.959963984540054},
	{Level: 0.01, Z: 2.5758293035489004},
}

// FunnelInput is everything a funnel plot draws. Nil pointers and empty
// slices are left out of the picture.
type FunnelInput struct {
	Title  string
	XLabel string // the measure and unit, see MeasureLabel
	Points []FunnelPoint
	// Contours are the significance lines; nil means DefaultContours.
	Contours []Contour
	// Published and Augmented are the pooled random-effects estimates
	// drawn as vertical lines; Augmented is nil without registry trials.
	Published, Augmented *float64
	// Egger is Egger's fitted line with its band; nil draws none.
	Egger []EggerPoint
}

// PlotOptions control the constructors of plot inputs.
type PlotOptions struct {
	// Imputed adds trim-and-fill's imputed studies to the funnel.
	Imputed bool
	// Unit is the unit of a pool report's measure (pool files carry
	// none); ignored for audits, which have their own.
	Unit string
	// Title overrides the plot title.
	Title string
}

// FunnelFromAudit builds the funnel of a review audit: the published
// studies and the registry-only trials, the published-only and augmented
// random-effects estimates, Egger's line of the published studies and,
// with opts.Imputed, trim-and-fill's imputed studies.
func FunnelFromAudit(a compare.ReviewAudit, opts PlotOptions) FunnelInput {
	in := FunnelInput{Title: opts.Title, XLabel: MeasureLabel(a.Measure, a.Unit), Published: a.Published.Random.Estimate}
	if in.Title == "" {
		in.Title = "Funnel plot: " + a.ReviewID
	}
	for _, s := range a.Studies {
		k := MarkPublished
		if s.Origin == compare.OriginRegistry {
			k = MarkRegistry
		}
		in.Points = append(in.Points, FunnelPoint{Study: s.Study, Effect: s.Effect, SE: s.SE, Kind: k})
	}
	if a.KAdded > 0 {
		in.Augmented = a.Augmented.Random.Estimate
	}
	in.fromBias(a.Bias, opts)
	return in
}

// FunnelFromPool builds the funnel of a single meta-analysis file.
func FunnelFromPool(r compare.PoolReport, opts PlotOptions) FunnelInput {
	in := FunnelInput{Title: opts.Title, XLabel: MeasureLabel(r.Measure, opts.Unit), Published: r.Random.Estimate}
	if in.Title == "" {
		in.Title = "Funnel plot"
	}
	for _, s := range r.Studies {
		in.Points = append(in.Points, FunnelPoint{Study: s.Study, Effect: s.Effect, SE: s.SE, Kind: MarkPublished})
	}
	in.fromBias(r.Bias, opts)
	return in
}

func (in *FunnelInput) fromBias(b *compare.BiasReport, opts PlotOptions) {
	if b == nil {
		return
	}
	if f := b.Funnel; f != nil {
		for _, c := range f.Contours {
			in.Contours = append(in.Contours, Contour{Level: c.Level, Z: c.Z})
		}
		for _, l := range f.EggerLine {
			in.Egger = append(in.Egger, EggerPoint{SE: l.SE, Effect: l.Effect, Low: l.Low, High: l.High})
		}
	}
	if opts.Imputed && b.TrimFill != nil {
		for _, f := range b.TrimFill.Filled {
			in.Points = append(in.Points, FunnelPoint{Study: "imputed", Effect: f.Effect, SE: f.SE, Kind: MarkImputed})
		}
	}
}

// Funnel plot geometry, in layout units.
const (
	funnelW      = 680.0
	funnelLeft   = 76.0
	funnelRight  = 652.0
	funnelTop    = 52.0
	funnelBottom = 412.0
	legendTop    = 470.0
	legendRowH   = 21.0
)

// funnelFrame is the axis mapping of a funnel plot.
type funnelFrame struct {
	x, y          scale
	xStep, seStep float64
	seTop         float64
	contours      []Contour
}

// frameFunnel chooses the axes:
//
//	SE axis: step = niceStep(maxSE / 4), seTop = ceil(maxSE / step)·step,
//	         SE 0 at the top (y = funnelTop), seTop at the bottom.
//	effect axis: niceRange over the points, 0, the pooled estimates,
//	         Egger's line and ±z₅%·seTop, with about 6 intervals.
func frameFunnel(in FunnelInput) funnelFrame {
	var f funnelFrame
	f.contours = in.Contours
	if f.contours == nil {
		f.contours = DefaultContours
	}
	maxSE := 0.0
	for _, p := range in.Points {
		if p.SE > maxSE && !math.IsInf(p.SE, 0) {
			maxSE = p.SE
		}
	}
	if !(maxSE > 0) {
		maxSE = 1
	}
	f.seStep = niceStep(maxSE / 4)
	f.seTop = math.Ceil(maxSE/f.seStep-1e-9) * f.seStep
	var ex extent
	ex.add(0)
	for _, p := range in.Points {
		ex.add(p.Effect)
	}
	ex.addPtr(in.Published, in.Augmented)
	for _, e := range in.Egger {
		ex.add(e.Effect)
	}
	z5 := 1.959963984540054
	ex.add(-z5*f.seTop, z5*f.seTop)
	lo, hi, step := niceRange(ex.lo, ex.hi, 6)
	f.xStep = step
	f.x = scale{Lo: lo, Hi: hi, From: funnelLeft, To: funnelRight}
	f.y = scale{Lo: 0, Hi: f.seTop, From: funnelTop, To: funnelBottom}
	return f
}

// contourEnd is where the line effect = sign·z·SE leaves the plot: at the
// bottom (SE = seTop) or, earlier, at the side of the effect axis.
func (f funnelFrame) contourEnd(z, sign float64) (effect, se float64) {
	edge := f.x.Hi
	if sign < 0 {
		edge = -f.x.Lo
	}
	se = f.seTop
	if z*se > edge {
		se = edge / z
	}
	return sign * z * se, se
}

// Extent of an 11-unit contour label around its baseline, with a little
// air (the glyphs' ascent is about 0.75 of the size, descent 0.25).
const (
	contourLabelAscent  = 10.0
	contourLabelDescent = 4.0
	contourLabelGap     = 4.0 // between a label and the axis or another label
)

// contourLabelAt places a contour's label (anchored at its right end)
// beside the right-hand line's end, inside the plot area and clear of
// the axes and of the labels placed before: above the end when the line
// reaches the bottom axis, below it when it leaves at the right side with
// room to spare, and otherwise moved up until nothing is in the way.
func contourLabelAt(f funnelFrame, z, width float64, placed []rect) pt {
	e, se := f.contourEnd(z, 1)
	at := pt{f.x.at(e) - 4, f.y.at(se) - 6}
	if se < f.seTop-1e-12 {
		at = pt{funnelRight - 4, f.y.at(se) + 14}
	}
	lowest := funnelBottom - contourLabelGap - contourLabelDescent // baseline clear of the x axis
	if at.Y > lowest {
		at.Y = lowest
	}
	if at.X-width < funnelLeft+contourLabelGap {
		at.X = funnelLeft + contourLabelGap + width // clear of the y axis
	}
	for moved := true; moved; {
		moved = false
		box := rect{at.X - width, at.Y - contourLabelAscent, at.X, at.Y + contourLabelDescent}
		for _, q := range placed {
			if box.X0 < q.X1 && q.X0 < box.X1 && box.Y0 < q.Y1 && q.Y0 < box.Y1 {
				at.Y = q.Y0 - contourLabelGap - contourLabelDescent
				moved = true
			}
		}
	}
	return at
}

func contourDash(level float64) []float64 {
	switch {
	case level >= 0.095:
		return []float64{1.5, 3}
	case level >= 0.045:
		return []float64{6, 4}
	}
	return nil
}

func pctLabel(level float64) string {
	return fmtFixed(100*level, 0) + "%"
}

// drawFunnel lays the plot out on p. The total height depends on the
// number of legend rows; it is returned by funnelHeight.
func drawFunnel(p painter, in FunnelInput) {
	f := frameFunnel(in)
	ink := textStyle{Size: 12, Color: colInk}

	p.text(pt{funnelLeft, 26}, truncate(in.Title, funnelRight-funnelLeft, 15), textStyle{Size: 15, Bold: true, Color: colInk})

	// Grid and axes.
	p.begin("grid")
	for _, v := range ticks(0, f.seTop, f.seStep) {
		y := f.y.at(v)
		p.line(pt{funnelLeft, y}, pt{funnelRight, y}, style{Stroke: colRule, Width: 0.8})
	}
	p.end()
	p.begin("axis y")
	for _, v := range ticks(0, f.seTop, f.seStep) {
		y := f.y.at(v)
		p.line(pt{funnelLeft - 5, y}, pt{funnelLeft, y}, style{Stroke: colInk, Width: 1})
		p.text(pt{funnelLeft - 8, y + 4}, tickLabel(v, f.seStep), textStyle{Size: 11, Anchor: anchorEnd, Color: colInk})
	}
	p.line(pt{funnelLeft, funnelTop}, pt{funnelLeft, funnelBottom}, style{Stroke: colInk, Width: 1})
	p.text(pt{22, (funnelTop + funnelBottom) / 2}, "Standard error (0 at the top)", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk, Up: true})
	p.end()
	p.begin("axis x")
	for _, v := range ticks(f.x.Lo, f.x.Hi, f.xStep) {
		x := f.x.at(v)
		p.line(pt{x, funnelBottom}, pt{x, funnelBottom + 5}, style{Stroke: colInk, Width: 1})
		p.text(pt{x, funnelBottom + 19}, tickLabel(v, f.xStep), textStyle{Size: 11, Anchor: anchorMiddle, Color: colInk})
	}
	p.line(pt{funnelLeft, funnelBottom}, pt{funnelRight, funnelBottom}, style{Stroke: colInk, Width: 1})
	p.text(pt{(funnelLeft + funnelRight) / 2, funnelBottom + 40}, in.XLabel, textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk})
	p.end()

	// Contours, labelled at their lower right end.
	p.begin("contours")
	var placed []rect
	for _, c := range f.contours {
		if !(c.Z > 0) {
			continue
		}
		st := style{Stroke: colContour, Width: 1, Dash: contourDash(c.Level)}
		for _, sign := range []float64{-1, 1} {
			e, se := f.contourEnd(c.Z, sign)
			p.line(pt{f.x.at(0), f.y.at(0)}, pt{f.x.at(e), f.y.at(se)}, st)
		}
		label := pctLabel(c.Level)
		at := contourLabelAt(f, c.Z, textWidth(label, 11), placed)
		placed = append(placed, rect{at.X - textWidth(label, 11), at.Y - contourLabelAscent, at.X, at.Y + contourLabelDescent})
		p.text(at, label, textStyle{Size: 11, Anchor: anchorEnd, Color: colMuted})
	}
	p.end()
	p.begin("null")
	p.line(pt{f.x.at(0), funnelTop}, pt{f.x.at(0), funnelBottom}, style{Stroke: colInk, Width: 0.9})
	p.end()

	// Egger's line and band, cut to the plot area.
	if len(in.Egger) >= 2 {
		box := rect{funnelLeft, funnelTop, funnelRight, funnelBottom}
		var band, line []pt
		for _, e := range in.Egger {
			band = append(band, pt{f.x.at(e.Low), f.y.at(e.SE)})
			line = append(line, pt{f.x.at(e.Effect), f.y.at(e.SE)})
		}
		for i := len(in.Egger) - 1; i >= 0; i-- {
			e := in.Egger[i]
			band = append(band, pt{f.x.at(e.High), f.y.at(e.SE)})
		}
		p.begin("egger")
		if b := clipPolygon(band, box); len(b) >= 3 {
			p.poly(b, true, style{Fill: colEgger, FillOpacity: 0.14})
		}
		for _, piece := range clipPolyline(line, box) {
			p.poly(piece, false, style{Stroke: colEgger, Width: 1.8})
		}
		p.end()
	}

	// Pooled estimates.
	if in.Published != nil {
		x := f.x.at(*in.Published)
		p.begin("pooled published")
		p.line(pt{x, funnelTop}, pt{x, funnelBottom}, style{Stroke: colPublished, Width: 2})
		p.end()
	}
	if in.Augmented != nil {
		x := f.x.at(*in.Augmented)
		p.begin("pooled augmented")
		p.line(pt{x, funnelTop}, pt{x, funnelBottom}, style{Stroke: colRegistry, Width: 2, Dash: []float64{7, 4}})
		p.end()
	}

	// Marks: imputed first, registry last so that it stays on top.
	if len(in.Points) == 0 {
		p.text(pt{(funnelLeft + funnelRight) / 2, (funnelTop + funnelBottom) / 2}, "No studies to draw", ink)
	}
	for _, k := range []MarkKind{MarkImputed, MarkPublished, MarkRegistry} {
		for _, q := range in.Points {
			if q.Kind != k || !(q.SE > 0) {
				continue
			}
			p.begin(k.class())
			drawMark(p, k, pt{f.x.at(q.Effect), f.y.at(q.SE)}, 5)
			p.end()
		}
	}

	drawLegend(p, funnelLegend(in, f), funnelLeft, legendTop, funnelRight-funnelLeft)
}

// legendEntry is one row of a legend: a mark or a line sample and a name.
type legendEntry struct {
	name string
	mark *MarkKind
	line *style
	band bool // a filled band behind the line sample
}

func funnelLegend(in FunnelInput, f funnelFrame) []legendEntry {
	var out []legendEntry
	has := map[MarkKind]int{}
	for _, q := range in.Points {
		has[q.Kind]++
	}
	mk := func(k MarkKind) *MarkKind { return &k }
	ln := func(s style) *style { return &s }
	if has[MarkPublished] > 0 {
		out = append(out, legendEntry{name: "Published study", mark: mk(MarkPublished)})
	}
	if has[MarkRegistry] > 0 {
		out = append(out, legendEntry{name: "Registry-only trial (unpublished)", mark: mk(MarkRegistry)})
	}
	if has[MarkImputed] > 0 {
		out = append(out, legendEntry{name: "Imputed by trim-and-fill", mark: mk(MarkImputed)})
	}
	if in.Published != nil {
		name := "Pooled estimate, published only"
		if in.Augmented == nil {
			name = "Pooled estimate (random effects)"
		}
		out = append(out, legendEntry{name: name, line: ln(style{Stroke: colPublished, Width: 2})})
	}
	if in.Augmented != nil {
		out = append(out, legendEntry{name: "Pooled estimate, with registry trials", line: ln(style{Stroke: colRegistry, Width: 2, Dash: []float64{7, 4}})})
	}
	if len(in.Egger) >= 2 {
		out = append(out, legendEntry{name: "Egger's line with 95% band", line: ln(style{Stroke: colEgger, Width: 1.8}), band: true})
	}
	out = append(out, legendEntry{name: "No effect", line: ln(style{Stroke: colInk, Width: 0.9})})
	for _, c := range f.contours {
		out = append(out, legendEntry{name: "Two-sided p = " + fmtFixed(c.Level, 2) + " (effect = \u00b1" + fmtFixed(c.Z, 2) + "\u00b7SE)",
			line: ln(style{Stroke: colContour, Width: 1, Dash: contourDash(c.Level)})})
	}
	return out
}

// drawLegend sets the entries in two columns from (x, y) across width.
func drawLegend(p painter, entries []legendEntry, x, y, width float64) {
	p.begin("legend")
	col := width / 2
	for i, e := range entries {
		cx := x + float64(i%2)*col
		cy := y + float64(i/2)*legendRowH
		switch {
		case e.mark != nil:
			drawMark(p, *e.mark, pt{cx + 12, cy - 4}, 5)
		case e.line != nil:
			if e.band {
				p.poly([]pt{{cx, cy - 9}, {cx + 24, cy - 9}, {cx + 24, cy + 1}, {cx, cy + 1}}, true, style{Fill: colEgger, FillOpacity: 0.14})
			}
			p.line(pt{cx, cy - 4}, pt{cx + 24, cy - 4}, *e.line)
		}
		p.text(pt{cx + 32, cy}, truncate(e.name, col-40, 11.5), textStyle{Size: 11.5, Color: colInk})
	}
	p.end()
}

func legendHeight(n int) float64 {
	return float64((n+1)/2)*legendRowH + 8
}

func funnelHeight(in FunnelInput) float64 {
	return legendTop + legendHeight(len(funnelLegend(in, frameFunnel(in))))
}
