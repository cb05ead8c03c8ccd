package bias

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"slices"
	"testing"
)

// balancedFunnel returns ten pairs of studies balanced about 0.5 with
// standard errors growing with distance from the centre (0.125, 0.25, 0.5,
// 1), and removes the left members of the m most distant pairs (for
// removeRight the data are mirrored about 0.5, so the right members go). It
// returns the data and the removed studies.
//
// Pair j sits at distance d = j/16. The m pairs whose member is removed are
// exact mirror images (0.5 ± d, same SE). Each of the other q = 10 - m pairs
// has one member farther out by eps = 1/32 and its weight 1/se² reduced by
// the factor d/(d + eps), so Σ w (y - 0.5) = 0 over every pair and the
// fixed-effect estimate of the trimmed data is exactly the centre, while no
// two distances tie. The farther member alternates between the sides and
// is on the right for the outermost intact pair (j = q).
func balancedFunnel(m int, removeRight bool) (effects, seEffects, removed []float64, removedSE []float64) {
	seOf := func(j int) float64 {
		switch {
		case j <= 3:
			return 0.125
		case j <= 6:
			return 0.25
		case j <= 8:
			return 0.5
		}
		return 1
	}
	const eps = 1.0 / 32
	q := 10 - m
	sideSign := 1.0
	if removeRight {
		sideSign = -1
	}
	add := func(dev, se float64) {
		effects = append(effects, 0.5+sideSign*dev)
		seEffects = append(seEffects, se)
	}
	for j := 1; j <= 10; j++ {
		d, se := float64(j)/16, seOf(j)
		switch {
		case j > q: // removed pair: keep the right member only
			add(d, se)
			removed = append(removed, 0.5-sideSign*d)
			removedSE = append(removedSE, se)
		case (q-j)%2 == 0: // right member farther
			add(d+eps, se*math.Sqrt((d+eps)/d))
			add(-d, se)
		default: // left member farther
			add(d, se)
			add(-(d + eps), se*math.Sqrt((d+eps)/d))
		}
	}
	return effects, seEffects, removed, removedSE
}

// TestTrimFillRecoversRemoved checks trim-and-fill on data where the missing
// studies are known by construction (common practice, no source). At the
// centre the m unpaired studies hold the top ranks, the outermost intact
// pair ranks its right member higher, and the intact pairs alternate which
// member ranks higher, so with q intact pairs (Duval & Tweedie 2000,
// Biometrics 56:455-463, definitions of L0 and R0; hand derivation):
//
//	L0 = [m (4q + m + 1) + 2·(q mod 2)] / (4q + 2m - 1)
//	   = 0, 1.08, 2, 2.97, 3.74 for m = 0..4,
//	R0 = (m + 1) - 1 = m,
//
// which round to m. Both estimators must find k0 = m, the centre 0.5, and
// filled studies equal to the removed ones.
func TestTrimFillRecoversRemoved(t *testing.T) {
	t.Parallel()
	for _, est := range []string{EstimatorL0, EstimatorR0} {
		for _, right := range []bool{false, true} {
			for m := 0; m <= 4; m++ {
				side := SideLeft
				if right {
					side = SideRight
				}
				t.Run(fmt.Sprintf("%s/%s/m=%d", est, side, m), func(t *testing.T) {
					y, se, removed, removedSE := balancedFunnel(m, right)
					s := TrimFillSettings{Estimator: est}
					if m == 0 {
						s.Side = side // no asymmetry to pick a side from
					}
					got, err := TrimFill(y, se, s)
					if err != nil {
						t.Fatal(err)
					}
					if got.K0 != m {
						t.Fatalf("K0 = %d, want %d", got.K0, m)
					}
					if got.Side != side {
						t.Errorf("Side = %s, want %s", got.Side, side)
					}
					if !got.Converged {
						t.Errorf("not converged")
					}
					checkClose(t, "Center", got.Center, 0.5, 1e-13)
					// The filled data hold only balanced pairs, whose
					// fixed-effect estimate is the centre.
					checkClose(t, "FixedEstimate", got.FixedEstimate, 0.5, 1e-13)
					type study struct{ y, se float64 }
					var gotS, wantS []study
					for i, f := range got.Filled {
						gotS = append(gotS, study{f.Effect, f.SE})
						wantS = append(wantS, study{removed[i], removedSE[i]})
					}
					byEffect := func(a, b study) int { return cmp.Compare(a.y, b.y) }
					slices.SortFunc(gotS, byEffect)
					slices.SortFunc(wantS, byEffect)
					for i := range wantS {
						checkClose(t, "filled effect", gotS[i].y, wantS[i].y, 1e-13)
						checkClose(t, "filled SE", gotS[i].se, wantS[i].se, 0)
					}
					if !(got.RandomCILow < got.RandomEstimate && got.RandomEstimate < got.RandomCIHigh) {
						t.Errorf("random-effects CI [%g, %g] misses its estimate %g", got.RandomCILow, got.RandomCIHigh, got.RandomEstimate)
					}
					if got.Tau2Method != "reml" {
						t.Errorf("Tau2Method = %q, want reml", got.Tau2Method)
					}
				})
			}
		}
	}
}

func TestTrimFillErrors(t *testing.T) {
	t.Parallel()
	y, se, _, _ := balancedFunnel(2, false)
	for _, c := range []struct {
		name string
		y    []float64
		se   []float64
		s    TrimFillSettings
		want error
	}{
		{"two studies", []float64{1, 2}, []float64{1, 1}, TrimFillSettings{}, ErrTooFewStudies},
		{"unknown estimator", y, se, TrimFillSettings{Estimator: "Q0"}, ErrBadSetting},
		{"unknown side", y, se, TrimFillSettings{Side: "up"}, ErrBadSetting},
		{"bad level", y, se, TrimFillSettings{Level: 1.5}, ErrBadSetting},
	} {
		t.Run(c.name, func(t *testing.T) {
			if _, err := TrimFill(c.y, c.se, c.s); !errors.Is(err, c.want) {
				t.Errorf("error %v, want %v", err, c.want)
			}
		})
	}
}
