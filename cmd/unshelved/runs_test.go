package main

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"

	"unshelved/compare/workspace"
	"unshelved/store"
)

// storedRuns lists the runs of a workspace.
func storedRuns(t *testing.T, db string) []runJSON {
	t.Helper()
	code, out, stderr := runCLI(t, "", "--db", db, "runs", "--format", "json")
	if code != exitOK {
		t.Fatalf("runs: exit %d: %s", code, stderr)
	}
	var runs []runJSON
	if err := json.Unmarshal([]byte(out), &runs); err != nil {
		t.Fatal(err)
	}
	return runs
}

// TestRunsShowReprintsExactly runs audits and a summary in every format,
// then re-prints each stored run in every format and requires the same
// bytes as the run printed.
func TestRunsShowReprintsExactly(t *testing.T) {
	db := demoDB(t)
	type printed struct {
		id     int64
		format string
		indent bool
		out    string
	}
	var all []printed
	for _, kind := range []string{"audit", "summary"} {
		for _, format := range []string{"table", "json", "jsonl", "csv"} {
			args := []string{"--db", db, "--format", format, kind, "--bootstrap", "100", "--seed", "5"}
			if kind == "audit" && format == "table" {
				args = append(args, "--tau2", "dl", "--level", "0.9")
			}
			code, out, stderr := runCLI(t, "", args...)
			if code != exitOK {
				t.Fatalf("%s %s: exit %d: %s", kind, format, code, stderr)
			}
			runs := storedRuns(t, db)
			last := runs[len(runs)-1]
			if last.Kind != kind || last.Status != store.RunComplete {
				t.Fatalf("last run %+v after %s", last, kind)
			}
			all = append(all, printed{last.ID, format, false, out})
		}
	}
	// --indent on the audit (the default off a terminal is compact).
	code, indented, _ := runCLI(t, "", "--db", db, "--format", "json", "audit", "--indent")
	if code != exitOK || !strings.HasPrefix(indented, "[\n  {\n    \"review_id\"") {
		t.Fatalf("audit --indent: exit %d, %.40q", code, indented)
	}
	runs := storedRuns(t, db)
	all = append(all, printed{runs[len(runs)-1].ID, "json", true, indented})

	for _, p := range all {
		args := []string{"--db", db, "--format", p.format, "runs", "show", fmt.Sprint(p.id)}
		if p.indent {
			args = append(args, "--indent")
		}
		code, out, stderr := runCLI(t, "", args...)
		if code != exitOK {
			t.Fatalf("runs show %d: exit %d: %s", p.id, code, stderr)
		}
		if out != p.out {
			t.Errorf("runs show %d --format %s differs from the original output at %s", p.id, p.format, firstDiff(p.out, out))
		}
	}
	// audit --run N is runs show N for audit runs, and refuses a summary run.
	a := all[1]
	if code, out, _ := runCLI(t, "", "--db", db, "--format", a.format, "audit", "--run", fmt.Sprint(a.id)); code != exitOK || out != a.out {
		t.Errorf("audit --run %d: exit %d, same output %v", a.id, code, out == a.out)
	}
	s := all[5]
	if code, _, stderr := runCLI(t, "", "--db", db, "audit", "--run", fmt.Sprint(s.id)); code == exitOK || !strings.Contains(stderr, "summary run") {
		t.Errorf("audit --run of a summary run: exit %d, %q", code, stderr)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "runs", "show", "999"); code == exitOK || !strings.Contains(stderr, "no run 999") {
		t.Errorf("runs show 999: exit %d, %q", code, stderr)
	}
}

