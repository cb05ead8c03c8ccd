package main

import (
	"bytes"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/golden from the current output")

// The golden outputs pin every byte the commands print on the demo
// workspace, so that a change to a column, a key, a wording or a number is a
// visible diff in review. They are not check values (those come from outside
// the project, see demo_test.go): they record the current output. Rewrite
// them with
//
//	go test ./cmd/unshelved -run Golden -update
//
// and read the diff before committing it.
//
// The commands run in-process through the root command (run), so the test
// does not depend on which package holds the workflows. Each command gets
// its own copy of the demo database, so that the stored runs of one command
// do not change the run numbers another prints. The clock is fixed
// (testIO). Nothing else in these outputs depends on the machine or the time:
// no paths, versions or dates are printed, so nothing is normalised, except
// that JSON is compared in indented form (see goldenJSON).
//
// The numbers are printed with full float64 precision, which is the same
// on every platform Go compiles without fused multiply-add (amd64, 386);
// on arm64 or ppc64 the last digit of some values may differ.
func TestGoldenOutputs(t *testing.T) {
	dir := t.TempDir()
	demoDir := filepath.Join(dir, "demo")
	if code, _, stderr := runCLI(t, "", "demo", "--out", demoDir); code != exitOK {
		t.Fatalf("demo exit code %d; stderr:\n%s", code, stderr)
	}
	dbFile := filepath.Join(demoDir, "unshelved.db")
	for _, suffix := range []string{"-wal", "-shm"} {
		if _, err := os.Stat(dbFile + suffix); err == nil {
			t.Fatalf("the demo left %s behind; the copies below would miss its pages", dbFile+suffix)
		}
	}
	studies := filepath.Join(demoDir, "input", "studies.csv")
	cases := []struct {
		name string
		args []string
	}{
		{"audit", []string{"audit"}},
		{"summary", []string{"summary"}},
		// TINN-01 is a mean difference, MOOD-03 a standardized one.
		{"pool-TINN-01", []string{"pool", studies, "--review", "TINN-01"}},
		{"pool-MOOD-03", []string{"pool", studies, "--review", "MOOD-03", "--measure", "SMD"}},
	}
	for _, c := range cases {
		for _, format := range []string{"table", "json", "csv"} {
			name := c.name + "." + format
			t.Run(name, func(t *testing.T) {
				db := filepath.Join(t.TempDir(), "unshelved.db")
				copyFileForTest(t, dbFile, db)
				args := append([]string{"--db", db, "--format", format}, c.args...)
				code, stdout, stderr := runCLI(t, "", args...)
				if code != exitOK {
					t.Fatalf("unshelved %s: exit code %d; stderr:\n%s", strings.Join(c.args[:1], " "), code, stderr)
				}
				got := []byte(stdout)
				if format == "json" {
					got = goldenJSON(t, got)
				}
				checkGolden(t, filepath.Join("testdata", "golden", name), got)
			})
		}
	}
}

// goldenJSON returns the JSON output re-indented. Some commands write
// compact JSON (audit's is one line of 70 KB), whose diff would be one
// changed line; the indented form keeps every key, its order and every
// number's text, so only whitespace between tokens is not compared.
func goldenJSON(t *testing.T, out []byte) []byte {
	t.Helper()
	var compact, indented bytes.Buffer
	if err := json.Compact(&compact, out); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	if err := json.Indent(&indented, compact.Bytes(), "", "  "); err != nil {
		t.Fatal(err)
	}
	indented.WriteByte('\n')
	return indented.Bytes()
}

// checkGolden compares got with the golden file byte for byte, or rewrites
// the file under -update.
func checkGolden(t *testing.T, path string, got []byte) {
	t.Helper()
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/unshelved -run Golden -update to create it)", err)
	}
	if bytes.Equal(got, want) {
		return
	}
	gl, wl := strings.Split(string(got), "\n"), strings.Split(string(want), "\n")
	for i := 0; i < len(gl) || i < len(wl); i++ {
		var g, w string
		if i < len(gl) {
			g = gl[i]
		}
		if i < len(wl) {
			w = wl[i]
		}
		if g != w || i >= len(gl) || i >= len(wl) {
			t.Fatalf("%s differs from the output first at line %d:\n got: %s\nwant: %s\n"+
				"(if the change is intended: go test ./cmd/unshelved -run Golden -update, and review the diff)", path, i+1, g, w)
		}
	}
}

func copyFileForTest(t *testing.T, from, to string) {
	t.Helper()
	data, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, data, 0o644); err != nil {
		t.Fatal(err)
	}
}
