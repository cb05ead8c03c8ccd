package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// poolCSV is the arm-level dataset of testdata/reference/cli_pool_statsmodels.py
// (invented for this test).
const poolCSV = `review_id,study,treat_mean,treat_sd,treat_n,ctrl_mean,ctrl_sd,ctrl_n
X,S1,12.1,4.2,40,14.0,4.6,41
X,S2,11.4,5.0,25,14.2,5.3,24
X,S3,13.0,3.9,80,13.6,4.1,82
X,S4,10.2,4.8,18,14.1,4.9,19
X,S5,12.7,4.4,60,13.9,4.5,58
`

// Check values: testdata/reference/cli_pool_statsmodels.txt, from Debian's
// python3-statsmodels 0.13.5 combine_effects (method_re "dl" and "pm") on
// effects computed with the handbook formulas. statsmodels gives I² as a
// fraction; ours is in percent.
var poolChecks = map[string]struct {
	fixed, fixedSE, dl, dlSE, dlTau2, pm, pmSE, pmTau2, q, i2 float64
}{
	"MD": {-1.3709187737179864, 0.41106448388392625, -1.5238820101296207, 0.5006332753706146, 0.3073849068243248,
		-1.5330502734732452, 0.5068907218551321, 0.3326898841324854, 5.295601499680874, 24.465615468968915},
	"SMD": {-0.3239974379017653, 0.09463003864247753, -0.324169813488728, 0.09474300815420585, 8.409549373350063e-05,
		-0.3241737967662709, 0.09474562117559965, 8.604258509461901e-05, 4.007001133738068, 0.17472252950267997},
}

