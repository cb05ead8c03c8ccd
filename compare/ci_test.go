package compare

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/ingest"
)

// effectsInput is a review whose published studies are given as effect and
// SE, with no links.
func effectsInput(id string, effects, ses []float64) AuditInput {
	in := AuditInput{Review: ingest.Review{ReviewID: id, Measure: "MD", Unit: "points", Better: "lower"}, Trials: map[string]ingest.Trial{}}
	for i := range effects {
		in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: id, Study: fmt.Sprintf("S%d", i+1), Effect: fp(effects[i]), SE: fp(ses[i])})
	}
	return in
}

// The example of issue 13: the Wald p (0.030) was printed beside the HKSJ
// interval. Check values: testdata/reference/ci_p_consistency.txt (scipy
// 1.10.1, REML by its fixed-point equation with brentq; HKSJ written out).
func TestAuditPValueFromIntervalTest(t *testing.T) {
	in := effectsInput("EX", []float64{0.10, 0.32, 0.05, 0.40}, []float64{0.12, 0.15, 0.10, 0.20})
	const tol = 1e-8 // two REML root finders, both to ~1e-15 in tau²; the p carries a few more digits of error
	// The tau² check value is as close; tol covers it too.
	for _, c := range []struct {
		ci                string
		se, lo, hi, p     float64
		wantMethod        string
		significantWanted bool
	}{
		// scale 1.049 > 1, so floored and untruncated agree.
		{CIHKSJ, 0.07783881522047274, -0.08279356753890063, 0.41264213227329527, 0.12432482873315165, CIHKSJ, false},
		{CIHKSJUntruncated, 0.07783881522047274, -0.08279356753890063, 0.41264213227329527, 0.12432482873315165, CIHKSJUntruncated, false},
		{CIWald, 0.07599123675215029, 0.015984195192326217, 0.3138643695420684, 0.029983627266637745, CIWald, true},
	} {
		a, err := AuditReview(in, Options{CI: c.ci, SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		r := a.Published.Random
		checkNear(t, "--ci "+c.ci, tol, []near{{"estimate", r.Estimate, 0.1649242823671973}, {"tau2", r.Tau2, 0.005416262530028588},
			{"se", r.SE, c.se}, {"ci_low", r.CILow, c.lo}, {"ci_high", r.CIHigh, c.hi}, {"p", r.P, c.p}})
		if r.CIMethod != c.wantMethod || significant(r) != c.significantWanted || a.FewStudies {
			t.Errorf("--ci %s: method %q significant %v few %v", c.ci, r.CIMethod, significant(r), a.FewStudies)
		}
	}
}

// Studies that agree more than their SEs suggest: the untruncated HKSJ
// interval is narrower than Wald, the floored one equals Wald's width on t.
// Check values: testdata/reference/ci_p_consistency.txt ("agree-reml").
func TestAuditHKSJFloored(t *testing.T) {
	in := effectsInput("AG", []float64{0.30, 0.32, 0.29, 0.31, 0.28}, []float64{0.10, 0.12, 0.11, 0.15, 0.09})
	for _, c := range []struct {
		ci            string
		lo, hi, p, se float64
	}{
		{CIHKSJ, 0.16104016265899224, 0.43199658735467283, 0.003705635213145916, 0.04879556671018302},
		{CIHKSJUntruncated, 0.27679496204396964, 0.31624178796969543, 1.96905001894773e-06, 0.00710383681850528},
		{"", 0.16104016265899224, 0.43199658735467283, 0.003705635213145916, 0.04879556671018302}, // the default is floored
	} {
		a, err := AuditReview(in, Options{CI: c.ci, SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		r := a.Published.Random
		checkNear(t, fmt.Sprintf("--ci %q", c.ci), 1e-9, []near{{"ci_low", r.CILow, c.lo}, {"ci_high", r.CIHigh, c.hi}, {"p", r.P, c.p}, {"se", r.SE, c.se}})
	}
}

// near is a named value and its check value.
type near struct {
	name string
	got  *float64
	want float64
}

// checkNear compares each value with its check value within tol, absolute
// or relative.
func checkNear(t *testing.T, label string, tol float64, vs []near) {
	t.Helper()
	for _, v := range vs {
		if v.got == nil || !scalar.EqualWithinAbsOrRel(*v.got, v.want, tol, tol) {
			t.Errorf("%s: %s = %v, want %.17g", label, v.name, deref(v.got), v.want)
		}
	}
}

// registryTrial is a two-arm registry record whose MD is md with the given
// arm SD and per-arm n (SE = sd sqrt(2/n)).
func registryTrial(id string, md, sd float64, n int) ingest.Trial {
	tr := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{
		"OG000": {"50", fmt.Sprint(sd), "", ""}, "OG001": {fmt.Sprint(50 + md), fmt.Sprint(sd), "", ""}},
		map[string]string{"OG000": fmt.Sprint(n), "OG001": fmt.Sprint(n)})
	tr.TrialID = id
	return tr
}

func acceptLink(review, trial, class string) ingest.Link {
	return ingest.Link{ReviewID: review, TrialID: trial, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Decision: "accept", Class: class}
}

// One significant study plus one agreeing registry trial: with an HKSJ
// default the published analysis (k = 1) was Wald and the augmented one
// (k = 2) HKSJ on 1 df, so significance "changed" by the switch of method
// alone. Both now use Wald, and the output says so.
func TestAuditFewStudiesLikeWithLike(t *testing.T) {
	in := effectsInput("FEW", []float64{-3}, []float64{1})
	in.Trials["NCT99999911"] = registryTrial("NCT99999911", -3, 10, 200) // SE 1, the same effect
	in.Links = []ingest.Link{acceptLink("FEW", "NCT99999911", ClassRegistryOnly)}
	for _, ci := range CIMethods {
		a, err := AuditReview(in, Options{CI: ci, SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		if a.KAdded != 1 || a.FewStudies != (ci != CIWald) {
			t.Errorf("--ci %s: k added %d few %v", ci, a.KAdded, a.FewStudies)
		}
		if a.Published.Random.CIMethod != CIWald || a.Augmented.Random.CIMethod != CIWald {
			t.Errorf("--ci %s: methods %q / %q, want wald / wald", ci, a.Published.Random.CIMethod, a.Augmented.Random.CIMethod)
		}
		if a.SignificanceChanged || a.ConclusionChanged == nil || *a.ConclusionChanged {
			t.Errorf("--ci %s: significance changed %v conclusion %v: both analyses exclude 0", ci, a.SignificanceChanged, deref2(a.ConclusionChanged))
		}
	}
	// Two identical effects: untruncated HKSJ had scale 0 and a zero-width
	// "significant" interval; now Wald, whose width is 2 z SE/sqrt(2).
	a, err := AuditReview(effectsInput("TWIN", []float64{0.1, 0.1}, []float64{0.2, 0.2}), Options{CI: CIHKSJUntruncated, SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	r := a.Published.Random
	// Hand computation: SE 0.2/sqrt(2), z = 1.959963984540054 (Python 3.11
	// statistics.NormalDist().inv_cdf(0.975)).
	if want := 2 * 1.959963984540054 * 0.2 / math.Sqrt2; !a.FewStudies || r.CIMethod != CIWald || !scalar.EqualWithinAbsOrRel(*r.CIHigh-*r.CILow, want, 1e-12, 1e-12) || significant(r) {
		t.Errorf("twin studies: few %v method %q interval [%v, %v], want Wald of width %v including 0", a.FewStudies, r.CIMethod, deref(r.CILow), deref(r.CIHigh), want)
	}
}

// Property: in every analysis an audit prints, p < 1 - level exactly when
// the interval excludes 0, and the analyses compared share one method.
func TestAuditPIntervalInvariantProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1))
	n := 2000
	if testing.Short() {
		n = 300
	}
	checked := 0
	for i := range n {
		in, opts := randomAuditInput(rng, i)
		a, err := AuditReview(in, opts)
		if err != nil {
			t.Fatalf("case %d: %v", i, err)
		}
		checked += checkAuditInvariant(t, fmt.Sprintf("case %d (ci %s, level %v)", i, opts.CI, opts.Level), a, opts.level(), opts.CI)
		// The JSON output carries the same numbers.
		b, err := json.Marshal(a)
		if err != nil {
			t.Fatal(err)
		}
		var back ReviewAudit
		if err := json.Unmarshal(b, &back); err != nil {
			t.Fatal(err)
		}
		checkAuditInvariant(t, fmt.Sprintf("case %d JSON", i), back, opts.level(), opts.CI)
		if t.Failed() {
			return
		}
	}
	if checked < 4*n {
		t.Errorf("only %d analyses checked in %d audits", checked, n)
	}
}

// randomAuditInput generates a review of 1-12 published studies (effect
// and SE), 0-4 registry-only trials, 0-2 missed publications and 0-2
// registered trials without results, with a random interval method and
// level.
func randomAuditInput(rng *rand.Rand, i int) (AuditInput, Options) {
	k := 1 + rng.IntN(12)
	mu, tau := rng.NormFloat64(), 0.3*rng.Float64()
	effects, ses := make([]float64, k), make([]float64, k)
	for j := range k {
		ses[j] = 0.05 + 0.5*rng.Float64()
		effects[j] = mu*0.3 + tau*rng.NormFloat64() + ses[j]*rng.NormFloat64()
	}
	id := fmt.Sprintf("P%d", i)
	in := effectsInput(id, effects, ses)
	// Studies carry arm SDs through their SE only; the what-if needs a
	// pooled SD, which the registry trials give.
	add := func(j int, class string) {
		tid := fmt.Sprintf("NCT99%06d", 10*i+j)
		md := math.Round(100*(mu*0.3+0.5*rng.NormFloat64())) / 100
		in.Trials[tid] = registryTrial(tid, md, 1+rng.Float64(), 10+rng.IntN(200))
		if class == ClassMissedPublication {
			tr := in.Trials[tid]
			tr.References = []ingest.Reference{{PMID: fmt.Sprint(99100000 + 10*i + j), Type: "RESULT"}}
			in.Trials[tid] = tr
		}
		in.Links = append(in.Links, acceptLink(id, tid, class))
	}
	j := 0
	for range rng.IntN(5) {
		add(j, ClassRegistryOnly)
		j++
	}
	for range rng.IntN(3) {
		add(j, ClassMissedPublication)
		j++
	}
	for range rng.IntN(3) {
		tid := fmt.Sprintf("NCT99%06d", 10*i+j)
		enrol := 20 + rng.IntN(300)
		in.Trials[tid] = ingest.Trial{TrialID: tid, Enrollment: &enrol}
		in.Links = append(in.Links, ingest.Link{ReviewID: id, TrialID: tid, Class: ClassNoResults})
		j++
	}
	levels := []float64{0.8, 0.9, 0.95, 0.99}
	return in, Options{CI: CIMethods[rng.IntN(len(CIMethods))], Level: levels[rng.IntN(len(levels))], SkipBias: true}
}

// checkAuditInvariant checks every printed analysis of a, audited with
// --ci asked, and returns how many it checked.
func checkAuditInvariant(t *testing.T, name string, a ReviewAudit, level float64, asked string) int {
	t.Helper()
	n := 0
	check := func(what string, p, lo, hi *float64) {
		t.Helper()
		if p == nil || lo == nil || hi == nil {
			return
		}
		n++
		excludes := *lo > 0 || *hi < 0
		if (*p < 1-level) != excludes {
			t.Errorf("%s %s: p = %v with interval [%v, %v] at level %v", name, what, *p, *lo, *hi, level)
		}
	}
	for _, x := range []struct {
		what string
		e    Estimate
	}{{"published fixed", a.Published.Fixed}, {"published random", a.Published.Random},
		{"augmented fixed", a.Augmented.Fixed}, {"augmented random", a.Augmented.Random}} {
		check(x.what, x.e.P, x.e.CILow, x.e.CIHigh)
	}
	method := a.Published.Random.CIMethod
	if a.Augmented.Random.CIMethod != method {
		t.Errorf("%s: published %q vs augmented %q", name, method, a.Augmented.Random.CIMethod)
	}
	if m := a.WithMissedPublications; m != nil {
		check("with missed publications", m.P, m.CILow, m.CIHigh)
		if m.CIMethod != method {
			t.Errorf("%s: with missed publications uses %q, published %q", name, m.CIMethod, method)
		}
	}
	if w := a.Missing.WhatIf; w != nil && w.Estimate != nil {
		check("what-if", w.P, w.CILow, w.CIHigh)
		if w.CIMethod != method {
			t.Errorf("%s: what-if uses %q, published %q", name, w.CIMethod, method)
		}
	}
	if sg := a.Subgroup; sg != nil {
		check("subgroup", sg.P, sg.CILow, sg.CIHigh)
	}
	few := a.KPublished < MinStudiesHKSJ && asked != CIWald
	want := asked
	if few {
		want = CIWald
	}
	if a.FewStudies != few || method != want {
		t.Errorf("%s: few_studies %v and method %q with k = %d", name, a.FewStudies, method, a.KPublished)
	}
	return n
}

// Honest flags: the examples of issue 13, by hand.
func TestDirectionAndRelativeFlags(t *testing.T) {
	est := func(e, lo, hi float64) Estimate {
		return Estimate{Estimate: fp(e), CILow: fp(lo), CIHigh: fp(hi)}
	}
	// 0.004 [-0.20, 0.21] becoming -0.003 [-0.19, 0.18]: a sign flip of two
	// estimates indistinguishable from 0 is not a change of direction.
	if directionChanged(est(0.004, -0.20, 0.21), est(-0.003, -0.19, 0.18)) {
		t.Errorf("direction changed between two null-including intervals")
	}
	if !directionChanged(est(-0.5, -0.8, -0.2), est(0.1, -0.2, 0.4)) {
		t.Errorf("direction not changed from a significant -0.5 to 0.1")
	}
	if directionChanged(est(-0.5, -0.8, -0.2), est(-0.1, -0.4, 0.2)) {
		t.Errorf("direction changed without a sign change")
	}
	// 0.02 becoming -0.01: relative -150% and inflation -300% meant nothing.
	s := shiftOf(Pooled{Random: est(0.02, -0.1, 0.14)}, Pooled{Random: est(-0.01, -0.1, 0.08)}, "higher")
	if s.Relative != nil || s.Inflation != nil || len(s.Warnings) != 1 || *s.Absolute != -0.03 {
		t.Errorf("shift %+v: want relative and inflation null with one warning", s)
	}
	// Opposite signs with a significant published estimate.
	s = shiftOf(Pooled{Random: est(0.5, 0.2, 0.8)}, Pooled{Random: est(-0.1, -0.4, 0.2)}, "higher")
	if s.Relative != nil || s.Inflation != nil || len(s.Warnings) != 1 || !strings.Contains(s.Warnings[0], "opposite signs") {
		t.Errorf("shift %+v: want null with the opposite-signs reason", s)
	}
	// Same sign, published significant: 100 (-0.3 + 0.5) / -0.5 = -40 and
	// 100 (-0.5 + 0.3) / -0.3 = 66.67.
	s = shiftOf(Pooled{Random: est(-0.5, -0.8, -0.2)}, Pooled{Random: est(-0.3, -0.5, -0.1)}, "lower")
	if s.Relative == nil || s.Inflation == nil || !scalar.EqualWithinAbsOrRel(*s.Relative, -40, 1e-12, 1e-12) ||
		!scalar.EqualWithinAbsOrRel(*s.Inflation, 200.0/3, 1e-12, 1e-12) || len(s.Warnings) != 0 {
		t.Errorf("shift %+v: want relative -40, inflation 66.67", s)
	}
}

// A discrepancy flags on SD units only: 0.05 vs 0.06 with SD 1 is 0.01 SD
// (20% relative) and is not flagged; 0.05 vs 0.30 (0.25 SD) is.
func TestDiscrepancyFlagsOnSDUnits(t *testing.T) {
	rv := ingest.Review{ReviewID: "D", Measure: "MD", Unit: "points", Better: "higher"}
	pub := []StudyEffect{{Study: "A", TrialID: "NCT99999931", Effect: 0.05, SE: 0.1, PooledSD: 1, TreatN: 200, CtrlN: 200}}
	for _, c := range []struct {
		md          float64
		wantFlagged bool
		wantSD      float64
	}{{0.06, false, 0.01}, {0.30, true, 0.25}} {
		tr := registryTrial("NCT99999931", c.md, 1, 200)
		ds := discrepanciesOf(rv, pub, []ingest.Link{acceptLink("D", "NCT99999931", ClassIncluded)}, map[string]ingest.Trial{tr.TrialID: tr}, Options{})
		if len(ds) != 1 || ds[0].DifferenceSD == nil {
			t.Fatalf("md %v: discrepancies %+v", c.md, ds)
		}
		d := ds[0]
		if d.Flagged != c.wantFlagged || !scalar.EqualWithinAbsOrRel(*d.DifferenceSD, c.wantSD, 1e-9, 1e-9) {
			t.Errorf("md %v: flagged %v at %v SD (relative %v%%), want %v at %v SD", c.md, d.Flagged, *d.DifferenceSD, deref(d.RelativePct), c.wantFlagged, c.wantSD)
		}
	}
}

// No search is not no bias: without links, or with every link rejected,
// conclusion_changed is null and the note says why.
func TestAuditRegistrySearchState(t *testing.T) {
	in := auditFixture()
	in.Links = nil
	a, err := AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.ConclusionChanged != nil || a.RegistrySearch.Status != SearchNotLinked ||
		a.RegistrySearch.Note != "no registry trials were linked: run `unshelved match`" {
		t.Errorf("no links: conclusion %v, search %+v", deref2(a.ConclusionChanged), a.RegistrySearch)
	}
	in = auditFixture()
	for i := range in.Links {
		in.Links[i].Decision = "reject"
	}
	a, err = AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	// The fixture links four distinct trials.
	if a.ConclusionChanged != nil || a.RegistrySearch.Status != SearchNoneEligible || a.RegistrySearch.Note != "4 trials examined, none eligible" {
		t.Errorf("all rejected: conclusion %v, search %+v", deref2(a.ConclusionChanged), a.RegistrySearch)
	}
	a, err = AuditReview(auditFixture(), Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.ConclusionChanged == nil || a.RegistrySearch.Status != SearchLinked || a.RegistrySearch.Note != "" {
		t.Errorf("linked: conclusion %v, search %+v", deref2(a.ConclusionChanged), a.RegistrySearch)
	}
}

// Missed publications are pooled apart from the registry-only trials.
func TestAuditMissedPublicationsApart(t *testing.T) {
	in := auditFixture()
	tr := registryTrial("NCT99999941", -7, 10, 50)
	tr.References = []ingest.Reference{{PMID: "99100041", Type: "RESULT"}, {PMID: "99100042", Type: "BACKGROUND"}}
	in.Trials[tr.TrialID] = tr
	// Unclassed link to a trial with a RESULT reference: a missed
	// publication by the rule matching uses.
	in.Links = append(in.Links, acceptLink("R1", tr.TrialID, ""))
	a, err := AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	base, err := AuditReview(auditFixture(), Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.KAdded != 2 || *a.Augmented.Random.Estimate != *base.Augmented.Random.Estimate {
		t.Errorf("augmented k added %d estimate %v: the missed publication must not enter it (want %v)", a.KAdded, deref(a.Augmented.Random.Estimate), deref(base.Augmented.Random.Estimate))
	}
	m := a.WithMissedPublications
	if m == nil || m.K != 5 || m.KMissed != 1 || len(m.Trials) != 1 || m.Trials[0].TrialID != tr.TrialID ||
		len(m.Trials[0].PMIDs) != 1 || m.Trials[0].PMIDs[0] != "99100041" || m.Trials[0].Origin != "missed-publication" {
		t.Fatalf("with missed publications %+v", m)
	}
	if *m.Shift != *m.Estimate-*a.Published.Random.Estimate {
		t.Errorf("missed shift %v, want estimate - published", *m.Shift)
	}
	// MD -7 with SE 2 pulls the published -6.4 down.
	if !(*m.Estimate < *a.Published.Random.Estimate) {
		t.Errorf("missed estimate %v not below published %v", *m.Estimate, *a.Published.Random.Estimate)
	}
	// An explicit registry-only class keeps a trial in the augmented
	// analysis even with a RESULT reference (the person's call).
	in.Links[len(in.Links)-1].Class = ClassRegistryOnly
	a, err = AuditReview(in, Options{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	if a.KAdded != 3 || a.WithMissedPublications != nil {
		t.Errorf("registry-only class: k added %d, missed %+v", a.KAdded, a.WithMissedPublications)
	}
}

// Property: in every pool report, the headline and the Wald and HKSJ forms
// each have p < 1 - level exactly when their interval excludes 0, and the
// headline is the form --ci names (Wald below three studies).
func TestPoolPIntervalInvariantProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 3))
	n := 1500
	if testing.Short() {
		n = 200
	}
	levels := []float64{0.8, 0.9, 0.95, 0.99}
	for i := range n {
		k := 1 + rng.IntN(12)
		var studies []ingest.ReviewStudy
		mu := 0.3 * rng.NormFloat64()
		for j := range k {
			se := 0.05 + 0.5*rng.Float64()
			eff := mu + 0.2*rng.NormFloat64() + se*rng.NormFloat64()
			studies = append(studies, ingest.ReviewStudy{Study: fmt.Sprint(j), Effect: &eff, SE: &se})
		}
		ci, level := CIMethods[rng.IntN(len(CIMethods))], levels[rng.IntN(len(levels))]
		rep, err := PoolStudies(studies, PoolOptions{Level: level, CI: ci, SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		r := rep.Random
		for _, f := range []struct {
			what      string
			p, lo, hi *float64
		}{{"headline", r.P, r.CILow, r.CIHigh}, {"wald", r.WaldP, r.WaldCILow, r.WaldCIHigh}, {"hksj", r.HKSJP, r.HKSJCILow, r.HKSJCIHigh},
			{"fixed", rep.Fixed.P, rep.Fixed.CILow, rep.Fixed.CIHigh}} {
			if f.p == nil || f.lo == nil || f.hi == nil {
				if k >= 2 || f.what != "hksj" {
					t.Fatalf("case %d (k %d) %s: missing p or interval", i, k, f.what)
				}
				continue
			}
			if (*f.p < 1-level) != (*f.lo > 0 || *f.hi < 0) {
				t.Fatalf("case %d (k %d, ci %s, level %v) %s: p %v beside [%v, %v]", i, k, ci, level, f.what, *f.p, *f.lo, *f.hi)
			}
		}
		want := ci
		if k < MinStudiesHKSJ {
			want = CIWald
		}
		if r.CIMethod != want || r.FewStudies != (k < MinStudiesHKSJ && ci != CIWald) {
			t.Fatalf("case %d (k %d, ci %s): headline %q few %v", i, k, ci, r.CIMethod, r.FewStudies)
		}
		if ci == CIHKSJ && k >= 2 && *r.HKSJCIHigh-*r.HKSJCILow < *r.WaldCIHigh-*r.WaldCILow {
			t.Fatalf("case %d: floored HKSJ [%v, %v] narrower than Wald [%v, %v]", i, *r.HKSJCILow, *r.HKSJCIHigh, *r.WaldCILow, *r.WaldCIHigh)
		}
	}
}

// pool prints the issue's example with the HKSJ p beside the HKSJ interval
// (check values as in TestAuditPValueFromIntervalTest).
func TestPoolIssueExample(t *testing.T) {
	var studies []ingest.ReviewStudy
	for i, es := range [][2]float64{{0.10, 0.12}, {0.32, 0.15}, {0.05, 0.10}, {0.40, 0.20}} {
		studies = append(studies, ingest.ReviewStudy{Study: fmt.Sprint(i), Effect: fp(es[0]), SE: fp(es[1])})
	}
	rep, err := PoolStudies(studies, PoolOptions{SkipBias: true})
	if err != nil {
		t.Fatal(err)
	}
	r := rep.Random
	checkNear(t, "pool", 1e-8, []near{{"p", r.P, 0.12432482873315165}, {"ci_low", r.CILow, -0.08279356753890063}, {"ci_high", r.CIHigh, 0.41264213227329527},
		{"wald_p", r.WaldP, 0.029983627266637745}, {"hksj_p", r.HKSJP, 0.12432482873315165}})
	if r.CIMethod != CIHKSJ {
		t.Errorf("headline method %q, want hksj", r.CIMethod)
	}
}
