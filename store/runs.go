package store

import (
	"context"
	"database/sql"
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

// SaveRunResult stores (or replaces) the JSON result of one review in a run.
func (db *DB) SaveRunResult(ctx context.Context, runID int64, reviewID string, resultJSON string) error {
	_, err := db.write.ExecContext(ctx, `INSERT INTO run_results (run_id, review_id, result) VALUES (?, ?, ?)
		ON CONFLICT (run_id, review_id) DO UPDATE SET result = excluded.result`, runID, reviewID, resultJSON)
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
	err := eachRow(ctx, db.read, `SELECT review_id, result FROM run_results WHERE run_id = ? ORDER BY review_id`,
		[]any{runID}, func(r *sql.Rows) error {
			var id, res string
			if err := r.Scan(&id, &res); err != nil {
				return err
			}
			out[id] = res
			return nil
		})
	if err != nil {
		return nil, fmt.Errorf("list results of run %d: %w", runID, err)
	}
	return out, nil
}
