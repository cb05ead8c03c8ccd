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
	compared := 0
	for _, f := range fits {
		c := f.Case
		r, err := SelectionModel(c.Effects, c.SEs, SelectionSettings{Cutpoints: c.Cutpoints, Direction: c.Direction})
		if got := errorClass(err); got != f.Error {
			t.Errorf("%s: error %q (%v), before %q", c.Name, got, err, f.Error)
			continue
		}
		if f.Error != "" {
			continue
		}
		compared++
		got := fitValues(r)
		for name, ws := range f.Value {
			want, _ := strconv.ParseFloat(ws, 64)
			g, _ := strconv.ParseFloat(got[name], 64)
			if !sameAnswer(g, want, name) {
				t.Errorf("%s: %s = %.17g, before %.17g (relative %.2g)", c.Name, name, g, want, math.Abs(g-want)/math.Abs(want))
			}
		}
	}
	t.Logf("%d fits compared, %d cases in all", compared, len(fits))
}

// sameAnswer is agreement to 1e-6 relative; values that are zero up to
// the optimizer's tolerance (a tau² at its boundary is reported as 0)
// agree within 1e-9 absolute.
func sameAnswer(got, want float64, _ string) bool {
	if math.IsNaN(want) || math.IsNaN(got) {
		return math.IsNaN(want) && math.IsNaN(got)
	}
	return math.Abs(got-want) <= 1e-6*math.Abs(want) || math.Abs(got-want) <= 1e-9
}
