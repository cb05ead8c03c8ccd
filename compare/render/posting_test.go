package render

import (
	"bytes"
	"image/png"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"unshelved/compare/funders"
)

func TestPostingPlot(t *testing.T) {
	// Curves as funders.PostingCurves gives them: shares are Posted/Due.
	mk := func(label string, due int, posted []int) funders.PostingCurve {
		c := funders.PostingCurve{Label: label, Due: due, Posted: posted}
		for _, k := range posted {
			c.Share = append(c.Share, float64(k)/float64(due))
		}
		return c
	}
	steps := func(n int, at map[int]int) []int {
		out := make([]int, n)
		for m := range out {
			for from, k := range at {
				if m >= from {
					out[m] = max(out[m], k)
				}
			}
		}
		return out
	}
	pp := PostingPlot{AsOf: "2026-12-01", Curves: []funders.PostingCurve{
		mk("INDUSTRY", 3, steps(25, map[int]int{12: 2})),
		mk("OTHER", 1, steps(25, map[int]int{14: 1})),
	}}
	var buf bytes.Buffer
	if err := SVG(&buf, pp); err != nil {
		t.Fatal(err)
	}
	svg := buf.String()
	parseSVG(t, buf.Bytes())
	groups := strings.Split(svg, `<g class="curve">`)[1:]
	if len(groups) != 2 {
		t.Fatalf("%d curve groups, want 2", len(groups))
	}
	pointsRE := regexp.MustCompile(`<polyline points="([^"]*)"`)
	x := scale{Lo: 0, Hi: 24, From: batchLeft, To: batchRight}
	y := scale{Lo: 0, Hi: 1, From: batchBottom, To: batchTop}
	for i, g := range groups {
		m := pointsRE.FindStringSubmatch(g)
		if m == nil {
			t.Fatalf("curve %d: no polyline", i)
		}
		c := pp.Curves[i]
		// Each month m gives the point (m, share[m]), preceded for m > 0 by
		// (m, share[m-1]): the step.
		var want []pt
		for mo, s := range c.Share {
			if mo > 0 {
				want = append(want, pt{x.at(float64(mo)), y.at(c.Share[mo-1])})
			}
			want = append(want, pt{x.at(float64(mo)), y.at(s)})
		}
		fields := strings.Fields(m[1])
		if len(fields) != len(want) {
			t.Fatalf("curve %d: %d points, want %d", i, len(fields), len(want))
		}
		for j, f := range fields {
			xy := strings.Split(f, ",")
			gx, _ := strconv.ParseFloat(xy[0], 64)
			gy, _ := strconv.ParseFloat(xy[1], 64)
			if math.Abs(gx-want[j].X) > 0.01 || math.Abs(gy-want[j].Y) > 0.01 {
				t.Errorf("curve %d point %d = (%v, %v), want (%v, %v)", i, j, gx, gy, want[j].X, want[j].Y)
				break
			}
		}
	}
	for _, want := range []string{"INDUSTRY: 3 due; 2 of 3 (67%) by month 24", "OTHER: 1 due; 1 of 1 (100%) by month 24", "due at 12 months", "as of 2026-12-01"} {
		if !strings.Contains(svg, want) {
			t.Errorf("SVG lacks %q", want)
		}
	}

	buf.Reset()
	if err := PNG(&buf, pp); err != nil {
		t.Fatal(err)
	}
	if _, err := png.Decode(&buf); err != nil {
		t.Errorf("PNG: %v", err)
	}
}

func TestPostingPlotKeepsLargestGroups(t *testing.T) {
	var cs []funders.PostingCurve
	for i := 0; i < postingMaxLines+2; i++ {
		cs = append(cs, funders.PostingCurve{Label: "S" + strconv.Itoa(i), Due: i + 1, Posted: []int{0}, Share: []float64{0}})
	}
	drawn, left := PostingPlot{Curves: cs}.lines()
	if left != 2 || len(drawn) != postingMaxLines || drawn[0].Label != "S2" {
		t.Errorf("drawn %d (first %s), left %d; want the %d largest from S2, 2 left", len(drawn), drawn[0].Label, left, postingMaxLines)
	}
}
