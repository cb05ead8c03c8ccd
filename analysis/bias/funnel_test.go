package bias

import (
	"testing"
)

func TestFunnelContours(t *testing.T) {
	t.Parallel()
	// z for two-sided 1%, 5%, 10% (common practice, no source); the full
	// values are from scipy 1.10.1 scipy.stats.norm.isf([0.005, 0.025, 0.05]).
	want := []Contour{
		{0.01, 2.5758293035489004},
		{0.05, 1.959963984540054},
		{0.10, 1.6448536269514729},
	}
	rounded := []float64{2.576, 1.960, 1.645}
	d := setByName("asym10")
	f, err := FunnelData(d.effects, d.seEffects, nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Contours) != len(want) {
		t.Fatalf("%d contours, want %d", len(f.Contours), len(want))
	}
	for i, c := range f.Contours {
		if c.Level != want[i].Level {
			t.Errorf("contour %d level %g, want %g", i, c.Level, want[i].Level)
		}
		checkClose(t, "Z", c.Z, want[i].Z, 1e-12)
		checkClose(t, "Z to three decimals", c.Z, rounded[i], 5e-4)
	}
}

func TestFunnelLine(t *testing.T) {
	t.Parallel()
	d := setByName("asym10")
	ref := lmReference["asym10"].pet
	registry := make([]bool, len(d.effects))
	registry[3] = true
	f, err := FunnelData(d.effects, d.seEffects, registry, 5)
	if err != nil {
		t.Fatal(err)
	}
	if !f.Points[3].Registry || f.Points[2].Registry {
		t.Errorf("registry flags not carried to the points")
	}
	checkClose(t, "MaxSE", f.MaxSE, 0.45, 0)
	if len(f.EggerLine) != 5 {
		t.Fatalf("%d line points, want 5", len(f.EggerLine))
	}
	// At SE = 0 the fitted line and its band are the effect at SE = 0 and its
	// 95% CI from R 4.2.2 (bias_regression.R: lm(y ~ se, weights = 1/se^2),
	// confint).
	p0 := f.EggerLine[0]
	checkClose(t, "line at 0", p0.Effect, ref.intercept, wlsTol)
	checkClose(t, "band low at 0", p0.Low, ref.ciLow, wlsTol)
	checkClose(t, "band high at 0", p0.High, ref.ciHigh, wlsTol)
	last := f.EggerLine[4]
	checkClose(t, "last SE", last.SE, 0.45, 1e-15)
	checkClose(t, "line at max SE", last.Effect, ref.intercept+ref.slope*0.45, wlsTol)
	if !(p0.Low < p0.Effect && p0.Effect < p0.High) {
		t.Errorf("band does not contain the line at 0: %+v", p0)
	}
}

func TestFunnelSmallK(t *testing.T) {
	t.Parallel()
	f, err := FunnelData([]float64{0.2, 0.4}, []float64{0.1, 0.2}, nil, 0)
	if err != nil {
		t.Fatal(err)
	}
	if f.EggerLine != nil {
		t.Errorf("EggerLine with k = 2: %v", f.EggerLine)
	}
	// Fixed effect by hand: weights 100 and 25, (20 + 10) / 125 = 0.24.
	checkClose(t, "FixedEstimate", f.FixedEstimate, 0.24, 1e-14)
	if _, err := FunnelData([]float64{0.2, 0.4}, []float64{0.1, 0.2}, nil, 1); err == nil {
		t.Errorf("gridPoints = 1 accepted")
	}
}
