package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"time"
)

// Run statuses.
const (
	RunRunning   = "running"
	RunComplete  = "complete"
	RunCancelled = "cancelled"
	RunFailed    = "failed"
)

// Run is one audit or summary run. Finished is the zero time while the run
// is running.
type Run struct {
	ID       int64
	Kind     string // e.g. "audit", "summary"
	Options  string // JSON
	Version  string // tool version
	Seed     uint64
	Started  time.Time
	Finished time.Time
	Status   string // RunRunning, RunComplete, RunCancelled or RunFailed
}

// StartRun records a new run with status running and returns its id.
func (db *DB) StartRun(ctx context.Context, kind, optionsJSON, version string, seed uint64) (int64, error) {
	if err := db.writable(); err != nil {
		return 0, err
	}
	res, err := db.write.ExecContext(ctx, `INSERT INTO runs (kind, options, version, seed, status, started_at)
		VALUES (?, ?, ?, ?, ?, ?)`, kind, optionsJSON, version, int64(seed), RunRunning, timeText(db.now()))
	if err != nil {
		return 0, fmt.Errorf("start run: %w", err)
	}
	id, err := res.LastInsertId()
	if err != nil {
		return 0, fmt.Errorf("start run: %w", err)
	}
	return id, nil
}

// SaveRunResult stores (or replaces) the JSON result of one review in a
// run, deflated; a new review goes after the run's earlier results.
func (db *DB) SaveRunResult(ctx context.Context, runID int64, reviewID string, resultJSON string) error {
	if err := db.writable(); err != nil {
		return err
	}
	data, err := deflate([]byte(resultJSON))
	if err != nil {
		return fmt.Errorf("save result of run %d review %s: %w", runID, reviewID, err)
	}
	_, err = db.write.ExecContext(ctx, `INSERT INTO run_results (run_id, review_id, pos, codec, data)
		VALUES (?1, ?2, (SELECT coalesce(max(pos) + 1, 0) FROM run_results WHERE run_id = ?1), ?3, ?4)
		ON CONFLICT (run_id, review_id) DO UPDATE SET codec = excluded.codec, data = excluded.data`,
		runID, reviewID, codecDeflate, data)
	if err != nil {
		return fmt.Errorf("save result of run %d review %s: %w", runID, reviewID, err)
	}
	return nil
}

// FinishRun sets the final status (complete, cancelled or failed) and the
// finish time. An unknown run gives an error wrapping ErrNotFound.
func (db *DB) FinishRun(ctx context.Context, runID int64, status string) error {
	switch status {
	case RunComplete, RunCancelled, RunFailed:
	default:
		return fmt.Errorf("finish run %d: status %q is not complete, cancelled or failed", runID, status)
	}
	res, err := db.write.ExecContext(ctx, `UPDATE runs SET status = ?, finished_at = ? WHERE run_id = ?`,
		status, timeText(db.now()), runID)
	if err != nil {
		return fmt.Errorf("finish run %d: %w", runID, err)
	}
	n, err := res.RowsAffected()
	if err != nil {
		return fmt.Errorf("finish run %d: %w", runID, err)
	}
	if n == 0 {
		return fmt.Errorf("finish run %d: %w", runID, ErrNotFound)
	}
	return nil
}

// Runs returns the runs of a kind ("" for all kinds), oldest first.
func (db *DB) Runs(ctx context.Context, kind string) ([]Run, error) {
	where, args := "", []any(nil)
	if kind != "" {
		where, args = " WHERE kind = ?", []any{kind}
	}
	return db.runs(ctx, where, args)
}

