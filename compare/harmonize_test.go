package compare

import (
	"errors"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// Check values below come from testdata/reference/compare_checks.R, run
// with R 4.2.2; the formulas are the Cochrane Handbook (ch. 6) ones for
// the SE of a mean difference, SD from SE and from a t-based CI, and
// combining groups.

const tol = 1e-12 // closed forms; only rounding error

func num(s string) ingest.Num { return ingest.ParseNum(s) }

// twoArmTrial builds a registry record with one single-row outcome.
func twoArmTrial(dispersion, paramType string, rows map[string][4]string, denoms map[string]string) ingest.Trial {
	o := ingest.Outcome{Index: 0, Type: "PRIMARY", Title: "Distress index at week 12", ReportingStatus: "POSTED",
		ParamType: paramType, Dispersion: dispersion, DispersionText: dispersion, Unit: "points"}
	var ms []ingest.Measurement
	var counts []ingest.Count
	for _, id := range []string{"OG000", "OG001", "OG002"} {
		r, ok := rows[id]
		if !ok {
			continue
		}
		o.Groups = append(o.Groups, ingest.Group{ID: id, Title: id})
		ms = append(ms, ingest.Measurement{GroupID: id, Value: num(r[0]), Spread: num(r[1]), Lower: num(r[2]), Upper: num(r[3])})
		if n, ok := denoms[id]; ok {
			counts = append(counts, ingest.Count{GroupID: id, Value: num(n)})
		}
	}
	o.Denoms = []ingest.Denom{{Units: "Participants", Counts: counts}}
	o.Classes = []ingest.Class{{Categories: []ingest.Category{{Measurements: ms}}}}
	return ingest.Trial{TrialID: "NCT99999901", Outcomes: []ingest.Outcome{o}}
}

var mdReview = ingest.Review{ReviewID: "R1", Measure: "MD", Outcome: "distress index", Unit: "points", Better: "lower"}

func TestRegistryEffect(t *testing.T) {
	for _, tc := range []struct {
		name      string
		trial     ingest.Trial
		link      ingest.Link
		review    ingest.Review
		wantMD    float64
		wantSE    float64
		wantFrom  string
		wantTreat int
	}{
		{
			name: "sd",
			trial: twoArmTrial("STANDARD_DEVIATION", "MEAN",
				map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}},
				map[string]string{"OG000": "40", "OG001": "42"}),
			link:   ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}},
			review: mdReview,
			// R: sqrt(12^2/42 + 10^2/40)
			wantMD: -5, wantSE: 2.4348657927227588, wantFrom: "arms_sd", wantTreat: 42,
		},
		{
			name: "sd flipped",
			trial: twoArmTrial("STANDARD_DEVIATION", "MEAN",
				map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}},
				map[string]string{"OG000": "40", "OG001": "42"}),
			link:   ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, Flip: true},
			review: mdReview,
			wantMD: 5, wantSE: 2.4348657927227588, wantFrom: "arms_sd", wantTreat: 42,
		},
		{
			name: "three arms combined",
			trial: twoArmTrial("STANDARD_DEVIATION", "LEAST_SQUARES_MEAN",
				map[string][4]string{"OG000": {"40", "9", "", ""}, "OG001": {"36", "11", "", ""}, "OG002": {"41", "10", "", ""}},
				map[string]string{"OG000": "30", "OG001": "34", "OG002": "33"}),
			link:   ingest.Link{TreatGroups: []string{"OG000", "OG001"}, CtrlGroups: []string{"OG002"}},
			review: mdReview,
			// R: combined arm N = 64, M = 37.875, SD = 10.232999839454983; MD = M - 41, SE = sqrt(S^2/N + 10^2/33)
			wantMD: -3.125, wantSE: 2.1601999316240952, wantFrom: "arms_sd_combined", wantTreat: 64,
		},
		{
			name: "glucose mg/dL to mmol/L",
			trial: twoArmTrial("STANDARD_DEVIATION", "MEAN",
				map[string][4]string{"OG000": {"162", "33", "", ""}, "OG001": {"150", "30", "", ""}},
				map[string]string{"OG000": "48", "OG001": "50"}),
			link:   ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, UnitFrom: "mg/dL"},
			review: ingest.Review{Measure: "MD", Outcome: "fasting plasma glucose", Unit: "mmol/L", Better: "lower"},
			// R: (150-162)/18.016 and sqrt((30/18.016)^2/50 + (33/18.016)^2/48)
			wantMD: -0.66607460035523991, wantSE: 0.35405613960293836, wantFrom: "arms_sd", wantTreat: 50,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := RegistryEffect(tc.review, tc.trial, tc.link)
			if err != nil {
				t.Fatalf("RegistryEffect: %v", err)
			}
			if !scalar.EqualWithinAbsOrRel(got.Effect, tc.wantMD, tol, tol) {
				t.Errorf("effect = %.17g, want %.17g", got.Effect, tc.wantMD)
			}
			if !scalar.EqualWithinAbsOrRel(got.SE, tc.wantSE, tol, tol) {
				t.Errorf("SE = %.17g, want %.17g", got.SE, tc.wantSE)
			}
			if got.ConvertedFrom != tc.wantFrom {
				t.Errorf("converted_from = %q, want %q", got.ConvertedFrom, tc.wantFrom)
			}
			if got.TreatN != tc.wantTreat {
				t.Errorf("treat N = %d, want %d", got.TreatN, tc.wantTreat)
			}
			if len(got.Derivations) == 0 {
				t.Errorf("no derivations recorded")
			}
		})
	}
}

