package analysis

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestRandomEstimateIsRandomEffects: over 3000 generated meta-analyses
// (k = 1..12, each tau² estimator), RandomEstimate gives exactly the
// Tau2, Estimate and SE of RandomEffects (checked against statsmodels in
// pool_statsmodels_test.go), and the same errors.
func TestRandomEstimateIsRandomEffects(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(15, 3))
	methods := []Tau2Method{Tau2DL, Tau2PM, Tau2REML}
	for i := range 3000 {
		y, se := simulateMeta(rnd, 1+rnd.IntN(12))
		s := Settings{Tau2: methods[i%len(methods)]}
		want, err := RandomEffects(y, se, s)
		if err != nil {
			t.Fatal(err)
		}
		mu, seMu, tau2, conv, err := RandomEstimate(y, se, s)
		if err != nil {
			t.Fatal(err)
		}
		if conv != want.Converged {
			t.Fatalf("case %d: converged %v, RandomEffects %v", i, conv, want.Converged)
		}
		if !conv {
			if !math.IsNaN(mu) || !math.IsNaN(seMu) || !math.IsNaN(tau2) {
				t.Errorf("case %d: not converged but numbers %v %v %v", i, mu, seMu, tau2)
			}
			continue
		}
		if mu != want.Estimate || seMu != want.SE || tau2 != want.Tau2 {
			t.Errorf("case %d (%s, k=%d): (%v, %v, %v), RandomEffects (%v, %v, %v)",
				i, s.Tau2, len(y), mu, seMu, tau2, want.Estimate, want.SE, want.Tau2)
		}
	}
	if _, _, _, _, err := RandomEstimate([]float64{1, 2}, []float64{0.1, 0}, Settings{}); err == nil {
		t.Error("a zero SE: no error")
	}
	if _, _, _, _, err := RandomEstimate([]float64{1}, []float64{0.1}, Settings{Tau2: "none"}); err == nil {
		t.Error("an unknown tau² method: no error")
	}
}

// TestRandomEstimateByHand: two studies, DL. y = (0, 1), se = (1, 1):
// Q = 0.5, C = 2 - 2/2 = 1, tau² = (Q - 1)/C < 0 -> 0; mu = 0.5,
// seMu = 1/sqrt(2). y = (0, 3): Q = 4.5, tau² = 3.5, w* = 1/4.5 each,
// mu = 1.5, seMu = sqrt(4.5/2) = 1.5 (DerSimonian & Laird 1986; by hand).
func TestRandomEstimateByHand(t *testing.T) {
	for _, c := range []struct {
		y              []float64
		mu, seMu, tau2 float64
	}{
		{[]float64{0, 1}, 0.5, 1 / math.Sqrt2, 0},
		{[]float64{0, 3}, 1.5, 1.5, 3.5},
	} {
		mu, seMu, tau2, ok, err := RandomEstimate(c.y, []float64{1, 1}, Settings{Tau2: Tau2DL})
		if err != nil || !ok {
			t.Fatal(err, ok)
		}
		if math.Abs(mu-c.mu) > 1e-12 || math.Abs(seMu-c.seMu) > 1e-12 || math.Abs(tau2-c.tau2) > 1e-12 {
			t.Errorf("y %v: (%v, %v, %v), want (%v, %v, %v)", c.y, mu, seMu, tau2, c.mu, c.seMu, c.tau2)
		}
	}
}
