package store

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"path/filepath"
	"reflect"
	"sort"
	"strings"
	"testing"

	"unshelved/ingest"
)

// TestTableKindsMatchSchema checks the writer's column kinds against the
// schema: 't' is NOT NULL TEXT, 'i' NOT NULL INTEGER, 'n' a nullable
// column, so that an unbound value means what the writer intends.
func TestTableKindsMatchSchema(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	for _, tab := range tables {
		t.Run(tab.name, func(t *testing.T) {
			type col struct {
				typ     string
				notNull bool
			}
			schema := map[string]col{}
			rows, err := db.read.QueryContext(ctx, "SELECT name, type, \"notnull\" FROM pragma_table_info(?)", tab.name)
			if err != nil {
				t.Fatal(err)
			}
			for rows.Next() {
				var name, typ string
				var notNull bool
				if err := rows.Scan(&name, &typ, &notNull); err != nil {
					t.Fatal(err)
				}
				schema[name] = col{strings.ToUpper(typ), notNull}
			}
			if err := rows.Close(); err != nil {
				t.Fatal(err)
			}
			names := strings.Split(tab.columns, ",")
			if got, want := len(names)+1, len(schema); got != want {
				t.Errorf("writer names %d columns, table has %d", got, want)
			}
			for i, name := range names {
				name = strings.TrimSpace(name)
				c, ok := schema[name]
				if !ok {
					t.Errorf("column %s not in table", name)
					continue
				}
				var want string
				switch {
				case !c.notNull:
					want = "n"
				case c.typ == "TEXT":
					want = "t"
				case c.typ == "INTEGER":
					want = "i"
				default:
					t.Errorf("column %s: NOT NULL %s has no kind", name, c.typ)
					continue
				}
				if got := tab.kinds[i : i+1]; got != want {
					t.Errorf("column %s (%s, not null %v): kind %q, want %q", name, c.typ, c.notNull, got, want)
				}
			}
		})
	}
}

// TestTablesCoverTrialChildren checks that the writer knows every table
// referencing trials: it deletes a replaced trial's rows table by table.
func TestTablesCoverTrialChildren(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	var got []string
	rows, err := db.read.QueryContext(ctx, `SELECT DISTINCT m.name FROM sqlite_schema m, pragma_foreign_key_list(m.name) f
		WHERE m.type = 'table' AND f."table" = 'trials' ORDER BY m.name`)
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var name string
		if err := rows.Scan(&name); err != nil {
			t.Fatal(err)
		}
		got = append(got, name)
	}
	if err := rows.Close(); err != nil {
		t.Fatal(err)
	}
	var want []string
	for _, tab := range tables[1:] {
		want = append(want, tab.name)
	}
	sort.Strings(want)
	if !reflect.DeepEqual(got, want) {
		t.Errorf("tables referencing trials %v, writer writes %v", got, want)
	}
}

// TestWriterRestoresForeignKeys checks that the write connection enforces
// foreign keys again after a committed and after a failed batch.
func TestWriterRestoresForeignKeys(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	check := func(when string) {
		t.Helper()
		var on int
		if err := db.write.QueryRowContext(ctx, "PRAGMA foreign_keys").Scan(&on); err != nil {
			t.Fatal(err)
		}
		if on != 1 {
			t.Errorf("%s: foreign_keys = %d, want 1", when, on)
		}
	}
	w, err := db.NewTrialWriter(ctx, 0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Write(ctx, fullTrial("NCT99002001")); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(ctx); err != nil {
		t.Fatal(err)
	}
	check("after commit")

	w, err = db.NewTrialWriter(ctx, 0)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Write(ctx, fullTrial("NCT99002002")); err != nil {
		t.Fatal(err)
	}
	cctx, cancel := context.WithCancel(ctx)
	cancel()
	if _, err := w.Write(cctx, fullTrial("NCT99002003")); err == nil {
		t.Fatal("write under a cancelled context succeeded")
	}
	check("after rollback")
}

// TestPageSize checks that Open gives a new file PageSize and leaves an
// existing file's page size alone.
func TestPageSize(t *testing.T) {
	ctx := context.Background()
	pageSize := func(db *DB) int {
		t.Helper()
		var n int
		if err := db.read.QueryRowContext(ctx, "PRAGMA page_size").Scan(&n); err != nil {
			t.Fatal(err)
		}
		return n
	}
	if got := pageSize(mustOpen(t)); got != PageSize {
		t.Errorf("new file: page size %d, want %d", got, PageSize)
	}

	path := filepath.Join(t.TempDir(), "old.db")
	c, err := sql.Open("sqlite3", "file:"+path)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{"PRAGMA page_size = 4096", "PRAGMA journal_mode = WAL", "CREATE TABLE early (x)", "DROP TABLE early"} {
		if _, err := c.ExecContext(ctx, q); err != nil {
			t.Fatal(err)
		}
	}
	if err := c.Close(); err != nil {
		t.Fatal(err)
	}
	db := mustOpenPath(t, path)
	if got := pageSize(db); got != 4096 {
		t.Errorf("existing file: page size %d, want 4096", got)
	}
	writeTrials(t, db, fullTrial("NCT99002101"))
	if got, err := db.Trial(ctx, "NCT99002101"); err != nil || got.TrialID != "NCT99002101" {
		t.Errorf("existing file: trial not stored: %v", err)
	}
}

// TestVersionsWithinOneBatch writes versions of the same trial, between
// other trials, in one batch (rows of several trials share statements
// until the batch commits) and in a batch per trial: outcomes and dumps
// must agree.
func TestVersionsWithinOneBatch(t *testing.T) {
	v1 := fullTrial("NCT99002201")
	v2 := fullTrial("NCT99002201")
	v2.ContentHash = "v2"
	v2.LastUpdatePosted.Text = "2023-06-01"
	v2.Outcomes = v2.Outcomes[:1]
	v2.Aliases = nil
	older := fullTrial("NCT99002201")
	older.ContentHash = "v0"
	older.LastUpdatePosted.Text = "2022-12"
	seq := []ingest.Trial{v1, oddTrial("NCT99002202"), v1, v2, bigTrial("NCT99002203", 3, 150), older, v2, oddTrial("NCT99002204")}
	want := []WriteOutcome{Inserted, Inserted, Unchanged, Replaced, Inserted, Older, Unchanged, Inserted}

	one := mustOpen(t)
	if got := writeTrials(t, one, seq...); !reflect.DeepEqual(got, want) {
		t.Errorf("one batch: outcomes %v, want %v", got, want)
	}
	each := mustOpen(t)
	for i, tr := range seq {
		if got := writeTrials(t, each, tr); got[0] != want[i] {
			t.Errorf("batch per trial: write %d = %v, want %v", i, got[0], want[i])
		}
	}
	if dump(t, one) != dump(t, each) {
		t.Error("one batch and a batch per trial give different dumps")
	}
	got, err := one.Trial(context.Background(), v2.TrialID)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, v2) {
		diffTrial(t, got, v2)
	}
}

