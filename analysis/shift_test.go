package analysis

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// shiftCell is one design of the coverage simulation: kPub published
// studies with true mean muPub and kAdd added studies with true mean muAdd,
// a common between-study variance tau2, and within-study SEs spread evenly
// over [sePubLo, sePubHi] and [seAddLo, seAddHi].
type shiftCell struct {
	kPub, kAdd       int
	muPub, muAdd     float64
	tau2             float64
	sePubLo, sePubHi float64
	seAddLo, seAddHi float64
}

func spread(k int, lo, hi float64) []float64 {
	out := make([]float64, k)
	for i := range out {
		out[i] = lo
		if k > 1 {
			out[i] = lo + (hi-lo)*float64(i)/float64(k-1)
		}
	}
	return out
}

// truth is the estimand of ShiftInterval at the true parameters:
// Delta = W_R/W (mu_R - mu_P), w_i = 1/(s_i² + tau²).
func (c shiftCell) truth(seY []float64) float64 {
	var wP, wR float64
	for i, s := range seY {
		w := 1 / (s*s + c.tau2)
		if i < c.kPub {
			wP += w
		} else {
			wR += w
		}
	}
	return wR / (wP + wR) * (c.muAdd - c.muPub)
}

// coverage draws reps data sets y_i = mu_g + u_i + e_i, u_i ~ N(0, tau²),
// e_i ~ N(0, s_i²), and counts how often the 95% interval holds the truth.
func (c shiftCell) coverage(rng *rand.Rand, reps int) (cover float64, failed int) {
	seY := append(spread(c.kPub, c.sePubLo, c.sePubHi), spread(c.kAdd, c.seAddLo, c.seAddHi)...)
	truth := c.truth(seY)
	y := make([]float64, len(seY))
	hits := 0
	for range reps {
		for i, s := range seY {
			mu := c.muPub
			if i >= c.kPub {
				mu = c.muAdd
			}
			y[i] = mu + math.Sqrt(c.tau2)*rng.NormFloat64() + s*rng.NormFloat64()
		}
		r, err := ShiftInterval(y, seY, c.kPub, 0.95)
		if err != nil {
			failed++
			continue
		}
		if r.Low <= truth && truth <= r.High {
			hits++
		}
	}
	return float64(hits) / float64(reps), failed
}

// TestShiftIntervalCoverage is the coverage simulation of ShiftInterval:
// 1, 2, 3 or 5 added studies with 5, 10 or 15 published, tau² 0 and 0.02
// (moderate: I² about 50% at the median SE), published true mean 0.45 and
// added 0 (SD units), published SEs 0.08 to 0.25, added SEs 0.10 to 0.20;
// and the design of 8 published at 0.45 and added trials at 0, every SE
// 0.10, tau² 0, with 1, 2 and 3 added (where resampling within subgroups
// covered 0.80, 0.88 and 0.90). The truth is the estimand Delta at the true
// parameters (see ShiftInterval). 2000 data sets per design, fixed seed;
// the Monte Carlo SE of a coverage near 0.95 is 0.005. Every design must
// cover at least 93%.
func TestShiftIntervalCoverage(t *testing.T) {
	t.Parallel()
	const reps = 2000
	rng := rand.New(rand.NewPCG(13, 4))
	var cells []shiftCell
	for _, tau2 := range []float64{0, 0.02} {
		for _, kPub := range []int{5, 10, 15} {
			for _, kAdd := range []int{1, 2, 3, 5} {
				cells = append(cells, shiftCell{kPub, kAdd, 0.45, 0, tau2, 0.08, 0.25, 0.10, 0.20})
			}
		}
	}
	for _, kAdd := range []int{1, 2, 3} {
		cells = append(cells, shiftCell{8, kAdd, 0.45, 0, 0, 0.10, 0.10, 0.10, 0.10})
	}
	// No difference between the subgroups, with heterogeneity.
	for _, kAdd := range []int{1, 3} {
		cells = append(cells, shiftCell{10, kAdd, 0.3, 0.3, 0.02, 0.08, 0.25, 0.10, 0.20})
	}
	lowest := 1.0
	for _, c := range cells {
		cov, failed := c.coverage(rng, reps)
		lowest = min(lowest, cov)
		name := fmt.Sprintf("published %2d, added %d, tau² %.2f, SEs %.2f-%.2f / %.2f-%.2f, difference %.2f",
			c.kPub, c.kAdd, c.tau2, c.sePubLo, c.sePubHi, c.seAddLo, c.seAddHi, c.muAdd-c.muPub)
		t.Logf("%s: coverage %.3f", name, cov)
		if failed > 0 {
			t.Errorf("%s: %d data sets gave no interval", name, failed)
		}
		if cov < 0.93 {
			t.Errorf("%s: coverage %.3f, want at least 0.93", name, cov)
		}
	}
	t.Logf("lowest coverage %.3f over %d designs", lowest, len(cells))
}

