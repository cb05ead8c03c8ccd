package ingest

import (
	"archive/zip"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"unshelved/ingest/ingesttest"
)

func benchRecord(tb testing.TB) []byte {
	tb.Helper()
	return ingesttest.SyntheticStudy(rand.New(rand.NewPCG(1, 2)), "NCT99000042", 15, 2)
}

func TestSyntheticStudy(t *testing.T) {
	b := benchRecord(t)
	if !bytes.Equal(b, benchRecord(t)) {
		t.Fatal("same seed gave different records")
	}
	tr, err := ParseStudy(b, Source{Path: "synthetic"})
	if err != nil {
		t.Fatal(err)
	}
	ms := 0
	for _, o := range tr.Outcomes {
		for _, c := range o.Classes {
			for _, cat := range c.Categories {
				ms += len(cat.Measurements)
			}
		}
	}
	if len(tr.Outcomes) != 15 || ms < 50 || ms > 150 || len(b) < 40<<10 || len(b) > 90<<10 {
		t.Errorf("%d outcomes, %d measurements, %d bytes", len(tr.Outcomes), ms, len(b))
	}
	// The generic decoder must agree on the number of measurements.
	var generic struct {
		ResultsSection struct {
			OutcomeMeasuresModule struct {
				OutcomeMeasures []struct {
					Classes []struct {
						Categories []struct {
							Measurements []json.RawMessage
						}
					}
				}
			}
		}
	}
	if err := json.Unmarshal(b, &generic); err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, o := range generic.ResultsSection.OutcomeMeasuresModule.OutcomeMeasures {
		for _, c := range o.Classes {
			for _, cat := range c.Categories {
				n += len(cat.Measurements)
			}
		}
	}
	if n != ms {
		t.Errorf("encoding/json sees %d measurements, ParseStudy %d", n, ms)
	}
}

// BenchmarkParseStudy compares ParseStudy with encoding/json on the same
// record: decoding into typed structs (typedStudy), into a generic value,
// and validation alone.
func BenchmarkParseStudy(b *testing.B) {
	rec := benchRecord(b)
	b.Run("ingest", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		b.ReportAllocs()
		for b.Loop() {
			if _, err := ParseStudy(rec, Source{}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("ingest-no-hash", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		b.ReportAllocs()
		for b.Loop() {
			if _, err := parseStudy(rec, Source{}, false); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encoding-json-any", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		b.ReportAllocs()
		for b.Loop() {
			var v any
			if err := json.Unmarshal(rec, &v); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encoding-json-typed", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		b.ReportAllocs()
		for b.Loop() {
			var v typedStudy
			if err := json.Unmarshal(rec, &v); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("encoding-json-valid", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		for b.Loop() {
			if !json.Valid(rec) {
				b.Fatal("invalid")
			}
		}
	})
	b.Run("content-hash", func(b *testing.B) {
		b.SetBytes(int64(len(rec)))
		for b.Loop() {
			ContentHash(rec)
		}
	})
}

// BenchmarkScanRegistry scans a zip of synthetic records.
func BenchmarkScanRegistry(b *testing.B) {
	const n = 400
	r := rand.New(rand.NewPCG(3, 4))
	var buf bytes.Buffer
	w := zip.NewWriter(&buf)
	var raw int64
	for i := range n {
		id := fmt.Sprintf("NCT99%06d", i)
		rec := ingesttest.SyntheticStudy(r, id, 15, 2)
		raw += int64(len(rec))
		f, err := w.Create(id[9:] + "/" + id + ".json")
		if err != nil {
			b.Fatal(err)
		}
		f.Write(rec)
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	name := filepath.Join(b.TempDir(), "ctg-studies.json.zip")
	if err := os.WriteFile(name, buf.Bytes(), 0o644); err != nil {
		b.Fatal(err)
	}
	for _, workers := range []int{1, 2} {
		b.Run(fmt.Sprintf("workers=%d", workers), func(b *testing.B) {
			b.SetBytes(raw)
			b.ReportAllocs()
			for b.Loop() {
				sum, err := ScanRegistry(context.Background(), []string{name}, ScanOptions{Workers: workers}, func(Trial) error { return nil })
				if err != nil || sum.Records != n {
					b.Fatalf("%v, %d records", err, sum.Records)
				}
			}
			b.ReportMetric(float64(n*b.N)/b.Elapsed().Seconds(), "records/s")
		})
	}
}
