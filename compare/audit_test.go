package compare

import (
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/analysis"
	"unshelved/ingest"
)

func fp(x float64) *float64 { return &x }

// auditFixture: four published studies and two registry-only trials given
// directly as effect and SE (the registry trials through single-row
// outcomes whose MD and SE are the wanted values).
func auditFixture() AuditInput {
	rv := ingest.Review{ReviewID: "R1", Measure: "MD", Unit: "points", Better: "lower"}
	var studies []ingest.ReviewStudy
	for i, es := range [][2]float64{{-8, 2}, {-6, 2.5}, {-10, 3}, {-4, 1.5}} {
		studies = append(studies, ingest.ReviewStudy{ReviewID: "R1", Study: string(rune('A' + i)), Effect: fp(es[0]), SE: fp(es[1])})
	}
	studies[0].RegistryID = "NCT99999900"
	trials := map[string]ingest.Trial{}
	var links []ingest.Link
	// Registry trial with MD -1 and SE 2: treat mean 49, ctrl 50, SD s with
	// 2*s²/n = 4 -> n = 50, s = 10.
	// Registry trial with MD -2 and SE 1.8: n = 50, SD = sqrt(1.8² * 25) = 9.
	for _, tc := range []struct {
		id      string
		treat   string
		sd      string
		outcome int
	}{{"NCT99999902", "49", "10", 0}, {"NCT99999903", "48", "9", 0}} {
		tr := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", tc.sd, "", ""}, "OG001": {tc.treat, tc.sd, "", ""}},
			map[string]string{"OG000": "50", "OG001": "50"})
		tr.TrialID = tc.id
		trials[tc.id] = tr
		links = append(links, ingest.Link{ReviewID: "R1", TrialID: tc.id, OutcomeIndex: tc.outcome, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept"})
	}
	// Already included (by registry id): must not be added.
	inc := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"40", "10", "", ""}}, map[string]string{"OG000": "50", "OG001": "50"})
	inc.TrialID = "NCT99999900"
	trials[inc.TrialID] = inc
	links = append(links, ingest.Link{ReviewID: "R1", TrialID: inc.TrialID, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept"})
	// Rejected by a person: must not be added.
	rej := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"70", "10", "", ""}}, map[string]string{"OG000": "50", "OG001": "50"})
	rej.TrialID = "NCT99999904"
	trials[rej.TrialID] = rej
	links = append(links, ingest.Link{ReviewID: "R1", TrialID: rej.TrialID, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "reject"})
	return AuditInput{Review: rv, Studies: studies, Links: links, Trials: trials}
}

func TestAuditReview(t *testing.T) {
	a, err := AuditReview(auditFixture(), Options{Tau2: analysis.Tau2DL, CI: CIWald})
	if err != nil {
		t.Fatal(err)
	}
	if a.KPublished != 4 || a.KAdded != 2 {
		t.Fatalf("k = %d+%d, want 4+2", a.KPublished, a.KAdded)
	}
	if len(a.Rejected) != 1 || a.Rejected[0].Reason != ReasonIncluded {
		t.Errorf("rejected = %+v, want the already-included trial only", a.Rejected)
	}
	// Check values: testdata/reference/compare_checks.R (R 4.2.2), inverse
	// variance fixed effect and DerSimonian-Laird written out in base R.
	const tolPool = 1e-10
	for _, c := range []struct {
		name      string
		got, want *float64
	}{
		{"published fixed", a.Published.Fixed.Estimate, fp(-6.0575373993095507)},
		{"published fixed SE", a.Published.Fixed.SE, fp(1.0176802973291377)},
		{"augmented fixed", a.Augmented.Fixed.Estimate, fp(-4.4063664344727034)},
		{"augmented fixed SE", a.Augmented.Fixed.SE, fp(0.80998947020533063)},
		{"published DL", a.Published.Random.Estimate, fp(-6.4026992565867484)},
		{"published DL SE", a.Published.Random.SE, fp(1.3152801351642962)},
		{"published tau2", a.Published.Random.Tau2, fp(2.3629817049435573)},
		{"augmented DL", a.Augmented.Random.Estimate, fp(-4.7608932676877718)},
		{"augmented DL SE", a.Augmented.Random.SE, fp(1.2897856341455118)},
		{"augmented tau2", a.Augmented.Random.Tau2, fp(5.6096069018962584)},
	} {
		if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, *c.want, tolPool, tolPool) {
			t.Errorf("%s = %v, want %.17g", c.name, deref(c.got), *c.want)
		}
	}
	// The shift follows from the two DL estimates by its definition.
	pub, aug := -6.4026992565867484, -4.7608932676877718
	for _, c := range []struct {
		name string
		got  *float64
		want float64
	}{
		{"absolute", a.Shift.Absolute, aug - pub},
		{"relative", a.Shift.Relative, 100 * (aug - pub) / pub},
		{"inflation", a.Shift.Inflation, 100 * (pub - aug) / aug},
		{"SE units", a.Shift.PublishedSEUnits, (aug - pub) / 1.3152801351642962},
	} {
		if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, c.want, 1e-9, 1e-9) {
			t.Errorf("shift %s = %v, want %.17g", c.name, deref(c.got), c.want)
		}
	}
	if a.Shift.Toward != "harm" {
		t.Errorf("toward = %q, want harm (lower is better and the estimate moved up)", a.Shift.Toward)
	}
	if a.DirectionChanged {
		t.Errorf("direction changed, want not")
	}
}

