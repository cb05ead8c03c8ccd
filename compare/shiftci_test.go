package compare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/analysis"
	"unshelved/ingest"
)

// constructedInput builds a review whose published studies are given as
// effect and SE and whose registry trials are single-arm-pair records with
// exactly the wanted MD and SE (n = 50 per arm, SD = SE·5).
func constructedInput(id string, pub, reg [][2]float64) AuditInput {
	in := AuditInput{Review: ingest.Review{ReviewID: id, Measure: "MD", Unit: "points", Better: "higher"}, Trials: map[string]ingest.Trial{}}
	for i, es := range pub {
		in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: id, Study: fmt.Sprintf("P%02d", i), Effect: fp(es[0]), SE: fp(es[1])})
	}
	for i, es := range reg {
		// MD = es[0] with SE = sqrt(2 SD²/50) = SD/5.
		sd := fmt.Sprint(es[1] * 5)
		tr := twoArmTrial("STANDARD_DEVIATION", "MEAN",
			map[string][4]string{"OG000": {"50", sd, "", ""}, "OG001": {fmt.Sprint(50 + es[0]), sd, "", ""}},
			map[string]string{"OG000": "50", "OG001": "50"})
		tr.TrialID = fmt.Sprintf("NCT9999%04d", i)
		in.Trials[tr.TrialID] = tr
		in.Links = append(in.Links, ingest.Link{ReviewID: id, TrialID: tr.TrialID, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept"})
	}
	return in
}

func TestShiftIntervalConstructed(t *testing.T) {
	base := [][2]float64{{0.1, 0.2}, {0.5, 0.2}, {0.3, 0.2}, {0.8, 0.2}, {0.2, 0.2}, {0.6, 0.2}}
	offset := func(c float64) [][2]float64 {
		out := make([][2]float64, len(base))
		for i, b := range base {
			out[i] = [2]float64{b[0] + c, b[1]}
		}
		return out
	}
	for _, tc := range []struct {
		name string
		reg  [][2]float64
		// By construction: the registry copy of the published studies moved
		// by c, with every SE equal, so every random-effects weight is equal
		// and the pooled estimates are plain means: shift = c/2 (equal k),
		// subgroup difference = c.
		c           float64
		excludeZero bool
	}{
		{"identical subgroups", offset(0), 0, false},
		{"registry lower by 1", offset(-1), -1, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			a, err := AuditReview(constructedInput("R", base, tc.reg), Options{SkipBias: true})
			if err != nil {
				t.Fatal(err)
			}
			const tol = 1e-9 // sums of a dozen terms; the registry MD passes through arm data
			if a.Shift.Absolute == nil || !scalar.EqualWithinAbsOrRel(*a.Shift.Absolute, tc.c/2, tol, tol) {
				t.Errorf("shift = %v, want %v", deref(a.Shift.Absolute), tc.c/2)
			}
			// The interval is centred on the printed shift.
			if a.Shift.CIEstimate == nil || *a.Shift.CIEstimate != *a.Shift.Absolute {
				t.Errorf("interval centre = %v, want %v", deref(a.Shift.CIEstimate), tc.c/2)
			}
			lo, hi := a.Shift.CILow, a.Shift.CIHigh
			if lo == nil || hi == nil || a.Shift.CIMethod != analysis.ShiftCIMethod {
				t.Fatalf("no interval: %+v", a.Shift)
			}
			if !(*lo < tc.c/2 && tc.c/2 < *hi) {
				t.Errorf("CI [%v, %v] does not hold the shift %v", *lo, *hi, tc.c/2)
			}
			if tc.excludeZero == (*lo <= 0 && 0 <= *hi) {
				t.Errorf("CI [%v, %v]: excludes 0 = %v, want %v", *lo, *hi, !(*lo <= 0 && 0 <= *hi), tc.excludeZero)
			}
			// Higher is better and SD 1: the overstatement interval is the
			// shift interval negated.
			if ol, oh := a.Shift.OverstatementCILow, a.Shift.OverstatementCIHigh; ol == nil || oh == nil ||
				!scalar.EqualWithinAbsOrRel(*ol, -*hi, tol, tol) || !scalar.EqualWithinAbsOrRel(*oh, -*lo, tol, tol) {
				t.Errorf("overstatement interval [%v, %v], want [%v, %v]", deref(ol), deref(oh), -*hi, -*lo)
			}
		})
	}
}

