package render

import (
	"fmt"
	"math"
	"strings"

	"unshelved/compare"
)

// ForestRow is one study of a forest plot.
type ForestRow struct {
	Label                 string
	Effect, CILow, CIHigh float64
	// Weights are percent weights, one per ForestInput.WeightHeaders
	// entry; nil entries print as a dash.
	Weights []*float64
	Kind    MarkKind
}

// ForestPooled is one pooled block: the estimate with its confidence
// interval and, when known, its prediction interval.
type ForestPooled struct {
	Label                   string
	Estimate, CILow, CIHigh *float64
	PILow, PIHigh           *float64
	Kind                    MarkKind // MarkPublished or MarkRegistry (the augmented analysis)
}

// ForestInput is everything a forest plot draws.
type ForestInput struct {
	Title  string
	XLabel string
	// Measure ("MD" or "SMD") names the estimate column: "MD [95% CI]",
	// "Hedges' g [95% CI]"; empty gives "Estimate [95% CI]".
	Measure string
	// Better is "lower" or "higher" (which side favours the
	// intervention); empty draws no "favours" labels.
	Better string
	// Published and Registry are the study rows of the two sections;
	// Registry is empty for a single meta-analysis.
	Published, Registry []ForestRow
	WeightHeaders       []string
	Pooled              []ForestPooled
	// Note is a sentence set under the plot (the shift in words).
	Note string
}

// randomWeights are percent random-effects weights 100 w_i / Σw with
// w_i = 1 / (SE_i² + tau²); tau² nil counts as 0.
func randomWeights(studies []compare.StudyEffect, tau2 *float64) []float64 {
	t := 0.0
	if tau2 != nil && *tau2 > 0 {
		t = *tau2
	}
	w := make([]float64, len(studies))
	var sum float64
	for i, s := range studies {
		w[i] = 1 / (s.SE*s.SE + t)
		sum += w[i]
	}
	for i := range w {
		w[i] = 100 * w[i] / sum
	}
	return w
}

// ciZ is the normal quantile of the 95% interval of each study row
// (Python 3.11: statistics.NormalDist().inv_cdf(0.975)).
const ciZ = 1.959963984540054

// ForestFromAudit builds the forest plot of a review audit. Weights are
// random-effects weights recomputed from each analysis's tau²: the
// published-only analysis (published studies) and the augmented one
// (every study).
func ForestFromAudit(a compare.ReviewAudit, opts PlotOptions) ForestInput {
	in := ForestInput{Title: opts.Title, XLabel: MeasureLabel(a.Measure, a.Unit), Measure: a.Measure, Better: a.Better, Note: ShiftSentence(a)}
	if in.Title == "" {
		in.Title = "Forest plot: " + a.ReviewID
	}
	k := a.KPublished
	if k > len(a.Studies) {
		k = len(a.Studies)
	}
	wPub := randomWeights(a.Studies[:k], a.Published.Random.Tau2)
	wAll := randomWeights(a.Studies, a.Augmented.Random.Tau2)
	if a.KAdded > 0 {
		in.WeightHeaders = []string{"Weight (pub.)", "Weight (all)"}
	} else {
		in.WeightHeaders = []string{"Weight"}
	}
	for i, s := range a.Studies {
		row := ForestRow{Label: s.Study, Effect: s.Effect, CILow: s.Effect - ciZ*s.SE, CIHigh: s.Effect + ciZ*s.SE}
		if i < k {
			row.Weights = []*float64{&wPub[i]}
			if a.KAdded > 0 {
				row.Weights = append(row.Weights, &wAll[i])
			}
			in.Published = append(in.Published, row)
			continue
		}
		row.Kind = MarkRegistry
		if s.TrialID != "" {
			row.Label = s.TrialID
		}
		row.Weights = []*float64{nil, &wAll[i]}
		in.Registry = append(in.Registry, row)
	}
	p, g := a.Published, a.Augmented
	label := "Published only"
	if a.KAdded == 0 {
		label = "Pooled (random effects)"
	}
	in.Pooled = append(in.Pooled, ForestPooled{Label: label + fmt.Sprintf(", k = %d", p.K), Estimate: p.Random.Estimate,
		CILow: p.Random.CILow, CIHigh: p.Random.CIHigh, PILow: p.PILow, PIHigh: p.PIHigh, Kind: MarkPublished})
	if a.KAdded > 0 {
		in.Pooled = append(in.Pooled, ForestPooled{Label: fmt.Sprintf("With registry trials, k = %d", g.K), Estimate: g.Random.Estimate,
			CILow: g.Random.CILow, CIHigh: g.Random.CIHigh, PILow: g.PILow, PIHigh: g.PIHigh, Kind: MarkRegistry})
	}
	return in
}

