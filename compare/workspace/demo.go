package workspace

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"time"

	"unshelved/compare"
	"unshelved/store"
	"unshelved/testdata/demo"
)

// DemoOptions control Demo.
type DemoOptions struct {
	Dir     string          // folder of the demo's files
	Audit   compare.Options // options of the report's audit
	Run     RunOptions      // workers; the demo's run is stored
	Version string          // tool version recorded with the run
	Now     func() time.Time
}

// DemoResult says where Demo put things and what it found.
type DemoResult struct {
	Input     string // the scenario's input files
	DBPath    string // the workspace database
	Proposals string // the proposed links file
	Ingest    IngestSummary
	Reviews   SavedReviews
	Match     MatchReport
	Report    ReportResult
}

// Demo runs the whole job on the embedded, invented scenario: it writes
// the scenario's files to o.Dir/input, builds a new workspace
// o.Dir/unshelved.db (replacing an earlier demo database; nothing else is
// touched), ingests the registry records and the reviews, proposes links
// and accepts those scoring above compare.DefaultAcceptAbove (as 'match
// --accept-above 0.7' would; a person would check them), writes the
// proposals to o.Dir/links-proposed.csv and the report to o.Dir/report.
func Demo(ctx context.Context, o DemoOptions) (DemoResult, error) {
	res := DemoResult{Input: filepath.Join(o.Dir, "input"), DBPath: filepath.Join(o.Dir, "unshelved.db"),
		Proposals: filepath.Join(o.Dir, "links-proposed.csv")}
	if err := WriteDemoFiles(res.Input); err != nil {
		return res, err
	}
	for _, suffix := range []string{"", "-wal", "-shm"} {
		if err := os.Remove(res.DBPath + suffix); err != nil && !errors.Is(err, fs.ErrNotExist) {
			return res, fmt.Errorf("remove old demo database: %w", err)
		}
	}
	db, err := store.Open(ctx, res.DBPath)
	if err != nil {
		return res, fmt.Errorf("open database %s: %w", res.DBPath, err)
	}
	defer db.Close()
	res.Ingest, err = IngestRegistry(ctx, db, IngestOptions{Paths: []string{filepath.Join(res.Input, "registry")}, Now: o.Now})
	if err != nil {
		return res, fmt.Errorf("demo registry: %w", err)
	}
	if n := res.Ingest.Rejected; n > 0 {
		return res, fmt.Errorf("demo registry: %s", plural(n, "record rejected", "records rejected"))
	}
	res.Reviews, err = LoadReviews(ctx, db, []string{filepath.Join(res.Input, "reviews.csv"), filepath.Join(res.Input, "studies.csv")}, ',', nil)
	if err != nil {
		return res, fmt.Errorf("demo reviews: %w", err)
	}
	// The hand-made links of the scenario (input/links.csv) give the same
	// audit as the accepted proposals.
	var buf bytes.Buffer
	if res.Match, err = ProposeLinks(ctx, db, compare.MatchOptions{AcceptAbove: compare.DefaultAcceptAbove}, &buf); err != nil {
		return res, fmt.Errorf("demo matching: %w", err)
	}
	if err := os.WriteFile(res.Proposals, buf.Bytes(), 0o644); err != nil {
		return res, fmt.Errorf("demo matching: write links file: %w", err)
	}
	res.Report, err = WriteReport(ctx, db, ReportOptions{Dir: filepath.Join(o.Dir, "report"), Audit: o.Audit, Run: o.Run,
		Workspace: res.DBPath, Version: o.Version, Now: o.Now})
	return res, err
}

// WriteDemoFiles copies the embedded demo scenario (registry records,
// reviews.csv, studies.csv, links.csv) to dir.
func WriteDemoFiles(dir string) error {
	return fs.WalkDir(demo.FS, ".", func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		target := filepath.Join(dir, filepath.FromSlash(path))
		if d.IsDir() {
			return os.MkdirAll(target, 0o755)
		}
		data, err := demo.FS.ReadFile(path)
		if err != nil {
			return err
		}
		if err := os.WriteFile(target, data, 0o644); err != nil {
			return fmt.Errorf("write demo file: %w", err)
		}
		return nil
	})
}