// TestShiftIntervalOnePlusOne is the example: one published study
// and one registry trial gave a zero-width resampling interval. No degree
// of freedom is left for the between-study variance, so there is no
// interval, and a warning says why.
func TestShiftIntervalOnePlusOne(t *testing.T) {
	a, err := AuditReview(constructedInput("R", [][2]float64{{0.5, 0.1}}, [][2]float64{{0, 0.1}}), Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.Shift.CILow != nil || a.Shift.CIHigh != nil || a.Shift.CIMethod != "" {
		t.Errorf("interval %v to %v (%q), want none", deref(a.Shift.CILow), deref(a.Shift.CIHigh), a.Shift.CIMethod)
	}
	found := false
	for _, w := range a.Warnings {
		found = found || strings.Contains(w, "shift: no confidence interval")
	}
	if !found {
		t.Errorf("no warning about the missing interval: %q", a.Warnings)
	}
	// The oriented overstatement itself is there: higher is better, the
	// registry trial is 0.5 lower, SD 0.5 (SE·5): by hand, equal weights,
	// shift -0.25, overstatement 0.25/0.5 = 0.5 SD.
	if a.Shift.OverstatementSD == nil || !scalar.EqualWithinAbsOrRel(*a.Shift.OverstatementSD, 0.5, 1e-9, 1e-9) {
		t.Errorf("overstatement %v, want 0.5", deref(a.Shift.OverstatementSD))
	}
}

// TestGradeHintDirection runs the GRADE-style hint through AuditReview on
// the examples. Hand computation for the first two: every SE 0.2
// and SD 1 (registry arms SD = 5 SE), 6 published and 6 registry trials, so
// the pooled estimates are plain means and the registry copies moved by c
// move the estimate by c/2: c = -0.3 gives an overstatement of +0.15 SD
// (serious concern), c = +0.3 gives -0.15 SD, an understatement whose
// interval lies below 0.1 SD (no serious concern: 6 studies, no test
// counts). Raw signs gave "serious concern" for both.
func TestGradeHintDirection(t *testing.T) {
	base := []float64{0.4, 0.45, 0.5, 0.35, 0.55, 0.42}
	withOffset := func(c float64) AuditInput {
		var pub, reg [][2]float64
		for _, b := range base {
			pub = append(pub, [2]float64{b, 0.2})
			reg = append(reg, [2]float64{b + c, 0.2})
		}
		return constructedInput("R", pub, reg)
	}
	opts := Options{SkipSelection: true}
	for _, tc := range []struct {
		name string
		in   AuditInput
		over float64
		want string
	}{
		{"overstates by 0.15", withOffset(-0.3), 0.15, "serious concern"},
		{"understates by 0.15", withOffset(0.3), -0.15, "no serious concern"},
	} {
		a, err := AuditReview(tc.in, opts)
		if err != nil {
			t.Fatal(err)
		}
		if a.Shift.OverstatementSD == nil || !scalar.EqualWithinAbsOrRel(*a.Shift.OverstatementSD, tc.over, 1e-9, 1e-9) {
			t.Errorf("%s: overstatement %v, want %v", tc.name, deref(a.Shift.OverstatementSD), tc.over)
		}
		if a.Bias == nil || a.Bias.GradeHint.Level != tc.want {
			t.Errorf("%s: hint %+v, want %q", tc.name, a.Bias, tc.want)
		}
	}

	// One published study and one registry trial with a 0.05 SD
	// overstatement (published 0.5, registry 0.45, SE 0.1, SD 0.5: shift
	// -0.025 = 0.05 SD), first with nothing missing, then with an eligible
	// trial of 200 participants that posted no results: 200 of 300
	// randomized (the registry trial's 100 plus 200; the published study
	// gives no N), a share of 2/3.
	in := constructedInput("R2", [][2]float64{{0.5, 0.1}}, [][2]float64{{0.45, 0.1}})
	a, err := AuditReview(in, opts)
	if err != nil {
		t.Fatal(err)
	}
	if a.Bias == nil || a.Bias.GradeHint.Level != "cannot assess" {
		t.Errorf("1 + 1 studies, nothing missing: hint %+v, want cannot assess (no interval, no test)", a.Bias)
	}
	enrol := 200
	in.Trials["NCT99990999"] = ingest.Trial{TrialID: "NCT99990999", BriefTitle: "Unposted trial", OverallStatus: "COMPLETED", Enrollment: &enrol}
	in.Links = append(in.Links, ingest.Link{ReviewID: "R2", TrialID: "NCT99990999", Class: ClassNoResults})
	a, err = AuditReview(in, opts)
	if err != nil {
		t.Fatal(err)
	}
	if a.Missing.Share == nil || !scalar.EqualWithinAbsOrRel(*a.Missing.Share, 2.0/3, 1e-12, 1e-12) {
		t.Fatalf("missing share %v, want 2/3", deref(a.Missing.Share))
	}
	if a.Bias == nil || a.Bias.GradeHint.Level != "serious concern" {
		t.Errorf("2 studies, 0.05 SD, 67%% without results: hint %+v, want serious concern", a.Bias)
	}
	found := false
	for _, r := range a.Bias.GradeHint.Reasons {
		found = found || strings.Contains(r, "67% of randomized participants")
	}
	if !found || len(a.Bias.GradeHint.Cautions) != 3 {
		t.Errorf("reasons %q, cautions %q", a.Bias.GradeHint.Reasons, a.Bias.GradeHint.Cautions)
	}
}

// TestShiftIntervalCoherent: over thousands of generated reviews (2 to 12
// published studies, 1 to 3 registry trials, effects of either sign,
// lower and higher is better, every tau² estimator), the printed shift is
// the interval's centre and lies inside it, and the oriented overstatement
// lies inside its interval.
func TestShiftIntervalCoherent(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(13, 13))
	methods := []analysis.Tau2Method{analysis.Tau2REML, analysis.Tau2DL, analysis.Tau2PM}
	checked := 0
	for n := range 2400 {
		kPub, kAdd := 2+rng.IntN(11), 1+rng.IntN(3)
		centre := 4 * (rng.Float64() - 0.5)
		var pub, reg [][2]float64
		for range kPub {
			se := 0.05 + rng.Float64()
			pub = append(pub, [2]float64{round3(centre + se*rng.NormFloat64() + 0.5*rng.NormFloat64()), round3(se)})
		}
		move := 4 * (rng.Float64() - 0.5)
		for range kAdd {
			se := 0.05 + rng.Float64()
			reg = append(reg, [2]float64{round3(centre + move + se*rng.NormFloat64()), round3(se)})
		}
		in := constructedInput(fmt.Sprintf("G%d", n), pub, reg)
		in.Review.Better = [2]string{"lower", "higher"}[n%2]
		a, err := AuditReview(in, Options{SkipBias: true, Tau2: methods[n%3]})
		if err != nil {
			t.Fatal(err)
		}
		s := a.Shift
		if a.KAdded != kAdd || s.Absolute == nil || s.CILow == nil || s.CIHigh == nil || s.CIEstimate == nil || s.OverstatementSD == nil || s.OverstatementCILow == nil {
			t.Fatalf("%s: %d added, shift %+v, warnings %q", a.ReviewID, a.KAdded, s, a.Warnings)
		}
		if *s.CIEstimate != *s.Absolute || !(*s.CILow < *s.Absolute && *s.Absolute < *s.CIHigh) {
			t.Fatalf("%s: shift %v, interval %v to %v centred on %v", a.ReviewID, *s.Absolute, *s.CILow, *s.CIHigh, *s.CIEstimate)
		}
		if !(*s.OverstatementCILow < *s.OverstatementSD && *s.OverstatementSD < *s.OverstatementCIHigh) {
			t.Fatalf("%s (%s is better): overstatement %v, interval %v to %v", a.ReviewID, a.Better, *s.OverstatementSD, *s.OverstatementCILow, *s.OverstatementCIHigh)
		}
		checked++
	}
	if checked < 2000 {
		t.Errorf("only %d reviews checked", checked)
	}
}

