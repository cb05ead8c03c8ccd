package store

import (
	"context"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

func TestCheckFindsOrphans(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	writeTrials(t, db, fullTrial("NCT99001101"))
	if problems, err := db.Check(ctx); err != nil || len(problems) != 0 {
		t.Fatalf("clean database: %v, %v", problems, err)
	}
	// A measurement whose category is gone (only possible by hand).
	if _, err := db.write.ExecContext(ctx, `DELETE FROM categories WHERE trial_id = ? AND class_pos = 1 AND category_pos = 0`, "NCT99001101"); err != nil {
		t.Fatal(err)
	}
	problems, err := db.Check(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if len(problems) != 1 || !strings.Contains(problems[0], "measurement without category") {
		t.Errorf("problems = %q, want one measurement without category", problems)
	}
}

func TestDumpIgnoresTimesAndOrder(t *testing.T) {
	dir := t.TempDir()
	a := mustOpenPath(t, filepath.Join(dir, "a.db"))
	b := mustOpenPath(t, filepath.Join(dir, "b.db"))
	b.now = func() time.Time { return time.Date(2001, 1, 1, 0, 0, 0, 0, time.UTC) }
	t1, t2 := fullTrial("NCT99001201"), fullTrial("NCT99001202")
	writeTrials(t, a, t1, t2)
	writeTrials(t, b, t2, t1) // other order, other ingest time
	da, db_ := dump(t, a), dump(t, b)
	if da != db_ {
		t.Fatal("dumps of the same content differ")
	}
	if !strings.Contains(da, "# trials (") || strings.Contains(da, "ingested_at") || !strings.Contains(da, `"-4.8687"`+"\t-4.8687") {
		t.Errorf("dump lacks expected content:\n%.2000s", da)
	}
	// A changed value shows.
	t3 := fullTrial("NCT99001201")
	t3.ContentHash = "other"
	t3.Outcomes[0].Classes[0].Categories[0].Measurements[0].Spread = num("0.32", 0.32)
	writeTrials(t, b, t3)
	if dump(t, b) == da {
		t.Error("dump did not change with the content")
	}
}