func TestPoolJSON(t *testing.T) {
	path := writeFile(t, t.TempDir(), "studies.csv", poolCSV)
	for measure, want := range poolChecks {
		t.Run(measure, func(t *testing.T) {
			code, out, stderr := runCLI(t, "", "pool", path, "--measure", measure, "--format", "json")
			if code != exitOK {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			var rep struct {
				K       int    `json:"k"`
				Measure string `json:"measure"`
				Studies []struct {
					Study         string   `json:"study"`
					WeightFixed   *float64 `json:"weight_fixed"`
					ConvertedFrom string   `json:"converted_from"`
				} `json:"studies"`
				Fixed struct {
					Estimate, SE, CILow, CIHigh, Z, P *float64
				} `json:"fixed"`
				Heterogeneity struct {
					Q, I2, Tau2 *float64
					DF          int
					Method      string `json:"tau2_method"`
				} `json:"heterogeneity"`
				Random struct {
					Estimate *float64 `json:"estimate"`
					PILow    *float64 `json:"pi_low"`
					HKSJLow  *float64 `json:"hksj_ci_low"`
				} `json:"random"`
				ByMethod map[string]struct {
					Tau2, Estimate, SE *float64
				} `json:"random_by_method"`
				Bias *struct {
					Egger *struct {
						DF int      `json:"df"`
						P  *float64 `json:"p"`
					} `json:"egger"`
					GradeHint struct {
						Level    string   `json:"level"`
						Cautions []string `json:"cautions"`
					} `json:"grade_hint"`
				} `json:"bias"`
				Warnings []string `json:"warnings"`
			}
			if err := json.Unmarshal([]byte(out), &rep); err != nil {
				t.Fatalf("JSON: %v\n%s", err, out)
			}
			if rep.K != 5 || rep.Measure != measure || len(rep.Studies) != 5 || rep.Studies[0].ConvertedFrom != "arms_sd" {
				t.Fatalf("k %d measure %s studies %d", rep.K, rep.Measure, len(rep.Studies))
			}
			const tol = 1e-9
			check := func(name string, got *float64, want float64) {
				t.Helper()
				if got == nil || !scalar.EqualWithinAbsOrRel(*got, want, tol, tol) {
					t.Errorf("%s = %v, want %.17g", name, deref(got), want)
				}
			}
			check("fixed", rep.Fixed.Estimate, want.fixed)
			check("fixed se", rep.Fixed.SE, want.fixedSE)
			check("q", rep.Heterogeneity.Q, want.q)
			check("i2", rep.Heterogeneity.I2, want.i2)
			check("dl", rep.ByMethod["dl"].Estimate, want.dl)
			check("dl se", rep.ByMethod["dl"].SE, want.dlSE)
			check("dl tau2", rep.ByMethod["dl"].Tau2, want.dlTau2)
			// statsmodels' Paule-Mandel iteration stops at its default
			// tolerance, about 1e-8 relative from the root.
			const tolPM = 1e-7
			checkTol := func(name string, got *float64, want float64) {
				t.Helper()
				if got == nil || !scalar.EqualWithinAbsOrRel(*got, want, tolPM, tolPM) {
					t.Errorf("%s = %v, want %.17g", name, deref(got), want)
				}
			}
			checkTol("pm", rep.ByMethod["pm"].Estimate, want.pm)
			checkTol("pm se", rep.ByMethod["pm"].SE, want.pmSE)
			checkTol("pm tau2", rep.ByMethod["pm"].Tau2, want.pmTau2)
			if rep.Heterogeneity.DF != 4 || rep.Heterogeneity.Method != "reml" {
				t.Errorf("df %d method %q, want 4 and reml (the default)", rep.Heterogeneity.DF, rep.Heterogeneity.Method)
			}
			if rep.Random.PILow == nil || rep.Random.HKSJLow == nil {
				t.Errorf("prediction interval or HKSJ missing")
			}
			if rep.Bias == nil || rep.Bias.Egger == nil || rep.Bias.Egger.DF != 3 || len(rep.Bias.GradeHint.Cautions) == 0 {
				t.Errorf("bias block incomplete: %+v", rep.Bias)
			}
		})
	}
}

func TestPoolTableAndErrors(t *testing.T) {
	dir := t.TempDir()
	path := writeFile(t, dir, "studies.csv", poolCSV)
	code, out, stderr := runCLI(t, "", "pool", path, "--tau2", "dl")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, want := range []string{"S1", "fixed effect", "random (dl), Wald", "Between-study variation: tau² (dl)", "Q = 5.30 with 4 df", "Prediction interval", "-1.371", "Leave one out",
		"Egger's test, regressed on SE", "effect at SE = 0: ", "rank correlation test (Begg & Mazumdar 1994)"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	for _, old := range []string{"predictor", "limit ", "Heterogeneity:", "Begg rank", "Begg's"} {
		if strings.Contains(out, old) {
			t.Errorf("table still says %q:\n%s", old, out)
		}
	}
	// stdin works too.
	code, out, _ = runCLI(t, poolCSV, "pool", "-", "--format", "csv")
	if code != exitOK || !strings.HasPrefix(out, "study,effect,se,ci_low,ci_high,weight_fixed,weight_random,converted_from\n") {
		t.Errorf("csv from stdin: exit %d\n%s", code, out)
	}
	// A bad row names the file, the line and the field.
	bad := writeFile(t, dir, "bad.csv", "review_id,study,effect,se\nX,A,1.2,0.5\nX,B,0.4,-1\n")
	code, _, stderr = runCLI(t, "", "pool", bad)
	if code != exitError || !strings.Contains(stderr, "bad.csv:3") || !strings.Contains(stderr, `"se"`) {
		t.Errorf("exit %d, stderr %q: want exit 1 naming bad.csv:3 and the se field", code, stderr)
	}
	code, _, stderr = runCLI(t, "", "pool", filepath.Join(dir, "missing.csv"))
	if code != exitError || !strings.Contains(stderr, "missing.csv") {
		t.Errorf("missing file: exit %d, stderr %q", code, stderr)
	}
}

func deref(x *float64) any {
	if x == nil {
		return nil
	}
	return *x
}

func TestPoolPlots(t *testing.T) {
	dir := t.TempDir()
	path := writeFile(t, dir, "studies.csv", poolCSV)
	funnel, forest := filepath.Join(dir, "funnel.svg"), filepath.Join(dir, "my-forest.png")
	code, _, stderr := runCLI(t, "", "pool", path, "--plot", funnel, "--plot", forest, "--unit", "points")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	svg, err := os.ReadFile(funnel)
	if err != nil || !strings.Contains(string(svg), "<svg") || !strings.Contains(string(svg), "Mean difference (points)") {
		t.Errorf("funnel.svg: %v, %.200s", err, svg)
	}
	png, err := os.ReadFile(forest)
	if err != nil || len(png) < 8 || string(png[1:4]) != "PNG" {
		t.Errorf("my-forest.png is not a PNG: %v", err)
	}
	for _, bad := range []string{"plot.svg", "funnel.jpg"} {
		if code, _, stderr := runCLI(t, "", "pool", path, "--plot", filepath.Join(dir, bad)); code != exitUsage || !strings.Contains(stderr, bad) {
			t.Errorf("--plot %s: exit %d, stderr %q", bad, code, stderr)
		}
	}
}