func (db *DB) runs(ctx context.Context, where string, args []any) ([]Run, error) {
	var out []Run
	err := eachRow(ctx, db.read, `SELECT run_id, kind, options, version, seed, status, started_at, finished_at
		FROM runs`+where+` ORDER BY run_id`, args, func(r *sql.Rows) error {
		var run Run
		var seed int64
		var started string
		var finished sql.NullString
		if err := r.Scan(&run.ID, &run.Kind, &run.Options, &run.Version, &seed, &run.Status, &started, &finished); err != nil {
			return err
		}
		run.Seed = uint64(seed)
		var err error
		if run.Started, err = parseTimeText(started); err != nil {
			return err
		}
		if finished.Valid {
			if run.Finished, err = parseTimeText(finished.String); err != nil {
				return err
			}
		}
		out = append(out, run)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list runs: %w", err)
	}
	return out, nil
}

// RunResults returns the results of a run keyed by review id. A run with
// no results, or an unknown run, gives an empty map.
func (db *DB) RunResults(ctx context.Context, runID int64) (map[string]string, error) {
	out := make(map[string]string)
	err := db.EachRunResult(ctx, runID, func(reviewID string, js []byte) error {
		out[reviewID] = string(js)
		return nil
	})
	return out, err
}

// RunSummary is a run with the number and the stored size of its results.
type RunSummary struct {
	Run
	Reviews int   // results stored
	Bytes   int64 // bytes of the stored results and the run's dictionary
}

// Run returns one run; an unknown id gives an error wrapping ErrNotFound.
func (db *DB) Run(ctx context.Context, runID int64) (Run, error) {
	runs, err := db.runs(ctx, " WHERE run_id = ?", []any{runID})
	if err != nil {
		return Run{}, err
	}
	if len(runs) == 0 {
		return Run{}, fmt.Errorf("run %d: %w", runID, ErrNotFound)
	}
	return runs[0], nil
}

// RunSummaries lists every run, oldest first, with its result count and size.
func (db *DB) RunSummaries(ctx context.Context) ([]RunSummary, error) {
	runs, err := db.Runs(ctx, "")
	if err != nil {
		return nil, err
	}
	index := make(map[int64]int, len(runs))
	out := make([]RunSummary, len(runs))
	for i, r := range runs {
		out[i].Run = r
		index[r.ID] = i
	}
	err = eachRow(ctx, db.read, `SELECT r.run_id, length(coalesce(r.dict, x'')),
		(SELECT count(*) FROM run_results x WHERE x.run_id = r.run_id),
		(SELECT coalesce(sum(length(x.data)), 0) FROM run_results x WHERE x.run_id = r.run_id)
		FROM runs r`, nil, func(r *sql.Rows) error {
		var id, dict, n, size int64
		if err := r.Scan(&id, &dict, &n, &size); err != nil {
			return err
		}
		if i, ok := index[id]; ok {
			out[i].Reviews, out[i].Bytes = int(n), dict+size
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list run sizes: %w", err)
	}
	return out, nil
}

// runDict reads and inflates a run's dictionary (nil when it has none).
func runDict(ctx context.Context, q querier, runID int64) ([]byte, error) {
	var dict []byte
	if err := q.QueryRowContext(ctx, `SELECT dict FROM runs WHERE run_id = ?`, runID).Scan(&dict); err != nil {
		if errors.Is(err, sql.ErrNoRows) {
			return nil, fmt.Errorf("run %d: %w", runID, ErrNotFound)
		}
		return nil, err
	}
	if dict == nil {
		return nil, nil
	}
	return inflate(dict, nil)
}

// EachRunResult calls fn with each stored result of a run, as JSON text,
// in the order the results were written, reading one row at a time. An
// unknown run calls fn never.
func (db *DB) EachRunResult(ctx context.Context, runID int64, fn func(reviewID string, js []byte) error) error {
	tx, err := db.readTx(ctx)
	if err != nil {
		return err
	}
	defer rollback(tx)
	dict, err := runDict(ctx, tx, runID)
	if errors.Is(err, ErrNotFound) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("read results of run %d: %w", runID, err)
	}
	err = eachRow(ctx, tx, `SELECT review_id, codec, data FROM run_results WHERE run_id = ? ORDER BY pos`,
		[]any{runID}, func(r *sql.Rows) error {
			var id string
			var codec int
			var data []byte
			if err := r.Scan(&id, &codec, &data); err != nil {
				return err
			}
			js, err := decodeResult(codec, data, dict)
			if err != nil {
				return fmt.Errorf("review %s: %w", id, err)
			}
			return fn(id, js)
		})
	if err != nil {
		return fmt.Errorf("read results of run %d: %w", runID, err)
	}
	return nil
}

// RunResult returns the stored JSON result of one review in a run; an
// unknown run or review gives an error wrapping ErrNotFound.
func (db *DB) RunResult(ctx context.Context, runID int64, reviewID string) ([]byte, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	dict, err := runDict(ctx, tx, runID)
	if err != nil {
		return nil, fmt.Errorf("read result of run %d review %s: %w", runID, reviewID, err)
	}
	var codec int
	var data []byte
	err = tx.QueryRowContext(ctx, `SELECT codec, data FROM run_results WHERE run_id = ? AND review_id = ?`, runID, reviewID).Scan(&codec, &data)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("run %d review %s: %w", runID, reviewID, ErrNotFound)
	}
	if err != nil {
		return nil, fmt.Errorf("read result of run %d review %s: %w", runID, reviewID, err)
	}
	js, err := decodeResult(codec, data, dict)
	if err != nil {
		return nil, fmt.Errorf("read result of run %d review %s: %w", runID, reviewID, err)
	}
	return js, nil
}

// ResultWriter stores the results of one run in order, in transactions of
// a batch of reviews each. It is not safe for concurrent use; pack results
// concurrently with Packer and add them here in order.
type ResultWriter struct {
	db     *DB
	runID  int64
	packer *ResultPacker
	next   int
	batch  []PackedResult
	bytes  int64
}

// resultBatch is the number of results written per transaction.
const resultBatch = 256

// NewResultWriter starts writing the results of a run.
func (db *DB) NewResultWriter(runID int64) *ResultWriter {
	return &ResultWriter{db: db, runID: runID, packer: NewResultPacker()}
}

// Packer returns the writer's packer.
func (w *ResultWriter) Packer() *ResultPacker { return w.packer }

// Bytes is the number of bytes of the results written so far.
func (w *ResultWriter) Bytes() int64 { return w.bytes }

// Add queues a packed result, writing a batch when it is full.
func (w *ResultWriter) Add(ctx context.Context, r PackedResult) error {
	w.batch = append(w.batch, r)
	w.bytes += int64(len(r.data))
	if len(w.batch) >= resultBatch {
		return w.Flush(ctx)
	}
	return nil
}

// Flush writes the queued results and the run's dictionary.
func (w *ResultWriter) Flush(ctx context.Context) error {
	if len(w.batch) == 0 {
		return nil
	}
	tx, err := w.db.write.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("save results of run %d: %w", w.runID, err)
	}
	defer rollback(tx)
	if w.next == 0 {
		dict, err := w.packer.dictionary()
		if err != nil {
			return fmt.Errorf("save results of run %d: dictionary: %w", w.runID, err)
		}
		if _, err := tx.ExecContext(ctx, `UPDATE runs SET dict = ? WHERE run_id = ?`, dict, w.runID); err != nil {
			return fmt.Errorf("save results of run %d: dictionary: %w", w.runID, err)
		}
	}
	st, err := tx.PrepareContext(ctx, `INSERT INTO run_results (run_id, review_id, pos, codec, data) VALUES (?, ?, ?, ?, ?)
		ON CONFLICT (run_id, review_id) DO UPDATE SET codec = excluded.codec, data = excluded.data`)
	if err != nil {
		return fmt.Errorf("save results of run %d: %w", w.runID, err)
	}
	defer st.Close()
	for _, r := range w.batch {
		if _, err := st.ExecContext(ctx, w.runID, r.ReviewID, w.next, r.codec, r.data); err != nil {
			return fmt.Errorf("save result of run %d review %s: %w", w.runID, r.ReviewID, err)
		}
		w.next++
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("save results of run %d: %w", w.runID, err)
	}
	w.batch = w.batch[:0]
	// The pages just written need not stay in the writer's page cache
	// (sized for bulk ingest): without this a run's results would fill it
	// and peak memory would grow with the number of reviews up to its cap.
	if _, err := w.db.write.ExecContext(ctx, `PRAGMA shrink_memory`); err != nil {
		return fmt.Errorf("save results of run %d: %w", w.runID, err)
	}
	return nil
}

