package ingest

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// samplesDir finds shared/registry-samples beside the repository root (the
// folder holding go.mod). When it is absent the test skips on a developer's
// machine and fails in CI (CI=true), where the samples are always laid out.
func samplesDir(tb testing.TB) string {
	tb.Helper()
	dir, err := os.Getwd()
	if err != nil {
		tb.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			break
		}
		parent := filepath.Dir(dir)
		if parent == dir {
			missingSamples(tb, "registry samples: no go.mod above the package directory")
		}
		dir = parent
	}
	s := filepath.Join(dir, "..", "shared", "registry-samples")
	if _, err := os.Stat(filepath.Join(s, "NCT02552212.json")); err != nil {
		missingSamples(tb, "registry samples not found at %s (shared/ must sit beside the repository): %v", s, err)
	}
	return s
}

// missingSamples fails the test in CI and skips it elsewhere.
func missingSamples(tb testing.TB, format string, args ...any) {
	tb.Helper()
	if os.Getenv("CI") == "true" {
		tb.Fatalf(format, args...)
	}
	tb.Skipf(format, args...)
}

func readSample(tb testing.TB, name string) []byte {
	tb.Helper()
	b, err := os.ReadFile(filepath.Join(samplesDir(tb), name))
	if err != nil {
		tb.Fatal(err)
	}
	return b
}

func parseSample(tb testing.TB, name string) Trial {
	tb.Helper()
	tr, err := ParseStudy(readSample(tb, name), Source{Path: name})
	if err != nil {
		tb.Fatalf("ParseStudy(%s): %v", name, err)
	}
	return tr
}

// asParseError checks that err is a *ParseError naming a file.
func asParseError(tb testing.TB, err error) *ParseError {
	tb.Helper()
	var pe *ParseError
	if !errors.As(err, &pe) {
		tb.Fatalf("error %v (%T) is not a *ParseError", err, err)
	}
	if pe.File == "" {
		tb.Fatalf("ParseError without a file: %v", pe)
	}
	return pe
}

func eqStrings(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