func TestRegistryEffectDispersions(t *testing.T) {
	// SE: SD = SE sqrt(n) (Cochrane Handbook 6.5.2.2); R: 1.5*sqrt(40).
	tr := twoArmTrial("STANDARD_ERROR", "MEAN",
		map[string][4]string{"OG000": {"50", "1.5", "", ""}, "OG001": {"45", "1.5", "", ""}},
		map[string]string{"OG000": "40", "OG001": "40"})
	got, err := RegistryEffect(mdReview, tr, ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}})
	if err != nil {
		t.Fatal(err)
	}
	sd := 9.4868329805051381
	if want := sd * sd / 40 * 2; !scalar.EqualWithinAbsOrRel(got.SE*got.SE, want, tol, tol) {
		t.Errorf("SE² = %.17g, want %.17g", got.SE*got.SE, want)
	}

	// 95% CI of each mean, t with n-1 df (Cochrane Handbook 6.5.2.2);
	// R: sqrt(30)*(52.1-44.3)/(2*qt(0.975,29)).
	tr = twoArmTrial("CONFIDENCE_95", "MEAN",
		map[string][4]string{"OG000": {"48.2", "", "44.3", "52.1"}, "OG001": {"40.2", "", "36.3", "44.1"}},
		map[string]string{"OG000": "30", "OG001": "30"})
	got, err = RegistryEffect(mdReview, tr, ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}})
	if err != nil {
		t.Fatal(err)
	}
	sd = 10.44439181921239
	if want := sd * sd / 30 * 2; !scalar.EqualWithinAbsOrRel(got.SE*got.SE, want, 1e-10, 1e-10) {
		t.Errorf("SE² = %.17g, want %.17g", got.SE*got.SE, want)
	}
	if !scalar.EqualWithinAbsOrRel(got.Effect, -8, tol, tol) {
		t.Errorf("MD = %v, want -8", got.Effect)
	}
}

func TestRegistryEffectRejects(t *testing.T) {
	good := map[string]string{"OG000": "40", "OG001": "42"}
	link := ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}}
	twoRows := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, good)
	twoRows.Outcomes[0].Classes = append(twoRows.Outcomes[0].Classes, twoRows.Outcomes[0].Classes[0])
	for _, tc := range []struct {
		name   string
		trial  ingest.Trial
		link   ingest.Link
		reason string
	}{
		{"NA spread", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "NA", "", ""}, "OG001": {"45", "12", "", ""}}, good), link, ReasonDispersion},
		{"NA value", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"NA", "10", "", ""}, "OG001": {"45", "12", "", ""}}, good), link, ReasonMissingValue},
		{"zero SD", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "0", "", ""}, "OG001": {"45", "12", "", ""}}, good), link, ReasonDispersion},
		{"count outcome", twoArmTrial("", "COUNT_OF_PARTICIPANTS", map[string][4]string{"OG000": {"5", "", "", ""}, "OG001": {"7", "", "", ""}}, good), link, ReasonNotContinuous},
		{"missing N", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, map[string]string{"OG000": "40"}), link, ReasonMissingN},
		{"one participant", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, map[string]string{"OG000": "40", "OG001": "1"}), link, ReasonMissingN},
		{"unknown group", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, good), ingest.Link{TreatGroups: []string{"OG005"}, CtrlGroups: []string{"OG000"}}, ReasonMissingGroup},
		{"no such outcome", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, good), ingest.Link{OutcomeIndex: 3, TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}}, ReasonNoOutcome},
		{"several rows", twoRows, link, ReasonAmbiguousRow},
		{"unknown unit conversion", twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}}, good), ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}, UnitFrom: "furlongs"}, ReasonUnit},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := RegistryEffect(mdReview, tc.trial, tc.link)
			var re *RejectError
			if !errors.As(err, &re) {
				t.Fatalf("err = %v, want a *RejectError", err)
			}
			if re.Reason != tc.reason {
				t.Errorf("reason = %q (%s), want %q", re.Reason, re.Detail, tc.reason)
			}
		})
	}
}