// ForestFromPool builds the forest plot of a single meta-analysis file:
// one section of studies with their random-effects weights and one pooled
// block.
func ForestFromPool(r compare.PoolReport, opts PlotOptions) ForestInput {
	in := ForestInput{Title: opts.Title, XLabel: MeasureLabel(r.Measure, opts.Unit), Measure: r.Measure, WeightHeaders: []string{"Weight"}}
	if in.Title == "" {
		in.Title = "Forest plot"
	}
	for _, s := range r.Studies {
		in.Published = append(in.Published, ForestRow{Label: s.Study, Effect: s.Effect, CILow: s.CILow, CIHigh: s.CIHigh,
			Weights: []*float64{s.WeightRandom}})
	}
	in.Pooled = []ForestPooled{{Label: fmt.Sprintf("Pooled (random effects, %s), k = %d", strings.ToUpper(r.Heterogeneity.Tau2Method), r.K),
		Estimate: r.Random.Estimate, CILow: r.Random.CILow, CIHigh: r.Random.CIHigh, PILow: r.Random.PILow, PIHigh: r.Random.PIHigh}}
	return in
}

// ShiftSentence states an audit's shift in words, e.g. "Adding 4
// registry-only trials moves the pooled mean difference from −7.68 to
// −5.88 points (toward no effect by 1.80)."
func ShiftSentence(a compare.ReviewAudit) string {
	p, g := a.Published.Random.Estimate, a.Augmented.Random.Estimate
	noun := measureNoun(a.Measure)
	unit := ""
	if !strings.EqualFold(a.Measure, "SMD") && strings.TrimSpace(a.Unit) != "" {
		unit = " " + strings.TrimSpace(a.Unit)
	}
	if a.KAdded == 0 && a.RegistrySearch.Note != "" {
		return "No registry evidence was compared: " + a.RegistrySearch.Note + "."
	}
	if a.KAdded == 0 {
		if p == nil {
			return "No registry-only trial was added; the pooled " + noun + " could not be estimated."
		}
		return "No registry-only trial was added; the pooled " + noun + " stays at " + fmtFixed(*p, 2) + unit + "."
	}
	trials := "trials"
	if a.KAdded == 1 {
		trials = "trial"
	}
	if p == nil || g == nil {
		return fmt.Sprintf("Adding %d registry-only %s: the pooled %s could not be estimated in both analyses.", a.KAdded, trials, noun)
	}
	how := shiftDirection(a)
	if d := math.Abs(*g - *p); d != 0 {
		how = strings.Replace(how, "no effect", "no effect by "+fmtFixed(d, 2), 1)
	}
	return fmt.Sprintf("Adding %d registry-only %s moves the pooled %s from %s to %s%s (%s).",
		a.KAdded, trials, noun, fmtFixed(*p, 2), fmtFixed(*g, 2), unit, how)
}

// shiftDirection names the direction of the shift in the words every
// part of a page uses: relative to no effect ("toward no effect", "away
// from no effect", "across no effect") and, when the review says which
// direction is better, relative to the intervention ("less favourable to
// the intervention"). "no change" when the estimates are equal, "" when
// one is missing.
func shiftDirection(a compare.ReviewAudit) string {
	p, g := a.Published.Random.Estimate, a.Augmented.Random.Estimate
	if p == nil || g == nil {
		return ""
	}
	var how string
	switch {
	case *g == *p:
		return "no change"
	case (*p > 0) != (*g > 0) && *p != 0 && *g != 0:
		how = "across no effect"
	case math.Abs(*g) < math.Abs(*p):
		how = "toward no effect"
	default:
		how = "away from no effect"
	}
	switch a.Shift.Toward {
	case "benefit":
		how += "; more favourable to the intervention"
	case "harm":
		how += "; less favourable to the intervention"
	}
	return how
}

// Forest plot geometry, in layout units.
const (
	forestW       = 880.0
	forestLabelX  = 16.0
	forestLabelW  = 230.0
	forestPlotL   = 262.0
	forestPlotR   = 552.0
	forestCIX     = 566.0
	forestRowH    = 21.0
	forestTop     = 74.0 // first row's baseline
	forestWeightR = 864.0
	forestWeightW = 90.0
)

// forestFrame is the axis mapping of a forest plot.
type forestFrame struct {
	x    scale
	step float64
}

// frameForest covers every interval and 0 with a nice range of about 6
// intervals (see niceRange).
func frameForest(in ForestInput) forestFrame {
	var ex extent
	ex.add(0)
	for _, rows := range [][]ForestRow{in.Published, in.Registry} {
		for _, r := range rows {
			ex.add(r.CILow, r.CIHigh, r.Effect)
		}
	}
	for _, p := range in.Pooled {
		ex.addPtr(p.Estimate, p.CILow, p.CIHigh, p.PILow, p.PIHigh)
	}
	lo, hi, step := niceRange(ex.lo, ex.hi, 6)
	return forestFrame{x: scale{Lo: lo, Hi: hi, From: forestPlotL, To: forestPlotR}, step: step}
}