// TestAuditJSONShapes checks the compact array off a terminal, the
// indented one on a terminal, and JSON lines that parse one by one.
func TestAuditJSONShapes(t *testing.T) {
	db := demoDB(t)
	_, compact, _ := runCLI(t, "", "--db", db, "--format", "json", "audit", "--no-store")
	var arr []json.RawMessage
	if err := json.Unmarshal([]byte(compact), &arr); err != nil || len(arr) != 3 || strings.Count(compact, "\n") != 1 {
		t.Fatalf("compact json: %v, %d reviews, %d lines", err, len(arr), strings.Count(compact, "\n"))
	}
	// On a terminal the array is indented exactly as encoding/json indents.
	io, out, _ := testIO("")
	io.OutIsTerminal = true
	if code := run(t.Context(), []string{"--db", db, "--format", "json", "audit", "--no-store"}, io); code != exitOK {
		t.Fatal(code)
	}
	var want bytes.Buffer
	if err := json.Indent(&want, []byte(strings.TrimSpace(compact)), "", "  "); err != nil {
		t.Fatal(err)
	}
	want.WriteByte('\n')
	if out.String() != want.String() {
		t.Errorf("terminal json is not the indented array: %s", firstDiff(want.String(), out.String()))
	}
	_, lines, _ := runCLI(t, "", "--db", db, "--format", "jsonl", "audit", "--no-store")
	sc := bufio.NewScanner(strings.NewReader(lines))
	sc.Buffer(nil, 1<<24)
	n := 0
	for sc.Scan() {
		var a map[string]any
		if err := json.Unmarshal(sc.Bytes(), &a); err != nil {
			t.Fatalf("line %d: %v", n+1, err)
		}
		if !bytes.Equal(compactOf(t, sc.Bytes()), []byte(arr[n])) {
			t.Errorf("line %d differs from element %d of the array", n+1, n)
		}
		n++
	}
	if n != 3 {
		t.Errorf("%d JSON lines, want 3", n)
	}
}

func compactOf(t *testing.T, js []byte) []byte {
	var b bytes.Buffer
	if err := json.Compact(&b, js); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// TestRunsDiffTau2 compares two audit runs that differ only in the tau²
// estimator, in table, JSON and CSV.
func TestRunsDiffTau2(t *testing.T) {
	db := demoDB(t)
	var ids []string
	outputs := map[string]string{}
	for _, m := range []string{"reml", "dl"} {
		code, out, stderr := runCLI(t, "", "--db", db, "--format", "json", "audit", "--tau2", m, "--bootstrap", "0")
		if code != exitOK {
			t.Fatalf("audit --tau2 %s: %d %s", m, code, stderr)
		}
		outputs[m] = out
		runs := storedRuns(t, db)
		ids = append(ids, fmt.Sprint(runs[len(runs)-1].ID))
	}
	code, out, stderr := runCLI(t, "", "--db", db, "--format", "json", "runs", "diff", ids[0], ids[1])
	if code != exitOK {
		t.Fatalf("runs diff: exit %d: %s", code, stderr)
	}
	var diffs []workspace.ReviewDiff
	if err := json.Unmarshal([]byte(out), &diffs); err != nil {
		t.Fatal(err)
	}
	if len(diffs) == 0 {
		t.Fatal("no review differs between REML and DerSimonian-Laird")
	}
	// Check each reported change against the two printed audits.
	var reml, dl []map[string]any
	if err := json.Unmarshal([]byte(outputs["reml"]), &reml); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(outputs["dl"]), &dl); err != nil {
		t.Fatal(err)
	}
	byID := func(as []map[string]any, id string) map[string]any {
		for _, a := range as {
			if a["review_id"] == id {
				return a
			}
		}
		t.Fatalf("review %s not printed", id)
		return nil
	}
	methodChanged := 0
	for _, d := range diffs {
		if !d.InFirst || !d.InSecond {
			t.Errorf("%s: in one run only", d.ReviewID)
		}
		a, b := byID(reml, d.ReviewID), byID(dl, d.ReviewID)
		for _, c := range d.Changes {
			before, after := lookup(a, c.Field), lookup(b, c.Field)
			if string(c.Before) != jsonText(t, before) || string(c.After) != jsonText(t, after) {
				t.Errorf("%s %s: diff says %s -> %s, the audits hold %v -> %v", d.ReviewID, c.Field, c.Before, c.After, before, after)
			}
			if x, ok := before.(float64); ok {
				if y, ok := after.(float64); ok && (c.Difference == nil || *c.Difference != y-x) {
					t.Errorf("%s %s: difference %v, want %v", d.ReviewID, c.Field, c.Difference, y-x)
				}
			}
			if c.Field == "published.random.tau2_method" && string(c.Before) == `"reml"` && string(c.After) == `"dl"` {
				methodChanged++
			}
		}
	}
	if methodChanged != 3 {
		t.Errorf("tau² method change found in %d reviews, want 3", methodChanged)
	}
	// CSV: one row per changed field, the same count as in JSON.
	code, csvOut, _ := runCLI(t, "", "--db", db, "--format", "csv", "runs", "diff", ids[0], ids[1])
	rows, err := csv.NewReader(strings.NewReader(csvOut)).ReadAll()
	if code != exitOK || err != nil {
		t.Fatalf("csv diff: exit %d, %v", code, err)
	}
	nChanges := 0
	for _, d := range diffs {
		nChanges += len(d.Changes)
	}
	if strings.Join(rows[0], ",") != strings.Join(diffColumns, ",") || len(rows)-1 != nChanges {
		t.Errorf("csv: header %v, %d rows; want %d", rows[0], len(rows)-1, nChanges)
	}
	code, table, _ := runCLI(t, "", "--db", db, "runs", "diff", ids[0], ids[1])
	if code != exitOK || !strings.Contains(table, "published.random.tau2_method") || !strings.Contains(table, "run "+ids[1]) {
		t.Errorf("table diff: exit %d\n%s", code, table)
	}
	// A run compared with itself has no differences.
	code, same, _ := runCLI(t, "", "--db", db, "runs", "diff", ids[0], ids[0])
	if code != exitOK || !strings.Contains(same, "same results") {
		t.Errorf("self diff: %d %q", code, same)
	}
}

