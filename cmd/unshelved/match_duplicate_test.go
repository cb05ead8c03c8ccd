package main

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestAuditLeavesOutDuplicateAcceptedByHand: in the demo workspace, a
// person accepts NCT99000103 for TINN-01 as if it were unpublished; it is
// the review's Dovrin 2018, which cites no registry id. The audit leaves
// it out with a warning naming both; decision=accept-duplicate adds it.
func TestAuditLeavesOutDuplicateAcceptedByHand(t *testing.T) {
	db, _ := demoWorkspace(t)
	dir := t.TempDir()
	audit := func(decision string) map[string]any {
		t.Helper()
		links := writeFile(t, dir, decision+".csv", "review_id,trial_id,class,outcome_index,treat_groups,ctrl_groups,flip,decision\n"+
			"TINN-01,NCT99000103,registry-only,0,OG000,OG001,no,"+decision+"\n")
		if code, _, stderr := runCLI(t, "", "--db", db, "-q", "match", "--apply", links); code != exitOK {
			t.Fatalf("match --apply (%s): exit %d: %s", decision, code, stderr)
		}
		code, out, stderr := runCLI(t, "", "--db", db, "audit", "--review", "TINN-01", "--format", "json", "--bootstrap", "0")
		if code != exitOK {
			t.Fatalf("audit (%s): exit %d: %s", decision, code, stderr)
		}
		var audits []map[string]any
		if err := json.Unmarshal([]byte(out), &audits); err != nil || len(audits) != 1 {
			t.Fatalf("audit JSON (%s): %v, %d audits", decision, err, len(audits))
		}
		return audits[0]
	}

	a := audit("accept")
	if a["k_added"].(float64) != 0 {
		t.Errorf("accept: k_added %v, want 0", a["k_added"])
	}
	rejected, _ := json.Marshal(a["rejected"])
	if !strings.Contains(string(rejected), `"reason":"matches-published-study"`) || !strings.Contains(string(rejected), "NCT99000103") {
		t.Errorf("accept: rejected %s", rejected)
	}
	warned := false
	for _, w := range a["warnings"].([]any) {
		s := w.(string)
		if strings.Contains(s, "NCT99000103") && strings.Contains(s, "Dovrin 2018") && strings.Contains(s, "accept-duplicate") {
			warned = true
		}
	}
	if !warned {
		t.Errorf("accept: no warning naming NCT99000103 and Dovrin 2018: %v", a["warnings"])
	}

	a = audit("accept-duplicate")
	if a["k_added"].(float64) != 1 {
		t.Errorf("accept-duplicate: k_added %v, want 1", a["k_added"])
	}
	if r := a["rejected"].([]any); len(r) != 0 {
		t.Errorf("accept-duplicate: rejected %v", r)
	}
}
