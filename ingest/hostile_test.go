package ingest

import (
	"archive/zip"
	"bytes"
	"context"
	"errors"
	"hash/crc32"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestHostileCorpus scans each committed hostile file: every one must be
// rejected with a *ParseError naming the file and a reason, never emitted
// as a trial and never a panic.
func TestHostileCorpus(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("testdata", "hostile", "*"))
	if err != nil || len(files) < 8 {
		t.Fatalf("hostile corpus: %v, %d files", err, len(files))
	}
	want := map[string]string{ // file -> reason label
		"truncated.json":           "invalid json",
		"wrong-types.json":         "wrong type",
		"deep-nesting.json":        "too deep",
		"huge-string.json.gz":      "too large",
		"invalid-utf8.json":        "invalid utf-8",
		"duplicated-ids.json":      "duplicate id",
		"inflates-beyond-size.zip": "too large",
		"not-json.jsonl":           "not a study",
	}
	for _, f := range files {
		name := filepath.Base(f)
		t.Run(name, func(t *testing.T) {
			got, sum, err := scanAll(t, []string{f}, ScanOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if sum.Rejected == 0 {
				t.Fatalf("nothing rejected; %d trials", len(got))
			}
			if name != "duplicated-ids.json" && len(got) != 0 {
				t.Errorf("%d trials emitted from a hostile file", len(got))
			}
			for _, pe := range sum.Errors {
				var p *ParseError
				if !errors.As(pe, &p) || p.File != f {
					t.Errorf("error %v does not name %s", pe, f)
				}
			}
			label, ok := want[name]
			if !ok {
				t.Fatalf("no expected reason for %s", name)
			}
			found := false
			for r := range sum.RejectedByReason {
				found = found || strings.Contains(strings.ToLower(r), label)
			}
			if !found {
				t.Errorf("reasons %v, want one with %q", sum.RejectedByReason, label)
			}
		})
	}
}

// TestInFlightBudget scans with a budget smaller than one record: records
// still pass one at a time, in order.
func TestInFlightBudget(t *testing.T) {
	dir := t.TempDir()
	var lines []byte
	for i := range 50 {
		lines = append(lines, []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT990001`+string(rune('0'+i/10))+string(rune('0'+i%10))+`"}}}`+"\n")...)
	}
	name := filepath.Join(dir, "x.jsonl")
	if err := os.WriteFile(name, lines, 0o644); err != nil {
		t.Fatal(err)
	}
	var ids []string
	sum, err := ScanRegistry(context.Background(), []string{name}, ScanOptions{MaxInFlightBytes: 10}, func(tr Trial) error {
		ids = append(ids, tr.TrialID)
		return nil
	})
	if err != nil || sum.Records != 50 {
		t.Fatalf("%v, %+v", err, sum)
	}
	for i := 1; i < len(ids); i++ {
		if ids[i] <= ids[i-1] {
			t.Fatalf("out of order at %d: %s after %s", i, ids[i], ids[i-1])
		}
	}
}

// TestFileDoneAndKnownContent checks the per-file report and that stored
// content is recognised without being emitted.
func TestFileDoneAndKnownContent(t *testing.T) {
	dir := t.TempDir()
	good := `{"protocolSection":{"identificationModule":{"nctId":"NCT99000201"}},"hasResults":true}`
	a := writeFile(t, filepath.Join(dir, "a.jsonl"), []byte(good+"\n{broken\n"))
	b := writeFile(t, filepath.Join(dir, "b.json"), []byte(good))
	var files []FileResult
	var hash string
	_, err := ScanRegistry(context.Background(), []string{a, b}, ScanOptions{FileDone: func(f FileResult) error {
		files = append(files, f)
		return nil
	}}, func(tr Trial) error { hash = tr.ContentHash; return nil })
	if err != nil || len(files) != 2 {
		t.Fatalf("%v, %+v", err, files)
	}
	if f := files[0]; f.Path != a || f.Records != 1 || f.Rejected != 1 || f.Format != "jsonl" || len(f.SHA256) != 64 || f.Bytes == 0 {
		t.Errorf("a.jsonl: %+v", f)
	}
	if f := files[1]; f.Path != b || f.Records != 1 || f.Rejected != 0 || f.Format != "json" || f.WithResults != 1 {
		t.Errorf("b.json: %+v", f)
	}
	emitted := 0
	sum, err := ScanRegistry(context.Background(), []string{b}, ScanOptions{KnownContent: func(h string) (bool, bool) {
		return h == hash, true
	}}, func(Trial) error { emitted++; return nil })
	if err != nil || emitted != 0 || sum.Unchanged != 1 || sum.Records != 1 || sum.WithResults != 1 {
		t.Errorf("known content: %v, emitted %d, %+v", err, emitted, sum)
	}
}

// TestKnownEntrySkipsInflating checks that a bulk-zip entry whose CRC-32
// and size match a stored trial's entry is counted as unchanged without
// being read: its data here are garbage that would fail the checksum, and
// do fail it once KnownEntry no longer vouches for them.
func TestKnownEntrySkipsInflating(t *testing.T) {
	good := []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99000301"}},"hasResults":true}`)
	other := []byte(`{"protocolSection":{"identificationModule":{"nctId":"NCT99000302"}},"hasResults":false}`)
	var b bytes.Buffer
	zw := zip.NewWriter(&b)
	fw, err := zw.CreateRaw(&zip.FileHeader{Name: "NCT9900/NCT99000301.json", Method: zip.Store,
		CRC32: crc32.ChecksumIEEE(good), CompressedSize64: uint64(len(good)), UncompressedSize64: uint64(len(good))})
	if err != nil {
		t.Fatal(err)
	}
	fw.Write(bytes.Repeat([]byte("x"), len(good)))
	fw, err = zw.Create("NCT9900/NCT99000302.json")
	if err != nil {
		t.Fatal(err)
	}
	fw.Write(other)
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	path := writeFile(t, filepath.Join(t.TempDir(), "bulk.zip"), b.Bytes())

	var asked []string
	known := func(id string, crc uint32, size int64) (bool, bool) {
		asked = append(asked, id)
		return id == "NCT99000301" && crc == crc32.ChecksumIEEE(good) && size == int64(len(good)), true
	}
	got, sum, err := scanAll(t, []string{path}, ScanOptions{KnownEntry: known})
	if err != nil || sum.Rejected != 0 || sum.Unchanged != 1 || sum.Records != 2 || sum.WithResults != 1 {
		t.Fatalf("known entry: %v, %+v", err, sum)
	}
	if len(asked) != 2 || asked[0] != "NCT99000301" || asked[1] != "NCT99000302" {
		t.Errorf("KnownEntry asked for %v", asked)
	}
	if len(got) != 1 || got[0].TrialID != "NCT99000302" {
		t.Fatalf("emitted %+v", got)
	}
	if s := got[0].Source; s.EntryCRC32 != crc32.ChecksumIEEE(other) || s.EntrySize != int64(len(other)) ||
		s.Position != "entry NCT9900/NCT99000302.json" {
		t.Errorf("source of the emitted entry: %+v", s)
	}

	// Without the match the garbage entry is inflated and fails its checksum.
	_, sum, err = scanAll(t, []string{path}, ScanOptions{KnownEntry: func(string, uint32, int64) (bool, bool) { return false, false }})
	if err != nil || sum.Rejected != 1 || sum.Unchanged != 0 || len(sum.Errors) != 1 ||
		!strings.Contains(sum.Errors[0].Error(), "NCT99000301.json") {
		t.Errorf("unknown entry: %v, %+v", err, sum)
	}
}