// forestRows is the number of text rows the plot uses (for its height).
func forestRows(in ForestInput) int {
	n := 1 + len(in.Published) // section heading + rows
	if len(in.Registry) > 0 {
		n += 1 + len(in.Registry)
	}
	for _, p := range in.Pooled {
		n++
		if p.PILow != nil && p.PIHigh != nil {
			n++
		}
	}
	return n + 1 // the gap before the pooled block
}

// estimateHeader names a forest plot's estimate column by its measure.
func estimateHeader(measure string) string {
	switch strings.ToUpper(strings.TrimSpace(measure)) {
	case "SMD":
		return "Hedges' g"
	case "MD":
		return "MD"
	}
	return "Estimate"
}

// forestHeight is the lowest point the plot draws plus a margin, found
// by a dry run.
func forestHeight(in ForestInput) float64 {
	var m measurer
	drawForest(&m, in)
	return math.Ceil(m.maxY + 12)
}

// drawForest lays the plot out on p.
func drawForest(p painter, in ForestInput) {
	f := frameForest(in)
	head := textStyle{Size: 11.5, Bold: true, Color: colInk}
	cell := textStyle{Size: 11.5, Color: colInk}
	p.text(pt{forestLabelX, 24}, truncate(in.Title, forestW-2*forestLabelX, 15), textStyle{Size: 15, Bold: true, Color: colInk})

	// Column headings.
	p.begin("header")
	hy := forestTop - 26
	p.text(pt{forestLabelX, hy}, "Study", head)
	p.text(pt{(forestPlotL + forestPlotR) / 2, hy}, "Effect with 95% CI", textStyle{Size: 11.5, Bold: true, Color: colInk, Anchor: anchorMiddle})
	p.text(pt{forestCIX, hy}, estimateHeader(in.Measure)+" [95% CI]", head)
	for i, h := range in.WeightHeaders {
		p.text(pt{forestWeightR - float64(len(in.WeightHeaders)-1-i)*forestWeightW, hy}, h, textStyle{Size: 11.5, Bold: true, Color: colInk, Anchor: anchorEnd})
	}
	p.line(pt{forestLabelX, hy + 8}, pt{forestW - forestLabelX, hy + 8}, style{Stroke: colRule, Width: 1})
	p.end()

	y := forestTop
	maxW := 0.0
	for _, rows := range [][]ForestRow{in.Published, in.Registry} {
		for _, r := range rows {
			for _, w := range r.Weights {
				if w != nil && *w > maxW {
					maxW = *w
				}
			}
		}
	}
	// Gridline at 0 first so that marks sit on top.
	rowsEnd := forestTop + float64(forestRows(in))*forestRowH - forestRowH/2
	p.begin("null")
	p.line(pt{f.x.at(0), forestTop - 14}, pt{f.x.at(0), rowsEnd}, style{Stroke: colInk, Width: 0.9})
	p.end()

	section := func(name string, rows []ForestRow) {
		p.text(pt{forestLabelX, y}, name, head)
		y += forestRowH
		for _, r := range rows {
			p.begin("row " + r.Kind.class())
			p.text(pt{forestLabelX + 10, y}, truncate(r.Label, forestLabelW-10, 11.5), cell)
			cy := y - 4
			lo, hi := f.x.at(r.CILow), f.x.at(r.CIHigh)
			col := colPublished
			if r.Kind == MarkRegistry {
				col = colRegistry
			}
			p.line(pt{lo, cy}, pt{hi, cy}, style{Stroke: col, Width: 1.4})
			p.line(pt{lo, cy - 3}, pt{lo, cy + 3}, style{Stroke: col, Width: 1.4})
			p.line(pt{hi, cy - 3}, pt{hi, cy + 3}, style{Stroke: col, Width: 1.4})
			rad := 4.0
			if w := lastWeight(r.Weights); w != nil && maxW > 0 {
				rad = 2.5 + 5.5*math.Sqrt(*w/maxW)
			}
			drawMark(p, r.Kind, pt{f.x.at(r.Effect), cy}, rad)
			p.text(pt{forestCIX, y}, ciText(r.Effect, r.CILow, r.CIHigh), cell)
			for i, w := range r.Weights {
				s := "\u2013"
				if w != nil {
					s = fmtFixed(*w, 1) + "%"
				}
				p.text(pt{forestWeightR - float64(len(r.Weights)-1-i)*forestWeightW, y}, s, textStyle{Size: 11.5, Color: colInk, Anchor: anchorEnd})
			}
			p.end()
			y += forestRowH
		}
	}
	section(fmt.Sprintf("Published studies (%d)", len(in.Published)), in.Published)
	if len(in.Registry) > 0 {
		section(fmt.Sprintf("Registry-only trials, unpublished (%d)", len(in.Registry)), in.Registry)
	}

	p.line(pt{forestLabelX, y - forestRowH + 8}, pt{forestW - forestLabelX, y - forestRowH + 8}, style{Stroke: colRule, Width: 1})
	y += forestRowH / 2
	for _, q := range in.Pooled {
		col := colPublished
		if q.Kind == MarkRegistry {
			col = colRegistry
		}
		p.begin("pooled " + q.Kind.class())
		p.text(pt{forestLabelX, y}, truncate(q.Label, forestLabelW, 11.5), head)
		if q.Estimate != nil && q.CILow != nil && q.CIHigh != nil {
			cy := y - 4
			lo, hi, e := f.x.at(*q.CILow), f.x.at(*q.CIHigh), f.x.at(*q.Estimate)
			// A capsule spanning the interval with a notch at the estimate.
			p.poly([]pt{{lo, cy}, {lo + 4, cy - 6}, {hi - 4, cy - 6}, {hi, cy}, {hi - 4, cy + 6}, {lo + 4, cy + 6}}, true,
				style{Fill: col, FillOpacity: 0.3, Stroke: col, Width: 1.4})
			p.line(pt{e, cy - 9}, pt{e, cy + 9}, style{Stroke: col, Width: 2.4})
			p.text(pt{forestCIX, y}, ciText(*q.Estimate, *q.CILow, *q.CIHigh), head)
		} else {
			p.text(pt{forestCIX, y}, "not estimable", cell)
		}
		p.end()
		y += forestRowH
		if q.PILow != nil && q.PIHigh != nil {
			p.begin("prediction " + q.Kind.class())
			p.text(pt{forestLabelX + 10, y}, "prediction interval", textStyle{Size: 11.5, Italic: true, Color: colInk})
			cy := y - 4
			lo, hi := f.x.at(*q.PILow), f.x.at(*q.PIHigh)
			p.line(pt{lo, cy}, pt{hi, cy}, style{Stroke: col, Width: 1.4, Dash: []float64{2, 2.5}})
			p.line(pt{lo, cy - 4}, pt{lo, cy + 4}, style{Stroke: col, Width: 1.4})
			p.line(pt{hi, cy - 4}, pt{hi, cy + 4}, style{Stroke: col, Width: 1.4})
			p.text(pt{forestCIX, y}, "["+fmtFixed(*q.PILow, 2)+", "+fmtFixed(*q.PIHigh, 2)+"]", textStyle{Size: 11.5, Italic: true, Color: colInk})
			p.end()
			y += forestRowH
		}
	}

	// Axis.
	ay := y - 4
	p.begin("axis x")
	p.line(pt{forestPlotL, ay}, pt{forestPlotR, ay}, style{Stroke: colInk, Width: 1})
	for _, v := range ticks(f.x.Lo, f.x.Hi, f.step) {
		x := f.x.at(v)
		p.line(pt{x, ay}, pt{x, ay + 5}, style{Stroke: colInk, Width: 1})
		p.text(pt{x, ay + 18}, tickLabel(v, f.step), textStyle{Size: 11, Anchor: anchorMiddle, Color: colInk})
	}
	p.text(pt{(forestPlotL + forestPlotR) / 2, ay + 36}, in.XLabel, textStyle{Size: 12, Anchor: anchorMiddle, Color: colInk})
	p.end()
	ny := ay + 56
	if in.Better != "" {
		left, right := "favours intervention", "favours comparator"
		if strings.EqualFold(in.Better, "higher") {
			left, right = right, left
		}
		x0 := f.x.at(0)
		p.begin("favours")
		p.text(pt{x0 - 6, ay + 52}, "\u2190 "+left, textStyle{Size: 11, Anchor: anchorEnd, Color: colMuted})
		p.text(pt{x0 + 6, ay + 52}, right+" \u2192", textStyle{Size: 11, Color: colMuted})
		p.end()
		ny += 16
	}
	if in.Note != "" {
		p.begin("note")
		for i, l := range wrap(in.Note, forestW-2*forestLabelX, 12.5) {
			p.text(pt{forestLabelX, ny + float64(i)*17}, l, textStyle{Size: 12.5, Color: colInk})
		}
		p.end()
	}
}

func lastWeight(ws []*float64) *float64 {
	for i := len(ws) - 1; i >= 0; i-- {
		if ws[i] != nil {
			return ws[i]
		}
	}
	return nil
}
