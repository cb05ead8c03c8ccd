package compare

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestBiasJSONNames checks the JSON names of the Egger regression: the
// effect at SE = 0 under effect_at_se0*, and what the effects were
// regressed on under x ("se", or "n_based" for √(1/n₁+1/n₂)).
func TestBiasJSONNames(t *testing.T) {
	// Invented SMD studies with arm sizes; larger effects in smaller studies.
	var studies []StudyEffect
	for i, n := range []int{12, 18, 25, 30, 40, 55, 70, 90, 120, 150} {
		g := 0.2 + 3/float64(n) + 0.05*float64(i%4-1) // not exactly on a line
		se := 2 / float64(2*n) * 10
		studies = append(studies, StudyEffect{Study: "S" + string(rune('A'+i)), Effect: g, SE: se, TreatN: n, CtrlN: n + i%3})
	}
	rep := BiasFor(studies, "SMD", BiasOptions{SkipSelection: true})
	data, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	var got struct {
		Egger           map[string]any `json:"egger"`
		EggerSampleSize map[string]any `json:"egger_sample_size"`
	}
	if err := json.Unmarshal(data, &got); err != nil {
		t.Fatal(err)
	}
	for name, e := range map[string]map[string]any{"egger": got.Egger, "egger_sample_size": got.EggerSampleSize} {
		if e == nil {
			t.Fatalf("%s missing in %s", name, data)
		}
		for _, key := range []string{"effect_at_se0", "effect_at_se0_se", "effect_at_se0_ci_low", "effect_at_se0_ci_high", "x"} {
			if _, ok := e[key]; !ok {
				t.Errorf("%s lacks %q", name, key)
			}
		}
		for key := range e {
			if strings.HasPrefix(key, "limit") || key == "predictor" {
				t.Errorf("%s still has the old key %q", name, key)
			}
		}
		lo, est, hi := e["effect_at_se0_ci_low"].(float64), e["effect_at_se0"].(float64), e["effect_at_se0_ci_high"].(float64)
		if !(lo < est && est < hi) {
			t.Errorf("%s: effect at SE = 0 %g outside its interval [%g, %g]", name, est, lo, hi)
		}
	}
	if got.Egger["x"] != "se" || got.EggerSampleSize["x"] != "n_based" {
		t.Errorf("x = %v and %v, want se and n_based", got.Egger["x"], got.EggerSampleSize["x"])
	}
	for _, w := range rep.Warnings {
		if strings.Contains(w, "predictor") {
			t.Errorf("warning uses the old wording: %q", w)
		}
	}
}
