package bias

import (
	"strings"
	"testing"
)

func TestRunMatchesParts(t *testing.T) {
	t.Parallel()
	d := setByName("asym10")
	b, err := Run(d.effects, d.seEffects, Options{})
	if err != nil {
		t.Fatal(err)
	}
	ref := lmReference["asym10"]
	// R 4.2.2 values (bias_regression.R), as in TestEggerAgainstLM.
	checkClose(t, "Egger bias", b.Egger.Bias, ref.pet.slope, wlsTol)
	checkClose(t, "PET", b.PET.Estimate, ref.pet.intercept, wlsTol)
	checkClose(t, "PEESE", b.PEESE.Estimate, ref.peese.intercept, wlsTol)
	// scipy 1.10.1 value (bias_begg.py), as in TestBeggAgainstScipy.
	checkClose(t, "Begg tau", b.Begg.Tau, 0.9555555555555554, beggTol)
	if b.Selection == nil {
		t.Fatalf("selection model missing: %q", b.Warnings)
	}
	// R 4.2.2 optim value, as in TestUnadjustedAgainstOptim.
	checkClose(t, "unadjusted", b.Selection.UnadjustedEstimate, 0.26102260691084928, 1e-6)
	if b.EggerSampleSize != nil {
		t.Errorf("EggerSampleSize without an x")
	}
	if len(b.Funnel.Points) != len(d.effects) || len(b.Funnel.EggerLine) != DefaultGridPoints {
		t.Errorf("funnel: %d points, %d line points", len(b.Funnel.Points), len(b.Funnel.EggerLine))
	}
	// Egger p = 2.7e-06 with k = 10: serious concern by Grade's rule.
	if b.Grade.Level != GradeSerious {
		t.Errorf("Grade = %q, want %q", b.Grade.Level, GradeSerious)
	}
}

func TestRunWarnsInsteadOfFailing(t *testing.T) {
	t.Parallel()
	// sym12 leaves the first p interval of the selection model empty;
	// small5 has too few studies for the tests to be recommended.
	for _, c := range []struct {
		name, set, want string
	}{
		{"empty p interval", "sym12", "no study with one-sided p"},
		{"few studies", "small5", "not recommended with fewer than 10 studies"},
	} {
		t.Run(c.name, func(t *testing.T) {
			d := setByName(c.set)
			b, err := Run(d.effects, d.seEffects, Options{Direction: 1})
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, w := range b.Warnings {
				found = found || strings.Contains(w, c.want)
			}
			if !found {
				t.Errorf("no warning containing %q in %q", c.want, b.Warnings)
			}
		})
	}
}

func TestRunNBasedX(t *testing.T) {
	t.Parallel()
	d := smdSet()
	b, err := Run(d.effects, d.seEffects, Options{NBasedX: smdNBasedX(), SkipSelection: true})
	if err != nil {
		t.Fatal(err)
	}
	if b.EggerSampleSize == nil || b.Selection != nil {
		t.Fatalf("EggerSampleSize %v, Selection %v", b.EggerSampleSize, b.Selection)
	}
	// R 4.2.2 (bias_regression.R): lm(d ~ w_smd, weights = 1/w_smd^2).
	checkClose(t, "sample-size bias", b.EggerSampleSize.Bias, 3.1090885549209948, wlsTol)
}

func TestRunErrors(t *testing.T) {
	t.Parallel()
	if _, err := Run([]float64{1, 2}, []float64{1, 1}, Options{}); err == nil {
		t.Errorf("k = 2 accepted")
	}
	if _, err := Run([]float64{1, 2, 3}, []float64{1, 0, 1}, Options{}); err == nil {
		t.Errorf("zero SE accepted")
	}
}
