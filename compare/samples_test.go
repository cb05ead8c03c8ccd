package compare

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"unshelved/ingest"
)

// sampleRecord reads a real registry record from shared/registry-samples
// beside the repository, or skips the test when the folder is absent.
func sampleRecord(t *testing.T, name string) ([]byte, ingest.Trial) {
	t.Helper()
	dir, _ := os.Getwd()
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			break
		}
		if filepath.Dir(dir) == dir {
			t.Skip("registry samples: no go.mod above the package")
		}
		dir = filepath.Dir(dir)
	}
	path := filepath.Join(dir, "..", "shared", "registry-samples", name)
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Skipf("registry sample %s not found (shared/ must sit beside the repository): %v", path, err)
	}
	tr, err := ingest.ParseStudy(raw, ingest.Source{Path: path})
	if err != nil {
		t.Fatal(err)
	}
	return raw, tr
}

// TestRegistryEffectRealPerVisitOutcome converts a real per-visit outcome
// (LS mean with SE, one row per visit, class-level denominators) and checks
// the numbers against the record read independently here with
// encoding/json: for SE dispersions SD = SE sqrt(n), so the SE of the mean
// difference is sqrt(SE1² + SE2²) whatever the N (Cochrane Handbook ch. 6).
func TestRegistryEffectRealPerVisitOutcome(t *testing.T) {
	raw, tr := sampleRecord(t, "NCT03064438.json")
	var rec struct {
		ResultsSection struct {
			OutcomeMeasuresModule struct {
				OutcomeMeasures []struct {
					Classes []struct {
						Title  string
						Denoms []struct {
							Counts []struct{ GroupID, Value string }
						}
						Categories []struct {
							Measurements []struct{ GroupID, Value, Spread string }
						}
					}
				}
			}
		}
	}
	if err := json.Unmarshal(raw, &rec); err != nil {
		t.Fatal(err)
	}
	const outcome = 3 // "Change From Baseline in Papule Lesions at Weeks 2, 4, 8, and 12"
	var week12 = -1
	classes := rec.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures[outcome].Classes
	for i, c := range classes {
		if c.Title == "Week 12" {
			week12 = i
		}
	}
	if week12 < 0 {
		t.Fatal("sample has no Week 12 row")
	}
	f := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return v
	}
	val := map[string][2]float64{}
	for _, m := range classes[week12].Categories[0].Measurements {
		val[m.GroupID] = [2]float64{f(m.Value), f(m.Spread)}
	}
	n := map[string]int{}
	for _, c := range classes[week12].Denoms[0].Counts {
		n[c.GroupID] = int(f(c.Value))
	}
	wantMD := val["OG000"][0] - val["OG001"][0] // ointment minus vehicle
	wantSE := math.Hypot(val["OG000"][1], val["OG001"][1])

	rv := ingest.Review{ReviewID: "X", Measure: "MD", Unit: "number of lesions", Better: "lower", TimepointWeeks: fp(12)}
	got, err := RegistryEffect(rv, tr, ingest.Link{OutcomeIndex: outcome, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}})
	if err != nil {
		t.Fatalf("RegistryEffect: %v", err)
	}
	if !scalar.EqualWithinAbsOrRel(got.Effect, wantMD, 1e-12, 1e-12) || !scalar.EqualWithinAbsOrRel(got.SE, wantSE, 1e-12, 1e-12) {
		t.Errorf("MD %v (SE %v), want %v (SE %v)", got.Effect, got.SE, wantMD, wantSE)
	}
	if got.TreatN != n["OG000"] || got.CtrlN != n["OG001"] {
		t.Errorf("N %d/%d, want the Week 12 row's %d/%d", got.TreatN, got.CtrlN, n["OG000"], n["OG001"])
	}
	if len(got.Derivations) == 0 || got.Derivations[0].Method != "row_by_timepoint" {
		t.Errorf("the chosen row is not recorded: %+v", got.Derivations)
	}
	// At 6 weeks no row is within the window (Week 4 and Week 8 are both 2
	// weeks away: a tie), so the outcome is not used.
	rv.TimepointWeeks = fp(6)
	if _, err := RegistryEffect(rv, tr, ingest.Link{OutcomeIndex: outcome, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}); err == nil {
		t.Errorf("a tie between Week 4 and Week 8 was resolved silently")
	}
	// The component-score outcome of another record has rows that are not
	// times: never chosen.
	_, tr2 := sampleRecord(t, "NCT02210780.json")
	rv.TimepointWeeks = fp(12)
	if _, err := RegistryEffect(rv, tr2, ingest.Link{OutcomeIndex: 8, TreatGroups: []string{"OG000"}, CtrlGroups: []string{"OG001"}}); err == nil {
		t.Errorf("component rows (Erythema, ...) were taken for a timepoint")
	}
}

