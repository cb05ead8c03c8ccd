package main

import (
	"bytes"
	"compress/gzip"
	"context"
	"encoding/json"
	"fmt"
	"hash/crc32"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"unshelved/compare/workspace"
	"unshelved/ingest/ingesttest"
	"unshelved/store"
)

// TestIngestWhileReading runs an ingest into the demo workspace while
// 'db info', 'audit' and 'trials' run against the same file from other handles:
// no reader fails (no "database is locked"), the audit never changes
// (the ingested trials are not linked), and the trial count only grows.
func TestIngestWhileReading(t *testing.T) {
	dir := t.TempDir()
	if code, _, stderr := runCLI(t, "", "demo", "--out", filepath.Join(dir, "ws")); code != exitOK {
		t.Fatalf("demo: %d %s", code, stderr)
	}
	db := filepath.Join(dir, "ws", "unshelved.db")
	code, wantAudit, stderr := runCLI(t, "", "--db", db, "--quiet", "--format", "json", "audit")
	if code != exitOK {
		t.Fatalf("audit: %d %s", code, stderr)
	}
	name, _ := writeCorpusZip(t, dir, 400, 0.3, 9)

	done := make(chan struct{})
	var wg sync.WaitGroup
	var mu sync.Mutex
	var problems []string
	report := func(s string) {
		mu.Lock()
		problems = append(problems, s)
		mu.Unlock()
	}
	wg.Add(2)
	go func() {
		defer wg.Done()
		last := 0.0
		for {
			select {
			case <-done:
				return
			default:
			}
			code, out, stderr := runCLI(t, "", "--db", db, "--format", "json", "db", "info")
			if code != exitOK {
				report("db info: " + stderr)
				continue
			}
			var info struct{ Trials, TrialsWithResults float64 }
			var raw map[string]any
			if err := json.Unmarshal([]byte(out), &raw); err != nil {
				report("db info JSON: " + err.Error())
				continue
			}
			info.Trials, info.TrialsWithResults = raw["trials"].(float64), raw["trials_with_results"].(float64)
			if info.Trials < last || info.TrialsWithResults > info.Trials {
				report("db info went back or is inconsistent: " + out)
			}
			last = info.Trials
		}
	}()
	go func() {
		defer wg.Done()
		for {
			select {
			case <-done:
				return
			default:
			}
			code, out, stderr := runCLI(t, "", "--db", db, "--quiet", "--format", "json", "audit")
			if code != exitOK {
				report("audit: " + stderr)
			} else if out != wantAudit {
				report("audit changed during the ingest")
			}
		}
	}()
	wg.Add(1)
	go func() {
		defer wg.Done()
		last := -1
		for {
			select {
			case <-done:
				return
			default:
			}
			code, out, stderr := runCLI(t, "", "--db", db, "--quiet", "--format", "json", "trials", "--as-of", "2026-12-01")
			if code != exitOK {
				report("trials: " + stderr)
				continue
			}
			var rep struct {
				Trials []json.RawMessage `json:"trials"`
			}
			if err := json.Unmarshal([]byte(out), &rep); err != nil {
				report("trials JSON: " + err.Error())
				continue
			}
			if len(rep.Trials) < last {
				report("trials went back during the ingest")
			}
			last = len(rep.Trials)
		}
	}()
	code, _, stderr = runCLI(t, "", "--db", db, "--quiet", "ingest", "registry", "--batch", "25", name)
	close(done)
	wg.Wait()
	if code != exitOK {
		t.Fatalf("ingest: %d %s", code, stderr)
	}
	for _, p := range problems {
		t.Error(p)
	}
	if strings.Contains(strings.Join(problems, " "), "locked") {
		t.Error("a reader saw database is locked")
	}
}

