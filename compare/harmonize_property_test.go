package compare

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"unshelved/compare/terms"
	"unshelved/ingest"
)

// TestDirectionRulesProperty checks the direction rules over generated
// records (fixed seed): arm SDs are "NA", so only the posted analysis can
// give the effect. For every record:
//   - a statement decides: effect = stated orientation x estimate whatever
//     the raw values, flagged direction_conflict exactly when the raw
//     difference runs the other way;
//   - with no statement the estimate is used as posted (never negated) when
//     the raw difference agrees in sign, and refused (direction-unknown)
//     otherwise;
//   - the order of the analysis's group ids changes nothing;
//   - the SE is the CI width over 2q, q from t on n1 + n2 - 2 df when a
//     group is under 60, else z (quantiles from gonum's distuv).
func TestDirectionRulesProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 2026))
	drugs := []string{"Velmorazine 10 mg", "Orbelanix", "Tarnelide 5 mg qd"}
	ctrls := []string{"Placebo", "Vehicle", "Placebo qd"}
	const cases = 3000
	used, refused, conflicts := 0, 0, 0
	for i := 0; i < cases; i++ {
		drug, ctrl := drugs[rng.IntN(len(drugs))], ctrls[rng.IntN(len(ctrls))]
		drugID, ctrlID := "OG000", "OG001"
		if rng.IntN(2) == 0 {
			drugID, ctrlID = ctrlID, drugID
		}
		est := math.Round((rng.Float64()*8-4)*100) / 100
		if est == 0 {
			est = 0.01
		}
		half := 0.5 + rng.Float64()*3
		n1, n2 := 5+rng.IntN(120), 5+rng.IntN(120)
		rawDrug, rawCtrl := "NA", "NA"
		var diff float64
		rawKnown := rng.IntN(4) > 0
		if rawKnown {
			a, b := math.Round((20+rng.Float64()*10)*10)/10, math.Round((20+rng.Float64()*10)*10)/10
			rawDrug, rawCtrl, diff = strconv.FormatFloat(a, 'f', -1, 64), strconv.FormatFloat(b, 'f', -1, 64), a-b
		}
		// Statement: 0 none, +1 drug first, -1 control first.
		stated := rng.IntN(3) - 1
		comment := ""
		sep := []string{" minus ", " vs. ", " versus ", " - "}[rng.IntN(4)]
		switch stated {
		case 1:
			comment = drug + sep + ctrl
		case -1:
			comment = ctrl + sep + drug
		}
		// The posted estimate is oriented by the statement: with "drug
		// minus control" the drug-minus-control effect is est; with
		// "control minus drug" it is -est.
		vals := map[string]string{drugID: rawDrug, ctrlID: rawCtrl}
		ns := map[string]int{drugID: n1, ctrlID: n2}
		build := func(order []string) ingest.Trial {
			tr := twoArmTrial("STANDARD_DEVIATION", "LEAST_SQUARES_MEAN",
				map[string][4]string{"OG000": {vals["OG000"], "NA", "", ""}, "OG001": {vals["OG001"], "NA", "", ""}},
				map[string]string{"OG000": strconv.Itoa(ns["OG000"]), "OG001": strconv.Itoa(ns["OG001"])})
			tr.TrialID = "NCT99991400"
			titles := map[string]string{drugID: drug, ctrlID: ctrl}
			tr.Outcomes[0].Groups = []ingest.Group{{ID: "OG000", Title: titles["OG000"]}, {ID: "OG001", Title: titles["OG001"]}}
			tr.Outcomes[0].Analyses = []ingest.Analysis{{GroupIDs: order, ParamType: "LS Mean Difference", Method: "ANCOVA",
				ParamValue: num(strconv.FormatFloat(est, 'f', -1, 64)), CIPct: num("95"), CISides: "TWO_SIDED",
				CILower: num(strconv.FormatFloat(est-half, 'f', -1, 64)), CIUpper: num(strconv.FormatFloat(est+half, 'f', -1, 64)),
				EstimateComment: comment}}
			return tr
		}
		link := ingest.Link{TreatGroups: []string{drugID}, CtrlGroups: []string{ctrlID}}
		got, err := RegistryEffect(mdReview, build([]string{"OG000", "OG001"}), link)
		swapped, err2 := RegistryEffect(mdReview, build([]string{"OG001", "OG000"}), link)
		where := fmt.Sprintf("case %d: est %v, raw %s vs %s, comment %q", i, est, rawDrug, rawCtrl, comment)
		if (err == nil) != (err2 == nil) || err == nil && (got.Effect != swapped.Effect || got.SE != swapped.SE) {
			t.Fatalf("%s: group order changes the result: %v (%v) vs %v (%v)", where, got.Effect, err, swapped.Effect, err2)
		}
		lower, upper := est-half, est+half
		q := distuv.UnitNormal.Quantile(0.975)
		if n1 < smallGroupN || n2 < smallGroupN {
			q = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n1 + n2 - 2)}.Quantile(0.975)
		}
		wantSE := (upper - lower) / (2 * q)
		switch {
		case stated != 0:
			if err != nil {
				t.Fatalf("%s: stated direction refused: %v", where, err)
			}
			want := float64(stated) * est
			if got.Effect != want {
				t.Fatalf("%s: effect %v, want %v", where, got.Effect, want)
			}
			conflict := rawKnown && diff != 0 && (diff > 0) != (want > 0)
			if hasFlag(got.Flags, "direction_conflict") != conflict {
				t.Fatalf("%s: direction_conflict %v, want %v (raw diff %v)", where, !conflict, conflict, diff)
			}
			if conflict {
				conflicts++
			}
			used++
		case rawKnown && diff != 0 && (diff > 0) == (est > 0):
			if err != nil || got.Effect != est {
				t.Fatalf("%s: confirmed by raw values: effect %v, err %v; want %v", where, got.Effect, err, est)
			}
			used++
		default:
			var re *RejectError
			if !errors.As(err, &re) || re.Reason != ReasonDirection {
				t.Fatalf("%s: want direction-unknown, got effect %v err %v", where, got.Effect, err)
			}
			refused++
			continue
		}
		if math.Abs(got.SE/wantSE-1) > 1e-8 {
			t.Fatalf("%s: SE %v, want %v", where, got.SE, wantSE)
		}
	}
	if used == 0 || refused == 0 || conflicts == 0 {
		t.Errorf("generated cases do not cover every rule: used %d, refused %d, conflicts %d", used, refused, conflicts)
	}
	t.Logf("%d records: %d used (%d with direction_conflict), %d refused", cases, used, conflicts, refused)
}

// TestNormUnitProperty: normUnit is idempotent, and a spelling differing
// only in case or spaces around "/" gives the same key, over every spelling
// in the table and its key.
func TestNormUnitProperty(t *testing.T) {
	for spelling, key := range terms.UnitSpellings {
		for _, u := range []string{spelling, key} {
			k := terms.NormUnit(u)
			if terms.NormUnit(k) != k {
				t.Errorf("normUnit not idempotent on %q: %q then %q", u, k, terms.NormUnit(k))
			}
			if terms.NormUnit(" "+upperFirst(u)+" ") != k {
				t.Errorf("%q: case or padding changes the key", u)
			}
		}
		if terms.NormUnit(spelling) != key && terms.NormUnit(spelling) != terms.NormUnit(key) {
			t.Errorf("%q -> %q, table says %q", spelling, terms.NormUnit(spelling), key)
		}
	}
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