// DeleteRuns removes runs and their results, then returns the freed pages
// to the file system when the file uses incremental vacuum (files created
// by this version do); reclaimed reports whether it did. An unknown id is
// an error wrapping ErrNotFound, and nothing is deleted.
func (db *DB) DeleteRuns(ctx context.Context, ids []int64) (reclaimed bool, err error) {
	if err := db.writable(); err != nil {
		return false, err
	}
	tx, err := db.write.BeginTx(ctx, nil)
	if err != nil {
		return false, fmt.Errorf("delete runs: %w", err)
	}
	defer rollback(tx)
	for _, id := range ids {
		res, err := tx.ExecContext(ctx, `DELETE FROM runs WHERE run_id = ?`, id)
		if err != nil {
			return false, fmt.Errorf("delete run %d: %w", id, err)
		}
		if n, err := res.RowsAffected(); err != nil || n == 0 {
			return false, fmt.Errorf("delete run %d: %w", id, ErrNotFound)
		}
	}
	if err := tx.Commit(); err != nil {
		return false, fmt.Errorf("delete runs: %w", err)
	}
	return db.reclaim(ctx)
}

// reclaim runs an incremental vacuum and a truncating checkpoint when the
// file's auto_vacuum mode is incremental.
func (db *DB) reclaim(ctx context.Context) (bool, error) {
	var mode int
	if err := db.write.QueryRowContext(ctx, `PRAGMA auto_vacuum`).Scan(&mode); err != nil {
		return false, fmt.Errorf("read auto_vacuum: %w", err)
	}
	if mode != 2 {
		return false, nil
	}
	if _, err := db.write.ExecContext(ctx, `PRAGMA incremental_vacuum`); err != nil {
		return false, fmt.Errorf("incremental vacuum: %w", err)
	}
	return true, db.checkpoint(ctx)
}

func (db *DB) checkpoint(ctx context.Context) error {
	if _, err := db.write.ExecContext(ctx, `PRAGMA wal_checkpoint(TRUNCATE)`); err != nil {
		return fmt.Errorf("checkpoint: %w", err)
	}
	return nil
}

// Vacuum rewrites the file without free pages and switches it to
// incremental vacuum, so that later deletions free their space at once.
func (db *DB) Vacuum(ctx context.Context) error {
	if err := db.writable(); err != nil {
		return err
	}
	if _, err := db.write.ExecContext(ctx, `PRAGMA auto_vacuum = INCREMENTAL`); err != nil {
		return fmt.Errorf("vacuum: %w", err)
	}
	if _, err := db.write.ExecContext(ctx, `VACUUM`); err != nil {
		return fmt.Errorf("vacuum: %w", err)
	}
	return db.checkpoint(ctx)
}
