package store

import (
	"context"
	"errors"
	"math"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"unshelved/ingest"
)

func TestOpenMigrates(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "w.db")
	db := mustOpenPath(t, path)
	v, err := db.SchemaVersion(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if got, want := v, LatestSchemaVersion(); got != want || want < 1 {
		t.Fatalf("schema version = %d, want %d (>= 1)", got, want)
	}
	var mode string
	if err := db.read.QueryRowContext(ctx, "PRAGMA journal_mode").Scan(&mode); err != nil || mode != "wal" {
		t.Fatalf("journal mode = %q, %v; want wal", mode, err)
	}
	writeTrials(t, db, fullTrial("NCT99100001"))
	before := dump(t, db)

	// Re-opening is a no-op.
	db2 := mustOpenPath(t, path)
	if v2, err := db2.SchemaVersion(ctx); err != nil || v2 != v {
		t.Fatalf("reopened schema version = %d, %v; want %d", v2, err, v)
	}
	if after := dump(t, db2); after != before {
		t.Fatalf("re-open changed content:\n%s\nwant\n%s", after, before)
	}
}

func TestOpenNewerSchema(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "w.db")
	db, err := Open(ctx, path)
	if err != nil {
		t.Fatal(err)
	}
	future := LatestSchemaVersion() + 5
	if _, err := db.write.ExecContext(ctx, "PRAGMA user_version = "+itoa(future)); err != nil {
		t.Fatal(err)
	}
	if err := db.Close(); err != nil {
		t.Fatal(err)
	}
	_, err = Open(ctx, path)
	if err == nil {
		t.Fatal("open of a newer database succeeded")
	}
	for _, want := range []string{itoa(future), itoa(LatestSchemaVersion())} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q does not name version %s", err, want)
		}
	}
}

func itoa(i int) string { return strconv.Itoa(i) }

func TestTrialRoundTrip(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	want := fullTrial("NCT99000100")
	sparse := ingest.Trial{TrialID: "NCT99000200", Registry: "other",
		Phases: []string{}, Conditions: []string{}, Outcomes: []ingest.Outcome{}} // empty slices come back nil
	if outs := writeTrials(t, db, want, sparse); outs[0] != Inserted || outs[1] != Inserted {
		t.Fatalf("outcomes = %v, want inserted twice", outs)
	}
	got, err := db.Trial(ctx, want.TrialID)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, want) {
		diffTrial(t, got, want)
	}
	gotSparse, err := db.Trial(ctx, sparse.TrialID)
	if err != nil {
		t.Fatal(err)
	}
	if wantSparse := (ingest.Trial{TrialID: "NCT99000200", Registry: "other"}); !reflect.DeepEqual(gotSparse, wantSparse) {
		t.Errorf("sparse trial = %+v, want %+v", gotSparse, wantSparse)
	}
	if _, err := db.Trial(ctx, "NCT99999999"); !errors.Is(err, ErrNotFound) {
		t.Errorf("missing trial: err = %v, want ErrNotFound", err)
	}
	ids, err := db.TrialIDs(ctx)
	if err != nil || !reflect.DeepEqual(ids, []string{"NCT99000100", "NCT99000200"}) {
		t.Errorf("TrialIDs = %v, %v", ids, err)
	}
	for _, c := range []struct {
		id   string
		want []string
	}{{"2099-000001-11", []string{"NCT99000100"}}, {"NCT99000002", []string{"NCT99000100"}}, {"nope", nil}} {
		got, err := db.TrialBySecondaryID(ctx, c.id)
		if err != nil || !reflect.DeepEqual(got, c.want) {
			t.Errorf("TrialBySecondaryID(%q) = %v, %v; want %v", c.id, got, err, c.want)
		}
	}
	if problems, err := db.Check(ctx); err != nil || len(problems) != 0 {
		t.Errorf("Check = %v, %v", problems, err)
	}
}

// diffTrial reports the differing fields of two trials, one level deep
// and then per outcome.
func diffTrial(t *testing.T, got, want ingest.Trial) {
	t.Helper()
	gv, wv := reflect.ValueOf(got), reflect.ValueOf(want)
	for i := 0; i < gv.NumField(); i++ {
		name := gv.Type().Field(i).Name
		if name == "Outcomes" && len(got.Outcomes) == len(want.Outcomes) {
			for k := range got.Outcomes {
				og, ow := reflect.ValueOf(got.Outcomes[k]), reflect.ValueOf(want.Outcomes[k])
				for j := 0; j < og.NumField(); j++ {
					if !reflect.DeepEqual(og.Field(j).Interface(), ow.Field(j).Interface()) {
						t.Errorf("Outcomes[%d].%s:\n got %#v\nwant %#v", k, og.Type().Field(j).Name, og.Field(j).Interface(), ow.Field(j).Interface())
					}
				}
			}
			continue
		}
		if !reflect.DeepEqual(gv.Field(i).Interface(), wv.Field(i).Interface()) {
			t.Errorf("%s:\n got %#v\nwant %#v", name, gv.Field(i).Interface(), wv.Field(i).Interface())
		}
	}
}

