package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"unshelved/compare"
	"unshelved/ingest"
)

// Property: in the audit CSV, each random-effects p is below 1 - level
// exactly when the interval printed beside it excludes 0, over generated
// reviews of 1-12 studies with every --ci choice and several levels.
func TestAuditCSVPIntervalProperty(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 2))
	n := 1500
	if testing.Short() {
		n = 200
	}
	levels := []float64{0.8, 0.9, 0.95, 0.99}
	checked := 0
	for i := range n {
		k := 1 + rng.IntN(12)
		rv := ingest.Review{ReviewID: fmt.Sprintf("G%d", i), Measure: "MD", Better: "lower"}
		in := compare.AuditInput{Review: rv, Trials: map[string]ingest.Trial{}}
		mu := 0.3 * rng.NormFloat64()
		for j := range k {
			se := 0.05 + 0.5*rng.Float64()
			eff := mu + 0.2*rng.NormFloat64() + se*rng.NormFloat64()
			in.Studies = append(in.Studies, ingest.ReviewStudy{ReviewID: rv.ReviewID, Study: fmt.Sprint(j), Effect: &eff, SE: &se})
		}
		opts := compare.Options{CI: compare.CIMethods[rng.IntN(3)], Level: levels[rng.IntN(len(levels))], SkipBias: true}
		a, err := compare.AuditReview(in, opts)
		if err != nil {
			t.Fatal(err)
		}
		g := auditGrid([]compare.ReviewAudit{a}, opts.Level)
		row := map[string]string{}
		for c, name := range g.Columns {
			row[name] = g.CSV[0][c]
		}
		for _, set := range []string{"published", "augmented"} {
			p, errP := strconv.ParseFloat(row[set+"_random_p"], 64)
			lo, errL := strconv.ParseFloat(row[set+"_random_ci_low"], 64)
			hi, errH := strconv.ParseFloat(row[set+"_random_ci_high"], 64)
			if errP != nil || errL != nil || errH != nil {
				t.Fatalf("case %d %s: unparsable p %q interval %q %q", i, set, row[set+"_random_p"], row[set+"_random_ci_low"], row[set+"_random_ci_high"])
			}
			checked++
			if (p < 1-opts.Level) != (lo > 0 || hi < 0) {
				t.Fatalf("case %d (k %d, ci %s, level %v) %s: p %v beside [%v, %v]", i, k, opts.CI, opts.Level, set, p, lo, hi)
			}
		}
		if wantFew := k < 3 && opts.CI != compare.CIWald; row["few_studies"] != fmt.Sprint(wantFew) ||
			(wantFew && (row["ci_method"] != "wald" || row["augmented_ci_method"] != "wald")) {
			t.Fatalf("case %d (k %d, ci %s): few_studies %s, methods %s/%s", i, k, opts.CI, row["few_studies"], row["ci_method"], row["augmented_ci_method"])
		}
	}
	if checked != 2*n {
		t.Errorf("checked %d of %d analyses", checked, 2*n)
	}
}