// TestContainersGiveSameDatabase loads the same records as a search page,
// a bulk zip, JSON lines and gzip-compressed JSON lines into four
// workspaces; their dumps must agree except for where each trial came from.
func TestContainersGiveSameDatabase(t *testing.T) {
	var records [][]byte
	for _, id := range []string{"NCT99000001"} {
		b, err := os.ReadFile(filepath.Join("..", "..", "ingest", "testdata", id+".json"))
		if err != nil {
			t.Fatal(err)
		}
		records = append(records, b)
	}
	samples := filepath.Join("..", "..", "..", "shared", "registry-samples")
	if ents, err := filepath.Glob(filepath.Join(samples, "NCT*.json")); err == nil && len(ents) > 0 {
		for _, e := range ents {
			b, err := os.ReadFile(e)
			if err != nil {
				t.Fatal(err)
			}
			records = append(records, b)
		}
	} else if os.Getenv("CI") == "true" {
		t.Fatalf("registry samples not found at %s: CI must lay shared/ beside the repository", samples)
	} else {
		t.Logf("registry samples not found at %s; using the committed fixture and invented records only", samples)
	}
	dir := t.TempDir()
	// Invented records with results too, so every table takes part.
	for i := range 12 {
		records = append(records, ingesttest.SyntheticStudy(rand.New(rand.NewPCG(4, uint64(i))), fmt.Sprintf("NCT9%07d", i), 3*(i%2), 2))
	}
	var page bytes.Buffer
	page.WriteString(`{"studies":[`)
	var lines bytes.Buffer
	entries := map[string][]byte{}
	for i, r := range records {
		if i > 0 {
			page.WriteString(",")
		}
		page.Write(r)
		var c bytes.Buffer
		if err := json.Compact(&c, r); err != nil {
			t.Fatal(err)
		}
		lines.Write(c.Bytes())
		lines.WriteByte('\n')
		var id struct {
			ProtocolSection struct{ IdentificationModule struct{ NctId string } }
		}
		if err := json.Unmarshal(r, &id); err != nil {
			t.Fatal(err)
		}
		entries[id.ProtocolSection.IdentificationModule.NctId+".json"] = r
	}
	page.WriteString(`],"nextPageToken":"x"}`)
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(lines.Bytes())
	zw.Close()
	inputs := map[string][]byte{
		"page.json":        page.Bytes(),
		"studies.zip":      zipBytes(t, entries),
		"studies.jsonl":    lines.Bytes(),
		"studies.jsonl.gz": gz.Bytes(),
	}
	var first, firstName string
	for _, name := range []string{"page.json", "studies.zip", "studies.jsonl", "studies.jsonl.gz"} {
		path := writeFile(t, dir, name, string(inputs[name]))
		db := filepath.Join(dir, name+".db")
		if code, _, stderr := runCLI(t, "", "--db", db, "--quiet", "ingest", "registry", path); code != exitOK {
			t.Fatalf("%s: exit %d: %s", name, code, stderr)
		}
		got := withoutProvenance(dumpDB(t, db))
		if first == "" {
			first, firstName = got, name
			if !strings.Contains(got, "NCT99000001") {
				t.Fatalf("%s: the fixture trial is missing", name)
			}
			continue
		}
		if got != first {
			t.Errorf("%s and %s give different databases:\n%s", firstName, name, firstDiff(first, got))
		}
	}
}

// withoutProvenance drops the source_files table and the trials table's
// source columns from a dump: they name the container, by design.
func withoutProvenance(dump string) string {
	var out []string
	table := ""
	var drop map[int]bool
	for _, line := range strings.Split(dump, "\n") {
		if strings.HasPrefix(line, "# ") {
			name, cols, _ := strings.Cut(strings.TrimPrefix(line, "# "), " (")
			table, drop = name, map[int]bool{}
			for i, c := range strings.Split(strings.TrimSuffix(cols, ")"), ", ") {
				if strings.HasPrefix(c, "source_") {
					drop[i] = true
				}
			}
		}
		if table == "source_files" {
			continue
		}
		if !strings.HasPrefix(line, "# ") && len(drop) > 0 {
			var keep []string
			for i, f := range strings.Split(line, "\t") {
				if !drop[i] {
					keep = append(keep, f)
				}
			}
			line = strings.Join(keep, "\t")
		}
		out = append(out, line)
	}
	return strings.Join(out, "\n")
}