func TestWriteIdempotentAndVersions(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	v1 := fullTrial("NCT99000300")
	writeTrials(t, db, v1)
	d1 := dump(t, db)
	if outs := writeTrials(t, db, v1); outs[0] != Unchanged {
		t.Fatalf("second write = %v, want unchanged", outs[0])
	}
	if d2 := dump(t, db); d2 != d1 {
		t.Fatal("writing the same trial twice changed the dump")
	}

	// A newer version with fewer children replaces, without duplicates.
	v2 := fullTrial("NCT99000300")
	v2.ContentHash = "v2"
	v2.LastUpdatePosted.Text = "2023-06-01"
	v2.BriefTitle = "Updated title"
	v2.Outcomes = v2.Outcomes[:1]
	v2.Outcomes[0].Classes = v2.Outcomes[0].Classes[:1]
	v2.Aliases = nil
	if outs := writeTrials(t, db, v2); outs[0] != Replaced {
		t.Fatalf("newer write = %v, want replaced", outs[0])
	}
	got, err := db.Trial(ctx, v2.TrialID)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, v2) {
		diffTrial(t, got, v2)
	}
	info, err := db.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if info.Trials != 1 || info.Outcomes != 1 || info.Measurements != 2 || info.Analyses != 2 || info.References != 3 {
		t.Errorf("after replace: %+v", info)
	}
	d2 := dump(t, db)

	// Older versions never overwrite: by date, then by version holder.
	older := fullTrial("NCT99000300")
	older.ContentHash = "v0"
	older.LastUpdatePosted.Text = "2022-12"
	olderHolder := fullTrial("NCT99000300")
	olderHolder.ContentHash = "v0b"
	olderHolder.LastUpdatePosted.Text = "2023-06" // same month as stored: tie
	olderHolder.VersionHolder = "2020-01-01"
	for _, o := range []ingest.Trial{older, olderHolder} {
		if outs := writeTrials(t, db, o); outs[0] != Older {
			t.Errorf("write %s = %v, want older", o.ContentHash, outs[0])
		}
	}
	if d3 := dump(t, db); d3 != d2 {
		t.Error("an older version changed the stored trial")
	}

	// Unknown date and a different hash: replace.
	undated := fullTrial("NCT99000300")
	undated.ContentHash = "v3"
	undated.LastUpdatePosted = ingest.Date{}
	undated.VersionHolder = ""
	if outs := writeTrials(t, db, undated); outs[0] != Replaced {
		t.Errorf("undated write = %v, want replaced", outs[0])
	}
}

func TestCompareDateText(t *testing.T) {
	for _, c := range []struct {
		a, b string
		want int
	}{
		{"2024-05-17", "2024-05-18", -1},
		{"2024-06", "2024-05-30", 1},
		{"2024-05", "2024-05-17", 0},
		{"", "2024-05-17", 0},
		{"2025", "2024-12-31", 1},
	} {
		if got := compareDateText(c.a, c.b); got != c.want {
			t.Errorf("compareDateText(%q, %q) = %d, want %d", c.a, c.b, got, c.want)
		}
	}
}

