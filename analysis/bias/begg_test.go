package bias

import (
	"errors"
	"math"
	"testing"
)

// beggTol is the relative tolerance against scipy: the same closed-form
// statistic, so only rounding separates the two.
const beggTol = 1e-12

// Values from scipy 1.10.1, testdata/reference/bias_begg.py:
// scipy.stats.kendalltau(dev, var, variant="b", method="asymptotic") on the
// standardized deviates; |z| = scipy.stats.norm.isf(p/2).
func TestBeggAgainstScipy(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		set        string
		tau, p, az float64
		tied       bool
	}{
		{"asym10", 0.9555555555555554, 0.00012004368190442334, 3.846036921299639, false},
		{"negmd7", -1.0, 0.001610794963892616, 3.1539448982270812, false},
		{"sym12", 0.0909090909090909, 0.6807533824170628, 0.4114352887942451, false},
		{"small5", 0.9999999999999999, 0.014305878435429648, 2.449489742783178, false},
		{"ties8", 0.9622504486493761, 0.0014255493646181372, 3.189427409450638, true},
	} {
		t.Run(c.set, func(t *testing.T) {
			d := setByName(c.set)
			got, err := Begg(d.effects, d.seEffects)
			if err != nil {
				t.Fatal(err)
			}
			checkClose(t, "Tau", got.Tau, c.tau, beggTol)
			checkClose(t, "P", got.P, c.p, beggTol)
			checkClose(t, "|Z|", math.Abs(got.Z), c.az, 1e-9) // isf round trip
			if math.Signbit(got.Z) != math.Signbit(got.Tau) {
				t.Errorf("Z = %g and Tau = %g differ in sign", got.Z, got.Tau)
			}
			if tied := got.TiedDeviatePairs+got.TiedVariancePairs > 0; tied != c.tied {
				t.Errorf("ties found %v, want %v (%s)", tied, c.tied, got.Ties)
			}
		})
	}
}

// TestBeggTieCounts checks the tie bookkeeping of ties8 by hand: studies 1
// and 3 are identical (one tied pair of deviates); variances 0.2² (x2),
// 0.1² (x2) and 0.15² (x2) give three tied pairs. Hand count.
func TestBeggTieCounts(t *testing.T) {
	t.Parallel()
	d := setByName("ties8")
	got, err := Begg(d.effects, d.seEffects)
	if err != nil {
		t.Fatal(err)
	}
	if got.TiedDeviatePairs != 1 || got.TiedVariancePairs != 3 {
		t.Errorf("tied pairs = %d deviates, %d variances; want 1, 3", got.TiedDeviatePairs, got.TiedVariancePairs)
	}
}

func TestBeggErrors(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		name      string
		effects   []float64
		seEffects []float64
		want      error
	}{
		{"two studies", []float64{1, 2}, []float64{1, 2}, ErrTooFewStudies},
		{"all variances tied", []float64{1, 2, 3}, []float64{0.5, 0.5, 0.5}, ErrConstantRegressor},
		{"negative SE", []float64{1, 2, 3}, []float64{0.5, -1, 0.4}, ErrBadSE},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := Begg(c.effects, c.seEffects); !errors.Is(err, c.want) {
				t.Errorf("error %v, want %v", err, c.want)
			}
		})
	}
}
