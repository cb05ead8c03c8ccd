package render

import (
	"math"
	"strconv"
	"strings"
)

// MarkKind says which kind of study a mark stands for.
type MarkKind int

// Kinds of study marks. Each has its own shape and colour.
const (
	MarkPublished MarkKind = iota // filled circle, blue
	MarkRegistry                  // filled upward triangle, vermilion
	MarkImputed                   // open square, reddish purple
)

func (k MarkKind) class() string {
	switch k {
	case MarkRegistry:
		return "mark registry"
	case MarkImputed:
		return "mark imputed"
	}
	return "mark published"
}

// drawMark draws a study mark of kind k centred at c with radius r (the
// circle's radius; the triangle and square have about the same area).
func drawMark(p painter, k MarkKind, c pt, r float64) {
	switch k {
	case MarkRegistry:
		// Equilateral triangle of the circle's area: side a with
		// a²·√3/4 = π r², centroid at c.
		a := r * math.Sqrt(4*math.Pi/math.Sqrt(3))
		h := a * math.Sqrt(3) / 2
		p.poly([]pt{{c.X, c.Y - 2*h/3}, {c.X + a/2, c.Y + h/3}, {c.X - a/2, c.Y + h/3}}, true,
			style{Fill: colRegistry, FillOpacity: 1, Stroke: colPaper, Width: 0.8})
	case MarkImputed:
		s := r * math.Sqrt(math.Pi) / 2 // half side of a square of the circle's area
		p.poly([]pt{{c.X - s, c.Y - s}, {c.X + s, c.Y - s}, {c.X + s, c.Y + s}, {c.X - s, c.Y + s}}, true,
			style{Fill: colPaper, FillOpacity: 1, Stroke: colImputed, Width: 1.6})
	default:
		p.circle(c, r, style{Fill: colPublished, FillOpacity: 1, Stroke: colPaper, Width: 0.8})
	}
}

// MeasureLabel is the axis label of a review's measure: "Mean difference
// (points)", "Mean difference" when the unit is empty, and
// "Standardized mean difference (Hedges' g)" for SMD.
func MeasureLabel(measure, unit string) string {
	if strings.EqualFold(measure, "SMD") {
		return "Standardized mean difference (Hedges' g)"
	}
	if strings.TrimSpace(unit) == "" {
		return "Mean difference"
	}
	return "Mean difference (" + strings.TrimSpace(unit) + ")"
}

// measureNoun is the measure in running text.
func measureNoun(measure string) string {
	if strings.EqualFold(measure, "SMD") {
		return "standardized mean difference"
	}
	return "mean difference"
}

// fmtFixed formats x with d decimals, using a true minus sign and never
// printing "-0".
func fmtFixed(x float64, d int) string {
	s := strconv.FormatFloat(x, 'f', d, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return strings.Replace(s, "-", "\u2212", 1)
}

// fmt2 is fmtFixed with two decimals, "–" for nil.
func fmt2(p *float64) string {
	if p == nil {
		return "\u2013"
	}
	return fmtFixed(*p, 2)
}

// ciText is "est [lo, hi]" with two decimals.
func ciText(est, lo, hi float64) string {
	return fmtFixed(est, 2) + " [" + fmtFixed(lo, 2) + ", " + fmtFixed(hi, 2) + "]"
}

// truncate shortens s with an ellipsis so that it fits width at size.
func truncate(s string, width, size float64) string {
	r := []rune(s)
	if textWidth(s, size) <= width {
		return s
	}
	n := int(width/(0.55*size)) - 1
	if n < 1 {
		n = 1
	}
	if n > len(r) {
		n = len(r)
	}
	return strings.TrimSpace(string(r[:n])) + "\u2026"
}

// wrap breaks s into lines no wider than width at size.
func wrap(s string, width, size float64) []string {
	var lines []string
	var cur string
	for _, w := range strings.Fields(s) {
		if cur == "" {
			cur = w
			continue
		}
		if textWidth(cur+" "+w, size) > width {
			lines = append(lines, cur)
			cur = w
			continue
		}
		cur += " " + w
	}
	if cur != "" {
		lines = append(lines, cur)
	}
	return lines
}
