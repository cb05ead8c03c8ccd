package main

import (
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Check values for the demo: testdata/reference/demo_audit_statsmodels.py,
// an independent re-implementation of the conversions (Cochrane Handbook
// ch. 6; Hedges' g per Borenstein et al. 2009) pooled with Debian's
// python3-statsmodels 0.13.5 combine_effects(method_re="dl"); its output is
// testdata/reference/demo_audit_statsmodels.txt.
//
// statsmodels does not floor the DerSimonian-Laird tau² at 0: for GLUC-02
// published-only it returns tau² = -0.0177, so there the floored
// random-effects estimate equals the fixed-effect one, which is the value
// given below (with tau² 0).
var demoChecks = []struct {
	review, set                   string
	k                             int
	fixed, fixedSE, random, rndSE float64
	tau2                          float64
}{
	{"TINN-01", "published", 8, -7.537827271880008, 0.8784441918580959, -7.6806429293689495, 0.9419192034815188, 0.6230806221015492},
	// TINN-01 augmented has 11 studies, not 12: NCT99000108 has a RESULT
	// reference (published, missed by the review) and is pooled apart, in
	// with_missed_publications (demoMissed).
	{"TINN-01", "augmented", 11, -5.294011203956855, 0.6868351476521147, -6.183756190140619, 1.1603627526791886, 8.133562883214706},
	{"GLUC-02", "published", 7, -0.8927804522856893, 0.10675756226243457, -0.8927804522856893, 0.10675756226243457, 0},
	{"GLUC-02", "augmented", 10, -0.7022038801370305, 0.08409536688396839, -0.7343339326648767, 0.10625503359094324, 0.03457015238032012},
	{"MOOD-03", "published", 7, -0.4261777083846583, 0.0671139928117482, -0.44652908027584454, 0.07708320423943205, 0.007631335169948431},
	{"MOOD-03", "augmented", 10, -0.2733581418695152, 0.05109734740087717, -0.3258035803832743, 0.08004036327831955, 0.03300889203039122},
}

// demoMissed is TINN-01 with_missed_publications, from the same script:
// the 8 published studies and NCT99000108, DerSimonian-Laird.
var demoMissed = struct {
	k             int
	random, rndSE float64
}{9, -7.3417069770203485, 0.9822547379113609}

const demoTol = 1e-9 // two implementations of closed forms; rounding only

func TestDemo(t *testing.T) {
	dir := t.TempDir()
	code, stdout, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "demo"))
	if code != exitOK {
		t.Fatalf("demo exit code %d; stderr:\n%s", code, stderr)
	}
	for _, want := range []string{"TINN-01", "GLUC-02", "MOOD-03", "Cautions:", "not peer reviewed"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("demo table lacks %q:\n%s", want, stdout)
		}
	}
	// demo prints with the audit defaults (REML, HKSJ); the fixed-effect
	// estimates do not depend on them: statsmodels' values below, rounded.
	if !strings.Contains(stdout, "random (reml)") {
		t.Errorf("demo table is not on the audit default (REML):\n%s", stdout)
	}
	for _, want := range []string{"-7.54 [", "-5.29 [", "-0.89 [", "-0.70 [", "-0.43 [", "-0.27 ["} {
		if !strings.Contains(stdout, want) {
			t.Errorf("demo table lacks the estimate %q:\n%s", want, stdout)
		}
	}
	if !strings.Contains(stderr, "unshelved.db") {
		t.Errorf("demo does not say where the database went; stderr:\n%s", stderr)
	}

	db := filepath.Join(dir, "demo", "unshelved.db")
	// The check values are DerSimonian-Laird with Wald intervals, so ask
	// for those explicitly (the audit default is REML with HKSJ).
	code, out, stderr := runCLI(t, "", "--db", db, "audit", "--format", "json", "--tau2", "dl", "--ci", "wald")
	if code != exitOK {
		t.Fatalf("audit exit %d: %s", code, stderr)
	}
	var audits []map[string]any
	if err := json.Unmarshal([]byte(out), &audits); err != nil {
		t.Fatalf("audit JSON: %v\n%s", err, out)
	}
	byID := map[string]map[string]any{}
	for _, a := range audits {
		byID[a["review_id"].(string)] = a
	}
	for _, c := range demoChecks {
		a := byID[c.review]
		if a == nil {
			t.Fatalf("no audit for %s", c.review)
		}
		set := a[c.set].(map[string]any)
		if got := int(set["k"].(float64)); got != c.k {
			t.Errorf("%s %s k = %d, want %d", c.review, c.set, got, c.k)
		}
		fixed, random := set["fixed"].(map[string]any), set["random"].(map[string]any)
		for _, v := range []struct {
			name      string
			got, want any
		}{
			{"fixed", fixed["estimate"], c.fixed},
			{"fixed se", fixed["se"], c.fixedSE},
			{"random", random["estimate"], c.random},
			{"random se", random["se"], c.rndSE},
			{"tau2", random["tau2"], c.tau2},
		} {
			got, ok := v.got.(float64)
			if !ok || !scalar.EqualWithinAbsOrRel(got, v.want.(float64), demoTol, demoTol) {
				t.Errorf("%s %s %s = %v, want %.17g", c.review, c.set, v.name, v.got, v.want)
			}
		}
	}
	// The missed publication is pooled apart, with the published studies.
	m, ok := byID["TINN-01"]["with_missed_publications"].(map[string]any)
	if !ok {
		t.Fatalf("TINN-01 has no with_missed_publications: %v", byID["TINN-01"]["with_missed_publications"])
	}
	if got, _ := m["k"].(float64); int(got) != demoMissed.k {
		t.Errorf("with_missed_publications k = %v, want %d", m["k"], demoMissed.k)
	}
	for _, v := range []struct {
		name string
		want float64
	}{{"estimate", demoMissed.random}, {"se", demoMissed.rndSE}, {"shift", demoMissed.random - demoChecks[0].random}} {
		if got, ok := m[v.name].(float64); !ok || !scalar.EqualWithinAbsOrRel(got, v.want, demoTol, demoTol) {
			t.Errorf("with_missed_publications %s = %v, want %.17g", v.name, m[v.name], v.want)
		}
	}
	if trials, _ := m["trials"].([]any); len(trials) != 1 || trials[0].(map[string]any)["trial_id"] != "NCT99000108" ||
		len(trials[0].(map[string]any)["pmids"].([]any)) != 1 || trials[0].(map[string]any)["pmids"].([]any)[0] != "99000031" {
		t.Errorf("with_missed_publications trials = %v, want NCT99000108 with PMID 99000031", m["trials"])
	}
	for _, id := range []string{"GLUC-02", "MOOD-03"} {
		if byID[id]["with_missed_publications"] != nil {
			t.Errorf("%s has with_missed_publications %v, want null", id, byID[id]["with_missed_publications"])
		}
	}

	// The shift follows from the two random-effects estimates.
	for _, id := range []string{"TINN-01", "GLUC-02", "MOOD-03"} {
		var pub, aug float64
		for _, c := range demoChecks {
			if c.review == id && c.set == "published" {
				pub = c.random
			}
			if c.review == id && c.set == "augmented" {
				aug = c.random
			}
		}
		shift := byID[id]["shift"].(map[string]any)
		for _, v := range []struct {
			name string
			want float64
		}{
			{"absolute", aug - pub},
			{"relative", 100 * (aug - pub) / pub},
			{"inflation", 100 * (pub - aug) / aug},
		} {
			got, ok := shift[v.name].(float64)
			if !ok || !scalar.EqualWithinAbsOrRel(got, v.want, 1e-8, 1e-8) {
				t.Errorf("%s shift %s = %v, want %.17g", id, v.name, shift[v.name], v.want)
			}
		}
		if shift["toward"] != "harm" {
			t.Errorf("%s shift toward %v, want harm (the registry trials pull the beneficial estimate toward the null)", id, shift["toward"])
		}
		if k := byID[id]["k_added"].(float64); k != 3 && k != 4 {
			t.Errorf("%s k_added = %v", id, k)
		}
	}

	// CSV has the same numbers at full precision.
	code, out, _ = runCLI(t, "", "--db", db, "audit", "--format", "csv", "--tau2", "dl", "--ci", "wald", "--bootstrap", "0")
	if code != exitOK {
		t.Fatalf("audit csv exit %d", code)
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if len(lines) != 4 || !strings.HasPrefix(lines[0], "review_id,measure,unit,k_published,k_added,published_fixed_estimate") {
		t.Fatalf("audit CSV:\n%s", out)
	}
	if !strings.Contains(out, "-7.680642929368") {
		t.Errorf("CSV lacks the full-precision TINN-01 published estimate:\n%s", out)
	}
}
