package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/store"
)

// demoDB builds the demo workspace once per test and returns its path.
func demoDB(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	if code, _, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "demo")); code != exitOK {
		t.Fatalf("demo exit %d: %s", code, stderr)
	}
	return filepath.Join(dir, "demo", "unshelved.db")
}

func TestAuditStoresRunsAndExplains(t *testing.T) {
	db := demoDB(t)
	code, out, stderr := runCLI(t, "", "--db", db, "audit", "--format", "json", "--seed", "77", "--bootstrap", "200")
	if code != exitOK {
		t.Fatalf("audit exit %d: %s", code, stderr)
	}
	var audits []map[string]any
	if err := json.Unmarshal([]byte(out), &audits); err != nil {
		t.Fatal(err)
	}
	for _, a := range audits {
		shift := a["shift"].(map[string]any)
		if shift["ci_low"] == nil || shift["ci_high"] == nil || shift["ci_method"] != "shift-contrast-kh" || shift["overstatement_sd"] == nil {
			t.Errorf("%v: shift interval %v", a["review_id"], shift)
		}
		// The interval is centred on the printed shift; --bootstrap 200
		// adds its check interval, which holds the shift too.
		abs, _ := shift["absolute"].(float64)
		lo, _ := shift["ci_low"].(float64)
		hi, _ := shift["ci_high"].(float64)
		blo, _ := shift["boot_ci_low"].(float64)
		bhi, _ := shift["boot_ci_high"].(float64)
		if shift["ci_estimate"] != shift["absolute"] || !(lo < abs && abs < hi) || !(blo < abs && abs < bhi) || shift["boot_replicates"] != 200.0 {
			t.Errorf("%v: shift %v, interval %v to %v, bootstrap %v to %v (%v replicates)", a["review_id"], abs, lo, hi, blo, bhi, shift["boot_replicates"])
		}
		// Every demo review's registry trials are less favourable: the
		// published-only analysis overstates the benefit.
		if o, _ := shift["overstatement_sd"].(float64); !(o > 0) {
			t.Errorf("%v: overstatement %v, want positive", a["review_id"], shift["overstatement_sd"])
		}
		sg, ok := a["subgroup"].(map[string]any)
		if !ok {
			t.Fatalf("%v: no subgroup", a["review_id"])
		}
		for _, k := range []string{"published_estimate", "registry_estimate", "difference", "se", "ci_low", "ci_high", "q_between", "p"} {
			if _, ok := sg[k]; !ok {
				t.Errorf("subgroup lacks %s", k)
			}
		}
		for _, k := range []string{"mid_crossed", "conclusion_changed", "tau2_change", "pi_change", "missing", "discrepancies"} {
			if _, ok := a[k]; !ok {
				t.Errorf("audit lacks %s", k)
			}
		}
		if a["published"].(map[string]any)["random"].(map[string]any)["tau2_method"] != "reml" {
			t.Errorf("default tau² method is not reml")
		}
	}
	// Same seed, same output.
	_, again, _ := runCLI(t, "", "--db", db, "audit", "--format", "json", "--seed", "77", "--bootstrap", "200")
	if again != out {
		t.Errorf("rerun with the same seed differs")
	}
	s, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	runs, err := s.Runs(context.Background(), "audit")
	// The demo's own audit run, then the two above (oldest first).
	if err != nil || len(runs) != 3 {
		t.Fatalf("runs %v, %v", runs, err)
	}
	if r := runs[1]; r.Status != store.RunComplete || r.Seed != 77 || !strings.Contains(r.Options, `"tau2":"reml"`) || !strings.Contains(r.Options, `"bootstrap":200`) {
		t.Errorf("stored run %+v", r)
	}
	res, _ := s.RunResults(context.Background(), runs[1].ID)
	if len(res) != 3 {
		t.Errorf("stored %d results, want 3", len(res))
	}

	// A cancelled audit is stored as cancelled, not complete.
	io, _, _ := testIO("")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if code := run(ctx, []string{"--db", db, "audit"}, io); code == exitOK {
		t.Errorf("cancelled audit exit %d", code)
	}
	runs, _ = s.Runs(context.Background(), "audit")
	if last := runs[len(runs)-1]; len(runs) == 4 && last.Status == store.RunComplete {
		t.Errorf("cancelled run recorded as complete")
	}

	code, out, stderr = runCLI(t, "", "--db", db, "audit", "--explain", "NCT99000105", "--review", "TINN-01")
	if code != exitOK {
		t.Fatalf("explain exit %d: %s", code, stderr)
	}
	for _, want := range []string{"NCT99000105", "group OG001 (experimental)", "group OG000 (comparator)", "step: md_from_arms", "effect (SE)",
		"in: treat_mean=-8, treat_sd=12.6, treat_n=84", "out: md=-2"} {
		if !strings.Contains(out, want) {
			t.Errorf("explain lacks %q:\n%s", want, out)
		}
	}
	// The link used comes first, with its decision and who made it; the
	// other candidate outcomes follow, one line each.
	if i, j := strings.Index(out, "│ link "), strings.Index(out, "step: md_from_arms"); i < 0 || j < i || !strings.Contains(out[i:j], "outcome 0:") || !strings.Contains(out[i:j], "accepted") {
		t.Errorf("explain does not start with the accepted link:\n%s", out)
	}
	if !strings.Contains(out, "other candidate: outcome 1") {
		t.Errorf("explain lacks the other candidate outcome:\n%s", out)
	}
	// A least-squares record with a posted analysis shows both readings.
	code, out, stderr = runCLI(t, "", "--db", db, "audit", "--explain", "NCT99000107", "--review", "TINN-01", "--format", "json")
	if code != exitOK {
		t.Fatalf("explain exit %d: %s", code, stderr)
	}
	var exps []map[string]any
	if err := json.Unmarshal([]byte(out), &exps); err != nil || len(exps) != 1 {
		t.Fatalf("explain JSON (%v): %s", err, out)
	}
	pa, _ := exps[0]["posted_analysis"].(map[string]any)
	if pa == nil || pa["used"] != true || pa["arms_effect"] == nil || exps[0]["converted_from"] != "between_group_analysis" {
		t.Errorf("explain JSON posted_analysis %v, converted_from %v", pa, exps[0]["converted_from"])
	}
	if d, _ := exps[0]["derivations"].([]any); len(d) == 0 || d[0].(map[string]any)["method"] != "posted_analysis" {
		t.Errorf("derivations %v: want snake_case keys, the posted analysis first", exps[0]["derivations"])
	}
	code, out, _ = runCLI(t, "", "--db", db, "audit", "--explain", "NCT99000107", "--review", "TINN-01", "--prefer", "arms", "--format", "json")
	if code != exitOK || !strings.Contains(out, `"converted_from": "arms_se"`) {
		t.Errorf("--prefer arms: exit %d\n%s", code, out)
	}
	if code, _, _ := runCLI(t, "", "--db", db, "audit", "--prefer", "both"); code != exitUsage {
		t.Errorf("--prefer both exit %d, want usage error", code)
	}
	if code, _, _ := runCLI(t, "", "--db", db, "audit", "--ci", "normal"); code != exitUsage {
		t.Errorf("--ci normal exit %d, want usage error", code)
	}
}