func TestGroupNPrefersClassDenoms(t *testing.T) {
	tr := twoArmTrial("STANDARD_DEVIATION", "MEAN",
		map[string][4]string{"OG000": {"50", "10", "", ""}, "OG001": {"45", "12", "", ""}},
		map[string]string{"OG000": "40", "OG001": "42"})
	// The class was analysed in fewer participants than the outcome level says.
	tr.Outcomes[0].Classes[0].Denoms = []ingest.Denom{{Units: "Participants", Counts: []ingest.Count{{GroupID: "OG000", Value: num("35")}, {GroupID: "OG001", Value: num("37")}}}}
	got, err := RegistryEffect(mdReview, tr, ingest.Link{TreatGroups: []string{"OG001"}, CtrlGroups: []string{"OG000"}})
	if err != nil {
		t.Fatal(err)
	}
	if got.TreatN != 37 || got.CtrlN != 35 {
		t.Errorf("N = %d/%d, want the class-level 37/35", got.TreatN, got.CtrlN)
	}
}

func TestUnitSpellings(t *testing.T) {
	// HbA1c: IFCC (mmol/mol) = 10.929 (NGSP % - 2.15), Hoelzel et al. 2004;
	// 7% is 53.0 mmol/mol (10.929 * 4.85 = 53.00565).
	for _, from := range []string{"%", "percent", "percentage of haemoglobin", "Percentage of hemoglobin", "% of total hemoglobin"} {
		c, err := terms.FindConversion(from, "mmol/mol", "HbA1c")
		if err != nil || c == nil {
			t.Errorf("%q: %v", from, err)
			continue
		}
		if got := c.Scale*7 + c.Offset; !scalar.EqualWithinAbsOrRel(got, 53.00565, 1e-12, 1e-12) {
			t.Errorf("%q: 7%% = %v mmol/mol, want 53.00565", from, got)
		}
	}
	if c, err := terms.FindConversion("mg/dL", "mmol/L", "C-peptide"); err == nil || c != nil {
		t.Errorf("C-peptide mg/dL converted with a table factor: %+v", c)
	}
}

func TestUnitMismatchIsFlagged(t *testing.T) {
	tr := twoArmTrial("STANDARD_DEVIATION", "MEAN", map[string][4]string{"OG000": {"7.9", "1.1", "", ""}, "OG001": {"8.4", "1.2", "", ""}},
		map[string]string{"OG000": "40", "OG001": "40"})
	link := ingest.Link{TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}
	for _, tc := range []struct {
		registryUnit, reviewUnit string
		flagged                  bool
	}{
		{"%", "mmol/L", true},                 // HbA1c percent posted for a glucose review
		{"score on a scale", "points", false}, // scale scores are written freely
		{"mmol/L", "mmol/l", false},           // same unit
	} {
		tr.Outcomes[0].Unit = tc.registryUnit
		rv := ingest.Review{Measure: "MD", Outcome: "fasting plasma glucose", Unit: tc.reviewUnit}
		got, err := RegistryEffect(rv, tr, link)
		if err != nil {
			t.Fatal(err)
		}
		flagged := false
		for _, f := range got.Flags {
			if strings.Contains(f, "no conversion is known") {
				flagged = true
			}
		}
		if flagged != tc.flagged {
			t.Errorf("%q vs %q: flagged %v, want %v (flags %q)", tc.registryUnit, tc.reviewUnit, flagged, tc.flagged, got.Flags)
		}
	}
}

func TestConvertedFromNames(t *testing.T) {
	for _, tc := range []struct {
		kind, dispersion string
		combined         bool
		want             string
	}{
		{kindMean, "STANDARD_DEVIATION", false, "arms_sd"},
		{kindMean, "STANDARD_ERROR", true, "arms_se_combined"},
		{kindMean, "CONFIDENCE_95", false, "arms_ci95"},
		{kindMedian, "INTER_QUARTILE_RANGE", false, "arms_median_iqr"},
		{kindMedian, "FULL_RANGE", false, "arms_median_range"},
		{kindMean, "FULL_RANGE", false, "arms_range"},
	} {
		if got := convertedFrom(tc.kind, tc.dispersion, tc.combined); got != tc.want {
			t.Errorf("convertedFrom(%s, %s, %v) = %q, want %q", tc.kind, tc.dispersion, tc.combined, got, tc.want)
		}
	}
}
