package store

import (
	"context"
	"path/filepath"
	"reflect"
	"sort"
	"testing"
)

// walkFields records, for every field path of v's type, whether some
// value in v has it non-zero. Slice elements share one path.
func walkFields(v reflect.Value, path string, all, set map[string]bool) {
	switch v.Kind() {
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			f := v.Type().Field(i)
			p := path + "." + f.Name
			all[p] = true
			if !v.Field(i).IsZero() {
				set[p] = true
			}
			walkFields(v.Field(i), p, all, set)
		}
	case reflect.Slice:
		for i := 0; i < v.Len(); i++ {
			walkFields(v.Index(i), path+"[]", all, set)
		}
	case reflect.Pointer:
		if !v.IsNil() {
			walkFields(v.Elem(), path, all, set)
		}
	}
}

// TestFullTrialCoversEveryField fails when the record types gain a field
// that the round-trip trial leaves empty, so new fields get stored.
func TestFullTrialCoversEveryField(t *testing.T) {
	all, set := map[string]bool{}, map[string]bool{}
	walkFields(reflect.ValueOf(fullTrial("NCT99001401")), "Trial", all, set)
	var missing []string
	for p := range all {
		if !set[p] {
			missing = append(missing, p)
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("fullTrial leaves these fields zero everywhere; fill them and store them: %v", missing)
	}
}

func TestMigrateFromVersion1(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "old.db")
	raw := oldWorkspace(t, ctx, path, 1)
	if _, err := raw.ExecContext(ctx, "PRAGMA user_version = 1"); err != nil {
		t.Fatal(err)
	}
	if _, err := raw.ExecContext(ctx, `INSERT INTO trials VALUES ('NCT99001501', 'ctgov', '', 'old', '', '', '', '', '', '', '',
		'', '', '', '', '', NULL, '', '', '', '', '', '', '', '', '', '', '', '', '', '', '', '', NULL, '', 'h', '', '', '', 'now')`); err != nil {
		t.Fatal(err)
	}
	if err := raw.Close(); err != nil {
		t.Fatal(err)
	}
	db := mustOpenPath(t, path)
	if v, err := db.SchemaVersion(ctx); err != nil || v != LatestSchemaVersion() {
		t.Fatalf("version after migrate = %d, %v", v, err)
	}
	tr, err := db.Trial(ctx, "NCT99001501")
	if err != nil {
		t.Fatal(err)
	}
	if tr.BriefTitle != "old" || tr.StatusVerified != "" {
		t.Errorf("migrated trial = %+v", tr)
	}
}