func TestSummaryCommand(t *testing.T) {
	db := demoDB(t)
	code, out, stderr := runCLI(t, "", "--db", db, "summary", "--format", "json", "--bootstrap", "0")
	if code != exitOK {
		t.Fatalf("summary exit %d: %s", code, stderr)
	}
	var s map[string]any
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatal(err)
	}
	if s["reviews"].(float64) != 3 {
		t.Errorf("reviews %v", s["reviews"])
	}
	for _, k := range []string{"overstatement_sd", "conclusion_changed_share", "pooled_overstatement_sd", "detection", "adjusted_error"} {
		if _, ok := s[k]; !ok {
			t.Errorf("summary lacks %s", k)
		}
	}
	for _, k := range []string{"shift_smd", "pooled_difference_smd"} {
		if _, ok := s[k]; ok {
			t.Errorf("summary still has the renamed key %s", k)
		}
	}
	for _, k := range []string{"n", "median", "q1", "q3", "mean", "share_positive"} {
		if _, ok := s["overstatement_sd"].(map[string]any)[k]; !ok {
			t.Errorf("overstatement_sd lacks %s", k)
		}
	}
	for _, k := range []string{"estimate", "se", "ci_low", "ci_high", "tau2", "i2"} {
		if _, ok := s["pooled_overstatement_sd"].(map[string]any)[k]; !ok {
			t.Errorf("pooled_overstatement_sd lacks %s", k)
		}
	}
	// The demo's reviews all have lower is better and registry trials less
	// favourable than the published ones: the oriented figures are positive.
	if e, _ := s["pooled_overstatement_sd"].(map[string]any)["estimate"].(float64); !(e > 0) {
		t.Errorf("pooled overstatement %v, want positive", s["pooled_overstatement_sd"])
	}
	if sp, _ := s["overstatement_sd"].(map[string]any)["share_positive"].(float64); sp != 1 {
		t.Errorf("overstatement %v, want share_positive 1", s["overstatement_sd"])
	}
	if n := len(s["detection"].([]any)); n != 10 {
		t.Errorf("%d detection tables, want 10 (5 tests, min_k 0 and 10)", n)
	}
	d := s["detection"].([]any)[0].(map[string]any)
	for _, k := range []string{"test", "min_k", "unknown", "tp", "fp", "fn", "tn", "sensitivity", "sensitivity_ci_low", "sensitivity_ci_high", "specificity", "specificity_ci_low", "specificity_ci_high"} {
		if _, ok := d[k]; !ok {
			t.Errorf("detection lacks %s", k)
		}
	}
	// The stored run reads back the same summary, beside a second one.
	runCLI(t, "", "--db", db, "summary", "--bootstrap", "0", "--truth", "q-between")
	ws, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	sruns, err := ws.Runs(context.Background(), "summary")
	ws.Close()
	if err != nil || len(sruns) != 2 {
		t.Fatalf("summary runs %v, %v", sruns, err)
	}
	first, second := fmt.Sprint(sruns[0].ID), fmt.Sprint(sruns[1].ID) // oldest first
	code, table, _ := runCLI(t, "", "--db", db, "summary", "--run", first, "--compare", second)
	if code != exitOK || !strings.Contains(table, "run "+first) || !strings.Contains(table, "run "+second) || !strings.Contains(table, "not proof of publication bias") {
		t.Errorf("stored summaries table (exit %d):\n%s", code, table)
	}
	code, back, _ := runCLI(t, "", "--db", db, "summary", "--run", first, "--format", "json")
	var st struct {
		Summary map[string]any `json:"summary"`
		Status  string         `json:"status"`
	}
	if err := json.Unmarshal([]byte(back), &st); err != nil || code != exitOK || st.Status != "complete" {
		t.Fatalf("stored summary: %v %d %s", err, code, back)
	}
	if st.Summary["pooled_overstatement_sd"].(map[string]any)["estimate"] != s["pooled_overstatement_sd"].(map[string]any)["estimate"] {
		t.Errorf("stored estimate differs from the computed one")
	}
	code, csv, _ := runCLI(t, "", "--db", db, "summary", "--run", first, "--format", "csv")
	if lines := strings.Split(strings.TrimSpace(csv), "\n"); code != exitOK || len(lines) != 2 || !strings.HasPrefix(lines[0], "run_id,reviews,") {
		t.Errorf("summary csv:\n%s", csv)
	}
}

