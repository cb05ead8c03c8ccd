package store

import (
	"context"
	"database/sql"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/ingest"
)

// TestMigrateLinksKeepsDecisions opens a version 3 workspace holding a
// decided link with its groups: the rebuild of the links table (version 4,
// decision accept-duplicate) keeps both, and the new decision is stored.
func TestMigrateLinksKeepsDecisions(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "v3.db")
	raw := oldWorkspace(t, ctx, path, 3)
	for _, q := range []string{
		"PRAGMA user_version = 3",
		`INSERT INTO reviews VALUES ('R1', 'Review', 'MD', 'score', 'points', 'lower', 12, '2024-01-01', 'placebo', NULL, 'r.csv', 'h', '1', 'now')`,
		`INSERT INTO links VALUES ('R1', 'NCT99001801', 0, 1, '', 'accept', 'registry-only', 'Score', 'Week 12', 0.9, 'why', 0, '2026-01-02T03:04:05Z', 'l.csv', 'h', '2', 'now')`,
		`INSERT INTO link_groups VALUES ('R1', 'NCT99001801', 0, 'treat', 0, 'OG000'), ('R1', 'NCT99001801', 0, 'treat', 1, 'OG001'), ('R1', 'NCT99001801', 0, 'ctrl', 0, 'OG002')`,
	} {
		if _, err := raw.ExecContext(ctx, q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
	if err := raw.Close(); err != nil {
		t.Fatal(err)
	}

	db := mustOpenPath(t, path)
	if v, err := db.SchemaVersion(ctx); err != nil || v != LatestSchemaVersion() || v < 4 {
		t.Fatalf("version after migrate = %d, %v", v, err)
	}
	links, err := db.Links(ctx, "R1")
	if err != nil {
		t.Fatal(err)
	}
	if len(links) != 1 {
		t.Fatalf("links after migrate: %+v", links)
	}
	l := links[0]
	if l.Decision != "accept" || !l.Flip || l.Class != "registry-only" || strings.Join(l.TreatGroups, ";") != "OG000;OG001" ||
		strings.Join(l.CtrlGroups, ";") != "OG002" || l.Score == nil || *l.Score != 0.9 {
		t.Errorf("migrated link = %+v", l)
	}
	l.Decision = "accept-duplicate"
	if err := db.SaveLinks(ctx, []ingest.Link{l}); err != nil {
		t.Fatalf("save accept-duplicate: %v", err)
	}
	links, err = db.Links(ctx, "R1")
	if err != nil || len(links) != 1 || links[0].Decision != "accept-duplicate" || len(links[0].TreatGroups) != 2 {
		t.Fatalf("after saving accept-duplicate: %+v, %v", links, err)
	}
	l.Decision = "maybe"
	if err := db.SaveLinks(ctx, []ingest.Link{l}); err == nil || !strings.Contains(err.Error(), "accept-duplicate") {
		t.Errorf("decision maybe: err = %v, want one naming the allowed values", err)
	}
	if problems, err := db.Check(ctx); err != nil || len(problems) > 0 {
		t.Errorf("check after migrate: %v %v", problems, err)
	}
}

// oldWorkspace creates a workspace file at path holding only the first n
// migrations (user_version is left for the caller to set), opened raw so a
// test can write rows the way that schema version did.
func oldWorkspace(t *testing.T, ctx context.Context, path string, n int) *sql.DB {
	t.Helper()
	raw, err := sql.Open("sqlite3", dsn(path, false))
	if err != nil {
		t.Fatal(err)
	}
	ms, err := migrations()
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range ms[:n] {
		if _, err := raw.ExecContext(ctx, m.sql); err != nil {
			t.Fatalf("%s: %v", m.name, err)
		}
	}
	return raw
}
