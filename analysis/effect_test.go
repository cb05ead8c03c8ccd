package analysis

import (
	"errors"
	"testing"
)

// bookTol: the book prints four decimals.
const bookTol = 5e-5

func TestBorensteinChapter4Example(t *testing.T) {
	t.Parallel()
	// Borenstein, Hedges, Higgins & Rothstein (2009) Introduction to
	// Meta-Analysis, ch. 4 worked example: treated mean 103, SD 5.5, n 50;
	// control mean 100, SD 4.5, n 50. Dataset and printed results from
	// memory: d = 0.5970, V_d = 0.0418, J = 0.9923, g = 0.5924,
	// V_g = 0.0411; raw difference D = 3.0000 with V_D = 1.0100 (equal
	// group sizes make the pooled and unpooled variances the same).
	treat, ctrl := Arm{Mean: 103, SD: 5.5, N: 50}, Arm{Mean: 100, SD: 4.5, N: 50}
	g, err := HedgesG(treat, ctrl)
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "g", g.Estimate, 0.5924, bookTol)
	closeTo(t, "var g", g.SE*g.SE, 0.0411, bookTol)
	closeTo(t, "d (g / J)", g.Estimate/0.9923, 0.5970, bookTol)
	md, err := MeanDifference(treat, ctrl)
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "md", md.Estimate, 3, convTol)
	closeTo(t, "var md", md.SE*md.SE, 1.0100, bookTol)
	if g.Derivations[0].Method != "hedges_g" || md.Derivations[0].Method != "md_from_arms" {
		t.Errorf("methods %q, %q", g.Derivations[0].Method, md.Derivations[0].Method)
	}
}

// borensteinArms is the six-study continuous example of Borenstein et al.
// (2009) ch. 14 (arm summaries from memory).
var borensteinArms = [6][2]Arm{
	{{94, 22, 60}, {92, 20, 60}},
	{{98, 21, 65}, {92, 22, 65}},
	{{98, 28, 40}, {88, 26, 40}},
	{{94, 19, 200}, {82, 17, 200}},
	{{98, 21, 50}, {88, 22, 45}},
	{{96, 21, 85}, {92, 22, 85}},
}

func TestBorensteinChapter14Example(t *testing.T) {
	t.Parallel()
	smd := datasetByName(t, "borenstein_ch14_smd")
	md := datasetByName(t, "borenstein_ch14_md")
	var g, seG, d, seD []float64
	for i, a := range borensteinArms {
		eg, err := HedgesG(a[0], a[1])
		if err != nil {
			t.Fatal(err)
		}
		ed, err := MeanDifference(a[0], a[1])
		if err != nil {
			t.Fatal(err)
		}
		// Per-study g: statsmodels 0.13.5 effectsize_smd (asserted equal in
		// pool_statsmodels.py); its SE from the book formula in numpy.
		closeTo(t, "g", eg.Estimate, smd.effects[i], convTol)
		closeTo(t, "se g", eg.SE, smd.seEffects[i], convTol)
		closeTo(t, "md", ed.Estimate, md.effects[i], convTol)
		closeTo(t, "se md", ed.SE, md.seEffects[i], convTol)
		g, seG = append(g, eg.Estimate), append(seG, eg.SE)
		d, seD = append(d, ed.Estimate), append(seD, ed.SE)
	}
	res, err := Pool(g, seG, Settings{Tau2: Tau2DL})
	if err != nil {
		t.Fatal(err)
	}
	// Book figures for Hedges' g (ch. 14, from memory, four decimals),
	// cross-checked to full precision by TestPoolAgainstStatsmodels:
	// fixed 0.4143 (SE 0.0640), Q = 12.0033 on 5 df, T² = 0.0373,
	// random 0.3582 (SE 0.1052).
	closeTo(t, "fixed g", res.Fixed.Estimate, 0.4143, bookTol)
	closeTo(t, "fixed se", res.Fixed.SE, 0.0640, bookTol)
	closeTo(t, "Q", res.Het.Q, 12.0033, bookTol)
	closeTo(t, "tau2", res.Random.Tau2, 0.0373, bookTol)
	closeTo(t, "random g", res.Random.Estimate, 0.3582, bookTol)
	closeTo(t, "random se", res.Random.SE, 0.1052, bookTol)
	// Raw mean differences: no book figures are used; statsmodels only.
	resMD, err := Pool(d, seD, Settings{Tau2: Tau2DL})
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "fixed md", resMD.Fixed.Estimate, md.fixed[0], closedFormTol)
	closeTo(t, "random md", resMD.Random.Estimate, md.dl[1], closedFormTol)
}

func TestArmErrors(t *testing.T) {
	t.Parallel()
	good := Arm{Mean: 1, SD: 1, N: 10}
	for _, tc := range []struct {
		name        string
		treat, ctrl Arm
		arm, field  string
		want        error
	}{
		{"sd zero", Arm{1, 0, 10}, good, "treat", "sd", ErrNonPositiveSD},
		{"n one", good, Arm{1, 1, 1}, "ctrl", "n", ErrTooFewN},
		{"mean inf", good, Arm{mathInf(), 1, 10}, "ctrl", "mean", ErrNonFinite},
	} {
		t.Run(tc.name, func(t *testing.T) {
			for _, f := range []func(Arm, Arm) (Effect, error){MeanDifference, HedgesG} {
				_, err := f(tc.treat, tc.ctrl)
				var ae *ArmError
				if !errors.Is(err, tc.want) || !errors.As(err, &ae) || ae.Arm != tc.arm || ae.Field != tc.field {
					t.Errorf("got %v, want %v on %s.%s", err, tc.want, tc.arm, tc.field)
				}
			}
		})
	}
}