// TestRedownloadRecognisesEntries loads a bulk zip, then a "new download":
// the same entries with one record changed and one added. The unchanged
// entries are recognised by their checksum, the changed one replaces the
// stored trial, and the database equals a fresh load of the new download.
func TestRedownloadRecognisesEntries(t *testing.T) {
	dir := t.TempDir()
	entries := map[string][]byte{}
	for i := range 8 {
		id := fmt.Sprintf("NCT98%06d", i)
		entries["NCT98/"+id+".json"] = ingesttest.SyntheticStudy(rand.New(rand.NewPCG(7, uint64(i))), id, 2*(i%2), 2)
	}
	first := writeFile(t, dir, "first.zip", string(zipBytes(t, entries)))
	changed := "NCT98/NCT98000003.json"
	rec := string(entries[changed])
	if !strings.Contains(rec, `"briefTitle": "`) {
		t.Fatal("synthetic record has no briefTitle to change")
	}
	entries[changed] = []byte(strings.Replace(rec, `"briefTitle": "`, `"briefTitle": "Revised: `, 1))
	entries["NCT98/NCT98000100.json"] = ingesttest.SyntheticStudy(rand.New(rand.NewPCG(7, 100)), "NCT98000100", 2, 2)
	second := writeFile(t, dir, "second.zip", string(zipBytes(t, entries)))

	db := filepath.Join(dir, "w.db")
	ingestJSON := func(args ...string) workspace.IngestSummary {
		t.Helper()
		code, out, stderr := runCLI(t, "", append([]string{"--db", db, "--quiet", "--format", "json", "ingest", "registry"}, args...)...)
		if code != exitOK {
			t.Fatalf("ingest %v: exit %d: %s", args, code, stderr)
		}
		var sum workspace.IngestSummary
		if err := json.Unmarshal([]byte(out), &sum); err != nil {
			t.Fatal(err)
		}
		return sum
	}
	if sum := ingestJSON(first); sum.Inserted != 8 {
		t.Fatalf("first download: %+v", sum)
	}
	if sum := ingestJSON(second); sum.Records != 9 || sum.Unchanged != 7 || sum.Replaced != 1 || sum.Inserted != 1 {
		t.Errorf("new download: %+v", sum)
	}
	if sum := ingestJSON("--force", second); sum.Records != 9 || sum.Unchanged != 9 || sum.Inserted != 0 || sum.Replaced != 0 {
		t.Errorf("--force over the same download: %+v", sum)
	}

	fresh := filepath.Join(dir, "fresh.db")
	if code, _, stderr := runCLI(t, "", "--db", fresh, "--quiet", "ingest", "registry", second); code != exitOK {
		t.Fatalf("fresh: exit %d: %s", code, stderr)
	}
	if got, want := withoutProvenance(dumpDB(t, db)), withoutProvenance(dumpDB(t, fresh)); got != want {
		t.Errorf("re-download differs from a fresh load:\n%s", firstDiff(want, got))
	}
	// The changed record's title, and the entry fingerprints, are the new download's.
	ws, err := store.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer ws.Close()
	tr, err := ws.Trial(context.Background(), "NCT98000003")
	if err != nil || !strings.HasPrefix(tr.BriefTitle, "Revised: ") ||
		tr.Source.EntrySize != int64(len(entries[changed])) || tr.Source.EntryCRC32 != crc32.ChecksumIEEE(entries[changed]) {
		t.Errorf("changed trial: %v, title %q, source %+v", err, tr.BriefTitle, tr.Source)
	}
}