func TestAuditReviewNoLinksGivesZeroShift(t *testing.T) {
	in := auditFixture()
	in.Links = nil
	a, err := AuditReview(in, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a.KAdded != 0 || a.Shift.Absolute == nil || *a.Shift.Absolute != 0 || a.Shift.Toward != "none" {
		t.Errorf("k_added %d, shift %+v: want 0 and none", a.KAdded, a.Shift)
	}
	if a.SignificanceChanged || a.DirectionChanged {
		t.Errorf("a review with nothing added changed its conclusion")
	}
}

func TestAuditReviewSignificanceChange(t *testing.T) {
	rv := ingest.Review{ReviewID: "R2", Measure: "MD", Better: "lower"}
	in := AuditInput{Review: rv, Trials: map[string]ingest.Trial{}}
	for i, es := range [][2]float64{{-1.2, 0.5}, {-1.0, 0.5}} {
		in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: "R2", Study: string(rune('A' + i)), Effect: fp(es[0]), SE: fp(es[1])})
	}
	// Two large registry trials pointing the other way: MD +2 with SE 0.2
	// (n = 500 per arm, SD = sqrt(0.04*250)).
	for _, id := range []string{"NCT99999905", "NCT99999906"} {
		tr := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "3.1622776601683795", "", ""}, "OG001": {"52", "3.1622776601683795", "", ""}},
			map[string]string{"OG000": "500", "OG001": "500"})
		tr.TrialID = id
		in.Trials[id] = tr
		in.Links = append(in.Links, ingest.Link{ReviewID: "R2", TrialID: id, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept"})
	}
	a, err := AuditReview(in, Options{Tau2: analysis.Tau2DL, CI: CIWald})
	if err != nil {
		t.Fatal(err)
	}
	if !a.SignificanceChanged || !a.DirectionChanged {
		t.Errorf("significance/direction changed = %v/%v, want both (published %v, augmented %v)",
			a.SignificanceChanged, a.DirectionChanged, deref(a.Published.Random.Estimate), deref(a.Augmented.Random.Estimate))
	}
}

func deref(x *float64) any {
	if x == nil {
		return nil
	}
	return *x
}

