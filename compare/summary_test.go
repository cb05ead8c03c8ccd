package compare

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/analysis"
)

// Check values: Newcombe 1998, Stat Med 17:857-872, Table I, method 3
// (Wilson score, no continuity correction), four decimals, from memory;
// cross-checked at full precision with Debian's python3-statsmodels 0.13.5,
// proportion_confint(x, n, alpha=0.05, method="wilson")
// (testdata/reference/summary_wilson.py, output in summary_wilson.txt).
func TestWilson(t *testing.T) {
	for _, tc := range []struct {
		x, n     int
		lo, hi   float64 // statsmodels
		nLo, nHi float64 // Newcombe 1998 Table I (0 when not in the table)
	}{
		{81, 263, 0.2552885198782742, 0.36620957698280004, 0.2553, 0.3662},
		{15, 148, 0.06238639953073628, 0.16048724172330803, 0.0624, 0.1605},
		{0, 20, 0.0, 0.1611251580528194, 0, 0.1611},
		{1, 29, 0.006113214292762667, 0.17175521879320294, 0.0061, 0.1718},
		{29, 29, 0.8830302015002592, 1.0, 0, 0},
		{7, 10, 0.39677814746114537, 0.8922087325936989, 0, 0},
	} {
		est, lo, hi := Wilson(tc.x, tc.n, 0.95)
		if !scalar.EqualWithinAbsOrRel(est, float64(tc.x)/float64(tc.n), 1e-15, 1e-15) {
			t.Errorf("%d/%d: estimate %v", tc.x, tc.n, est)
		}
		const tol = 1e-12 // closed form; z from two quantile routines
		if !scalar.EqualWithinAbsOrRel(lo, tc.lo, tol, tol) || !scalar.EqualWithinAbsOrRel(hi, tc.hi, tol, tol) {
			t.Errorf("%d/%d: [%.17g, %.17g], want [%.17g, %.17g]", tc.x, tc.n, lo, hi, tc.lo, tc.hi)
		}
		if tc.nHi != 0 && (!scalar.EqualWithinAbs(lo, tc.nLo, 5e-5) || !scalar.EqualWithinAbs(hi, tc.nHi, 5e-5)) {
			t.Errorf("%d/%d: [%.4f, %.4f], Newcombe's table gives [%.4f, %.4f]", tc.x, tc.n, lo, hi, tc.nLo, tc.nHi)
		}
	}
}

// summaryAudit is a minimal audit with a subgroup difference and a shift.
func summaryAudit(id, measure string, diff, seDiff, sd, shift float64) ReviewAudit {
	a := ReviewAudit{ReviewID: id, Measure: measure, KPublished: 5, KAdded: 2,
		Subgroup: &Subgroup{Difference: fp(diff), SE: fp(seDiff)}}
	a.Shift.Absolute = fp(shift)
	a.Shift.SDUnits = fp(shift / sd)
	if measure == "MD" {
		a.Shift.PooledSD = fp(sd)
	}
	a.Shift.Toward = "harm"
	if shift < 0 {
		a.Shift.Toward = "benefit"
	}
	return a
}

