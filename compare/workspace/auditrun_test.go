package workspace_test

import (
	"bytes"
	"context"
	"errors"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"unshelved/compare"
	"unshelved/compare/internal/batchgen"
	"unshelved/compare/workspace"
	"unshelved/store"
)

// TestAuditEachStreams proves that results are handed on while later
// reviews are still being computed: the last review's input is not given
// until the first review has been emitted. A version that collected every
// result before emitting would wait forever (caught by the timeout).
func TestAuditEachStreams(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 40, Seed: 2})
	n := len(b.Inputs)
	firstOut := make(chan struct{})
	var inFlight, peak atomic.Int64
	done := make(chan error, 1)
	var order []int
	go func() {
		done <- workspace.AuditEach(context.Background(), n, func(ctx context.Context, i int) (compare.AuditInput, error) {
			if p := inFlight.Add(1); p > peak.Load() {
				peak.Store(p)
			}
			if i == n-1 {
				select {
				case <-firstOut:
				case <-time.After(20 * time.Second):
					return compare.AuditInput{}, errors.New("the first review was not emitted before the last was started")
				}
			}
			return b.Inputs[i], nil
		}, compare.Options{SkipSelection: true}, workspace.StreamOptions{Workers: 2}, func(r workspace.AuditResult) error {
			inFlight.Add(-1)
			order = append(order, r.Index)
			if r.Index == 0 {
				close(firstOut)
			}
			return r.Err
		})
	}()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(60 * time.Second):
		t.Fatal("AuditEach did not finish")
	}
	for i, x := range order {
		if x != i {
			t.Fatalf("emitted out of order: %v", order)
		}
	}
	if len(order) != n {
		t.Fatalf("emitted %d of %d", len(order), n)
	}
	// Memory stays flat: no more reviews are held than the window allows
	// (four per worker, plus one being read by each worker).
	if p := peak.Load(); p > 4*2+2 {
		t.Errorf("%d reviews held at once, want at most 10", p)
	}
}

// TestAuditAllMatchesOneByOne checks that the streaming core gives the
// same audits, in input order, as auditing each review on its own.
func TestAuditAllMatchesOneByOne(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 30, Seed: 4})
	opts := compare.Options{Bootstrap: 50, Seed: 3, SkipSelection: true}
	audits, failed, err := workspace.AuditAll(context.Background(), b.Inputs, opts, 3)
	if err != nil || len(failed) > 0 {
		t.Fatal(err, failed)
	}
	for i, in := range b.Inputs {
		want, err := compare.AuditReview(in, opts)
		if err != nil {
			t.Fatal(err)
		}
		x, _ := workspace.CompactJSON(want)
		y, _ := workspace.CompactJSON(audits[i])
		if !bytes.Equal(x, y) {
			t.Fatalf("review %d differs from its own audit", i)
		}
	}
}

// TestAuditEachStopsOnEmitError checks that an error from emit stops the
// audit and comes back, without leaking the workers (the test would hang).
func TestAuditEachStopsOnEmitError(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 50, Seed: 6})
	stop := errors.New("reader went away")
	var mu sync.Mutex
	seen := 0
	err := workspace.AuditEach(context.Background(), len(b.Inputs), func(ctx context.Context, i int) (compare.AuditInput, error) {
		return b.Inputs[i], nil
	}, compare.Options{SkipBias: true}, workspace.StreamOptions{Workers: 2}, func(r workspace.AuditResult) error {
		mu.Lock()
		defer mu.Unlock()
		seen++
		if seen == 5 {
			return stop
		}
		return nil
	})
	if !errors.Is(err, stop) || seen != 5 {
		t.Fatalf("err %v after %d results, want the emit error after 5", err, seen)
	}
}

