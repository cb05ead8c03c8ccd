package analysis

import (
	"errors"
	"flag"
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

// addedShare is the added studies' share of the random-effects weights
// 1/(s_i² + tau²) of all studies.
func addedShare(seY []float64, kPub int, tau2 float64) float64 {
	var w, wAdd float64
	for i, s := range seY {
		wi := 1 / (s*s + tau2)
		w += wi
		if i >= kPub {
			wAdd += wi
		}
	}
	return wAdd / w
}

// fitShift fits both analyses as the audit does (tau² by m, default
// settings) and returns ShiftInterval at their tau².
func fitShift(y, seY []float64, kPub int, m Tau2Method, level float64) (ShiftCI, error) {
	tPub, _, _, err := Tau2(y[:kPub], seY[:kPub], m, Settings{})
	if err != nil {
		return ShiftCI{}, err
	}
	tAug, _, _, err := Tau2(y, seY, m, Settings{})
	if err != nil {
		return ShiftCI{}, err
	}
	return ShiftInterval(y, seY, kPub, tPub, tAug, level)
}

// draw fills y with one data set of the design.
func (c shiftCell) draw(rng *rand.Rand, seY, y []float64) {
	for i, s := range seY {
		mu := c.muPub
		if i >= c.kPub {
			mu = c.muAdd
		}
		y[i] = mu + math.Sqrt(c.tau2)*rng.NormFloat64() + s*rng.NormFloat64()
	}
}

type shiftCoverage struct {
	estimand, population float64
	failed               int
}

// coverage draws reps data sets y_i = mu_g + u_i + e_i, u_i ~ N(0, tau²),
// e_i ~ N(0, s_i²), fits them as the audit does (REML in each analysis)
// and counts how often the 95% interval holds the estimand (the shift at
// the true subgroup means with the weights of the two fits) and the
// population shift (weights at the true tau²).
func (c shiftCell) coverage(rng *rand.Rand, reps int) shiftCoverage {
	seY := append(spread(c.kPub, c.sePubLo, c.sePubHi), spread(c.kAdd, c.seAddLo, c.seAddHi)...)
	d := c.muAdd - c.muPub
	population := addedShare(seY, c.kPub, c.tau2) * d
	y := make([]float64, len(seY))
	var out shiftCoverage
	hitE, hitP := 0, 0
	for range reps {
		c.draw(rng, seY, y)
		r, err := fitShift(y, seY, c.kPub, Tau2REML, 0.95)
		if err != nil {
			out.failed++
			continue
		}
		if !(r.Low <= r.Estimate && r.Estimate <= r.High) {
			out.failed++
		}
		estimand := addedShare(seY, c.kPub, r.Tau2Augmented) * d
		if r.Low <= estimand && estimand <= r.High {
			hitE++
		}
		if r.Low <= population && population <= r.High {
			hitP++
		}
	}
	out.estimand, out.population = float64(hitE)/float64(reps), float64(hitP)/float64(reps)
	return out
}

// TestShiftIntervalCoverage is the coverage simulation of ShiftInterval,
// each data set fitted as the audit fits it (REML tau² in the
// published-only and in the augmented analysis, default settings):
// 1, 2, 3 or 5 added studies with 5, 10 or 15 published, tau² 0, 0.02 and
// 0.08 (about I² 0, 50% and 80% at the median SE), published true mean
// 0.45 and added 0 (SD units), published SEs 0.08 to 0.25, added SEs 0.10
// to 0.20; the design of 8 published at 0.45 and added trials at 0, every
// SE 0.10, tau² 0, with 1, 2 and 3 added (where resampling within
// subgroups covered 0.80, 0.88 and 0.90); no difference between the
// subgroups; and added trials much less precise than the published ones.
// 2000 data sets per design, fixed seed; the Monte Carlo SE of a coverage
// near 0.95 is 0.005.
//
// Scored against the estimand (the shift at the true subgroup means with
// the weights of the two fits, see ShiftInterval), every design must cover
// at least 93%, and every interval must hold the printed shift. Against
// the population shift (weights at the true tau²) the main grid must cover
// 93% too; the designs with imprecise added trials only log it, because
// there the augmented fit's tau² absorbs the subgroup difference and the
// printed shift itself is off the population shift (see README).
func TestShiftIntervalCoverage(t *testing.T) {
	t.Parallel()
	const reps = 2000
	rng := rand.New(rand.NewPCG(13, 4))
	type design struct {
		shiftCell
		population bool // population coverage asserted
	}
	var cells []design
	for _, tau2 := range []float64{0, 0.02, 0.08} {
		for _, kPub := range []int{5, 10, 15} {
			for _, kAdd := range []int{1, 2, 3, 5} {
				cells = append(cells, design{shiftCell{kPub, kAdd, 0.45, 0, tau2, 0.08, 0.25, 0.10, 0.20}, true})
			}
		}
	}
	for _, kAdd := range []int{1, 2, 3} {
		cells = append(cells, design{shiftCell{8, kAdd, 0.45, 0, 0, 0.10, 0.10, 0.10, 0.10}, true})
	}
	for _, kAdd := range []int{1, 3} {
		cells = append(cells, design{shiftCell{10, kAdd, 0.3, 0.3, 0.02, 0.08, 0.25, 0.10, 0.20}, true})
	}
	// Few published studies; the tool's smallest cases.
	cells = append(cells, design{shiftCell{1, 2, 0.45, 0, 0.05, 0.10, 0.20, 0.10, 0.20}, true},
		design{shiftCell{2, 1, 0.45, 0, 0.05, 0.10, 0.20, 0.10, 0.20}, true},
		design{shiftCell{3, 1, 0.45, 0, 0.05, 0.10, 0.20, 0.10, 0.20}, true})
	// Added trials far less precise than the published ones, a large
	// difference.
	for _, kAdd := range []int{1, 3} {
		cells = append(cells, design{shiftCell{10, kAdd, 0.45, -0.6, 0.05, 0.05, 0.10, 0.30, 0.50}, false})
	}
	lowest, lowestPop := 1.0, 1.0
	for _, c := range cells {
		cov := c.coverage(rng, reps)
		lowest = min(lowest, cov.estimand)
		name := fmt.Sprintf("published %2d, added %d, tau² %.2f, SEs %.2f-%.2f / %.2f-%.2f, difference %.2f",
			c.kPub, c.kAdd, c.tau2, c.sePubLo, c.sePubHi, c.seAddLo, c.seAddHi, c.muAdd-c.muPub)
		t.Logf("%s: coverage %.3f, of the population shift %.3f", name, cov.estimand, cov.population)
		if cov.failed > 0 {
			t.Errorf("%s: %d data sets gave no interval or one without the printed shift", name, cov.failed)
		}
		if cov.estimand < 0.93 {
			t.Errorf("%s: coverage %.3f, want at least 0.93", name, cov.estimand)
		}
		if c.population {
			lowestPop = min(lowestPop, cov.population)
			if cov.population < 0.93 {
				t.Errorf("%s: coverage of the population shift %.3f, want at least 0.93", name, cov.population)
			}
		}
	}
	t.Logf("lowest coverage %.3f over %d designs; of the population shift %.3f where asserted", lowest, len(cells), lowestPop)
}

var shiftBootFlag = flag.Int("shiftboot", 0, "run the coverage simulation of ShiftBootstrap with this many data sets per design (e.g. 400; minutes)")

// TestShiftBootstrapCoverage scores the bootstrap check interval like
// TestShiftIntervalCoverage, on a few designs; it runs only with
// -shiftboot N (N data sets per design, 499 replicates each).
func TestShiftBootstrapCoverage(t *testing.T) {
	if *shiftBootFlag <= 0 {
		t.Skip("run with -shiftboot N")
	}
	rng := rand.New(rand.NewPCG(13, 5))
	for _, c := range []shiftCell{
		{5, 1, 0.45, 0, 0, 0.08, 0.25, 0.10, 0.20},
		{5, 1, 0.45, 0, 0.08, 0.08, 0.25, 0.10, 0.20},
		{10, 2, 0.45, 0, 0.02, 0.08, 0.25, 0.10, 0.20},
		{10, 3, 0.45, 0, 0.08, 0.08, 0.25, 0.10, 0.20},
		{15, 5, 0.45, 0, 0.08, 0.08, 0.25, 0.10, 0.20},
	} {
		seY := append(spread(c.kPub, c.sePubLo, c.sePubHi), spread(c.kAdd, c.seAddLo, c.seAddHi)...)
		y := make([]float64, len(seY))
		hits, inside := 0, 0
		for n := range *shiftBootFlag {
			c.draw(rng, seY, y)
			r, err := fitShift(y, seY, c.kPub, Tau2REML, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			b, err := ShiftBootstrap(y, seY, c.kPub, r.Tau2Published, r.Tau2Augmented, Tau2REML, 499, [2]uint64{7, uint64(n)}, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			estimand := addedShare(seY, c.kPub, r.Tau2Augmented) * (c.muAdd - c.muPub)
			if b.Low <= estimand && estimand <= b.High {
				hits++
			}
			if b.Low <= r.Estimate && r.Estimate <= b.High {
				inside++
			}
		}
		t.Logf("%+v: bootstrap coverage %.3f, holds the printed shift %.3f", c, float64(hits)/float64(*shiftBootFlag), float64(inside)/float64(*shiftBootFlag))
	}
}

// TestShiftIntervalReference compares ShiftInterval with check values from
// an independent computation in base R (testdata/reference/shift_interval.R):
// REML tau² of each fit by optimize() on the restricted likelihood, the
// pooled means by weighted lm, the contrast read off the fits, the
// subgroup model's Knapp-Hartung factor from lm's residual variance; t
// from qt.
func TestShiftIntervalReference(t *testing.T) {
	t.Parallel()
	for _, c := range shiftReference {
		// The fits' tau²: the audit's REML against R's golden-section
		// maximum (accurate to about 1e-8 of the scale).
		for _, f := range []struct {
			what string
			k    int
			want float64
		}{{"published tau²", c.kPub, c.tau2Pub}, {"augmented tau²", len(c.y), c.tau2Aug}} {
			got, _, _, err := Tau2(c.y[:f.k], c.se[:f.k], Tau2REML, Settings{})
			if err != nil || !scalar.EqualWithinAbsOrRel(got, f.want, 1e-7, 1e-6) {
				t.Errorf("%s: %s = %.12g (%v), want %.12g", c.name, f.what, got, err, f.want)
			}
		}
		// The interval at R's tau²: closed forms against lm and a contrast
		// read off the fits.
		r, err := ShiftInterval(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, 0.95)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		const tol = 1e-9
		for _, f := range []struct {
			what      string
			got, want float64
		}{{"tau2 within", r.Tau2Within, c.tau2Within}, {"estimate", r.Estimate, c.estimate}, {"se", r.SE, c.seShift},
			{"low", r.Low, c.low}, {"high", r.High, c.high}, {"scale", r.Scale, c.scale}} {
			if !scalar.EqualWithinAbsOrRel(f.got, f.want, tol, 1e-7) {
				t.Errorf("%s: %s = %.12g, want %.12g", c.name, f.what, f.got, f.want)
			}
		}
	}
}

func TestShiftIntervalEdges(t *testing.T) {
	t.Parallel()
	// One published study and one added trial: no degree of freedom.
	if _, err := ShiftInterval([]float64{0.5, 0}, []float64{0.1, 0.1}, 1, 0, 0, 0.95); !errors.Is(err, ErrShiftDF) {
		t.Errorf("1 + 1 studies: err %v, want ErrShiftDF", err)
	}
	if _, err := ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, 0.1, 0.1}, 3, 0, 0, 0.95); err == nil {
		t.Errorf("nothing added: no error")
	}
	if _, err := ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, -0.1, 0.1}, 2, 0, 0, 0.95); err == nil {
		t.Errorf("negative SE: no error")
	}
	if _, err := ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, 0.1, 0.1}, 2, math.NaN(), 0, 0.95); err == nil {
		t.Errorf("NaN tau²: no error")
	}
	// Equal SEs: every weight is equal whatever tau², so the shift is the
	// plain difference of the means, by hand: published mean 0.4, all 4
	// studies mean (0.3+0.5+0.4+0)/4 = 0.3, shift -0.1; the contrast is
	// 1/4 - 1/3 = -1/12 for each published study and 1/4 for the added
	// one, sum c² = 3/144 + 9/144 = 1/12; the subgroup model's tau² is 0
	// (published Q = (0.1² + 0.1² + 0)/0.04 = 0.5 < 2) and its Q 0.5, so
	// q = 0.5/2 < 1 and SE = sqrt(0.04/12).
	r, err := ShiftInterval([]float64{0.3, 0.5, 0.4, 0}, []float64{0.2, 0.2, 0.2, 0.2}, 3, 0.05, 0.1, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if !scalar.EqualWithinAbsOrRel(r.Estimate, -0.1, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(r.SE, math.Sqrt(0.04/12), 1e-12, 1e-12) {
		t.Errorf("equal SEs: %+v, want estimate -0.1, SE %v", r, math.Sqrt(0.04/12))
	}
	// t on 2 df has the closed form (2p - 1) / sqrt(2 p (1 - p))
	// (common practice, no source).
	if half, tq := r.High-r.Estimate, 0.95/math.Sqrt(2*0.975*0.025); !scalar.EqualWithinAbsOrRel(half, tq*r.SE, 1e-9, 1e-9) {
		t.Errorf("half-width %v, want %v SE", half, tq)
	}
	r, err = ShiftInterval([]float64{0.5, 0, 0.1}, []float64{0.1, 0.1, 0.1}, 1, 0, 0, 0.95)
	if err != nil || !(r.High-r.Low > 0.1) {
		t.Errorf("1 + 2 studies: %+v, %v", r, err)
	}
}

// TestShiftIntervalHoldsShift: over thousands of generated data sets (1 to
// 15 published, 1 to 3 added, effects of either sign, SEs 0.02 to 1, each
// fitted by every tau² estimator of the tool), the interval holds the
// printed shift, which is the difference of the two fits' estimates.
func TestShiftIntervalHoldsShift(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(31, 3))
	n := 0
	for range 3000 {
		kPub, kAdd := 1+rng.IntN(15), 1+rng.IntN(3)
		if kPub+kAdd < 3 {
			continue
		}
		k := kPub + kAdd
		y, seY := make([]float64, k), make([]float64, k)
		centre := 2 * (rng.Float64() - 0.5)
		for i := range y {
			seY[i] = 0.02 + rng.Float64()
			y[i] = centre + seY[i]*rng.NormFloat64() + 0.3*rng.NormFloat64()
			if i >= kPub {
				y[i] += 2 * (rng.Float64() - 0.5)
			}
		}
		for _, m := range []Tau2Method{Tau2REML, Tau2DL, Tau2PM} {
			r, err := fitShift(y, seY, kPub, m, 0.95)
			if err != nil {
				t.Fatalf("%v %v: %v", y, seY, err)
			}
			pub, err := RandomEffects(y[:kPub], seY[:kPub], Settings{Tau2: m})
			if err != nil {
				t.Fatal(err)
			}
			aug, err := RandomEffects(y, seY, Settings{Tau2: m})
			if err != nil {
				t.Fatal(err)
			}
			if d := aug.Estimate - pub.Estimate; !scalar.EqualWithinAbsOrRel(r.Estimate, d, 1e-12, 1e-12) || !(r.Low < d && d < r.High) {
				t.Fatalf("%s, y %v, se %v, %d published: shift %v, interval %v to %v centred on %v", m, y, seY, kPub, d, r.Low, r.High, r.Estimate)
			}
			n++
		}
	}
	if n < 6000 {
		t.Errorf("only %d fits checked", n)
	}
}