func TestSummarizePooledDifferenceReusesPool(t *testing.T) {
	audits := []ReviewAudit{
		summaryAudit("A", "MD", -2, 1, 10, -1), // -0.2 (0.1) in SD units
		summaryAudit("B", "SMD", -0.4, 0.2, 1, -0.2),
		summaryAudit("C", "MD", 1, 2, 5, 0.5), // 0.2 (0.4)
		summaryAudit("D", "SMD", -0.1, 0.15, 1, 0.05),
	}
	audits = append(audits, ReviewAudit{ReviewID: "E", Measure: "SMD", KPublished: 4}) // nothing added
	s := Summarize(audits, SummaryOptions{Tau2: analysis.Tau2DL, CI: CIWald})
	want, err := analysis.Pool([]float64{-0.2, -0.4, 0.2, -0.1}, []float64{0.1, 0.2, 0.4, 0.15}, analysis.Settings{Tau2: analysis.Tau2DL})
	if err != nil {
		t.Fatal(err)
	}
	p := s.PooledDifferenceSMD
	const tol = 1e-12 // the same engine on the same numbers
	if p.K != 4 || !scalar.EqualWithinAbsOrRel(*p.Estimate, want.Random.Estimate, tol, tol) ||
		!scalar.EqualWithinAbsOrRel(*p.SE, want.Random.SE, tol, tol) || !scalar.EqualWithinAbsOrRel(*p.Tau2, want.Random.Tau2, tol, tol) {
		t.Errorf("pooled %+v, want %+v", p, want.Random)
	}
	if s.Reviews != 5 || s.ReviewsWithAdditions != 4 {
		t.Errorf("reviews %d with additions %d", s.Reviews, s.ReviewsWithAdditions)
	}
	// Shifts in SD units: -0.1, -0.2, 0.1, 0.05; sorted -0.2, -0.1, 0.05, 0.1.
	// Type 7 quantiles by hand: median (-0.1+0.05)/2 = -0.025, q1 at h = 0.75:
	// -0.2 + 0.75·0.1 = -0.125, q3 at h = 2.25: 0.05 + 0.25·0.05 = 0.0625.
	for _, c := range []struct {
		name string
		got  *float64
		want float64
	}{{"median", s.ShiftSMD.Median, -0.025}, {"q1", s.ShiftSMD.Q1, -0.125}, {"q3", s.ShiftSMD.Q3, 0.0625}, {"toward benefit", s.ShiftSMD.TowardBenefitShare, 0.5}} {
		if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, c.want, 1e-12, 1e-12) {
			t.Errorf("%s = %v, want %v", c.name, deref(c.got), c.want)
		}
	}
	// Equal differences and SEs: the estimate is that value with tau² 0.
	same := []ReviewAudit{summaryAudit("A", "SMD", 0.3, 0.1, 1, 0.1), summaryAudit("B", "SMD", 0.3, 0.1, 1, 0.1), summaryAudit("C", "SMD", 0.3, 0.1, 1, 0.1)}
	s = Summarize(same, SummaryOptions{})
	if p := s.PooledDifferenceSMD; !scalar.EqualWithinAbsOrRel(*p.Estimate, 0.3, 1e-12, 1e-12) || *p.Tau2 != 0 {
		t.Errorf("equal differences: %+v", p)
	}
}

func TestDetectionTable(t *testing.T) {
	mk := func(shift, eggerP float64, k0 int) ReviewAudit {
		a := summaryAudit("X", "SMD", shift, 0.1, 1, shift)
		a.Bias = &BiasReport{Egger: &EggerJSON{P: fp(eggerP)}, TrimFill: &TrimFillJSON{K0: k0}}
		return a
	}
	audits := []ReviewAudit{
		mk(-0.3, 0.01, 2), // shifted, Egger positive, trim-fill positive
		mk(-0.2, 0.50, 0), // shifted, missed
		mk(0.05, 0.05, 1), // not shifted, false alarm
		mk(0.0, 0.70, 0),  // not shifted, quiet
		mk(0.02, 0.30, 0), // not shifted, quiet
	}
	s := Summarize(audits, SummaryOptions{})
	byTest := map[string]Detection{}
	for _, d := range s.Detection {
		byTest[d.Test] = d
	}
	for _, c := range []struct {
		test               string
		tp, fp, fn, tn, sk int
	}{{"egger", 1, 1, 1, 2, 0}, {"trim_fill", 1, 1, 1, 2, 0}, {"begg", 0, 0, 0, 0, 5}} {
		d := byTest[c.test]
		if d.TP != c.tp || d.FP != c.fp || d.FN != c.fn || d.TN != c.tn || d.Skipped != c.sk {
			t.Errorf("%s: %+v, want tp %d fp %d fn %d tn %d skipped %d", c.test, d, c.tp, c.fp, c.fn, c.tn, c.sk)
		}
	}
	_, lo, hi := Wilson(1, 2, 0.95)
	if d := byTest["egger"]; *d.Sensitivity != 0.5 || *d.SensitivityCILow != lo || *d.SensitivityCIHigh != hi {
		t.Errorf("egger sensitivity %+v", d)
	}
}
