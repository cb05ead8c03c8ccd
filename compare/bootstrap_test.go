package compare

import (
	"context"
	"fmt"
	"reflect"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

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

func TestBootstrapConstructed(t *testing.T) {
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
			a, err := AuditReview(constructedInput("R", base, tc.reg), Options{Bootstrap: 1000, Seed: 3, SkipBias: true})
			if err != nil {
				t.Fatal(err)
			}
			const tol = 1e-9 // sums of a dozen terms; the registry MD passes through arm data
			if a.Shift.Absolute == nil || !scalar.EqualWithinAbsOrRel(*a.Shift.Absolute, tc.c/2, tol, tol) {
				t.Errorf("shift = %v, want %v", deref(a.Shift.Absolute), tc.c/2)
			}
			if a.Subgroup == nil || a.Subgroup.Difference == nil || !scalar.EqualWithinAbsOrRel(*a.Subgroup.Difference, tc.c, tol, tol) {
				t.Errorf("subgroup difference = %+v, want %v", a.Subgroup, tc.c)
			}
			lo, hi := a.Shift.BootCILow, a.Shift.BootCIHigh
			if lo == nil || hi == nil {
				t.Fatalf("no bootstrap interval: %+v", a.Shift)
			}
			if !(*lo <= tc.c/2 && tc.c/2 <= *hi) {
				t.Errorf("bootstrap CI [%v, %v] does not hold the shift %v", *lo, *hi, tc.c/2)
			}
			if tc.excludeZero == (*lo <= 0 && 0 <= *hi) {
				t.Errorf("bootstrap CI [%v, %v]: excludes 0 = %v, want %v", *lo, *hi, !(*lo <= 0 && 0 <= *hi), tc.excludeZero)
			}
			if a.Shift.BootReplicates != 1000 || a.Shift.BootFailed != 0 {
				t.Errorf("replicates %d failed %d", a.Shift.BootReplicates, a.Shift.BootFailed)
			}
		})
	}
}

func TestBootstrapDeterministic(t *testing.T) {
	var inputs []AuditInput
	for i := range 6 {
		inputs = append(inputs, constructedInput(fmt.Sprintf("R%d", i),
			[][2]float64{{0.1, 0.2}, {0.5, 0.25}, {0.3, 0.3}, {0.9, 0.2}},
			[][2]float64{{-0.2 + 0.1*float64(i), 0.3}, {0.1, 0.2}}))
	}
	opts := Options{Bootstrap: 200, Seed: 11, SkipBias: true}
	one, _, err := AuditAll(context.Background(), inputs, opts, 1)
	if err != nil {
		t.Fatal(err)
	}
	two, _, err := AuditAll(context.Background(), inputs, opts, 3)
	if err != nil {
		t.Fatal(err)
	}
	for i := range one {
		if one[i].ReviewID != inputs[i].Review.ReviewID {
			t.Errorf("audit %d is %s, want input order", i, one[i].ReviewID)
		}
		if !reflect.DeepEqual(one[i].Shift, two[i].Shift) {
			t.Errorf("%s: shift differs between 1 and 3 workers: %+v vs %+v", one[i].ReviewID, one[i].Shift, two[i].Shift)
		}
	}
	// A lone review gives the same interval as inside the batch.
	alone, err := AuditReview(inputs[3], opts)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(alone.Shift, one[3].Shift) {
		t.Errorf("alone %+v, in batch %+v", alone.Shift, one[3].Shift)
	}
	other := opts
	other.Seed = 12
	b, _ := AuditReview(inputs[3], other)
	if *b.Shift.BootCILow == *alone.Shift.BootCILow {
		t.Errorf("another seed gave the same lower limit %v", *b.Shift.BootCILow)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, _, err := AuditAll(ctx, inputs, opts, 2); err == nil {
		t.Errorf("cancelled context: no error")
	}
}

func TestQuantile7(t *testing.T) {
	// R 4.2.2: quantile(c(1, 2, 4, 8, 16), c(0.025, 0.25, 0.5, 0.975), type = 7)
	// gives 1.1, 2, 4, 15.2 (by hand: h = 4p; h = 0.1 gives 1 + 0.1·1, h = 3.9 gives 8 + 0.9·8).
	x := []float64{1, 2, 4, 8, 16}
	for _, c := range []struct{ p, want float64 }{{0.025, 1.1}, {0.25, 2}, {0.5, 4}, {0.975, 15.2}, {0, 1}, {1, 16}} {
		if got := quantile7(x, c.p); !scalar.EqualWithinAbsOrRel(got, c.want, 1e-12, 1e-12) {
			t.Errorf("quantile7(%v) = %v, want %v", c.p, got, c.want)
		}
	}
}
