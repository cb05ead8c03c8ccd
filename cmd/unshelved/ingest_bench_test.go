package main

import (
	"archive/zip"
	"bytes"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"unshelved/ingest/ingesttest"
)

// writeCorpusZip writes a bulk zip of n invented records, share of them
// with results (as cmd/synthcorpus does), and returns its path and the
// bytes of JSON inside.
func writeCorpusZip(tb testing.TB, dir string, n int, share float64, seed uint64) (string, int64) {
	tb.Helper()
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	var raw int64
	for i := range n {
		r := rand.New(rand.NewPCG(seed, uint64(i)))
		id := fmt.Sprintf("NCT9%07d", i)
		outcomes := 0
		if r.Float64() < share {
			outcomes = 15
		}
		rec := ingesttest.SyntheticStudy(r, id, outcomes, 2)
		raw += int64(len(rec))
		f, err := zw.Create(id + ".json")
		if err != nil {
			tb.Fatal(err)
		}
		if _, err := f.Write(rec); err != nil {
			tb.Fatal(err)
		}
	}
	if err := zw.Close(); err != nil {
		tb.Fatal(err)
	}
	name := filepath.Join(dir, "ctg-studies.json.zip")
	if err := os.WriteFile(name, buf.Bytes(), 0o644); err != nil {
		tb.Fatal(err)
	}
	return name, raw
}

// BenchmarkIngestRegistry runs 'ingest registry' in-process over a zip of
// 2000 invented records (15% with results) into a fresh database: parse on
// all cores plus the single writer.
func BenchmarkIngestRegistry(b *testing.B) {
	dir := b.TempDir()
	const n = 2000
	name, raw := writeCorpusZip(b, dir, n, 0.15, 1)
	b.SetBytes(raw)
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		db := filepath.Join(dir, fmt.Sprintf("w%d.db", i))
		i++
		code, _, stderr := runTB(b, "", "--db", db, "--quiet", "ingest", "registry", name)
		if code != exitOK {
			b.Fatalf("exit %d: %s", code, stderr)
		}
	}
	b.ReportMetric(float64(n*b.N)/b.Elapsed().Seconds(), "records/s")
}

// runTB is runCLI for benchmarks and helpers that take a testing.TB.
func runTB(tb testing.TB, stdin string, args ...string) (code int, stdout, stderr string) {
	tb.Helper()
	io, out, errOut := testIO(stdin)
	code = run(context.Background(), args, io)
	return code, out.String(), errOut.String()
}
