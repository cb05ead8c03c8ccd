package compare_test

import (
	"context"
	"fmt"
	"reflect"
	"testing"
	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/compare/workspace"
)

// TestShiftIntervalDeterministic: the audit passes the studies' effects and
// SEs and the fits' tau² to analysis.ShiftInterval unchanged, and the
// result, bootstrap check included, does not depend on the number of
// workers or on the other reviews.
func TestShiftIntervalDeterministic(t *testing.T) {
	var inputs []compare.AuditInput
	for i := range 6 {
		inputs = append(inputs, compare.ConstructedInput(fmt.Sprintf("R%d", i),
			[][2]float64{{0.1, 0.2}, {0.5, 0.25}, {0.3, 0.3}, {0.9, 0.2}},
			[][2]float64{{-0.2 + 0.1*float64(i), 0.3}, {0.1, 0.2}}))
	}
	opts := compare.Options{SkipBias: true, Bootstrap: 200, Seed: 4}
	one, _, err := workspace.AuditAll(context.Background(), inputs, opts, 1)
	if err != nil {
		t.Fatal(err)
	}
	two, _, err := workspace.AuditAll(context.Background(), inputs, opts, 3)
	if err != nil {
		t.Fatal(err)
	}
	// One review alone gives the same bootstrap draws as among the others.
	alone, err := compare.AuditReview(inputs[3], opts)
	if err != nil {
		t.Fatal(err)
	}
	if alone.Shift.BootCILow == nil || !reflect.DeepEqual(alone.Shift, one[3].Shift) {
		t.Errorf("review alone: %+v, among others %+v", alone.Shift, one[3].Shift)
	}
	for i := range one {
		if !reflect.DeepEqual(one[i].Shift, two[i].Shift) {
			t.Errorf("%s: shift differs between 1 and 3 workers: %+v vs %+v", one[i].ReviewID, one[i].Shift, two[i].Shift)
		}
		var y, seY []float64
		for _, s := range one[i].Studies {
			y, seY = append(y, s.Effect), append(seY, s.SE)
		}
		want, err := analysis.ShiftInterval(y, seY, one[i].KPublished, *one[i].Published.Random.Tau2, *one[i].Augmented.Random.Tau2, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		if lo, hi := one[i].Shift.CILow, one[i].Shift.CIHigh; lo == nil || *lo != want.Low || *hi != want.High {
			t.Errorf("%s: interval %v to %v, want %v to %v", one[i].ReviewID, compare.Deref(lo), compare.Deref(hi), want.Low, want.High)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, _, err := workspace.AuditAll(ctx, inputs, opts, 2); err == nil {
		t.Errorf("cancelled context: no error")
	}
}
