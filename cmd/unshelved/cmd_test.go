package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// testIO returns streams over buffers and a fixed clock.
func testIO(stdin string) (*IO, *bytes.Buffer, *bytes.Buffer) {
	out, errOut := &bytes.Buffer{}, &bytes.Buffer{}
	return &IO{
		In:     strings.NewReader(stdin),
		Out:    out,
		ErrOut: errOut,
		Getenv: func(string) string { return "" },
		Now:    func() time.Time { return time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC) },
	}, out, errOut
}

// runCLI runs the command line in-process.
func runCLI(t *testing.T, stdin string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	io, out, errOut := testIO(stdin)
	code = run(context.Background(), args, io)
	return code, out.String(), errOut.String()
}

func writeFile(t *testing.T, dir, name, content string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestUsageErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
		want string
	}{
		{"unknown format", []string{"--format", "xml", "audit"}, "invalid --format"},
		{"unknown flag", []string{"audit", "--nope"}, "unknown flag"},
		{"bad tau2", []string{"audit", "--tau2", "ml"}, "invalid --tau2"},
		{"pool needs a file", []string{"pool"}, "accepts 1 arg"},
		{"match needs apply", []string{"match"}, "--apply"},
		{"bad measure", []string{"pool", "x.csv", "--measure", "OR"}, "invalid --measure"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "", append([]string{"--db", filepath.Join(t.TempDir(), "x.db")}, tc.args...)...)
			if code != exitUsage {
				t.Errorf("exit code = %d, want %d (stderr %q)", code, exitUsage, stderr)
			}
			if !strings.Contains(stderr, tc.want) {
				t.Errorf("stderr = %q, want it to mention %q", stderr, tc.want)
			}
		})
	}
}
