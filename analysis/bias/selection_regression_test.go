package bias

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"
)

var updateSelection = flag.Bool("update-selection", false, "rewrite testdata/selection_fits.json from the current SelectionModel")

// The fits in testdata/selection_fits.json were written by the selection
// model as it stood before its own Newton iteration replaced gonum's
// (optimize.Newton with a central-difference Hessian of the analytic
// gradient), with go test -run TestSelectionAsBefore -update-selection.
// They are a regression reference, not an outside check: the outside
// checks are TestUnadjustedAgainstOptim (R's optim), TestSelectionGradient
// (gonum's finite differences) and TestSelectionRecovery (simulation). The
// faster fit must give the same answers to 1e-6 relative.

type selectionCase struct {
	Name      string    `json:"name"`
	Effects   []float64 `json:"effects"`
	SEs       []float64 `json:"ses"`
	Cutpoints []float64 `json:"cutpoints,omitempty"`
	Direction float64   `json:"direction"`
}

type selectionFit struct {
	Case  selectionCase     `json:"case"`
	Error string            `json:"error"` // "", "empty", "noconv" or "other"
	Value map[string]string `json:"values"`
}

func selectionCases() []selectionCase {
	var cs []selectionCase
	for _, d := range referenceSets() {
		cs = append(cs, selectionCase{Name: d.name, Effects: d.effects, SEs: d.seEffects})
		cs = append(cs, selectionCase{Name: d.name + "/two cuts", Effects: d.effects, SEs: d.seEffects, Cutpoints: []float64{0.025, 0.5}})
	}
	effects, seEffects := benchMetas(300, 10)
	for i := range effects {
		cs = append(cs, selectionCase{Name: fmt.Sprintf("bench%03d", i), Effects: effects[i], SEs: seEffects[i], Direction: 1})
	}
	rng := rand.New(rand.NewPCG(41, 7))
	for i := range 60 {
		k := 5 + rng.IntN(40)
		y, se := simulateSelected(rng, k, 0.1+0.3*rng.Float64(), 0.05*rng.Float64(), 0.2+0.8*rng.Float64())
		cs = append(cs, selectionCase{Name: fmt.Sprintf("sim%02d k%d", i, k), Effects: y, SEs: se})
	}
	return cs
}

func fitValues(r SelectionResult) map[string]string {
	v := map[string]string{}
	put := func(name string, x float64) { v[name] = strconv.FormatFloat(x, 'g', -1, 64) }
	put("estimate", r.Estimate)
	put("se", r.SE)
	put("tau2", r.Tau2)
	put("tau2_se", r.Tau2SE)
	for j := range r.Weights {
		put(fmt.Sprintf("weight%d", j), r.Weights[j])
		put(fmt.Sprintf("weight%d_se", j), r.WeightsSE[j])
	}
	put("loglik", r.LogLik)
	put("loglik_null", r.LogLikNull)
	put("lrt_p", r.LRTP)
	put("unadjusted_estimate", r.UnadjustedEstimate)
	put("unadjusted_se", r.UnadjustedSE)
	put("unadjusted_tau2", r.UnadjustedTau2)
	put("direction", r.Direction)
	return v
}

func errorClass(err error) string {
	switch {
	case err == nil:
		return ""
	case errors.Is(err, ErrEmptyInterval):
		return "empty"
	case errors.Is(err, ErrNoConvergence):
		return "noconv"
	}
	return "other"
}

const selectionFitsFile = "testdata/selection_fits.json"

