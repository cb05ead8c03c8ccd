package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"unshelved/ingest"
)

func TestCorpusFormatsAgree(t *testing.T) {
	var want []ingest.Trial
	for _, format := range []string{"folder", "zip", "jsonl", "page"} {
		t.Run(format, func(t *testing.T) {
			dir := t.TempDir()
			var out bytes.Buffer
			if err := run([]string{"-out", dir, "-records", "40", "-format", format, "-seed", "7", "-page-size", "15", "-results-share", "0.3"}, &out); err != nil {
				t.Fatal(err)
			}
			if !strings.HasPrefix(out.String(), "records 40 ") {
				t.Errorf("summary %q", out.String())
			}
			var got []ingest.Trial
			sum, err := ingest.ScanRegistry(context.Background(), []string{dir}, ingest.ScanOptions{}, func(tr ingest.Trial) error {
				got = append(got, tr)
				return nil
			})
			if err != nil || sum.Rejected != 0 || sum.Records != 40 {
				t.Fatalf("scan: %v, %+v", err, sum)
			}
			if sum.WithResults == 0 || sum.WithResults == 40 {
				t.Errorf("%d of 40 with results, want a share", sum.WithResults)
			}
			for i, tr := range got {
				if !strings.HasPrefix(tr.TrialID, "NCT9") {
					t.Errorf("id %s could be real", tr.TrialID)
				}
				if want != nil && (tr.TrialID != want[i].TrialID || tr.ContentHash != want[i].ContentHash) {
					t.Errorf("record %d: %s %s, want %s %s", i, tr.TrialID, tr.ContentHash, want[i].TrialID, want[i].ContentHash)
				}
			}
			if want == nil {
				want = got
			}
		})
	}
}

func TestCorpusSizeLimitAndDeterminism(t *testing.T) {
	a, b := t.TempDir(), t.TempDir()
	for _, d := range []string{a, b} {
		if err := run([]string{"-out", d, "-size", "300KB", "-format", "jsonl", "-seed", "3"}, &bytes.Buffer{}); err != nil {
			t.Fatal(err)
		}
	}
	x, err := os.ReadFile(filepath.Join(a, "studies.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	y, _ := os.ReadFile(filepath.Join(b, "studies.jsonl"))
	if !bytes.Equal(x, y) {
		t.Error("same seed gave different corpora")
	}
	if len(x) < 300e3 || len(x) > 300e3+100e3 {
		t.Errorf("%d bytes for -size 300KB", len(x))
	}
	if _, err := parseSize("2GB"); err != nil {
		t.Error(err)
	}
	if n, _ := parseSize("1.5MiB"); n != 3<<19 {
		t.Errorf("1.5MiB = %d", n)
	}
	if _, err := parseSize("lots"); err == nil {
		t.Error("parseSize accepted lots")
	}
}
