package compare

import (
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/ingest"
)

// One review end to end from arm data, lower is better: 3 published
// studies, 1 registry-only trial and 1 eligible trial without results
// (enrolment 400). Published and augmented analyses (REML, HKSJ floored),
// the oriented overstatement and the null what-if, against base R 4.2.2
// (testdata/reference/audit_whatif.R, values in audit_whatif.txt).
func TestAuditWhatIfAgainstBaseR(t *testing.T) {
	rv := ingest.Review{ReviewID: "WI", Measure: "MD", Unit: "points", Better: "lower"}
	st := func(name string, tm, cm float64, n int) ingest.ReviewStudy {
		s := armsStudy(name, tm, 10, n, cm, 10, n)
		s.ReviewID = "WI"
		return s
	}
	in := AuditInput{Review: rv, Trials: map[string]ingest.Trial{},
		Studies: []ingest.ReviewStudy{st("A", 28, 33, 40), st("B", 29, 32.5, 60), st("C", 27.5, 33, 40)}}
	in.Trials["NCT99990091"] = registryTrial("NCT99990091", 31-32, 10, 40)
	in.Links = append(in.Links, acceptLink("WI", "NCT99990091", ClassRegistryOnly))
	enrol := 400
	in.Trials["NCT99990092"] = ingest.Trial{TrialID: "NCT99990092", BriefTitle: "Silent trial", Enrollment: &enrol}
	in.Links = append(in.Links, ingest.Link{ReviewID: "WI", TrialID: "NCT99990092", Class: ClassNoResults})
	a, err := AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	const tol = 1e-9 // two REML root finders (tau² 0 in the first two)
	check := func(name string, got *float64, want float64) {
		t.Helper()
		if got == nil || !scalar.EqualWithinAbsOrRel(*got, want, tol, tol) {
			t.Errorf("%s = %v, want %.17g (base R)", name, deref(got), want)
		}
	}
	p, g := a.Published.Random, a.Augmented.Random
	check("published estimate", p.Estimate, -4.4999999999999991)
	check("published se", p.SE, 1.1952286093343936)
	check("published ci_low", p.CILow, -9.6426536386272801)
	check("published ci_high", p.CIHigh, 0.64265363862728275)
	check("published p", p.P, 0.063863046519189143)
	check("augmented estimate", g.Estimate, -3.7222222222222223)
	check("augmented ci_low", g.CILow, -7.0768151741835776)
	check("augmented ci_high", g.CIHigh, -0.36762927026086656)
	check("augmented p", g.P, 0.038605749288217008)
	check("overstatement_sd", a.Shift.OverstatementSD, 0.077777777777777682)
	w := a.Missing.WhatIf
	if w == nil || w.KImputed != 1 {
		t.Fatalf("what-if %+v", w)
	}
	check("what_if tau2", w.Tau2, 3.6397413596188555)
	check("what_if estimate", w.Estimate, -2.5956743903183614)
	check("what_if ci_low", w.CILow, -5.8996304648346536)
	check("what_if ci_high", w.CIHigh, 0.70828168419793069)
	check("what_if p", w.P, 0.094612449421798209)
	// The augmented interval excludes 0, the what-if's does not: "no
	// longer" significant against the augmented analysis, and like the
	// published one.
	if !a.SignificanceChanged || w.Significant || !w.SignificanceChanged || w.SignificanceChangedVsPublished {
		t.Errorf("significance: changed %v, what-if significant %v changed %v vs published %v", a.SignificanceChanged, w.Significant, w.SignificanceChanged, w.SignificanceChangedVsPublished)
	}
}
