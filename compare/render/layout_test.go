package render

import (
	"math/rand/v2"
	"testing"
)

// TestContourLabelsClearOfAxes lays out 5,000 generated funnels (seeded;
// 3 to 40 studies, effects and standard errors over several orders of
// magnitude, centred anywhere) and checks that every contour label's box
// lies inside the plot area, clear of both axes, and that no two labels
// overlap. The browser test checks the same on real pages by bounding
// boxes; this one covers shapes the demo does not have.
func TestContourLabelsClearOfAxes(t *testing.T) {
	rng := rand.New(rand.NewPCG(16, 2026))
	for n := 0; n < 5000; n++ {
		k := 3 + rng.IntN(38)
		scale := []float64{0.01, 0.3, 1, 7, 150}[rng.IntN(5)]
		centre := (rng.Float64()*6 - 3) * scale
		in := FunnelInput{}
		for i := 0; i < k; i++ {
			se := scale * (0.05 + rng.Float64()*rng.Float64()*2)
			in.Points = append(in.Points, FunnelPoint{Effect: centre + rng.NormFloat64()*se, SE: se})
		}
		f := frameFunnel(in)
		var placed []rect
		for _, c := range f.contours {
			label := pctLabel(c.Level)
			w := textWidth(label, 11)
			at := contourLabelAt(f, c.Z, w, placed)
			box := rect{at.X - w, at.Y - contourLabelAscent, at.X, at.Y + contourLabelDescent}
			if box.Y1 > funnelBottom || box.X0 < funnelLeft || box.Y0 < funnelTop || box.X1 > funnelRight {
				t.Fatalf("funnel %d (k %d, scale %g, centre %.3g): label %s box %+v leaves the plot area or touches an axis", n, k, scale, centre, label, box)
			}
			for _, q := range placed {
				if box.X0 < q.X1 && q.X0 < box.X1 && box.Y0 < q.Y1 && q.Y0 < box.Y1 {
					t.Fatalf("funnel %d: label %s box %+v overlaps %+v", n, label, box, q)
				}
			}
			placed = append(placed, box)
		}
	}
}
