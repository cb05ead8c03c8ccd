package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"unshelved/ingest"
)

func TestDBInfoJSON(t *testing.T) {
	dir := t.TempDir()
	name, _ := writeCorpusZip(t, dir, 30, 0.5, 5)
	db := filepath.Join(dir, "w.db")
	if code, _, stderr := runCLI(t, "", "--db", db, "--quiet", "ingest", "registry", name); code != exitOK {
		t.Fatalf("ingest: %d %s", code, stderr)
	}
	code, out, stderr := runCLI(t, "", "--db", db, "--format", "json", "db", "info")
	if code != exitOK {
		t.Fatalf("db info: %d %s", code, stderr)
	}
	var info map[string]any
	if err := json.Unmarshal([]byte(out), &info); err != nil {
		t.Fatalf("%v: %s", err, out)
	}
	for _, k := range []string{"trials", "trials_with_results", "outcomes", "measurements", "sources", "schema_version"} {
		if _, ok := info[k]; !ok {
			t.Errorf("db info JSON lacks %q", k)
		}
	}
	if info["trials"].(float64) != 30 {
		t.Errorf("trials = %v, want 30", info["trials"])
	}
	res := info["trials_with_results"].(float64)
	if res == 0 || res == 30 || info["measurements"].(float64) == 0 {
		t.Errorf("with results %v, measurements %v", res, info["measurements"])
	}
	srcs := info["sources"].([]any)
	if len(srcs) != 1 || srcs[0].(map[string]any)["records"].(float64) != 30 || srcs[0].(map[string]any)["format"] != "zip" {
		t.Errorf("sources = %v", srcs)
	}
	if code, out, _ := runCLI(t, "", "--db", db, "db", "check"); code != exitOK || !strings.Contains(out, "ok") {
		t.Errorf("db check on a sound file: %d %q", code, out)
	}
}

func TestDBCheckCorrupted(t *testing.T) {
	dir := t.TempDir()
	name, _ := writeCorpusZip(t, dir, 60, 0.5, 6)
	db := filepath.Join(dir, "w.db")
	if code, _, stderr := runCLI(t, "", "--db", db, "--quiet", "ingest", "registry", name); code != exitOK {
		t.Fatalf("ingest: %d %s", code, stderr)
	}
	// Closing the last connection checkpoints the WAL into the file.
	if _, err := os.Stat(db + "-wal"); err == nil {
		t.Logf("WAL still present after close")
	}
	data, err := os.ReadFile(db)
	if err != nil {
		t.Fatal(err)
	}
	if len(data) < 64<<10 {
		t.Fatalf("database of %d bytes is too small to corrupt its middle", len(data))
	}
	// Overwrite pages in the middle of the file (not the header page).
	for i := len(data) / 2; i < len(data)/2+32<<10; i++ {
		data[i] = byte(i * 7)
	}
	if err := os.WriteFile(db, data, 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, stderr := runCLI(t, "", "--db", db, "db", "check")
	if code != exitError {
		t.Fatalf("db check on a corrupted file: exit %d, want %d\n%s%s", code, exitError, out, stderr)
	}
	if msg := out + stderr; !strings.Contains(msg, "problem") && !strings.Contains(msg, "malformed") && !strings.Contains(msg, "corrupt") {
		t.Errorf("no clear message:\n%s%s", out, stderr)
	}

	junk := writeFile(t, dir, "junk.db", strings.Repeat("not a database ", 1000))
	for _, args := range [][]string{{"db", "check"}, {"db", "info"}} {
		code, _, stderr := runCLI(t, "", append([]string{"--db", junk}, args...)...)
		if code != exitError || !strings.Contains(stderr, "not a database") {
			t.Errorf("%v on a file that is no database: exit %d, stderr %q", args, code, stderr)
		}
	}
}

// TestIngestQuietOffTerminal: with stderr not a terminal and no rejected
// records, an ingest prints nothing on stderr (no progress bar).
func TestIngestQuietOffTerminal(t *testing.T) {
	dir := t.TempDir()
	name, _ := writeCorpusZip(t, dir, 20, 0.2, 7)
	code, out, stderr := runCLI(t, "", "--db", filepath.Join(dir, "w.db"), "ingest", "registry", name)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if stderr != "" {
		t.Errorf("stderr off a terminal: %q", stderr)
	}
	if !strings.Contains(out, "records") {
		t.Errorf("no summary on stdout: %q", out)
	}
}

// TestProgressOnTerminal: on a terminal the bar shows records/s, MB/s
// and the time left.
func TestProgressOnTerminal(t *testing.T) {
	io, _, errOut := testIO("")
	io.ErrIsTerminal = true
	p := newProgress(&globals{IO: io}, "ingest")
	time.Sleep(50 * time.Millisecond)
	p.update(ingest.ProgressEvent{Records: 100, Bytes: 10e6, TotalBytes: 100e6})
	s := errOut.String()
	for _, want := range []string{"100 records", "/s, ", "MB/s", "%", "s:"} {
		if !strings.Contains(s, want) {
			t.Errorf("progress output lacks %q: %q", want, s)
		}
	}
	p.finish()
	io.ErrIsTerminal = false
	errOut.Reset()
	q := newProgress(&globals{IO: io}, "ingest")
	q.update(ingest.ProgressEvent{Records: 1, Bytes: 1, TotalBytes: 2})
	q.finish()
	if errOut.Len() != 0 {
		t.Errorf("off a terminal the bar printed %q", errOut.String())
	}
}
