package compare

import (
	"encoding/json"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/analysis"
)

// summaryAudit is a minimal audit with a subgroup difference (registry -
// published, effect scale) and a shift (augmented - published, effect
// scale) for a review with the given better direction.
func summaryAudit(id, measure, better string, diff, seDiff, sd, shift float64) ReviewAudit {
	a := ReviewAudit{ReviewID: id, Measure: measure, Better: better, KPublished: 5, KAdded: 2,
		Subgroup: &Subgroup{Difference: fp(diff), SE: fp(seDiff)}}
	a.Shift.Absolute = fp(shift)
	a.Shift.SDUnits = fp(shift / sd)
	if measure == "MD" {
		a.Shift.PooledSD = fp(sd)
	}
	orientShift(&a.Shift, better)
	return a
}

func TestSummarizePooledOverstatementReusesPool(t *testing.T) {
	audits := []ReviewAudit{
		summaryAudit("A", "MD", "higher", -2, 1, 10, -1),        // oriented published - registry: +0.2 (0.1)
		summaryAudit("B", "SMD", "lower", -0.4, 0.2, 1, -0.2),   // -0.4 (0.2): the registry trials were more favourable
		summaryAudit("C", "MD", "lower", 1, 2, 5, 0.5),          // +0.2 (0.4)
		summaryAudit("D", "SMD", "higher", -0.1, 0.15, 1, 0.05), // +0.1 (0.15)
	}
	audits = append(audits, ReviewAudit{ReviewID: "E", Measure: "SMD", Better: "higher", KPublished: 4}) // nothing added
	s := Summarize(audits, SummaryOptions{Tau2: analysis.Tau2DL, CI: CIWald})
	// Oriented by hand: favourable (+1 higher, -1 lower) x -(registry - published) / SD.
	want, err := analysis.Pool([]float64{0.2, -0.4, 0.2, 0.1}, []float64{0.1, 0.2, 0.4, 0.15}, analysis.Settings{Tau2: analysis.Tau2DL})
	if err != nil {
		t.Fatal(err)
	}
	p := s.PooledOverstatementSD
	const tol = 1e-12 // the same engine on the same numbers
	if p.K != 4 || !scalar.EqualWithinAbsOrRel(*p.Estimate, want.Random.Estimate, tol, tol) ||
		!scalar.EqualWithinAbsOrRel(*p.SE, want.Random.SE, tol, tol) || !scalar.EqualWithinAbsOrRel(*p.Tau2, want.Random.Tau2, tol, tol) {
		t.Errorf("pooled %+v, want %+v", p, want.Random)
	}
	if s.Reviews != 5 || s.ReviewsWithAdditions != 4 {
		t.Errorf("reviews %d with additions %d", s.Reviews, s.ReviewsWithAdditions)
	}
	// Overstatements, favourable x -(shift / SD): A -1 x -(-0.1) = 0.1,
	// B +1 x -0.2 = -0.2, C +1 x 0.1 = 0.1, D -1 x 0.05 = -0.05; sorted
	// -0.2, -0.05, 0.1, 0.1. Type 7 quantiles by hand: median
	// (-0.05 + 0.1)/2 = 0.025; q1 at h = 0.75: -0.2 + 0.75 x 0.15 = -0.0875;
	// q3 at h = 2.25: 0.1; mean -0.05/4 = -0.0125; 2 of 4 positive.
	o := s.OverstatementSD
	for _, c := range []struct {
		name string
		got  *float64
		want float64
	}{{"median", o.Median, 0.025}, {"q1", o.Q1, -0.0875}, {"q3", o.Q3, 0.1}, {"mean", o.Mean, -0.0125}, {"share positive", o.SharePositive, 0.5}} {
		if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, c.want, 1e-12, 1e-12) {
			t.Errorf("%s = %v, want %v", c.name, deref(c.got), c.want)
		}
	}
	if o.N != 4 {
		t.Errorf("n = %d, want 4", o.N)
	}
	// Equal differences and SEs: the estimate is that value with tau² 0.
	same := []ReviewAudit{summaryAudit("A", "SMD", "higher", -0.3, 0.1, 1, -0.1), summaryAudit("B", "SMD", "lower", 0.3, 0.1, 1, 0.1), summaryAudit("C", "SMD", "higher", -0.3, 0.1, 1, -0.1)}
	s = Summarize(same, SummaryOptions{})
	if p := s.PooledOverstatementSD; !scalar.EqualWithinAbsOrRel(*p.Estimate, 0.3, 1e-12, 1e-12) || *p.Tau2 != 0 {
		t.Errorf("equal differences: %+v", p)
	}
	// The pooling engine's sentences speak of reviews, not studies.
	for _, w := range s.Warnings {
		if strings.Contains(w, "stud") {
			t.Errorf("warning about studies: %q", w)
		}
	}
	if len(s.Warnings) == 0 {
		t.Errorf("3 reviews: no few-reviews warning")
	}
}