// TestStoredSizePerReview packs the audits of 300 generated reviews of 12
// studies each as a stored run does, checks that each decodes to the very
// JSON text printed, and that a review takes at most 2 KB on average (the
// target of the stored-runs design), with the default options.
func TestStoredSizePerReview(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 300, MinStudies: 12, MaxStudies: 12, Seed: 3})
	ctx := context.Background()
	db, err := store.Open(ctx, t.TempDir()+"/w.db")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	runID, err := db.StartRun(ctx, "audit", `{"level":0.95}`, "test", 1)
	if err != nil {
		t.Fatal(err)
	}
	w := db.NewResultWriter(runID)
	var printed [][]byte
	err = workspace.AuditEach(ctx, len(b.Inputs), func(ctx context.Context, i int) (compare.AuditInput, error) {
		return b.Inputs[i], nil
	}, compare.Options{Seed: compare.DefaultSeed}, workspace.StreamOptions{Workers: 2, Packer: w.Packer()}, func(r workspace.AuditResult) error {
		printed = append(printed, r.JSON)
		return w.Add(ctx, r.Packed)
	})
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Flush(ctx); err != nil {
		t.Fatal(err)
	}
	i := 0
	err = db.EachRunResult(ctx, runID, func(id string, js []byte) error {
		if !bytes.Equal(js, printed[i]) {
			t.Errorf("review %s: stored result differs from the printed JSON", id)
		}
		i++
		return nil
	})
	if err != nil || i != len(printed) {
		t.Fatalf("read back %d of %d: %v", i, len(printed), err)
	}
	runs, err := db.RunSummaries(ctx)
	if err != nil {
		t.Fatal(err)
	}
	per := float64(runs[0].Bytes) / float64(runs[0].Reviews)
	var jsonBytes int
	for _, p := range printed {
		jsonBytes += len(p)
	}
	t.Logf("%.0f bytes per review stored (dictionary included), %d bytes of compact JSON", per, jsonBytes/len(printed))
	if per > 2048 {
		t.Errorf("%.0f bytes per stored review, want at most 2048", per)
	}
}

// TestRunAuditParallelMatchesSequential runs the stored audit of a
// workspace of 100 generated reviews (inputs read from the store in
// several chunks, the next read ahead) once on one worker and once on
// four, and requires byte-identical results in the same order, both as
// emitted and as stored in the runs.
func TestRunAuditParallelMatchesSequential(t *testing.T) {
	b := batchgen.Generate(batchgen.Settings{Reviews: 100, MinStudies: 5, MaxStudies: 12, Seed: 9})
	ctx := context.Background()
	db, err := store.Open(ctx, t.TempDir()+"/w.db")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if err := batchgen.WriteWorkspace(ctx, db, b); err != nil {
		t.Fatal(err)
	}
	run := func(workers int) (int64, []byte) {
		var out bytes.Buffer
		r, err := workspace.RunAuditEach(ctx, db, nil, compare.Options{Seed: compare.DefaultSeed}, "test",
			workspace.RunOptions{Workers: workers, JSON: true}, func(r workspace.AuditResult) error {
				if r.Err != nil {
					out.WriteString(r.Err.Error())
				}
				out.Write(r.JSON)
				out.WriteByte('\n')
				return nil
			})
		if err != nil {
			t.Fatal(err)
		}
		if r.Reviews+len(r.Failed) != len(b.Inputs) || r.Reviews < len(b.Inputs)/2 {
			t.Fatalf("%d workers: %d audited, %d failed of %d", workers, r.Reviews, len(r.Failed), len(b.Inputs))
		}
		return r.RunID, out.Bytes()
	}
	seqRun, seq := run(1)
	parRun, par := run(4)
	if !bytes.Equal(seq, par) {
		t.Fatalf("4 workers printed %d bytes, 1 worker %d, not the same", len(par), len(seq))
	}
	stored := func(runID int64) []byte {
		var all bytes.Buffer
		err := db.EachRunResult(ctx, runID, func(id string, js []byte) error {
			all.WriteString(id)
			all.Write(js)
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		return all.Bytes()
	}
	if s, p := stored(seqRun), stored(parRun); len(s) == 0 || !bytes.Equal(s, p) {
		t.Errorf("stored results differ between 1 and 4 workers (%d and %d bytes)", len(s), len(p))
	}
}