// lookup follows a dotted path in decoded JSON (nil when absent).
func lookup(v map[string]any, path string) any {
	var cur any = v
	for _, k := range strings.Split(path, ".") {
		m, ok := cur.(map[string]any)
		if !ok {
			return nil
		}
		cur = m[k]
	}
	return cur
}

func jsonText(t *testing.T, v any) string {
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func fileSum(t *testing.T, path string) string {
	t.Helper()
	h := sha256.New()
	for _, suffix := range []string{"", "-wal"} {
		b, err := os.ReadFile(path + suffix)
		if err != nil && !os.IsNotExist(err) {
			t.Fatal(err)
		}
		h.Write(b)
	}
	return hex.EncodeToString(h.Sum(nil))
}

// TestNoStoreLeavesFileUnchanged checks the workspace's checksum around
// audit, summary and report with --no-store, and that without it a run is
// stored.
func TestNoStoreLeavesFileUnchanged(t *testing.T) {
	db := demoDB(t)
	// Settle the write-ahead log into the file first.
	runCLI(t, "", "--db", db, "db", "check")
	before := fileSum(t, db)
	for _, args := range [][]string{
		{"audit", "--no-store"},
		{"--format", "json", "audit", "--no-store"},
		{"summary", "--no-store", "--bootstrap", "0"},
		{"report", "--no-store", "--out", filepath.Join(t.TempDir(), "r")},
	} {
		if code, _, stderr := runCLI(t, "", append([]string{"--db", db}, args...)...); code != exitOK {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
		if after := fileSum(t, db); after != before {
			t.Fatalf("%v changed the workspace file", args)
		}
	}
	n := len(storedRuns(t, db))
	runCLI(t, "", "--db", db, "audit")
	if len(storedRuns(t, db)) != n+1 {
		t.Error("audit without --no-store stored no run")
	}
}

// TestMissingWorkspace checks that every command but ingest (and demo,
// which makes its own) refuses a --db path that does not exist, naming it,
// and creates nothing.
func TestMissingWorkspace(t *testing.T) {
	dir := t.TempDir()
	missing := filepath.Join(dir, "typo.db")
	for _, args := range [][]string{
		{"audit"}, {"audit", "--no-store"}, {"summary"}, {"report", "--out", filepath.Join(dir, "r")},
		{"runs"}, {"runs", "show", "1"}, {"runs", "diff", "1", "2"}, {"runs", "delete", "1"}, {"runs", "prune", "--keep", "1"},
		{"db", "info"}, {"db", "check"}, {"db", "vacuum"}, {"trials"}, {"match", "--links", filepath.Join(dir, "l.csv")},
	} {
		code, _, stderr := runCLI(t, "", append([]string{"--db", missing}, args...)...)
		if code == exitOK || !strings.Contains(stderr, missing) || !strings.Contains(stderr, "does not exist") {
			t.Errorf("%v: exit %d, %q", args, code, stderr)
		}
		if _, err := os.Stat(missing); !os.IsNotExist(err) {
			t.Fatalf("%v created %s", args, missing)
		}
	}
	input := filepath.Join(dir, "in")
	if err := workspace.WriteDemoFiles(input); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCLI(t, "", "--db", missing, "-q", "ingest", "reviews", filepath.Join(input, "reviews.csv"), filepath.Join(input, "studies.csv")); code != exitOK {
		t.Fatalf("ingest into a new workspace: exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(missing); err != nil {
		t.Errorf("ingest did not create the workspace: %v", err)
	}
}

// TestRunsDeleteFreesSpace stores runs, deletes and prunes them, and checks
// that the file shrinks; an older file without incremental vacuum gets
// its space back with db vacuum.
func TestRunsDeleteFreesSpace(t *testing.T) {
	db := demoDB(t)
	for range 6 {
		if code, _, stderr := runCLI(t, "", "--db", db, "audit", "--bootstrap", "0"); code != exitOK {
			t.Fatal(stderr)
		}
	}
	runCLI(t, "", "--db", db, "db", "check")
	full := fileSize(db)
	runs := storedRuns(t, db)
	if len(runs) != 7 {
		t.Fatalf("%d runs, want 7", len(runs))
	}
	code, out, stderr := runCLI(t, "", "--db", db, "runs", "delete", fmt.Sprint(runs[0].ID), fmt.Sprint(runs[1].ID))
	if code != exitOK || !strings.Contains(out, "space is back") {
		t.Fatalf("runs delete: exit %d: %s %s", code, out, stderr)
	}
	if code, _, stderr := runCLI(t, "", "--db", db, "runs", "delete", "999"); code == exitOK || !strings.Contains(stderr, "run 999") {
		t.Errorf("deleting an unknown run: exit %d, %q", code, stderr)
	}
	if code, _, _ := runCLI(t, "", "--db", db, "runs", "prune", "--keep", "2"); code != exitOK {
		t.Fatal("prune failed")
	}
	left := storedRuns(t, db)
	if len(left) != 2 || left[0].ID != runs[5].ID || left[1].ID != runs[6].ID {
		t.Fatalf("after prune: %+v", left)
	}
	if after := fileSize(db); after >= full {
		t.Errorf("file %d bytes after deleting 5 of 7 runs, %d before", after, full)
	}
	if code, _, _ := runCLI(t, "", "--db", db, "runs", "prune"); code != exitUsage {
		t.Errorf("prune without --keep: exit %d", code)
	}
	if code, out, _ := runCLI(t, "", "--db", db, "db", "vacuum"); code != exitOK || !strings.Contains(out, "after") {
		t.Errorf("db vacuum: %d %q", code, out)
	}
}

// readOnlyWorkspace makes a demo workspace whose file and folder may not
// be written, and returns the binary, the database path and how to run the
// binary as a user the permissions apply to (root ignores them, so the
// test runs the binary as nobody when it runs as root).
func readOnlyWorkspace(t *testing.T) (bin, db string, attr *syscall.SysProcAttr) {
	bin = buildBinary(t)
	db = demoDB(t)
	if code, _, _ := runCLI(t, "", "--db", db, "db", "check"); code != exitOK {
		t.Fatal("db check")
	}
	dir := filepath.Dir(db)
	if os.Geteuid() == 0 {
		attr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534}}
		// nobody must reach the binary and the workspace.
		for _, d := range []string{filepath.Dir(bin), filepath.Dir(filepath.Dir(bin)), filepath.Dir(dir), filepath.Dir(filepath.Dir(dir))} {
			if err := os.Chmod(d, 0o755); err != nil {
				t.Fatal(err)
			}
		}
	}
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if !e.IsDir() {
			if err := os.Chmod(filepath.Join(dir, e.Name()), 0o444); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := os.Chmod(dir, 0o555); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.Chmod(dir, 0o755) })
	return bin, db, attr
}