// TestSummarizeOppositeDirections is the constructed pair of the issue: a
// lower-is-better review and a higher-is-better review, each with registry
// trials 0.4 SD less favourable than its published studies, audited from
// study data. Hand computation: every SE is 0.2 and the pooled SD is 1
// (n = 50 per arm, SD = 5 SE), so every weight is equal and the pooled
// estimates are plain means: with 6 published and 6 registry trials the
// augmented estimate moves 0.4/2 = 0.2 SD toward harm, so each review's
// overstatement is +0.2 SD, the oriented subgroup difference +0.4 SD (both
// reviews identical: tau² 0, pooled 0.4), the published estimate's
// oriented error against the augmented one +0.2. Raw signs would pool
// +0.4 and -0.4 to 0.
func TestSummarizeOppositeDirections(t *testing.T) {
	base := []float64{0.1, 0.5, 0.3, 0.8, 0.2, 0.6}
	mk := func(id, better string) AuditInput {
		f := 1.0
		if better == "lower" {
			f = -1
		}
		var pub, reg [][2]float64
		for _, b := range base {
			pub = append(pub, [2]float64{f * b, 0.2})
			reg = append(reg, [2]float64{f * (b - 0.4), 0.2})
		}
		in := constructedInput(id, pub, reg)
		in.Review.Better = better
		return in
	}
	var audits []ReviewAudit
	for _, in := range []AuditInput{mk("LOWER", "lower"), mk("HIGHER", "higher")} {
		a, err := AuditReview(in, Options{SkipBias: true})
		if err != nil {
			t.Fatal(err)
		}
		const tol = 1e-9 // sums of a dozen terms; the registry MDs pass through arm data
		if a.Shift.OverstatementSD == nil || !scalar.EqualWithinAbsOrRel(*a.Shift.OverstatementSD, 0.2, tol, tol) {
			t.Errorf("%s: overstatement %v, want 0.2", a.ReviewID, deref(a.Shift.OverstatementSD))
		}
		if lo, hi := a.Shift.OverstatementCILow, a.Shift.OverstatementCIHigh; lo == nil || hi == nil || !(*lo < 0.2 && 0.2 < *hi) {
			t.Errorf("%s: overstatement interval [%v, %v] does not hold 0.2", a.ReviewID, deref(lo), deref(hi))
		}
		audits = append(audits, a)
	}
	s := Summarize(audits, SummaryOptions{})
	const tol = 1e-9
	for _, c := range []struct {
		name string
		got  *float64
		want float64
	}{
		{"median", s.OverstatementSD.Median, 0.2}, {"mean", s.OverstatementSD.Mean, 0.2}, {"share positive", s.OverstatementSD.SharePositive, 1},
		{"pooled overstatement", s.PooledOverstatementSD.Estimate, 0.4},
	} {
		if c.got == nil || !scalar.EqualWithinAbsOrRel(*c.got, c.want, tol, tol) {
			t.Errorf("%s = %v, want %v", c.name, deref(c.got), c.want)
		}
	}
	for _, e := range s.AdjustedError {
		if e.Method != "published" {
			continue
		}
		if e.N != 2 || e.MeanError == nil || !scalar.EqualWithinAbsOrRel(*e.MeanError, 0.2, tol, tol) || !scalar.EqualWithinAbsOrRel(*e.RMSE, 0.2, tol, tol) {
			t.Errorf("published adjusted error %+v, want n 2, mean 0.2, RMSE 0.2", e)
		}
	}
}