// Conclusion, missing-evidence and discrepancy figures on the fixture, by
// their definitions (numbers worked by hand in the comments).
func TestAuditMIDMissingDiscrepancy(t *testing.T) {
	in := auditFixture()
	in.Review.MID = fp(5)
	// The already-included trial is linked as "included": compared, not pooled.
	for i := range in.Links {
		if in.Links[i].TrialID == "NCT99999900" {
			in.Links[i].Class = ClassIncluded
		}
	}
	enrol := 100
	in.Trials["NCT99999907"] = ingest.Trial{TrialID: "NCT99999907", BriefTitle: "Silent trial", Enrollment: &enrol}
	in.Links = append(in.Links, ingest.Link{ReviewID: "R1", TrialID: "NCT99999907", Class: ClassNoResults})
	a, err := AuditReview(in, Options{Tau2: analysis.Tau2DL, CI: CIWald})
	if err != nil {
		t.Fatal(err)
	}
	// Published DL -6.40 is beyond the MID of 5 (lower is better); the
	// augmented -4.76 is not.
	if a.MIDCrossed == nil || !*a.MIDCrossed || a.ConclusionChanged == nil || !*a.ConclusionChanged {
		t.Errorf("mid crossed %v, conclusion changed %v", deref2(a.MIDCrossed), deref2(a.ConclusionChanged))
	}
	if want := 5.6096069018962584 - 2.3629817049435573; a.Tau2Change == nil || !scalar.EqualWithinAbsOrRel(*a.Tau2Change, want, 1e-10, 1e-10) {
		t.Errorf("tau2 change %v, want %v", deref(a.Tau2Change), want)
	}
	m := a.Missing
	// Randomized: 4 published studies without N, two added trials of 100,
	// and 100 missing: share 100/300.
	if m.K != 1 || m.Enrollment != 100 || m.PublishedWithoutN != 4 || m.Randomized != 300 || !scalar.EqualWithinAbsOrRel(*m.Share, 1.0/3, 1e-15, 1e-15) {
		t.Errorf("missing %+v", m)
	}
	if m.WhatIf == nil || m.WhatIf.KImputed != 1 || m.WhatIf.Estimate == nil {
		t.Fatalf("what-if %+v", m.WhatIf)
	}
	// The SD falls back to the registry trials' pooled SD, sqrt((49·100 + 49·81)·2/196)
	// = sqrt(90.5), so the imputed SE is 0.2·sqrt(90.5); a null study pulls
	// the estimate toward 0.
	if !scalar.EqualWithinAbsOrRel(*m.WhatIf.SD, 9.513148795220223, 1e-12, 1e-12) || !(*m.WhatIf.Estimate > *a.Augmented.Random.Estimate) {
		t.Errorf("what-if SD %v estimate %v (augmented %v)", *m.WhatIf.SD, *m.WhatIf.Estimate, *a.Augmented.Random.Estimate)
	}
	if len(a.Discrepancies) != 1 {
		t.Fatalf("discrepancies %+v", a.Discrepancies)
	}
	// Study A published -8; the registry gives 40 - 50 = -10: difference -2,
	// 25% of the published magnitude. No published study gives arm SDs, so
	// the difference has no SD units and is not flagged on the percentage
	// alone; the reason says so.
	d := a.Discrepancies[0]
	if d.Study != "A" || *d.Difference != -2 || *d.RelativePct != -25 || d.Flagged || d.DifferenceSD != nil || d.Reason == "" || !d.RegistryPrimary {
		t.Errorf("discrepancy %+v", d)
	}
	if a.KAdded != 2 {
		t.Errorf("k added %d: included and no-results links must not be pooled", a.KAdded)
	}
}

func deref2(b *bool) any {
	if b == nil {
		return nil
	}
	return *b
}

func TestRegistryIDsCell(t *testing.T) {
	got := RegistryIDs(" nct99999900; 2099-001234-55 ,ISRCTN99999999|")
	want := []string{"NCT99999900", "2099-001234-55", "ISRCTN99999999"}
	if len(got) != len(want) {
		t.Fatalf("got %q, want %q", got, want)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("got %q, want %q", got, want)
		}
	}
	// A study citing two ids keeps its trial out of the registry additions.
	in := auditFixture()
	in.Studies[0].RegistryID = "2099-001234-55; NCT99999900"
	a, err := AuditReview(in, Options{Bootstrap: 0})
	if err != nil {
		t.Fatal(err)
	}
	if a.KAdded != 2 || len(a.Rejected) != 1 || a.Rejected[0].Reason != ReasonIncluded {
		t.Errorf("k_added %d, rejected %+v: the doubly-cited trial must count as included", a.KAdded, a.Rejected)
	}
}

// TestAuditNonRandomized: an accepted link to a non-randomized record is
// refused by default and, with AllowNonrandomized, pooled with a warning.
func TestAuditNonRandomized(t *testing.T) {
	in := auditFixture()
	tr := in.Trials["NCT99999903"]
	tr.Allocation, tr.InterventionModel = "NON_RANDOMIZED", "PARALLEL"
	in.Trials["NCT99999903"] = tr
	a, err := AuditReview(in, Options{Tau2: analysis.Tau2DL, CI: CIWald})
	if err != nil {
		t.Fatal(err)
	}
	refused := false
	for _, r := range a.Rejected {
		refused = refused || r.TrialID == "NCT99999903" && r.Reason == ReasonNotRandomized
	}
	if a.KAdded != 1 || !refused {
		t.Errorf("default: k added %d, rejected %+v; want the non-randomized trial refused", a.KAdded, a.Rejected)
	}
	a, err = AuditReview(in, Options{Tau2: analysis.Tau2DL, CI: CIWald, Harmonize: HarmonizeOptions{AllowNonrandomized: true}})
	if err != nil {
		t.Fatal(err)
	}
	warned := false
	for _, w := range a.Warnings {
		warned = warned || strings.Contains(w, "NCT99999903 is not-randomized")
	}
	if a.KAdded != 2 || !warned {
		t.Errorf("allowed: k added %d, warnings %q", a.KAdded, a.Warnings)
	}
}