// TestSelectionAsBefore refits every case and compares with the stored fits.
func TestSelectionAsBefore(t *testing.T) {
	cases := selectionCases()
	if *updateSelection {
		var fits []selectionFit
		for _, c := range cases {
			r, err := SelectionModel(c.Effects, c.SEs, SelectionSettings{Cutpoints: c.Cutpoints, Direction: c.Direction})
			fits = append(fits, selectionFit{Case: c, Error: errorClass(err), Value: fitValues(r)})
		}
		var b []byte
		for i, f := range fits { // one fit per line
			line, err := json.Marshal(f)
			if err != nil {
				t.Fatal(err)
			}
			b = append(append(b, "[,"[min(i, 1)]), line...)
			b = append(b, '\n')
		}
		b = append(b, "]\n"...)
		if err := os.MkdirAll("testdata", 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(selectionFitsFile, b, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	b, err := os.ReadFile(selectionFitsFile)
	if err != nil {
		t.Fatal(err)
	}
	var fits []selectionFit
	if err := json.Unmarshal(b, &fits); err != nil {
		t.Fatal(err)
	}
	if len(fits) != len(cases) {
		t.Fatalf("%d stored fits, %d cases", len(fits), len(cases))
	}
	compared, improved := 0, 0
	for _, f := range fits {
		c := f.Case
		r, err := SelectionModel(c.Effects, c.SEs, SelectionSettings{Cutpoints: c.Cutpoints, Direction: c.Direction})
		if got := errorClass(err); got == "" && f.Error == "noconv" {
			t.Logf("%s: converges now (%s); it did not before", c.Name, r.Message)
			continue
		} else if got != f.Error {
			t.Errorf("%s: error %q (%v), before %q", c.Name, got, err, f.Error)
			continue
		}
		if f.Error != "" {
			continue
		}
		got := fitValues(r)
		if before, _ := strconv.ParseFloat(f.Value["loglik"], 64); r.LogLik > before+1e-6 {
			// The earlier fit stopped at a lower point of the likelihood
			// (tau² at the boundary from a start there); this is the
			// maximum it was looking for.
			t.Logf("%s: log-likelihood %.10g, higher than before (%.10g)", c.Name, r.LogLik, before)
			improved++
			continue
		}
		compared++
		var sumVar float64
		for _, se := range c.SEs {
			sumVar += se * se
		}
		zeroTau2 := tau2BoundaryRel * sumVar / float64(len(c.SEs))
		for name, ws := range f.Value {
			want, _ := strconv.ParseFloat(ws, 64)
			g, _ := strconv.ParseFloat(got[name], 64)
			if strings.HasSuffix(name, "tau2") && math.Abs(g) < zeroTau2 && math.Abs(want) < zeroTau2 {
				continue // both at the boundary, as the model defines it
			}
			if strings.Contains(name, "tau2") && math.Abs(g-want) <= zeroTau2 {
				continue // tau² and its SE on the scale of the within-study variance
			}
			if name == "lrt_p" && math.Abs(g-want) <= 1e-5 || name == "tau2_se" && math.Abs(g-want) <= 1e-5*math.Abs(want) {
				continue
			}
			if !sameAnswer(g, want, name) {
				t.Errorf("%s: %s = %.17g, before %.17g (relative %.2g)", c.Name, name, g, want, math.Abs(g-want)/math.Abs(want))
			}
		}
	}
	t.Logf("%d fits compared, %d cases in all", compared, len(fits))
	if improved > len(fits)/50 {
		t.Errorf("%d fits reach a higher maximum than before; more than 2%% is suspicious", improved)
	}
}

// sameAnswer is agreement to 1e-6 relative, or 1e-9 absolute for values
// that are zero up to the optimizer's tolerance. A tau² below the model's
// boundary (1e-6 of the mean within-study variance) on both sides counts
// as the same: each optimizer stops somewhere in the flat tail towards 0.
// Where the likelihood is flat both optimizers stop anywhere the gradient
// is within tolerance, so tau² and its SE agree to 1e-6 of the mean
// within-study variance (the scale on which the fit works), the SE of tau²
// (the inverse curvature where the fit stopped) to 1e-5, and the LRT p
// value, a steep function of a tiny LRT near p = 1, to 1e-5 absolute.
// A fit that did not converge before and converges now is logged, as is
// one that reaches a higher log-likelihood than before (the earlier fit
// stopped short of the maximum).
func sameAnswer(got, want float64, _ string) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	return math.Abs(got-want) <= 1e-6*math.Abs(want) || math.Abs(got-want) <= 1e-9
}
