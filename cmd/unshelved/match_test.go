package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"unshelved/compare/workspace"
)

func TestNewCmdMatchUsage(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"neither links nor apply", []string{"match"}, "--apply"},
		{"both", []string{"match", "--links", "x.csv", "--apply", "y.csv"}, "not both"},
		{"accept above one", []string{"match", "--links", "x.csv", "--accept-above", "1.5"}, "invalid --accept-above"},
		{"accept above zero", []string{"match", "--links", "x.csv", "--accept-above", "0"}, "invalid --accept-above"},
		{"not a number", []string{"match", "--links", "x.csv", "--accept-above", "high"}, "invalid argument"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "", append([]string{"--db", filepath.Join(t.TempDir(), "x.db")}, tc.args...)...)
			if code != exitUsage {
				t.Errorf("exit code = %d, want %d (stderr %q)", code, exitUsage, stderr)
			}
			if !strings.Contains(stderr, tc.want) {
				t.Errorf("stderr = %q, want it to mention %q", stderr, tc.want)
			}
		})
	}
}

// demoWorkspace loads the demo's registry records and reviews, without
// links, into a new workspace and returns its database path and the
// folder with the demo's files.
func demoWorkspace(t *testing.T) (db, input string) {
	t.Helper()
	dir := t.TempDir()
	input = filepath.Join(dir, "input")
	if err := workspace.WriteDemoFiles(input); err != nil {
		t.Fatal(err)
	}
	db = filepath.Join(dir, "w.db")
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "registry", filepath.Join(input, "registry")); code != exitOK {
		t.Fatalf("ingest registry: exit %d: %s", code, stderr)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "-q", "ingest", "reviews", filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")); code != exitOK {
		t.Fatalf("ingest reviews: exit %d: %s", code, stderr)
	}
	return db, input
}

func readLinksCSV(t *testing.T, path string) (header []string, rows []map[string]string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			m[h] = r[i]
		}
		rows = append(rows, m)
	}
	return recs[0], rows
}

// auditNumbers keeps the parts of an audit that pooling gives: the
// published-only and augmented analyses, the shift and the studies pooled.
func auditNumbers(t *testing.T, db string) map[string]any {
	t.Helper()
	code, out, stderr := runCLI(t, "", "--db", db, "audit", "--format", "json")
	if code != exitOK {
		t.Fatalf("audit exit %d: %s", code, stderr)
	}
	var audits []map[string]any
	if err := json.Unmarshal([]byte(out), &audits); err != nil {
		t.Fatalf("audit JSON: %v", err)
	}
	keep := map[string]any{}
	for _, a := range audits {
		keep[a["review_id"].(string)] = map[string]any{
			"k_published": a["k_published"], "k_added": a["k_added"], "published": a["published"],
			"augmented": a["augmented"], "shift": a["shift"], "studies": a["studies"],
		}
	}
	return keep
}