func TestBatchRollsBackOnError(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	writeTrials(t, db, fullTrial("NCT99000400"))
	before := dump(t, db)

	w, err := db.NewTrialWriter(ctx, 100)
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range []string{"NCT99000401", "NCT99000402"} {
		if _, err := w.Write(ctx, fullTrial(id)); err != nil {
			t.Fatal(err)
		}
	}
	bad := fullTrial("NCT99000403")
	bad.Outcomes[0].Classes[0].Categories[0].Measurements[1].Value = ingest.Num{Text: "nan", Value: math.NaN(), OK: true}
	_, err = w.Write(ctx, bad)
	var be *BatchError
	if !errors.As(err, &be) || !errors.Is(err, ErrNotFinite) {
		t.Fatalf("write NaN: err = %v, want BatchError wrapping ErrNotFinite", err)
	}
	if be.TrialID != "NCT99000403" || be.Discarded != 2 {
		t.Errorf("BatchError = %+v, want trial NCT99000403 and 2 discarded", be)
	}
	// The error sticks.
	if _, err := w.Write(ctx, fullTrial("NCT99000404")); !errors.As(err, &be) {
		t.Errorf("write after failure: err = %v, want the batch error", err)
	}
	if err := w.Close(ctx); err == nil {
		t.Error("close after failure returned nil")
	}
	if after := dump(t, db); after != before {
		t.Errorf("failed batch left rows behind")
	}

	inf := fullTrial("NCT99000405")
	inf.Outcomes[0].Analyses[0].PValue.Value = math.Inf(1)
	if err := ValidateTrial(inf); !errors.Is(err, ErrNotFinite) {
		t.Errorf("ValidateTrial(+Inf p) = %v, want ErrNotFinite", err)
	}
	notOK := fullTrial("NCT99000406")
	notOK.Outcomes[0].Classes[0].Categories[0].Measurements[0].Lower = ingest.Num{Text: "NaN", Value: math.NaN()}
	if err := ValidateTrial(notOK); err != nil {
		t.Errorf("ValidateTrial with NaN value but OK false = %v, want nil (value is not stored)", err)
	}
}

func TestBatchCommitsEveryBatchSize(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	w, err := db.NewTrialWriter(ctx, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range []string{"NCT99000501", "NCT99000502", "NCT99000503"} {
		if _, err := w.Write(ctx, fullTrial(id)); err != nil {
			t.Fatal(err)
		}
	}
	// Two trials are committed and visible to readers; the third is not yet.
	ids, err := db.TrialIDs(ctx)
	if err != nil || len(ids) != 2 {
		t.Fatalf("before flush: ids = %v, %v; want 2", ids, err)
	}
	if err := w.Flush(ctx); err != nil {
		t.Fatal(err)
	}
	if ids, _ = db.TrialIDs(ctx); len(ids) != 3 {
		t.Fatalf("after flush: ids = %v; want 3", ids)
	}
	if err := w.Close(ctx); err != nil {
		t.Fatal(err)
	}
	if _, err := w.Write(ctx, fullTrial("NCT99000504")); !errors.Is(err, ErrWriterClosed) {
		t.Errorf("write after close: %v, want ErrWriterClosed", err)
	}
}

// TestEntryFingerprints checks that a trial read from a zip entry keeps
// the entry's CRC-32 and size (a CRC above 2^31 included), that other
// trials have none, and that a replacement from elsewhere clears them.
func TestEntryFingerprints(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	zipped := fullTrial("NCT12345678") // from a zip entry, CRC 0xfedcba98
	plain := fullTrial("NCT12345679")
	plain.Source = ingest.Source{Path: "page.json", SHA256: "cd34", Position: "studies[0]"}
	writeTrials(t, db, zipped, plain)
	type fp struct {
		crc  uint32
		size int64
		res  bool
	}
	list := func() map[string]fp {
		got := map[string]fp{}
		if err := db.EntryFingerprints(ctx, func(id string, crc uint32, size int64, res bool) {
			got[id] = fp{crc, size, res}
		}); err != nil {
			t.Fatal(err)
		}
		return got
	}
	got := list()
	if len(got) != 1 || got["NCT12345678"] != (fp{0xfedcba98, 61234, true}) {
		t.Errorf("fingerprints = %+v", got)
	}
	back, err := db.Trial(ctx, "NCT12345678")
	if err != nil || back.Source != zipped.Source {
		t.Errorf("read back source %+v, %v; want %+v", back.Source, err, zipped.Source)
	}
	newer := fullTrial("NCT12345678")
	newer.Source = plain.Source
	newer.ContentHash = "changed"
	newer.LastUpdatePosted.Text = "2099-01-01"
	if out := writeTrials(t, db, newer); out[0] != Replaced {
		t.Fatalf("replacement: %v", out)
	}
	if got := list(); len(got) != 0 {
		t.Errorf("after replacement from a page: %+v", got)
	}
}

// TestSQLiteMemoryStatisticsOff checks that the setting made before the
// first connection took effect: SQLite accepted it (SQLITE_OK) and keeps
// no count of its memory even while a database is open and written.
func TestSQLiteMemoryStatisticsOff(t *testing.T) {
	db := mustOpen(t)
	writeTrials(t, db, fullTrial("NCT12345678"))
	if memstatusConfig != 0 {
		t.Fatalf("sqlite3_config(SQLITE_CONFIG_MEMSTATUS, 0) returned %d, want 0 (SQLITE_OK)", memstatusConfig)
	}
	if n := sqliteMemoryUsed(); n != 0 {
		t.Errorf("sqlite3_memory_used() = %d with the statistics off, want 0", n)
	}
}
