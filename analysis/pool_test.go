package analysis

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

func mathInf() float64 { return math.Inf(1) }

// propTol: the same estimators on transformed data; iterative tau² stops at
// a relative step of DefaultTol, so results agree to about 1e-9.
const propTol = 1e-8

func simulateMeta(rnd *rand.Rand, k int) (effects, seEffects []float64) {
	tau := rnd.Float64() * 0.5
	for range k {
		s := 0.05 + 0.4*rnd.Float64()
		seEffects = append(seEffects, s)
		effects = append(effects, 0.3+rnd.NormFloat64()*math.Sqrt(s*s+tau*tau))
	}
	return effects, seEffects
}

func TestPoolProperties(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(7, 11))
	for i := range 60 {
		k := 2 + i%14
		y, s := simulateMeta(rnd, k)
		base, err := Pool(y, s, Settings{})
		if err != nil {
			t.Fatal(err)
		}
		// Study order: reverse.
		ry, rs := slices.Clone(y), slices.Clone(s)
		slices.Reverse(ry)
		slices.Reverse(rs)
		rev, _ := Pool(ry, rs, Settings{})
		// Scale by c: estimates × c, tau² × c².
		const c = 3.7
		sy, ss := make([]float64, k), make([]float64, k)
		for j := range y {
			sy[j], ss[j] = c*y[j], c*s[j]
		}
		scaled, _ := Pool(sy, ss, Settings{})
		// Shift by a: estimates + a, tau² unchanged.
		const a = -12.5
		hy := make([]float64, k)
		for j := range y {
			hy[j] = y[j] + a
		}
		shifted, _ := Pool(hy, s, Settings{})

		closeTo(t, "fixed reversed", rev.Fixed.Estimate, base.Fixed.Estimate, propTol)
		closeTo(t, "fixed scaled", scaled.Fixed.Estimate, c*base.Fixed.Estimate, propTol)
		closeTo(t, "fixed shifted", shifted.Fixed.Estimate, base.Fixed.Estimate+a, propTol)
		closeTo(t, "Q scaled", scaled.Het.Q, base.Het.Q, propTol)
		for m := range base.ByMethod {
			b := base.ByMethod[m]
			closeTo(t, "tau2 reversed", rev.ByMethod[m].Tau2, b.Tau2, propTol)
			closeTo(t, "estimate reversed", rev.ByMethod[m].Estimate, b.Estimate, propTol)
			closeTo(t, "tau2 scaled", scaled.ByMethod[m].Tau2, c*c*b.Tau2, propTol)
			closeTo(t, "estimate scaled", scaled.ByMethod[m].Estimate, c*b.Estimate, propTol)
			closeTo(t, "se scaled", scaled.ByMethod[m].SE, c*b.SE, propTol)
			closeTo(t, "tau2 ci high scaled", scaled.ByMethod[m].Tau2CIHigh, c*c*b.Tau2CIHigh, propTol)
			closeTo(t, "tau2 shifted", shifted.ByMethod[m].Tau2, b.Tau2, propTol)
			closeTo(t, "estimate shifted", shifted.ByMethod[m].Estimate, b.Estimate+a, propTol)
			if b.Tau2 == 0 {
				closeTo(t, "tau2 = 0 gives fixed", b.Estimate, base.Fixed.Estimate, 1e-14)
				closeTo(t, "tau2 = 0 gives fixed SE", b.SE, base.Fixed.SE, 1e-14)
			}
		}
		var sum float64
		for _, w := range base.Random.Weights {
			sum += w
		}
		closeTo(t, "weights sum", sum, 100, 1e-12)
		for j, l := range base.LeaveOneOut {
			closeTo(t, "leave-one-out reversed", rev.LeaveOneOut[k-1-j].Estimate, l.Estimate, propTol)
		}
		if k >= 3 && base.MostInfluential != k-1-rev.MostInfluential {
			t.Errorf("most influential %d, reversed %d", base.MostInfluential, rev.MostInfluential)
		}
	}
}

