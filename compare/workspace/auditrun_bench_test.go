package workspace_test

import (
	"bufio"
	"context"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"unshelved/compare"
	"unshelved/compare/internal/batchgen"
	"unshelved/compare/workspace"
	"unshelved/store"
)

// benchWorkspace writes a generated batch of n reviews of 12 registered
// trials each into a new workspace in dir.
func benchWorkspace(b *testing.B, dir string, n int) string {
	b.Helper()
	path := filepath.Join(dir, "w.db")
	ctx := context.Background()
	db, err := store.Open(ctx, path)
	if err != nil {
		b.Fatal(err)
	}
	defer db.Close()
	batch := batchgen.Generate(batchgen.Settings{Reviews: n, MinStudies: 12, MaxStudies: 12, Seed: 1})
	if err := batchgen.WriteWorkspace(ctx, db, batch); err != nil {
		b.Fatal(err)
	}
	return path
}

// BenchmarkAuditEndToEnd audits a workspace of 2,000 generated reviews of
// 12 registered trials as 'unshelved audit --format jsonl' does: inputs
// read from the store, the whole battery, each result written to a file
// and stored as the run. Run with -benchtime 1x; testdata/bench/audit.sh
// runs the command itself on 2,000 and 20,000 reviews beside a Python
// loop.
func BenchmarkAuditEndToEnd(b *testing.B) {
	dir := b.TempDir()
	path := benchWorkspace(b, dir, 2000)
	ctx := context.Background()
	db, err := store.Open(ctx, path)
	if err != nil {
		b.Fatal(err)
	}
	defer db.Close()
	for b.Loop() {
		f, err := os.Create(filepath.Join(dir, "out.jsonl"))
		if err != nil {
			b.Fatal(err)
		}
		w := bufio.NewWriter(f)
		run, err := workspace.RunAuditEach(ctx, db, nil, compare.Options{Seed: compare.DefaultSeed}, "bench",
			workspace.RunOptions{Workers: runtime.GOMAXPROCS(0), JSON: true}, func(r workspace.AuditResult) error {
				if _, err := w.Write(r.JSON); err != nil {
					return err
				}
				return w.WriteByte('\n')
			})
		if err != nil || run.Reviews != 2000 {
			b.Fatal(err, run.Reviews)
		}
		if err := w.Flush(); err != nil {
			b.Fatal(err)
		}
		f.Close()
		b.ReportMetric(float64(run.Bytes)/float64(run.Reviews), "stored-B/review")
	}
	b.ReportMetric(float64(b.Elapsed().Microseconds())/float64(b.N*2000), "us/review")
}
