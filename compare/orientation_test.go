package compare

import (
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestOrientationInvariance is a property over 300 generated reviews: a
// review whose better direction is flipped and whose every effect
// (published and registry) is negated describes the same evidence, so every
// oriented number must be unchanged: the overstatement and its interval,
// the GRADE-style hint, and the whole cross-review summary (overstatement
// distribution, pooled overstatement, detection tables, adjusted errors).
// Raw signs fail this at once.
func TestOrientationInvariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 7))
	var higher, lower []ReviewAudit
	opts := Options{SkipSelection: true}
	for r := range 300 {
		kPub, kReg := 3+rng.IntN(12), rng.IntN(5)
		theta, gap := rng.Float64()-0.2, 0.6*rng.Float64()-0.2
		var pub, reg, pubNeg, regNeg [][2]float64
		for range kPub {
			se := 0.08 + 0.3*rng.Float64()
			y := theta + se*rng.NormFloat64() + 0.1*rng.NormFloat64()
			pub, pubNeg = append(pub, [2]float64{y, se}), append(pubNeg, [2]float64{-y, se})
		}
		for range kReg {
			se := 0.08 + 0.3*rng.Float64()
			y := theta - gap + se*rng.NormFloat64()
			reg, regNeg = append(reg, [2]float64{y, se}), append(regNeg, [2]float64{-y, se})
		}
		id := string(rune('A'+r%26)) + string(rune('a'+r/26))
		hi := constructedInput(id, pub, reg)
		lo := constructedInput(id, pubNeg, regNeg)
		lo.Review.Better = "lower"
		ah, err := AuditReview(hi, opts)
		if err != nil {
			t.Fatal(err)
		}
		al, err := AuditReview(lo, opts)
		if err != nil {
			t.Fatal(err)
		}
		const tol = 1e-9 // the registry effects pass through arm data
		for _, c := range []struct {
			name   string
			hi, lo *float64
		}{
			{"overstatement", ah.Shift.OverstatementSD, al.Shift.OverstatementSD},
			{"overstatement CI low", ah.Shift.OverstatementCILow, al.Shift.OverstatementCILow},
			{"overstatement CI high", ah.Shift.OverstatementCIHigh, al.Shift.OverstatementCIHigh},
		} {
			if (c.hi == nil) != (c.lo == nil) || c.hi != nil && !scalar.EqualWithinAbsOrRel(*c.hi, *c.lo, tol, tol) {
				t.Errorf("%s: %s %v (higher) vs %v (lower)", id, c.name, deref(c.hi), deref(c.lo))
			}
		}
		if ah.Bias.GradeHint.Level != al.Bias.GradeHint.Level {
			t.Errorf("%s: hint %q (higher) vs %q (lower): %q / %q", id, ah.Bias.GradeHint.Level, al.Bias.GradeHint.Level, ah.Bias.GradeHint.Reasons, al.Bias.GradeHint.Reasons)
		}
		higher, lower = append(higher, ah), append(lower, al)
	}
	sh, sl := Summarize(higher, SummaryOptions{}), Summarize(lower, SummaryOptions{})
	if sh.ReviewsWithAdditions < 200 {
		t.Fatalf("only %d reviews with additions", sh.ReviewsWithAdditions)
	}
	const tol = 1e-8
	same := func(name string, a, b *float64) {
		if (a == nil) != (b == nil) || a != nil && !scalar.EqualWithinAbsOrRel(*a, *b, tol, tol) {
			t.Errorf("%s: %v (higher) vs %v (lower)", name, deref(a), deref(b))
		}
	}
	oh, ol := sh.OverstatementSD, sl.OverstatementSD
	same("median", oh.Median, ol.Median)
	same("q1", oh.Q1, ol.Q1)
	same("mean", oh.Mean, ol.Mean)
	same("share positive", oh.SharePositive, ol.SharePositive)
	same("pooled", sh.PooledOverstatementSD.Estimate, sl.PooledOverstatementSD.Estimate)
	same("pooled CI low", sh.PooledOverstatementSD.CILow, sl.PooledOverstatementSD.CILow)
	for i := range sh.Detection {
		dh, dl := sh.Detection[i], sl.Detection[i]
		if dh.TP != dl.TP || dh.FP != dl.FP || dh.FN != dl.FN || dh.TN != dl.TN || dh.Unknown != dl.Unknown || dh.Skipped != dl.Skipped {
			t.Errorf("detection %s min_k %d: %+v (higher) vs %+v (lower)", dh.Test, dh.MinK, dh, dl)
		}
	}
	for i := range sh.AdjustedError {
		same("adjusted "+sh.AdjustedError[i].Method, sh.AdjustedError[i].MeanError, sl.AdjustedError[i].MeanError)
	}
	// The generated registry trials are less favourable on average, so the
	// oriented figures are positive.
	if p := sh.PooledOverstatementSD.Estimate; p == nil || *p <= 0 {
		t.Errorf("pooled overstatement %v, want positive", deref(p))
	}
}
