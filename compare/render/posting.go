package render

import (
	"fmt"
	"unshelved/compare/funders"
)

// PostingPlot is the funders' figure: for each sponsor or sponsor class,
// the cumulative share of its due trials with results posted against
// whole months since primary completion (funders.PostingCurves).
type PostingPlot struct {
	Title  string
	AsOf   string // the as-of date, shown in the note
	Curves []funders.PostingCurve
}

// postingMaxLines is the most lines drawn; the note names how many more
// there were (the largest groups by due trials are kept).
const postingMaxLines = 8

// Line looks, in order: colour and dash together, so lines stay apart in
// greyscale too.
var postingLooks = []struct {
	col  rgb
	dash []float64
}{
	{colBlue, nil}, {colVermilion, []float64{7, 3}}, {colGreen, []float64{2, 2.5}}, {colPurple, []float64{9, 3, 2, 3}},
	{colSky, nil}, {colInk, []float64{7, 3}}, {colMuted, []float64{2, 2.5}}, {colBlue, []float64{9, 3, 2, 3}},
}

const postingLegendRow = 18.0

func (pp PostingPlot) lines() (drawn []funders.PostingCurve, left int) {
	cs := pp.Curves
	if len(cs) <= postingMaxLines {
		return cs, 0
	}
	// Keep the largest groups, in their given order.
	keep := make([]bool, len(cs))
	for n := 0; n < postingMaxLines; n++ {
		best := -1
		for i, c := range cs {
			if !keep[i] && (best < 0 || c.Due > cs[best].Due) {
				best = i
			}
		}
		keep[best] = true
	}
	for i, c := range cs {
		if keep[i] {
			drawn = append(drawn, c)
		}
	}
	return drawn, len(cs) - len(drawn)
}

func (pp PostingPlot) size() (float64, float64) {
	d, _ := pp.lines()
	return batchW, batchH + postingLegendRow*float64(len(d)) + 8
}

func (pp PostingPlot) title() string {
	if pp.Title != "" {
		return pp.Title
	}
	return "Results posted after primary completion"
}

func (pp PostingPlot) draw(p painter) {
	p.text(pt{batchLeft, 28}, truncate(pp.title(), batchRight-batchLeft-160, 15), textStyle{Size: 15, Bold: true, Color: colInk})
	curves, left := pp.lines()
	months := 24
	for _, c := range curves {
		months = max(months, len(c.Share)-1)
	}
	xStep := niceStep(float64(months) / 8)
	if xStep < 1 {
		xStep = 1
	}
	x := scale{Lo: 0, Hi: float64(months), From: batchLeft, To: batchRight}
	y := scale{Lo: 0, Hi: 1, From: batchBottom, To: batchTop}
	p.begin("grid")
	for _, v := range ticks(0, 1, 0.2) {
		p.line(pt{batchLeft, y.at(v)}, pt{batchRight, y.at(v)}, style{Stroke: colRule, Width: 0.8})
		p.text(pt{batchLeft - 8, y.at(v) + 4}, fmt.Sprintf("%.0f%%", 100*v), textStyle{Size: 11, Anchor: anchorEnd, Color: colInk})
	}
	p.end()
	drawBatchXAxis(p, x, xStep, "Months since primary completion")
	p.text(pt{18, (batchTop + batchBottom) / 2}, "Due trials with results posted", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk, Up: true})
	if months >= 12 {
		p.begin("due")
		p.line(pt{x.at(12), batchTop}, pt{x.at(12), batchBottom}, style{Stroke: colInk, Width: 1, Dash: []float64{4, 3}})
		p.text(pt{x.at(12) + 4, batchTop + 12}, "due at 12 months", textStyle{Size: 10.5, Color: colMuted})
		p.end()
	}
	for i, c := range curves {
		look := postingLooks[i%len(postingLooks)]
		// A step line: the share holds from one month to the next.
		var pts []pt
		for m, s := range c.Share {
			if m > 0 {
				pts = append(pts, pt{x.at(float64(m)), y.at(c.Share[m-1])})
			}
			pts = append(pts, pt{x.at(float64(m)), y.at(s)})
		}
		p.begin("curve")
		if len(pts) > 0 {
			p.poly(pts, false, style{Stroke: look.col, Width: 2, Dash: look.dash})
		}
		ly := batchH + 4 + postingLegendRow*float64(i)
		p.line(pt{batchLeft, ly - 4}, pt{batchLeft + 34, ly - 4}, style{Stroke: look.col, Width: 2, Dash: look.dash})
		end := "-"
		if len(c.Share) > 0 {
			end = fmt.Sprintf("%d of %d (%.0f%%) by month %d", c.Posted[len(c.Posted)-1], c.Due, 100*c.Share[len(c.Share)-1], len(c.Share)-1)
		}
		p.text(pt{batchLeft + 42, ly}, truncate(fmt.Sprintf("%s: %d due; %s", c.Label, c.Due, end), batchRight-batchLeft-42, 11),
			textStyle{Size: 11, Color: colInk})
		p.end()
	}
	note := "as of " + pp.AsOf
	if len(curves) == 0 {
		p.text(pt{(batchLeft + batchRight) / 2, (batchTop + batchBottom) / 2}, "No trial is due yet", textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk})
	}
	if left > 0 {
		note += fmt.Sprintf("; %d smaller groups not drawn", left)
	}
	p.text(pt{batchRight, 28}, note, textStyle{Size: 11, Anchor: anchorEnd, Color: colMuted})
}