// TestRawInsertPathInUse fails when the writer cannot reach the SQLite
// handle of the driver's connection (rawinsert.go), as after a driver
// upgrade that renamed the field: it would still work, through the
// driver's statements, but much slower.
func TestRawInsertPathInUse(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	w, err := db.NewTrialWriter(ctx, 10)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.Write(ctx, fullTrial("NCT99003001")); err != nil {
		t.Fatal(err)
	}
	if w.raw == nil {
		t.Error("the writer found no SQLite handle on the driver connection; INSERTs go through the driver's statements")
	}
	if err := w.Close(ctx); err != nil {
		t.Fatal(err)
	}
}

// TestRawInsertMatchesDriver writes the same trials, with awkward values
// (texts with NUL bytes, invalid UTF-8, a megabyte, non-ASCII; extreme and
// negative-zero numbers), once through the raw INSERTs and once through the
// driver's statements, and expects identical databases.
func TestRawInsertMatchesDriver(t *testing.T) {
	ctx := context.Background()
	odd := fullTrial("NCT99003101")
	odd.BriefTitle = "nul\x00inside"
	odd.OfficialTitle = "bad utf-8 \xff\xfe end"
	odd.Acronym = strings.Repeat("é", 1<<19)
	m := &odd.Outcomes[0].Classes[0].Categories[0].Measurements[0]
	m.Value = ingest.Num{Text: "1.7976931348623157e308", Value: math.MaxFloat64, OK: true}
	m.Spread = ingest.Num{Text: "-0", Value: math.Copysign(0, -1), OK: true}
	m.Lower = ingest.Num{Text: "5e-324", Value: 5e-324, OK: true}
	big := 1<<62 + 12345
	odd.Enrollment = &big
	trials := []ingest.Trial{fullTrial("NCT99003100"), odd, fullTrial("NCT99003102")}
	var dumps []string
	for _, noRaw := range []bool{true, false} {
		db := mustOpen(t)
		w, err := db.NewTrialWriter(ctx, 2)
		if err != nil {
			t.Fatal(err)
		}
		w.noRaw = noRaw
		for _, tr := range trials {
			if _, err := w.Write(ctx, tr); err != nil {
				t.Fatal(err)
			}
		}
		if (w.raw == nil) != noRaw {
			t.Fatalf("noRaw %v but raw handle %v", noRaw, w.raw)
		}
		if err := w.Close(ctx); err != nil {
			t.Fatal(err)
		}
		dumps = append(dumps, dump(t, db))
		back, err := db.Trial(ctx, odd.TrialID)
		if err != nil {
			t.Fatal(err)
		}
		if back.BriefTitle != odd.BriefTitle || back.OfficialTitle != odd.OfficialTitle || back.Acronym != odd.Acronym ||
			*back.Enrollment != big {
			t.Errorf("noRaw %v: texts or enrollment changed on the way", noRaw)
		}
		bm := back.Outcomes[0].Classes[0].Categories[0].Measurements[0]
		if bm.Value.Value != math.MaxFloat64 || bm.Lower.Value != 5e-324 || bm.Spread.Value != 0 {
			t.Errorf("noRaw %v: numbers changed: %+v", noRaw, bm)
		}
	}
	if dumps[0] != dumps[1] {
		t.Errorf("raw INSERTs and the driver's statements give different databases:\n%s", firstDumpDiff(dumps[1], dumps[0]))
	}
}

func firstDumpDiff(a, b string) string {
	al, bl := strings.Split(a, "\n"), strings.Split(b, "\n")
	for i := range min(len(al), len(bl)) {
		if al[i] != bl[i] {
			return "raw:    " + truncateLine(al[i]) + "\ndriver: " + truncateLine(bl[i])
		}
	}
	return fmt.Sprintf("%d lines against %d", len(al), len(bl))
}

func truncateLine(s string) string {
	if len(s) > 300 {
		return s[:300] + "..."
	}
	return s
}