func TestTrialsCommand(t *testing.T) {
	db := demoDB(t)
	code, out, stderr := runCLI(t, "", "--db", db, "trials", "--format", "json", "--as-of", "2026-12-01")
	if code != exitOK {
		t.Fatalf("trials exit %d: %s", code, stderr)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep["as_of"] != "2026-12-01" || len(rep["trials"].([]any)) == 0 {
		t.Errorf("trials report %v", rep["as_of"])
	}
	// Without --as-of the injected clock (2026-12-01 in tests) is used.
	_, again, _ := runCLI(t, "", "--db", db, "trials", "--format", "json")
	if again != out {
		t.Errorf("--as-of default is not the injected clock")
	}
	code, table, _ := runCLI(t, "", "--db", db, "trials", "--sponsor", "zzz-nobody")
	if code != exitOK || !strings.Contains(table, "0 trials") {
		t.Errorf("empty filter (exit %d):\n%s", code, table)
	}
	if code, _, _ := runCLI(t, "", "--db", db, "trials", "--as-of", "soon"); code != exitUsage {
		t.Errorf("--as-of soon exit %d", code)
	}
}

func TestSummaryFigures(t *testing.T) {
	db := demoDB(t)
	dir := filepath.Join(t.TempDir(), "figs")
	code, _, stderr := runCLI(t, "", "--db", db, "summary", "--bootstrap", "0", "--plot", dir)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	for _, name := range []string{"shift-histogram.svg", "shift-vs-published.svg"} {
		b, err := os.ReadFile(filepath.Join(dir, name))
		if err != nil || !strings.Contains(string(b), "<svg") {
			t.Errorf("%s: %v", name, err)
		}
	}
	// The scatter labels each review that has a shift.
	b, _ := os.ReadFile(filepath.Join(dir, "shift-vs-published.svg"))
	for _, id := range []string{"TINN-01", "GLUC-02", "MOOD-03"} {
		if !strings.Contains(string(b), id) {
			t.Errorf("scatter lacks %s", id)
		}
	}
}

func TestSummaryCancelledIsNotComplete(t *testing.T) {
	db := demoDB(t)
	io, _, _ := testIO("")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if code := run(ctx, []string{"--db", db, "summary"}, io); code != exitInterrupted {
		t.Errorf("cancelled summary exit %d, want %d", code, exitInterrupted)
	}
	s, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	runs, err := s.Runs(context.Background(), "summary")
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range runs {
		if r.Status == store.RunComplete {
			t.Errorf("a cancelled summary was recorded as complete: %+v", r)
		}
	}
}