// TestRegistryEffectAgreesWithPostedAnalysis: for a real record's primary
// outcome (LS means with SE), the mean difference computed from the arms
// must agree with the sponsor's own posted between-group analysis
// ("Difference of Least Squares (LS) Mean" 1.8, SE 1.95 in
// NCT03064438), to the rounding of the posted values.
func TestRegistryEffectAgreesWithPostedAnalysis(t *testing.T) {
	_, tr := sampleRecord(t, "NCT03064438.json")
	o := tr.Outcomes[0]
	if len(o.Analyses) == 0 || !o.Analyses[0].ParamValue.OK || !o.Analyses[0].DispersionValue.OK {
		t.Fatalf("sample outcome 0 has no posted analysis with an SE: %+v", o.Analyses)
	}
	a := o.Analyses[0]
	rv := ingest.Review{ReviewID: "X", Measure: "MD", Unit: "lesions", Better: "lower", TimepointWeeks: fp(12)}
	got, err := RegistryEffect(rv, tr, ingest.Link{OutcomeIndex: 0, TreatGroups: []string{a.GroupIDs[0]}, CtrlGroups: []string{a.GroupIDs[1]}})
	if err != nil {
		t.Fatal(err)
	}
	if got.ConvertedFrom != "arms_se" {
		t.Errorf("converted from %q, want the arms (arms_se)", got.ConvertedFrom)
	}
	// The posted values carry one or two decimals: agree within half a unit of the last.
	if math.Abs(got.Effect-a.ParamValue.Value) > 0.05 {
		t.Errorf("MD %v, posted analysis %v", got.Effect, a.ParamValue.Value)
	}
	if math.Abs(got.SE-a.DispersionValue.Value) > 0.01 {
		t.Errorf("SE %v, posted analysis SE %v", got.SE, a.DispersionValue.Value)
	}
}

// TestRegistryEffectsAgreeWithPostedAnalyses sweeps every real sample
// record: wherever an outcome posts arm means with SD or SE in one row and
// a between-group mean-difference analysis with an SE for two of its
// groups, the difference computed from the arms must match the posted one
// in size (the direction of a posted estimate is not encoded, so only its
// magnitude is compared) and its SE must match the posted SE, to the
// rounding of the posted values. The SE comparison is made for raw means
// only: for least-squares means the posted SE comes from the model.
func TestRegistryEffectsAgreeWithPostedAnalyses(t *testing.T) {
	checked := 0
	for _, name := range []string{"NCT00763412.json", "NCT02210780.json", "NCT02299791.json", "NCT02552212.json", "NCT03064438.json", "NCT04431453.json", "NCT05594173.json"} {
		_, tr := sampleRecord(t, name)
		for _, o := range tr.Outcomes {
			if len(o.Classes) != 1 || (o.Dispersion != "STANDARD_DEVIATION" && o.Dispersion != "STANDARD_ERROR") {
				continue
			}
			for _, a := range o.Analyses {
				pt := strings.ToLower(a.ParamType)
				if len(a.GroupIDs) != 2 || !a.ParamValue.OK || !strings.Contains(pt, "differ") || strings.Contains(pt, "percent") {
					continue
				}
				rv := ingest.Review{Measure: "MD"}
				got, err := RegistryEffect(rv, tr, ingest.Link{OutcomeIndex: o.Index, TreatGroups: a.GroupIDs[:1], CtrlGroups: a.GroupIDs[1:]})
				if err != nil || got.ConvertedFrom == "between_group_analysis" {
					continue // arms not usable here (NA values, one participant)
				}
				checked++
				where := fmt.Sprintf("%s outcome %d (%s) groups %v", tr.TrialID, o.Index, o.ParamType, a.GroupIDs)
				// Adjusted (ANCOVA) estimates differ from the raw difference of
				// raw means; least-squares means reproduce them.
				if strings.EqualFold(o.ParamType, "LEAST_SQUARES_MEAN") || strings.Contains(pt, "ls") {
					if d := math.Abs(math.Abs(got.Effect) - math.Abs(a.ParamValue.Value)); d > 0.101 { // two means rounded to 0.1 each
						t.Errorf("%s: |MD| %v, posted %v", where, got.Effect, a.ParamValue.Value)
					}
					continue
				}
				if a.DispersionValue.OK && strings.EqualFold(a.DispersionType, "STANDARD_ERROR_OF_MEAN") {
					if d := math.Abs(got.SE - a.DispersionValue.Value); d > 0.011+0.01*a.DispersionValue.Value {
						t.Errorf("%s: SE %v, posted %v", where, got.SE, a.DispersionValue.Value)
					}
				}
			}
		}
	}
	if checked == 0 {
		t.Skip("no sample outcome with arms and a posted mean-difference analysis")
	}
	t.Logf("%d posted analyses compared", checked)
}