// A review with no registry links: stderr says so, conclusion_changed is
// null in JSON and empty in CSV, the table says unknown.
func TestAuditNoLinksSaysSo(t *testing.T) {
	dir := t.TempDir()
	reviews := writeFile(t, dir, "reviews.csv", "review_id,title,measure,outcome,unit,better\nNL-1,Invented review without links,MD,score,points,lower\n")
	studies := writeFile(t, dir, "studies.csv", "review_id,study,effect,se\nNL-1,A,-1.2,0.5\nNL-1,B,-0.8,0.4\nNL-1,C,-1.0,0.6\n")
	db := filepath.Join(dir, "w.db")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "reviews", reviews, studies); code != exitOK {
		t.Fatalf("ingest: %s", stderr)
	}
	const note = "no registry trials were linked: run `unshelved match`"
	code, out, stderr := runCLI(t, "", "--db", db, "audit", "--format", "json", "--bootstrap", "0")
	if code != exitOK || !strings.Contains(stderr, "review NL-1: "+note) {
		t.Fatalf("exit %d, stderr lacks the note:\n%s", code, stderr)
	}
	// The note survives --quiet, and report gives it too.
	if _, _, stderr := runCLI(t, "", "--db", db, "-q", "report", "--out", filepath.Join(dir, "report"), "--bootstrap", "0"); !strings.Contains(stderr, "review NL-1: "+note) {
		t.Errorf("report -q stderr lacks the note:\n%s", stderr)
	}
	var audits []map[string]any
	if err := json.Unmarshal([]byte(out), &audits); err != nil {
		t.Fatal(err)
	}
	if v, ok := audits[0]["conclusion_changed"]; !ok || v != nil {
		t.Errorf("conclusion_changed = %v (present %v), want null", v, ok)
	}
	if rs := audits[0]["registry_search"].(map[string]any); rs["status"] != "not-linked" || rs["note"] != note {
		t.Errorf("registry_search = %v", rs)
	}
	_, out, _ = runCLI(t, "", "--db", db, "audit", "--format", "csv", "--bootstrap", "0")
	rows, err := csv.NewReader(strings.NewReader(out)).ReadAll()
	if err != nil || len(rows) != 2 {
		t.Fatalf("csv: %v\n%s", err, out)
	}
	for i, c := range rows[0] {
		if c == "conclusion_changed" && rows[1][i] != "" {
			t.Errorf("CSV conclusion_changed = %q, want empty", rows[1][i])
		}
		if c == "registry_search" && rows[1][i] != "not-linked" {
			t.Errorf("CSV registry_search = %q", rows[1][i])
		}
	}
	_, out, _ = runCLI(t, "", "--db", db, "audit", "--bootstrap", "0")
	if !strings.Contains(out, "unknown (not-linked)") {
		t.Errorf("table does not say the conclusion change is unknown:\n%s", out)
	}
}

// --ci takes the three methods in audit and pool and rejects others,
// naming the valid ones.
func TestCIFlag(t *testing.T) {
	dir := t.TempDir()
	path := writeFile(t, dir, "studies.csv", poolCSV)
	for _, ci := range compare.CIMethods {
		code, out, stderr := runCLI(t, "", "pool", path, "--ci", ci, "--format", "json")
		if code != exitOK {
			t.Fatalf("pool --ci %s: exit %d: %s", ci, code, stderr)
		}
		var rep struct {
			Random struct {
				CIMethod string `json:"ci_method"`
			} `json:"random"`
		}
		if err := json.Unmarshal([]byte(out), &rep); err != nil || rep.Random.CIMethod != ci {
			t.Errorf("pool --ci %s: ci_method %q (%v)", ci, rep.Random.CIMethod, err)
		}
	}
	for _, args := range [][]string{{"pool", path, "--ci", "hk"}, {"audit", "--ci", "hk"}, {"summary", "--ci", "hk"}} {
		code, _, stderr := runCLI(t, "", args...)
		if code != exitUsage || !strings.Contains(stderr, "hksj, hksj-untruncated, wald") {
			t.Errorf("%v: exit %d, stderr %q", args, code, stderr)
		}
	}
	if code, _, stderr := runCLI(t, "", "pool", path, "--ci", "wald", "--truncate-hksj"); code != exitUsage {
		t.Errorf("--truncate-hksj with --ci wald: exit %d %s", code, stderr)
	}
	// --hksj is gone (--ci hksj is the default and says the same).
	for _, cmd := range []string{"audit", "summary", "report", "scan"} {
		if code, _, stderr := runCLI(t, "", cmd, "--hksj"); code != exitUsage || !strings.Contains(stderr, "unknown flag: --hksj") {
			t.Errorf("%s --hksj: exit %d, stderr %q; want a usage error", cmd, code, stderr)
		}
	}
}