// Automatic matching on the demo with --accept-above must give the same
// pooled numbers as the hand-made links file that `unshelved demo` loads.
func TestMatchDemoAuditAgreesWithHandLinks(t *testing.T) {
	hand := filepath.Join(t.TempDir(), "demo")
	if code, _, stderr := runCLI(t, "", "demo", "--out", hand); code != exitOK {
		t.Fatalf("demo: exit %d: %s", code, stderr)
	}
	want := auditNumbers(t, filepath.Join(hand, "unshelved.db"))

	db, _ := demoWorkspace(t)
	links := filepath.Join(t.TempDir(), "links.csv")
	code, stdout, stderr := runCLI(t, "", "--db", db, "match", "--links", links, "--accept-above", "0.7")
	if code != exitOK {
		t.Fatalf("match: exit %d: %s", code, stderr)
	}
	for _, s := range []string{"TINN-01", "GLUC-02", "MOOD-03", "auto-accepted"} {
		if !strings.Contains(stdout, s) {
			t.Errorf("summary lacks %q:\n%s", s, stdout)
		}
	}
	if !strings.Contains(stderr, "matched TINN-01") {
		t.Errorf("no progress on stderr: %q", stderr)
	}
	got := auditNumbers(t, db)
	if !reflect.DeepEqual(got, want) {
		gj, _ := json.MarshalIndent(got, "", " ")
		wj, _ := json.MarshalIndent(want, "", " ")
		t.Errorf("audit after match differs from the hand-made links:\n got %s\nwant %s", gj, wj)
	}

	header, rows := readLinksCSV(t, links)
	if want := []string{"review_id", "trial_id", "class", "outcome_index", "outcome_title", "time_frame",
		"treat_groups", "ctrl_groups", "flip", "unit_from", "score", "reasons", "decision"}; !reflect.DeepEqual(header, want) {
		t.Errorf("links header %v, want %v", header, want)
	}
	first := map[string]map[string]string{}
	accepted := 0
	for _, r := range rows {
		k := r["review_id"] + "/" + r["trial_id"]
		if _, ok := first[k]; !ok {
			first[k] = r
		}
		if r["decision"] == "accept" {
			accepted++
		}
	}
	for _, tc := range []struct{ key, class, outcome, treat, ctrl, flip, unit, decision string }{
		{"TINN-01/NCT99000103", "included", "0", "OG000", "OG001", "no", "", ""},
		{"TINN-01/NCT99000109", "no-results", "", "", "", "", "", ""},
		{"TINN-01/NCT99000108", "missed-publication", "1", "OG000", "OG001", "no", "", "accept"},
		{"TINN-01/NCT99000105", "registry-only", "0", "OG001", "OG000", "no", "", "accept"},
		{"TINN-01/NCT99000106", "registry-only", "0", "OG000;OG001", "OG002", "no", "", "accept"},
		{"TINN-01/NCT99000107", "registry-only", "0", "OG000", "OG001", "yes", "", "accept"},
		{"GLUC-02/NCT99000204", "registry-only", "1", "OG000", "OG001", "no", "mg/dL", "accept"},
		{"GLUC-02/NCT99000206", "registry-only", "0", "OG000", "OG001", "no", "", ""},
	} {
		r := first[tc.key]
		if r == nil {
			t.Errorf("%s: no row", tc.key)
			continue
		}
		got := []string{r["class"], r["outcome_index"], r["treat_groups"], r["ctrl_groups"], r["flip"], r["unit_from"], r["decision"]}
		want := []string{tc.class, tc.outcome, tc.treat, tc.ctrl, tc.flip, tc.unit, tc.decision}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: first row %v, want %v", tc.key, got, want)
		}
	}
	if accepted != 10 {
		t.Errorf("%d rows accepted automatically, want the 10 intended links", accepted)
	}
	for _, k := range []string{"TINN-01/NCT99000110", "TINN-01/NCT99000111", "TINN-01/NCT99000112", "GLUC-02/NCT99000208",
		"GLUC-02/NCT99000209", "MOOD-03/NCT99000307", "MOOD-03/NCT99000308"} {
		if first[k] != nil {
			t.Errorf("trap %s proposed: %v", k, first[k])
		}
	}

	// Running again without --accept-above keeps the stored decisions.
	code, _, stderr = runCLI(t, "", "--db", db, "-q", "match", "--links", links)
	if code != exitOK {
		t.Fatalf("second match: exit %d: %s", code, stderr)
	}
	_, rows = readLinksCSV(t, links)
	again := 0
	for _, r := range rows {
		if r["decision"] == "accept" {
			again++
		}
	}
	if again != 10 {
		t.Errorf("after a second run %d rows accepted, want 10 kept", again)
	}
	if got := auditNumbers(t, db); !reflect.DeepEqual(got, want) {
		t.Error("audit changed after a second match run")
	}
}

func TestMatchReviewFilterAndStdout(t *testing.T) {
	db, _ := demoWorkspace(t)
	code, stdout, stderr := runCLI(t, "", "--db", db, "-q", "match", "--review", "GLUC-02", "--links", "-")
	if code != exitOK {
		t.Fatalf("match: exit %d: %s", code, stderr)
	}
	recs, err := csv.NewReader(strings.NewReader(stdout)).ReadAll()
	if err != nil {
		t.Fatalf("links CSV on stdout: %v\n%s", err, stdout)
	}
	if len(recs) < 2 {
		t.Fatalf("no rows:\n%s", stdout)
	}
	for _, r := range recs[1:] {
		if r[0] != "GLUC-02" {
			t.Errorf("row for review %s with --review GLUC-02", r[0])
		}
	}
	code, _, stderr = runCLI(t, "", "--db", db, "match", "--review", "NOPE-9", "--links", "-")
	if code == exitOK || !strings.Contains(stderr, "NOPE-9") {
		t.Errorf("unknown review: exit %d, stderr %q", code, stderr)
	}
}