// TestShiftIntervalReference compares ShiftInterval with check values from
// an independent computation in base R (testdata/reference/shift_interval.R):
// the subgroup model fitted as a weighted least-squares meta-regression with
// matrices, the contrast's variance from (X'WX)^-1 and the tau² derivative
// of the share by numerical differentiation; t quantile from qt.
func TestShiftIntervalReference(t *testing.T) {
	t.Parallel()
	for _, c := range shiftReference {
		r, err := ShiftInterval(c.y, c.se, c.kPub, 0.95)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		const tol = 1e-9 // closed forms against matrix algebra and a numerical derivative
		for _, f := range []struct {
			what      string
			got, want float64
		}{{"tau2", r.Tau2, c.tau2}, {"estimate", r.Estimate, c.estimate}, {"se", r.SE, c.seShift}, {"low", r.Low, c.low}, {"high", r.High, c.high}, {"scale", r.Scale, c.scale}} {
			if !scalar.EqualWithinAbsOrRel(f.got, f.want, tol, 1e-7) {
				t.Errorf("%s: %s = %.12g, want %.12g", c.name, f.what, f.got, f.want)
			}
		}
	}
}

func TestShiftIntervalEdges(t *testing.T) {
	t.Parallel()
	// One published study and one added trial: no degree of freedom.
	if _, err := ShiftInterval([]float64{0.5, 0}, []float64{0.1, 0.1}, 1, 0.95); !errors.Is(err, ErrShiftDF) {
		t.Errorf("1 + 1 studies: err %v, want ErrShiftDF", err)
	}
	if _, err := ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, 0.1, 0.1}, 3, 0.95); err == nil {
		t.Errorf("nothing added: no error")
	}
	if _, err := ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, -0.1, 0.1}, 2, 0.95); err == nil {
		t.Errorf("negative SE: no error")
	}
	// Equal SEs: every weight is equal whatever tau², so the estimate is the
	// plain difference of the pooled means, by hand: published mean 0.4,
	// all 4 studies mean (0.3+0.5+0.4+0)/4 = 0.3, shift -0.1; and with one
	// published study plus two added the interval exists and has width.
	r, err := ShiftInterval([]float64{0.3, 0.5, 0.4, 0}, []float64{0.2, 0.2, 0.2, 0.2}, 3, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(r.Estimate, -0.1, 1e-12, 1e-12) || !(r.Low < -0.1 && r.High > -0.1) {
		t.Errorf("equal SEs: %+v, want estimate -0.1 inside a proper interval", r)
	}
	r, err = ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, 0.1, 0.1}, 1, 0.95)
	if err != nil || !(r.High-r.Low > 0.1) {
		t.Errorf("1 + 2 studies: %+v, %v", r, err)
	}
}

// shiftReference: output of testdata/reference/shift_interval.R (R 4.2.2),
// also in testdata/reference/shift_interval.txt.
var shiftReference = []struct {
	name                                      string
	kPub                                      int
	y, se                                     []float64
	tau2, estimate, seShift, low, high, scale float64
}{
	{name: "heterogeneous, two added", kPub: 6,
		y:    []float64{0.62, 0.41, 0.35, 0.8, 0.15, 0.52, 0.05, -0.1},
		se:   []float64{0.12, 0.2, 0.15, 0.25, 0.1, 0.18, 0.14, 0.22},
		tau2: 0.0282088735998525, estimate: -0.103889239330399, seShift: 0.0459674579734571, low: -0.216367557012659, high: 0.00858907835186162, scale: 0.808136254502573},
	{name: "homogeneous, one added", kPub: 5,
		y:    []float64{0.45, 0.47, 0.43, 0.46, 0.44, 0},
		se:   []float64{0.1, 0.12, 0.09, 0.15, 0.11, 0.1},
		tau2: 0, estimate: -0.0858705189116285, seShift: 0.021652364395172, low: -0.145987120052563, high: -0.0257539177706944, scale: 0.0211945998217126},
	{name: "one published, three added", kPub: 1,
		y:    []float64{0.9, 0.1, -0.2, 0.3},
		se:   []float64{0.3, 0.15, 0.2, 0.25},
		tau2: 0.01295, estimate: -0.732119847860973, seShift: 0.307212673144194, low: -2.05394929457847, high: 0.589709598856524, scale: 1.03962187271755},
}