func TestPoolOneStudy(t *testing.T) {
	t.Parallel()
	res, err := Pool([]float64{0.4}, []float64{0.2}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range append([]RandomResult{res.Random}, res.ByMethod[:]...) {
		if r.Tau2 != 0 || r.Estimate != 0.4 || r.SE != 0.2 || !r.Converged {
			t.Errorf("%s: got tau2 %g, estimate %g, se %g", r.Method, r.Tau2, r.Estimate, r.SE)
		}
		for _, x := range []float64{r.HKSJLow, r.HKSJHigh, r.PILow, r.PIHigh, r.Tau2CILow, r.Tau2CIHigh} {
			if !math.IsNaN(x) {
				t.Errorf("%s: want NaN for undefined intervals, got %g", r.Method, x)
			}
		}
	}
	if res.Fixed.Estimate != 0.4 || res.Fixed.Weights[0] != 100 || !math.IsNaN(res.Het.I2) || res.Het.DF != 0 {
		t.Errorf("fixed %+v het %+v", res.Fixed, res.Het)
	}
	if res.MostInfluential != -1 || len(res.LeaveOneOut) != 0 {
		t.Errorf("leave-one-out %v, most influential %d", res.LeaveOneOut, res.MostInfluential)
	}
	if !hasWarning(res, "Only one study") {
		t.Errorf("warnings %q", res.Warnings)
	}
}

func TestPoolTwoStudies(t *testing.T) {
	t.Parallel()
	res, err := Pool([]float64{0.1, 0.9}, []float64{0.12, 0.15}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(res.Random.PILow) || math.IsNaN(res.Random.HKSJLow) {
		t.Errorf("PI %g, HKSJ %g", res.Random.PILow, res.Random.HKSJLow)
	}
	if res.MostInfluential != -1 || len(res.LeaveOneOut) != 2 {
		t.Errorf("leave-one-out %v, most influential %d", res.LeaveOneOut, res.MostInfluential)
	}
	// Leaving one of two out leaves the other study.
	closeTo(t, "leave first out", res.LeaveOneOut[0].Estimate, 0.9, 1e-15)
	if !hasWarning(res, "single degree of freedom") || !hasWarning(res, "prediction interval") {
		t.Errorf("warnings %q", res.Warnings)
	}
}

func TestPoolIdenticalEffects(t *testing.T) {
	t.Parallel()
	y := []float64{0.35, 0.35, 0.35, 0.35}
	res, err := Pool(y, []float64{0.1, 0.2, 0.3, 0.15}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Het.Q > 1e-28 || res.Het.I2 != 0 {
		t.Errorf("Q %g, I2 %g", res.Het.Q, res.Het.I2)
	}
	for _, r := range res.ByMethod {
		if r.Tau2 != 0 || r.Tau2CILow != 0 || r.Tau2CIHigh != 0 {
			t.Errorf("%s: tau2 %g [%g, %g]", r.Method, r.Tau2, r.Tau2CILow, r.Tau2CIHigh)
		}
		closeTo(t, "estimate", r.Estimate, 0.35, 1e-15)
		closeTo(t, "se = fixed se", r.SE, res.Fixed.SE, 1e-15)
	}
}

func TestPoolHugeStudy(t *testing.T) {
	t.Parallel()
	y := []float64{0.2, 0.5, 0.1, 0.8, 0.45}
	s := []float64{0.2, 0.25, 0.3, 0.2, 1e-6}
	res, err := Pool(y, s, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "fixed", res.Fixed.Estimate, 0.45, 1e-9)
	if res.Fixed.Weights[4] < 99.99 {
		t.Errorf("weight of huge study %g", res.Fixed.Weights[4])
	}
	for _, r := range res.ByMethod {
		if !r.Converged || math.IsNaN(r.Estimate) {
			t.Errorf("%s did not converge", r.Method)
		}
	}
	// The restricted likelihood is maximal at tau² = 0 here although DL
	// gives 0.013: R 4.2.2 optimize(reml_ll, c(0, 1), maximum = TRUE,
	// tol = 1e-12) with reml_ll as in testdata/reference/pool_reml.R
	// returns 4.23e-13 (objective 2.796087).
	if r := res.ByMethod[2]; r.Tau2 != 0 {
		t.Errorf("REML tau2 %g, want 0", r.Tau2)
	}
}

func TestPoolInputErrors(t *testing.T) {
	t.Parallel()
	labels := []string{"Ames 2001", "Bose 2004", "Cruz 2010"}
	for _, tc := range []struct {
		name    string
		effects []float64
		ses     []float64
		labels  []string
		index   int
		field   string
		want    error
	}{
		{"nan effect", []float64{1, math.NaN(), 2}, []float64{1, 1, 1}, labels, 1, "effect", ErrNonFinite},
		{"zero se", []float64{1, 2, 3}, []float64{1, 1, 0}, labels, 2, "se_effect", ErrNonPositiveSE},
		{"negative se", []float64{1, 2, 3}, []float64{-1, 1, 1}, nil, 0, "se_effect", ErrNonPositiveSE},
		{"inf se", []float64{1, 2, 3}, []float64{1, math.Inf(1), 1}, nil, 1, "se_effect", ErrNonFinite},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Pool(tc.effects, tc.ses, Settings{Labels: tc.labels})
			var se *StudyError
			if !errors.Is(err, tc.want) || !errors.As(err, &se) || se.Index != tc.index || se.Field != tc.field {
				t.Fatalf("got %v, want %v at study %d", err, tc.want, tc.index)
			}
			if tc.labels != nil && !strings.Contains(err.Error(), tc.labels[tc.index]) {
				t.Errorf("message %q does not name %q", err, tc.labels[tc.index])
			}
			for _, f := range []func() error{
				func() error { _, _, err := FixedEffect(tc.effects, tc.ses, 0); return err },
				func() error { _, err := RandomEffects(tc.effects, tc.ses, Settings{}); return err },
				func() error { _, _, _, err := Tau2(tc.effects, tc.ses, Tau2PM, Settings{}); return err },
			} {
				if err := f(); !errors.Is(err, tc.want) {
					t.Errorf("got %v, want %v", err, tc.want)
				}
			}
		})
	}
	if _, err := Pool(nil, nil, Settings{}); !errors.Is(err, ErrNoStudies) {
		t.Errorf("no studies: got %v", err)
	}
	if _, err := Pool([]float64{1}, []float64{1}, Settings{Level: 1.2}); !errors.Is(err, ErrLevel) {
		t.Errorf("level: got %v", err)
	}
	if _, err := Pool([]float64{1}, []float64{1}, Settings{Tau2: "ml"}); !errors.Is(err, ErrUnknownTau2) {
		t.Errorf("method: got %v", err)
	}
}

func TestNonConvergenceReported(t *testing.T) {
	t.Parallel()
	d := datasetByName(t, "high_heterogeneity")
	res, err := Pool(d.effects, d.seEffects, Settings{MaxIter: 1, Tau2: Tau2PM})
	if err != nil {
		t.Fatal(err)
	}
	pm := res.ByMethod[1]
	if pm.Converged || !math.IsNaN(pm.Tau2) || !math.IsNaN(pm.Estimate) {
		t.Errorf("PM with one iteration: converged %v, tau2 %g", pm.Converged, pm.Tau2)
	}
	if !hasWarning(res, "Paule-Mandel tau² estimate did not converge") {
		t.Errorf("warnings %q", res.Warnings)
	}
	if !res.ByMethod[0].Converged || math.IsNaN(res.ByMethod[0].Estimate) {
		t.Error("DL must not be affected")
	}
}

func TestTruncateHKSJ(t *testing.T) {
	t.Parallel()
	// Nearly identical effects: the HKSJ scale factor is far below 1.
	y, s := []float64{0.30, 0.31, 0.29, 0.30}, []float64{0.2, 0.2, 0.25, 0.3}
	plain, _ := Pool(y, s, Settings{})
	trunc, _ := Pool(y, s, Settings{TruncateHKSJ: true})
	if !(plain.Random.HKSJScale < 1) || trunc.Random.HKSJScale != 1 {
		t.Errorf("scale %g, truncated %g", plain.Random.HKSJScale, trunc.Random.HKSJScale)
	}
	closeTo(t, "truncated SE", trunc.Random.HKSJSE, trunc.Random.SE, 1e-15)
	if !hasWarning(plain, "not truncated") || hasWarning(trunc, "not truncated") {
		t.Errorf("warnings %q / %q", plain.Warnings, trunc.Warnings)
	}
}

func TestByTau2(t *testing.T) {
	t.Parallel()
	d := datasetByName(t, "k10_moderate")
	res, _ := Pool(d.effects, d.seEffects, Settings{Tau2: Tau2PM})
	for _, m := range []Tau2Method{Tau2DL, Tau2PM, Tau2REML} {
		r, ok := res.ByTau2(m)
		if !ok || r.Method != m {
			t.Errorf("ByTau2(%q) = %q, %v", m, r.Method, ok)
		}
		tau2, conv, _, err := Tau2(d.effects, d.seEffects, m, Settings{})
		if err != nil || !conv || tau2 != r.Tau2 {
			t.Errorf("Tau2(%q) = %g, want %g", m, tau2, r.Tau2)
		}
		re, _ := RandomEffects(d.effects, d.seEffects, Settings{Tau2: m})
		if re.Estimate != r.Estimate || re.Tau2CIHigh != r.Tau2CIHigh {
			t.Errorf("RandomEffects(%q) differs from Pool", m)
		}
	}
	if res.Random.Method != Tau2PM || res.Random.Estimate != res.ByMethod[1].Estimate {
		t.Errorf("Random is %q", res.Random.Method)
	}
	if _, ok := res.ByTau2("ml"); ok {
		t.Error("unknown method accepted")
	}
}

func hasWarning(r MetaResult, part string) bool {
	for _, w := range r.Warnings {
		if strings.Contains(w, part) {
			return true
		}
	}
	return false
}