// TestReadOnlyWorkspace runs every read command on a workspace that may
// not be written, and the writing ones, which must fail naming the file,
// saying it is read-only and (where there is one) suggesting --no-store.
func TestReadOnlyWorkspace(t *testing.T) {
	bin, db, attr := readOnlyWorkspace(t)
	sum := fileSum(t, db)
	outDir := t.TempDir()
	if err := os.Chmod(outDir, 0o777); err != nil {
		t.Fatal(err)
	}
	if err := workspace.WriteDemoFiles(filepath.Join(outDir, "in")); err != nil {
		t.Fatal(err)
	}
	cli := func(args ...string) (int, string, string) {
		cmd := exec.Command(bin, append([]string{"--db", db}, args...)...)
		cmd.SysProcAttr = attr
		cmd.Env = append(os.Environ(), "HOME="+outDir)
		var out, errOut bytes.Buffer
		cmd.Stdout, cmd.Stderr = &out, &errOut
		err := cmd.Run()
		code := 0
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		} else if err != nil {
			t.Fatal(err)
		}
		return code, out.String(), errOut.String()
	}
	for _, args := range [][]string{
		{"audit", "--no-store"}, {"--format", "jsonl", "audit", "--no-store"}, {"summary", "--no-store", "--bootstrap", "0"},
		{"report", "--no-store", "--out", filepath.Join(outDir, "report")},
		{"runs"}, {"runs", "show", "1"}, {"audit", "--run", "1"}, {"runs", "diff", "1", "1"},
		{"db", "info"}, {"db", "check"}, {"trials"},
	} {
		if code, out, stderr := cli(args...); code != exitOK || out == "" {
			t.Errorf("%v on a read-only workspace: exit %d: %s", args, code, stderr)
		}
	}
	for _, c := range []struct {
		args    []string
		noStore bool
	}{
		{[]string{"audit"}, true}, {[]string{"summary"}, true}, {[]string{"report", "--out", filepath.Join(outDir, "r2")}, true},
		{[]string{"runs", "delete", "1"}, false}, {[]string{"runs", "prune", "--keep", "0"}, false}, {[]string{"db", "vacuum"}, false},
		{[]string{"ingest", "reviews", filepath.Join(outDir, "in", "reviews.csv"), filepath.Join(outDir, "in", "studies.csv")}, false},
		{[]string{"match", "--links", filepath.Join(outDir, "l.csv")}, false},
	} {
		code, _, stderr := cli(c.args...)
		if code == exitOK || !strings.Contains(stderr, db) || !strings.Contains(stderr, "read-only") {
			t.Errorf("%v: exit %d, %q; want an error naming %s as read-only", c.args, code, stderr, db)
		}
		if c.noStore && !strings.Contains(stderr, "--no-store") {
			t.Errorf("%v: %q does not suggest --no-store", c.args, stderr)
		}
	}
	if fileSum(t, db) != sum {
		t.Error("the read-only workspace changed")
	}
	if code, out, _ := cli("--format", "json", "runs"); code != exitOK || !strings.Contains(out, `"kind": "audit"`) {
		t.Errorf("runs json: %d %s", code, out)
	}
}
