package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestReport(t *testing.T) {
	dir := t.TempDir()
	if code, _, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "demo")); code != exitOK {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	db := filepath.Join(dir, "demo", "unshelved.db")
	out := filepath.Join(dir, "report")
	code, stdout, stderr := runCLI(t, "", "--db", db, "report", "--out", out)
	if code != exitOK {
		t.Fatalf("report exit %d: %s", code, stderr)
	}
	index := filepath.Join(out, "index.html")
	if strings.TrimSpace(stdout) != index {
		t.Errorf("stdout %q, want the overview path %q", stdout, index)
	}
	idx, err := os.ReadFile(index)
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range []string{"TINN-01", "GLUC-02", "MOOD-03"} {
		if !strings.Contains(string(idx), `href="`+id+`.html"`) {
			t.Errorf("overview lacks a link to %s", id)
		}
		page, err := os.ReadFile(filepath.Join(out, id+".html"))
		if err != nil {
			t.Fatal(err)
		}
		s := string(page)
		// The question's outcome comes from the review record, not the audit.
		for _, want := range []string{"<dt>Outcome</dt>", "<svg", "Forest plot", "funnel plot", "2026-12-01, unshelved " + version,
			"not peer reviewed", "https://clinicaltrials.gov/study/NCT"} {
			if !strings.Contains(s, want) {
				t.Errorf("%s page lacks %q", id, want)
			}
		}
	}
	// The TINN-01 page states the shift in words, with the numbers the
	// audit gives under the same (default) options.
	_, js, _ := runCLI(t, "", "--db", db, "audit", "--review", "TINN-01", "--format", "json")
	var audits []struct {
		Published, Augmented struct {
			Random struct{ Estimate float64 } `json:"random"`
		}
	}
	if err := json.Unmarshal([]byte(js), &audits); err != nil || len(audits) != 1 {
		t.Fatalf("audit JSON: %v", err)
	}
	minus := func(x float64) string { return strings.Replace(fmt.Sprintf("%.2f", x), "-", "\u2212", 1) }
	want := "from " + minus(audits[0].Published.Random.Estimate) + " to " + minus(audits[0].Augmented.Random.Estimate)
	tinn, _ := os.ReadFile(filepath.Join(out, "TINN-01.html"))
	if !strings.Contains(string(tinn), want) {
		t.Errorf("TINN-01 page does not state the shift %q", want)
	}

	// One review only.
	out2 := filepath.Join(dir, "one")
	if code, _, stderr := runCLI(t, "", "--db", db, "report", "--review", "GLUC-02", "--out", out2); code != exitOK {
		t.Fatalf("report --review exit %d: %s", code, stderr)
	}
	entries, _ := os.ReadDir(out2)
	if len(entries) != 2 {
		t.Errorf("report --review GLUC-02 wrote %d files, want index.html and GLUC-02.html", len(entries))
	}
}

func TestReportErrors(t *testing.T) {
	dir := t.TempDir()
	if code, _, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "demo")); code != exitOK {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	db := filepath.Join(dir, "demo", "unshelved.db")
	for _, tc := range []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no out", []string{"report"}, exitUsage, "--out"},
		{"bad tau2", []string{"report", "--out", dir, "--tau2", "ml"}, exitUsage, "invalid --tau2"},
		{"bad level", []string{"report", "--out", dir, "--level", "2"}, exitUsage, "--level"},
		{"unknown review", []string{"report", "--out", filepath.Join(dir, "r"), "--review", "NOPE"}, exitError, "NOPE"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "", append([]string{"--db", db}, tc.args...)...)
			if code != tc.code || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d (want %d), stderr %q (want %q)", code, tc.code, stderr, tc.want)
			}
		})
	}
}
