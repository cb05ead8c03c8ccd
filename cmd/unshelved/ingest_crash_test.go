package main

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"
)

// buildBinary compiles the unshelved command into a temporary folder.
func buildBinary(t *testing.T) string {
	t.Helper()
	if _, err := exec.LookPath("go"); err != nil {
		t.Skip("no go tool on PATH to build the binary")
	}
	bin := filepath.Join(t.TempDir(), "unshelved")
	cmd := exec.Command("go", "build", "-o", bin, ".")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// perTrialDump splits a store dump into one canonical text per trial:
// every row of every table whose first column is trial_id, prefixed by
// the table name and sorted.
func perTrialDump(t *testing.T, dump string) map[string]string {
	t.Helper()
	rows := map[string][]string{}
	table, keyed := "", false
	sc := bufio.NewScanner(strings.NewReader(dump))
	sc.Buffer(make([]byte, 1<<20), 64<<20)
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "# ") {
			name, cols, _ := strings.Cut(strings.TrimPrefix(line, "# "), " (")
			table, keyed = name, strings.HasPrefix(cols, "trial_id,") || cols == "trial_id)"
			continue
		}
		if !keyed {
			continue
		}
		id, _, _ := strings.Cut(line, "\t")
		rows[id] = append(rows[id], table+"\t"+line)
	}
	out := map[string]string{}
	for id, rs := range rows {
		sort.Strings(rs)
		out[id] = strings.Join(rs, "\n")
	}
	return out
}

// TestIngestSurvivesKill starts the real binary on a corpus, kills it with
// SIGKILL at seeded random moments and checks after each kill that the
// database opens, passes 'db check', and holds only whole trials equal to
// a clean load's; then a last run must complete the load to the clean
// load's exact dump.
func TestIngestSurvivesKill(t *testing.T) {
	bin := buildBinary(t)
	dir := t.TempDir()
	corpus := filepath.Join(dir, "corpus")
	if err := os.MkdirAll(corpus, 0o755); err != nil {
		t.Fatal(err)
	}
	writeCorpusZip(t, corpus, 500, 0.2, 11)
	// A second container in the same load: JSON lines of other records.
	var lines strings.Builder
	for i := range 100 {
		id := fmt.Sprintf("NCT98%06d", i)
		lines.WriteString(`{"protocolSection":{"identificationModule":{"nctId":"` + id + `","briefTitle":"line record"},"statusModule":{"overallStatus":"COMPLETED"}},"hasResults":false}` + "\n")
	}
	writeFile(t, corpus, "more.jsonl", lines.String())
	args := func(db string) []string {
		return []string{"--db", db, "--quiet", "ingest", "registry", "--batch", "20", corpus}
	}

	ref := filepath.Join(dir, "ref.db")
	start := time.Now()
	if code, _, stderr := runCLI(t, "", args(ref)...); code != exitOK {
		t.Fatalf("clean load: exit %d: %s", code, stderr)
	}
	clean := time.Since(start)
	want := dumpDB(t, ref)
	wantTrials := perTrialDump(t, want)
	if len(wantTrials) != 600 {
		t.Fatalf("clean load holds %d trials, want 600", len(wantTrials))
	}

	db := filepath.Join(dir, "crash.db")
	r := rand.New(rand.NewPCG(2026, 12))
	kills, completions := 0, 0
	for round := 0; kills < 10 && round < 60; round++ {
		cmd := exec.Command(bin, args(db)...)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		// Somewhere in a run's length; a run that resumes a partial load
		// is shorter, so some rounds finish before their kill.
		wait := time.Duration(r.Float64() * float64(clean))
		done := make(chan error, 1)
		go func() { done <- cmd.Wait() }()
		killed := false
		select {
		case err := <-done:
			if err != nil {
				t.Fatalf("round %d: run failed: %v", round, err)
			}
		case <-time.After(wait):
			if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
				t.Fatal(err)
			}
			if err := <-done; err != nil {
				killed = true
				kills++
			}
		}
		if _, err := os.Stat(db); os.IsNotExist(err) {
			// Killed before it created the workspace: nothing to check
			// (db check no longer creates an empty one).
			t.Logf("round %d: killed after %v, before the workspace existed", round, wait)
			continue
		}
		if code, out, stderr := runCLI(t, "", "--db", db, "db", "check"); code != exitOK {
			t.Fatalf("round %d: db check exit %d: %s %s", round, code, out, stderr)
		}
		full := dumpDB(t, db)
		got := perTrialDump(t, full)
		for id, rows := range got {
			if rows != wantTrials[id] {
				t.Fatalf("round %d: trial %s differs from the clean load:\n%s", round, id, firstDiff(wantTrials[id], rows))
			}
		}
		t.Logf("round %d: killed %v after %v, %d of %d trials stored", round, killed, wait, len(got), len(wantTrials))
		if !killed {
			// The run completed the load, resuming what earlier runs left.
			if full != want {
				t.Fatalf("round %d: a completed run's dump differs from the clean load:\n%s", round, firstDiff(want, full))
			}
			completions++
			for _, suffix := range []string{"", "-wal", "-shm"} {
				os.Remove(db + suffix)
			}
		}
	}
	if kills < 10 {
		t.Errorf("only %d runs were killed, want at least 10", kills)
	}
	t.Logf("%d kills, %d completed loads", kills, completions)
	if code, _, stderr := runCLI(t, "", args(db)...); code != exitOK {
		t.Fatalf("resuming run: exit %d: %s", code, stderr)
	}
	if got := dumpDB(t, db); got != want {
		t.Errorf("after the resuming run the dump differs from the clean load:\n%s", firstDiff(want, got))
	}
}
