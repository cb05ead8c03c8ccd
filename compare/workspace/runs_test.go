package workspace

import (
	"context"
	"encoding/json"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"unshelved/analysis"
	"unshelved/compare"
	"unshelved/store"
)

// linkedDemo is the demo scenario loaded with its hand-made links.
func linkedDemo(t *testing.T) *store.DB {
	t.Helper()
	ctx := context.Background()
	input, db := demoWorkspace(t)
	if _, err := IngestRegistry(ctx, db, IngestOptions{Paths: []string{filepath.Join(input, "registry")}}); err != nil {
		t.Fatal(err)
	}
	if _, err := LoadReviews(ctx, db, []string{filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")}, ',', nil); err != nil {
		t.Fatal(err)
	}
	if res, err := ApplyLinksFile(ctx, db, filepath.Join(input, "links.csv"), ',', nil); err != nil || len(res.Problems) > 0 {
		t.Fatalf("apply links: %v %v", err, res.Problems)
	}
	return db
}

func TestRunsShowDiffPrune(t *testing.T) {
	ctx := context.Background()
	db := linkedDemo(t)
	var ids []int64
	for _, tau2 := range []analysis.Tau2Method{analysis.Tau2REML, analysis.Tau2DL, analysis.Tau2DL} {
		run, err := RunAuditOpts(ctx, db, nil, compare.Options{Tau2: tau2, Level: 0.9}, "test", RunOptions{})
		if err != nil || run.RunID == 0 {
			t.Fatalf("audit run: %v (id %d)", err, run.RunID)
		}
		ids = append(ids, run.RunID)
	}
	run, err := LoadRun(ctx, db, ids[0], "audit")
	if err != nil {
		t.Fatal(err)
	}
	if level, err := AuditRunLevel(run); err != nil || level != 0.9 {
		t.Errorf("level %v, %v; want 0.9", level, err)
	}
	if _, err := LoadRun(ctx, db, ids[0], "summary"); err == nil || !strings.Contains(err.Error(), "runs show") {
		t.Errorf("wrong kind: %v", err)
	}
	if _, err := LoadRun(ctx, db, 999, ""); err == nil || !strings.Contains(err.Error(), "no run 999") {
		t.Errorf("missing run: %v", err)
	}
	var stored []*compare.ReviewAudit
	if err := EachStoredAudit(ctx, db, ids[0], true, func(a *compare.ReviewAudit, js []byte) error {
		stored = append(stored, a)
		return nil
	}); err != nil || len(stored) != 3 {
		t.Fatalf("stored audits: %d, %v", len(stored), err)
	}

	// Same options: no difference. REML against DL: the tau² method of
	// every review, and numbers whose difference is after - before.
	var same []ReviewDiff
	if err := DiffRuns(ctx, db, ids[1], ids[2], func(d ReviewDiff) error { same = append(same, d); return nil }); err != nil || len(same) != 0 {
		t.Errorf("identical runs differ: %+v %v", same, err)
	}
	var diffs []ReviewDiff
	if err := DiffRuns(ctx, db, ids[0], ids[1], func(d ReviewDiff) error { diffs = append(diffs, d); return nil }); err != nil {
		t.Fatal(err)
	}
	if len(diffs) != 3 {
		t.Fatalf("%d reviews differ, want 3", len(diffs))
	}
	for _, d := range diffs {
		methods := 0
		for _, c := range d.Changes {
			if c.Field == "published.random.tau2_method" {
				methods++
				if string(c.Before) != `"reml"` || string(c.After) != `"dl"` {
					t.Errorf("%s: tau2_method %s -> %s", d.ReviewID, c.Before, c.After)
				}
			}
			if c.Difference != nil {
				var x, y float64
				if json.Unmarshal(c.Before, &x) != nil || json.Unmarshal(c.After, &y) != nil || *c.Difference != y-x {
					t.Errorf("%s %s: difference %v of %s -> %s", d.ReviewID, c.Field, *c.Difference, c.Before, c.After)
				}
			}
		}
		if methods != 1 {
			t.Errorf("%s: tau2_method change listed %d times", d.ReviewID, methods)
		}
	}

	drop, err := RunsToPrune(ctx, db, 1)
	if err != nil || len(drop) != 2 || drop[0] != ids[0] || drop[1] != ids[1] {
		t.Fatalf("prune keeping 1: %v %v, want %v", drop, err, ids[:2])
	}
	if _, err := DeleteRuns(ctx, db, []int64{ids[0], 999}); err == nil || !strings.Contains(err.Error(), "nothing was deleted") {
		t.Errorf("delete with a missing id: %v", err)
	}
	if _, err := DeleteRuns(ctx, db, drop); err != nil {
		t.Fatal(err)
	}
	if left, err := db.Runs(ctx, ""); err != nil || len(left) != 1 || left[0].ID != ids[2] {
		t.Errorf("runs left %v %v, want only %d", left, err, ids[2])
	}
}

func TestFunderQuery(t *testing.T) {
	ctx := context.Background()
	db := linkedDemo(t)
	info, err := db.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	asOf := time.Date(2030, 1, 1, 0, 0, 0, 0, time.UTC)
	all, err := FunderQuery(ctx, db, store.TrialFilter{}, asOf)
	if err != nil || len(all.Trials) != info.Trials || all.AsOf != "2030-01-01" {
		t.Fatalf("all: %d trials as of %s (%v), want %d as of 2030-01-01", len(all.Trials), all.AsOf, err, info.Trials)
	}
	none, err := FunderQuery(ctx, db, store.TrialFilter{CompletedTo: "1900-01-01"}, asOf)
	if err != nil || len(none.Trials) != 0 {
		t.Errorf("completed by 1900: %d trials, %v", len(none.Trials), err)
	}
	sponsor := all.Trials[0].Sponsor
	some, err := FunderQuery(ctx, db, store.TrialFilter{Sponsor: strings.ToUpper(sponsor)}, asOf)
	if err != nil || len(some.Trials) == 0 || len(some.Trials) > len(all.Trials) {
		t.Fatalf("sponsor %q: %d trials, %v", sponsor, len(some.Trials), err)
	}
	for _, tr := range some.Trials {
		if !strings.EqualFold(tr.Sponsor, sponsor) && tr.SponsorMatched != "collaborator" {
			t.Errorf("sponsor filter %q let %s (%s) through", sponsor, tr.TrialID, tr.Sponsor)
		}
	}
}