func TestShiftBootstrap(t *testing.T) {
	t.Parallel()
	c := shiftReference[0]
	r, err := ShiftInterval(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	b, err := ShiftBootstrap(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, Tau2REML, 2000, [2]uint64{1, 2}, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	again, _ := ShiftBootstrap(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, Tau2REML, 2000, [2]uint64{1, 2}, 0.95)
	if b != again {
		t.Errorf("same seed, different result: %+v vs %+v", b, again)
	}
	other, _ := ShiftBootstrap(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, Tau2REML, 2000, [2]uint64{1, 3}, 0.95)
	if b == other {
		t.Errorf("another seed gave the same draws")
	}
	// The bootstrap draws from the same subgroup model without the
	// Knapp-Hartung factor (here below 1) and the t quantile: it must hold
	// the printed shift and agree with the analytic interval to within a
	// fifth of its width, and be no wider.
	w := r.High - r.Low
	if !(b.Low < r.Estimate && r.Estimate < b.High) || math.Abs(b.Low-r.Low) > w/5 || math.Abs(b.High-r.High) > w/5 || b.High-b.Low > w {
		t.Errorf("bootstrap %v to %v, analytic %v to %v around %v", b.Low, b.High, r.Low, r.High, r.Estimate)
	}
	if b.Replicates != 2000 || b.Failed != 0 {
		t.Errorf("replicates %d, failed %d", b.Replicates, b.Failed)
	}
	if _, err := ShiftBootstrap(c.y, c.se, c.kPub, c.tau2Pub, c.tau2Aug, Tau2REML, 0, [2]uint64{1, 2}, 0.95); err == nil {
		t.Errorf("0 replicates: no error")
	}
}

// shiftReference: output of testdata/reference/shift_interval.R (R 4.2.2
// Patched, 2022-11-10 r83330), also in testdata/reference/shift_interval.txt.
var shiftReference = []struct {
	name                                                              string
	kPub                                                              int
	y, se                                                             []float64
	tau2Pub, tau2Aug, tau2Within, estimate, seShift, low, high, scale float64
}{
	{name: "heterogeneous, two added", kPub: 6,
		y:       []float64{0.62, 0.41, 0.35, 0.8, 0.15, 0.52, 0.05, -0.1},
		se:      []float64{0.12, 0.2, 0.15, 0.25, 0.1, 0.18, 0.14, 0.22},
		tau2Pub: 0.0301275938126667, tau2Aug: 0.0490863225901557, tau2Within: 0.0282088735998525, estimate: -0.101276463088213, seShift: 0.0470851024936606, low: -0.216489558392327, high: 0.0139366322159004, scale: 0.808136254502573},
	{name: "homogeneous, one added", kPub: 5,
		y:       []float64{0.45, 0.47, 0.43, 0.46, 0.44, 0},
		se:      []float64{0.1, 0.12, 0.09, 0.15, 0.11, 0.1},
		tau2Pub: 0, tau2Aug: 0.0250479484646986, tau2Within: 0, estimate: -0.0774661089235701, seShift: 0.0216496788311376, low: -0.137575253743386, high: -0.0173569641037539, scale: 0.0211945998217125},
	{name: "one published, three added", kPub: 1,
		y:       []float64{0.9, 0.1, -0.2, 0.3},
		se:      []float64{0.3, 0.15, 0.2, 0.25},
		tau2Pub: 0, tau2Aug: 0.130136044299887, tau2Within: 0.01295, estimate: -0.668742785894549, seShift: 0.281151800303556, low: -1.87844134694462, high: 0.54095577515552, scale: 1.03962187271755},
	{name: "example: five published, two added", kPub: 5,
		y:       []float64{0.52, 0.41, 0.47, 0.6, 0.38, 0.05, 0.12},
		se:      []float64{0.12, 0.15, 0.1, 0.2, 0.14, 0.13, 0.16},
		tau2Pub: 0, tau2Aug: 0.0200736433349428, tau2Within: 0, estimate: -0.10626088295463, seShift: 0.0339194186291734, low: -0.193453524358127, high: -0.0190682415511324, scale: 0.256735701815598},
}