func round3(x float64) float64 { return math.Round(x*1000) / 1000 }

// TestShiftBootstrapOption: Bootstrap > 0 adds the bootstrap check
// interval, which holds the shift and changes with the seed; 0 leaves it
// out. (TestShiftIntervalDeterministic checks it does not depend on the
// workers or the other reviews.)
func TestShiftBootstrapOption(t *testing.T) {
	in := constructedInput("B", [][2]float64{{0.1, 0.2}, {0.5, 0.25}, {0.3, 0.3}, {0.9, 0.2}, {0.4, 0.15}},
		[][2]float64{{-0.2, 0.3}, {0.1, 0.2}})
	off, err := AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if off.Shift.BootCILow != nil || off.Shift.BootReplicates != 0 || off.Shift.BootMethod != "" {
		t.Errorf("bootstrap 0: %+v", off.Shift)
	}
	opts := Options{SkipBias: true, Bootstrap: 300, Seed: 9}
	alone, err := AuditReview(in, opts)
	if err != nil {
		t.Fatal(err)
	}
	s := alone.Shift
	if s.BootCILow == nil || s.BootCIHigh == nil || s.BootReplicates != 300 || s.BootMethod != analysis.ShiftBootMethod {
		t.Fatalf("bootstrap 300: %+v", s)
	}
	if !(*s.BootCILow < *s.Absolute && *s.Absolute < *s.BootCIHigh) {
		t.Errorf("bootstrap interval %v to %v does not hold the shift %v", *s.BootCILow, *s.BootCIHigh, *s.Absolute)
	}
	opts.Seed = 10
	reseeded, _ := AuditReview(in, opts)
	if *reseeded.Shift.BootCILow == *s.BootCILow {
		t.Errorf("another seed gave the same interval")
	}
}
