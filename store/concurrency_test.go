package store

import (
	"context"
	"errors"
	"fmt"
	"path/filepath"
	"sync"
	"sync/atomic"
	"testing"

	"unshelved/ingest"
)

// versioned returns trial id at version v: every outcome title and every
// measurement comment names v, so a reader can tell a mixed trial.
func versioned(id string, v int) ingest.Trial {
	t := bigTrial(id, 4, 20)
	t.ContentHash = fmt.Sprintf("%s-v%d", id, v)
	t.VersionHolder = fmt.Sprintf("%04d-01-01", 2000+v) // dates tie; VersionHolder decides
	t.BriefTitle = fmt.Sprintf("v%d", v)
	for i := range t.Outcomes {
		t.Outcomes[i].Title = fmt.Sprintf("v%d", v)
		for c := range t.Outcomes[i].Classes {
			ms := t.Outcomes[i].Classes[c].Categories[0].Measurements
			for m := range ms {
				ms[m].Comment = fmt.Sprintf("v%d", v)
			}
		}
	}
	return t
}

func checkWhole(t ingest.Trial) error {
	if len(t.Outcomes) != 4 {
		return fmt.Errorf("%s %s: %d outcomes, want 4", t.TrialID, t.BriefTitle, len(t.Outcomes))
	}
	n := 0
	for _, o := range t.Outcomes {
		if o.Title != t.BriefTitle {
			return fmt.Errorf("%s: outcome of %s in trial of %s", t.TrialID, o.Title, t.BriefTitle)
		}
		for _, c := range o.Classes {
			for _, g := range c.Categories {
				for _, m := range g.Measurements {
					n++
					if m.Comment != t.BriefTitle {
						return fmt.Errorf("%s: measurement of %s in trial of %s", t.TrialID, m.Comment, t.BriefTitle)
					}
				}
			}
		}
	}
	if n != 80 {
		return fmt.Errorf("%s %s: %d measurements, want 80", t.TrialID, t.BriefTitle, n)
	}
	return nil
}

func TestConcurrentWriterAndReaders(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "shared.db")
	writerDB := mustOpenPath(t, path)
	readerDB := mustOpenPath(t, path)

	ids := []string{"NCT99001001", "NCT99001002", "NCT99001003", "NCT99001004"}
	const versions = 40
	var done atomic.Bool
	var wg sync.WaitGroup
	errs := make(chan error, 8)

	wg.Add(1)
	go func() {
		defer wg.Done()
		defer done.Store(true)
		w, err := writerDB.NewTrialWriter(ctx, 3)
		if err != nil {
			errs <- err
			return
		}
		for v := 1; v <= versions; v++ {
			for _, id := range ids {
				if _, err := w.Write(ctx, versioned(id, v)); err != nil {
					errs <- fmt.Errorf("writer: %w", err)
					return
				}
			}
		}
		if err := w.Close(ctx); err != nil {
			errs <- fmt.Errorf("writer close: %w", err)
		}
	}()

	// A second writer on the other handle queues on the busy timeout.
	wg.Add(1)
	go func() {
		defer wg.Done()
		for i := 0; !done.Load(); i++ {
			id, err := readerDB.StartRun(ctx, "audit", "{}", "test", uint64(i))
			if err == nil {
				err = readerDB.FinishRun(ctx, id, RunComplete)
			}
			if err != nil {
				errs <- fmt.Errorf("second writer: %w", err)
				return
			}
		}
	}()

	var reads atomic.Int64
	for r := 0; r < 2; r++ {
		wg.Add(1)
		go func(r int) {
			defer wg.Done()
			for i := 0; !done.Load() || i < 5; i++ {
				id := ids[(i+r)%len(ids)]
				tr, err := readerDB.Trial(ctx, id)
				switch {
				case errors.Is(err, ErrNotFound):
				case err != nil:
					errs <- fmt.Errorf("reader %d: %w", r, err)
					return
				default:
					if err := checkWhole(tr); err != nil {
						errs <- fmt.Errorf("reader %d: %w", r, err)
						return
					}
					reads.Add(1)
				}
				if _, err := readerDB.TrialSummaries(ctx, TrialFilter{Sponsor: "bench"}); err != nil {
					errs <- fmt.Errorf("reader %d summaries: %w", r, err)
					return
				}
			}
		}(r)
	}
	wg.Wait()
	close(errs)
	for err := range errs {
		t.Error(err)
	}
	if reads.Load() == 0 {
		t.Error("readers never saw a trial")
	}
	for _, id := range ids {
		tr, err := readerDB.Trial(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		if tr.BriefTitle != fmt.Sprintf("v%d", versions) {
			t.Errorf("%s ended at %s, want v%d", id, tr.BriefTitle, versions)
		}
	}
	info, err := readerDB.Info(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if info.Trials != 4 || info.Measurements != 4*80 {
		t.Errorf("after replaces: %d trials, %d measurements; want 4 and 320", info.Trials, info.Measurements)
	}
}