func TestDetectionTable(t *testing.T) {
	type spec struct {
		better    string
		over      float64 // oriented overstatement, SD
		eggerP    float64
		eggerBias float64 // > 0: small studies larger effects
		k0        int
		side      string
		kPub      int
		kAdded    int
		missing   int
	}
	mk := func(c spec) ReviewAudit {
		f := favourable(c.better)
		// overstatement = -f x shift for an SMD review.
		a := summaryAudit("X", "SMD", c.better, -f*c.over, 0.1, 1, -f*c.over)
		a.KPublished, a.KAdded, a.Missing.K = c.kPub, c.kAdded, c.missing
		a.Bias = &BiasReport{Egger: &EggerJSON{P: fp(c.eggerP), Bias: fp(c.eggerBias)}, TrimFill: &TrimFillJSON{K0: c.k0, Side: c.side}}
		return a
	}
	audits := []ReviewAudit{
		mk(spec{"higher", 0.3, 0.01, 1, 2, "left", 12, 2, 0}),   // overstated; Egger and trim-and-fill toward benefit: TP, TP
		mk(spec{"higher", 0.2, 0.50, 1, 0, "left", 12, 2, 0}),   // overstated, missed: FN, FN
		mk(spec{"higher", 0.05, 0.05, 1, 1, "left", 12, 2, 0}),  // not overstated, false alarms: FP, FP
		mk(spec{"higher", 0.0, 0.70, 1, 0, "left", 12, 2, 0}),   // quiet: TN, TN
		mk(spec{"higher", -0.3, 0.01, 1, 2, "right", 12, 2, 0}), // understated (toward benefit): not a positive; Egger FP, fill on the favourable side TN
		mk(spec{"lower", 0.3, 0.02, -1, 1, "right", 5, 2, 0}),   // lower is better, both toward benefit: TP, TP (k 5)
		mk(spec{"higher", 0.3, 0.02, -1, 1, "right", 5, 2, 0}),  // asymmetry the wrong way: FN, FN (k 5)
		mk(spec{"higher", 0, 0.5, 1, 0, "left", 12, 0, 0}),      // nothing added, nothing missing: TN, TN
		mk(spec{"higher", 0, 0.01, 1, 3, "left", 12, 0, 2}),     // nothing added, 2 trials without results: unknown
	}
	s := Summarize(audits, SummaryOptions{})
	type key struct {
		test string
		minK int
	}
	byTest := map[key]Detection{}
	for _, d := range s.Detection {
		byTest[key{d.Test, d.MinK}] = d
	}
	if len(s.Detection) != 10 {
		t.Errorf("%d detection tables, want 5 tests x 2", len(s.Detection))
	}
	for _, c := range []struct {
		test                   string
		minK                   int
		tp, fp, fn, tn, un, sk int
	}{
		{"egger", 0, 2, 2, 2, 2, 1, 0},
		{"trim_fill", 0, 2, 1, 2, 3, 1, 0},
		{"begg", 0, 0, 0, 0, 0, 1, 8},
		{"egger", 10, 1, 2, 1, 2, 1, 0}, // the two k = 5 reviews left out
		{"trim_fill", 10, 1, 1, 1, 3, 1, 0},
	} {
		d := byTest[key{c.test, c.minK}]
		if d.TP != c.tp || d.FP != c.fp || d.FN != c.fn || d.TN != c.tn || d.Unknown != c.un || d.Skipped != c.sk {
			t.Errorf("%s min_k %d: %+v, want tp %d fp %d fn %d tn %d unknown %d skipped %d", c.test, c.minK, d, c.tp, c.fp, c.fn, c.tn, c.un, c.sk)
		}
	}
	_, lo, hi := analysis.Wilson(2, 4, 0.95)
	if d := byTest[key{"egger", 0}]; *d.Sensitivity != 0.5 || *d.SensitivityCILow != lo || *d.SensitivityCIHigh != hi {
		t.Errorf("egger sensitivity %+v", d)
	}
	// q-between: positive only with p < 0.05 and the published subgroup more
	// favourable. Higher is better: registry - published = -0.5 is
	// published more favourable; +0.5 is not.
	qa := []ReviewAudit{mk(spec{"higher", 0.3, 0.01, 1, 0, "left", 12, 2, 0}), mk(spec{"higher", 0.3, 0.01, 1, 0, "left", 12, 2, 0})}
	qa[0].Subgroup = &Subgroup{Difference: fp(-0.5), SE: fp(0.1), P: fp(0.001)}
	qa[1].Subgroup = &Subgroup{Difference: fp(0.5), SE: fp(0.1), P: fp(0.001)}
	s = Summarize(qa, SummaryOptions{Truth: TruthQBetween})
	for _, d := range s.Detection {
		if d.Test == "egger" && d.MinK == 0 && (d.TP != 1 || d.FP != 1) {
			t.Errorf("q-between egger: %+v, want tp 1 fp 1", d)
		}
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

// The cautions travel with every summary, in Go and in JSON, even an empty
// one (common practice, no source: asymmetry or a shift is not proof of
// bias; registry results are unreviewed; defer to the review authors).
func TestSummaryCarriesCautions(t *testing.T) {
	for _, audits := range [][]ReviewAudit{nil, {{ReviewID: "R1"}}} {
		s := Summarize(audits, SummaryOptions{})
		b, err := json.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		var back struct {
			Cautions []string `json:"cautions"`
		}
		if err := json.Unmarshal(b, &back); err != nil {
			t.Fatal(err)
		}
		joined := strings.ToLower(strings.Join(back.Cautions, "\n"))
		for _, want := range []string{"not proof of publication bias", "not peer reviewed", "defer to the review authors"} {
			if !strings.Contains(joined, want) {
				t.Errorf("%d audits: summary JSON cautions lack %q: %q", len(audits), want, back.Cautions)
			}
		}
	}
}
