package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"math"
	"unshelved/ingest"
)

// SourceFile is ingest.SourceFile, the record of one input file that was
// ingested completely.
type SourceFile = ingest.SourceFile

// SourceKnown reports whether a file with this SHA-256 was recorded by
// RecordSource, i.e. fully ingested before, under any path.
func (db *DB) SourceKnown(ctx context.Context, sha256 string) (bool, error) {
	var one int
	err := db.read.QueryRowContext(ctx, `SELECT 1 FROM source_files WHERE sha256 = ? LIMIT 1`, sha256).Scan(&one)
	if errors.Is(err, sql.ErrNoRows) {
		return false, nil
	}
	if err != nil {
		return false, fmt.Errorf("look up source %s: %w", sha256, err)
	}
	return true, nil
}

// RecordSource records that s was ingested. Call it only after the file's
// trials were committed (TrialWriter.Flush). Recording the same path and
// hash again replaces the earlier row.
func (db *DB) RecordSource(ctx context.Context, s SourceFile) error {
	if err := db.writable(); err != nil {
		return err
	}
	if s.SHA256 == "" {
		return fmt.Errorf("record source %s: empty sha256", s.Path)
	}
	_, err := db.write.ExecContext(ctx, recordSourceSQL,
		s.SHA256, s.Path, s.Size, s.Format, s.Records, s.Rejected, timeText(s.Started), timeText(s.Finished))
	if err != nil {
		return fmt.Errorf("record source %s: %w", s.Path, err)
	}
	return nil
}

// RecordSource records s inside the writer's open batch (beginning one if
// needed), so the source row commits in the same transaction as the last
// of its trials: after a crash either both are stored or neither. Recording
// the same path and hash again replaces the earlier row.
func (w *TrialWriter) RecordSource(ctx context.Context, s SourceFile) error {
	if w.err != nil {
		return w.err
	}
	if w.closed {
		return ErrWriterClosed
	}
	if s.SHA256 == "" {
		return fmt.Errorf("record source %s: empty sha256", s.Path)
	}
	if w.tx == nil {
		if err := w.begin(ctx); err != nil {
			return w.fail("", err)
		}
	}
	if _, err := w.tx.ExecContext(ctx, recordSourceSQL,
		s.SHA256, s.Path, s.Size, s.Format, s.Records, s.Rejected, timeText(s.Started), timeText(s.Finished)); err != nil {
		return w.fail("", fmt.Errorf("record source %s: %w", s.Path, err))
	}
	return nil
}

const recordSourceSQL = `INSERT INTO source_files
		(sha256, path, size, format, records, rejected, started_at, finished_at)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?)
		ON CONFLICT (sha256, path) DO UPDATE SET size = excluded.size, format = excluded.format,
			records = excluded.records, rejected = excluded.rejected,
			started_at = excluded.started_at, finished_at = excluded.finished_at`

// Sources returns the recorded source files ordered by finish time, then path.
func (db *DB) Sources(ctx context.Context) ([]SourceFile, error) {
	return sources(ctx, db.read)
}

func sources(ctx context.Context, q querier) ([]SourceFile, error) {
	var out []SourceFile
	err := eachRow(ctx, q, `SELECT path, sha256, size, format, records, rejected, started_at, finished_at
		FROM source_files ORDER BY finished_at, path, sha256`, nil, func(r *sql.Rows) error {
		var s SourceFile
		var started, finished string
		if err := r.Scan(&s.Path, &s.SHA256, &s.Size, &s.Format, &s.Records, &s.Rejected, &started, &finished); err != nil {
			return err
		}
		var err error
		if s.Started, err = parseTimeText(started); err != nil {
			return err
		}
		if s.Finished, err = parseTimeText(finished); err != nil {
			return err
		}
		out = append(out, s)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list sources: %w", err)
	}
	return out, nil
}

// EntryFingerprints calls fn with the trial id, zip entry CRC-32 and
// inflated size, and has-results flag of every stored trial that was read
// from a bulk-zip entry (ingest.ScanOptions.KnownEntry).
func (db *DB) EntryFingerprints(ctx context.Context, fn func(trialID string, crc32 uint32, size int64, hasResults bool)) error {
	err := eachRow(ctx, db.read, `SELECT trial_id, source_crc32, source_size, coalesce(has_results, 0) FROM trials
		WHERE source_size IS NOT NULL AND source_crc32 IS NOT NULL`, nil, func(r *sql.Rows) error {
		var id string
		var crc, size int64
		var res bool
		if err := r.Scan(&id, &crc, &size, &res); err != nil {
			return err
		}
		if crc >= 0 && crc <= math.MaxUint32 {
			fn(id, uint32(crc), size, res)
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("list zip entry fingerprints: %w", err)
	}
	return nil
}

// ContentHashes calls fn with the content hash and has-results flag of
// every stored trial, so that a scan can recognise unchanged records
// before decoding them.
func (db *DB) ContentHashes(ctx context.Context, fn func(contentHash string, hasResults bool)) error {
	err := eachRow(ctx, db.read, `SELECT content_hash, coalesce(has_results, 0) FROM trials`, nil, func(r *sql.Rows) error {
		var h string
		var res bool
		if err := r.Scan(&h, &res); err != nil {
			return err
		}
		fn(h, res)
		return nil
	})
	if err != nil {
		return fmt.Errorf("list content hashes: %w", err)
	}
	return nil
}
