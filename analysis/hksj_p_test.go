package analysis

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// HKSJP is the p of the HKSJ t test, so it agrees with the HKSJ interval.
// Check values: testdata/reference/ci_p_consistency.txt (scipy 1.10.1 and
// statsmodels 0.13.5; the DL HKSJ SE equals statsmodels' "random effect
// wls" sd_eff).
func TestHKSJP(t *testing.T) {
	for _, c := range []struct {
		name              string
		effects, seEffect []float64
		tau2              Tau2Method
		trunc             bool
		se, lo, hi, p     float64
	}{
		{"example dl", []float64{0.10, 0.32, 0.05, 0.40}, []float64{0.12, 0.15, 0.10, 0.20}, Tau2DL, false,
			0.07810762754338975, -0.0822723820928001, 0.4148742792871599, 0.12311307476307805},
		{"example reml", []float64{0.10, 0.32, 0.05, 0.40}, []float64{0.12, 0.15, 0.10, 0.20}, Tau2REML, false,
			0.07783881522047274, -0.08279356753890063, 0.41264213227329527, 0.12432482873315165},
		{"agree untruncated", []float64{0.30, 0.32, 0.29, 0.31, 0.28}, []float64{0.10, 0.12, 0.11, 0.15, 0.09}, Tau2REML, false,
			0.00710383681850528, 0.27679496204396964, 0.31624178796969543, 1.96905001894773e-06},
		{"agree floored", []float64{0.30, 0.32, 0.29, 0.31, 0.28}, []float64{0.10, 0.12, 0.11, 0.15, 0.09}, Tau2REML, true,
			0.04879556671018302, 0.16104016265899224, 0.43199658735467283, 0.003705635213145916},
	} {
		r, err := RandomEffects(c.effects, c.seEffect, Settings{Tau2: c.tau2, TruncateHKSJ: c.trunc})
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range []struct {
			name      string
			got, want float64
		}{{"se", r.HKSJSE, c.se}, {"low", r.HKSJLow, c.lo}, {"high", r.HKSJHigh, c.hi}, {"p", r.HKSJP, c.p}} {
			if !scalar.EqualWithinAbsOrRel(v.got, v.want, 1e-8, 1e-8) {
				t.Errorf("%s: HKSJ %s = %.17g, want %.17g", c.name, v.name, v.got, v.want)
			}
		}
	}
	// k = 1: no HKSJ test.
	r, err := RandomEffects([]float64{0.2}, []float64{0.1}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if r.HKSJP == r.HKSJP {
		t.Errorf("k = 1: HKSJP = %v, want NaN", r.HKSJP)
	}
}
