package store

import (
	"context"
	"database/sql"
	"fmt"
)

// Info summarizes a workspace.
type Info struct {
	SchemaVersion     int
	Trials            int
	TrialsWithResults int
	Outcomes          int
	Measurements      int
	Analyses          int
	References        int
	Reviews           int
	Studies           int
	Links             int
	Runs              int
	Sources           []SourceFile
}

// Info counts the rows of the main tables in one snapshot.
func (db *DB) Info(ctx context.Context) (Info, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return Info{}, err
	}
	defer rollback(tx)
	var in Info
	if err := tx.QueryRowContext(ctx, "PRAGMA user_version").Scan(&in.SchemaVersion); err != nil {
		return Info{}, fmt.Errorf("info: schema version: %w", err)
	}
	for _, c := range []struct {
		dst   *int
		query string
	}{
		{&in.Trials, `SELECT count(*) FROM trials`},
		{&in.TrialsWithResults, `SELECT count(*) FROM trials WHERE has_results = 1`},
		{&in.Outcomes, `SELECT count(*) FROM outcomes`},
		{&in.Measurements, `SELECT count(*) FROM measurements`},
		{&in.Analyses, `SELECT count(*) FROM analyses`},
		{&in.References, `SELECT count(*) FROM trial_references`},
		{&in.Reviews, `SELECT count(*) FROM reviews`},
		{&in.Studies, `SELECT count(*) FROM review_studies`},
		{&in.Links, `SELECT count(*) FROM links`},
		{&in.Runs, `SELECT count(*) FROM runs`},
	} {
		if err := tx.QueryRowContext(ctx, c.query).Scan(c.dst); err != nil {
			return Info{}, fmt.Errorf("info: %s: %w", c.query, err)
		}
	}
	if in.Sources, err = sources(ctx, tx); err != nil {
		return Info{}, fmt.Errorf("info: %w", err)
	}
	return in, nil
}

// Check runs SQLite's integrity and foreign key checks and the store's own
// consistency checks, and returns the problems found (none: the file is
// fine).
func (db *DB) Check(ctx context.Context) ([]string, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	var problems []string
	err = eachRow(ctx, tx, `PRAGMA integrity_check`, nil, func(r *sql.Rows) error {
		var msg string
		if err := r.Scan(&msg); err != nil {
			return err
		}
		if msg != "ok" {
			problems = append(problems, "integrity: "+msg)
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("check integrity: %w", err)
	}
	err = eachRow(ctx, tx, `PRAGMA foreign_key_check`, nil, func(r *sql.Rows) error {
		var table, parent string
		var rowid sql.NullInt64
		var fkid int
		if err := r.Scan(&table, &rowid, &parent, &fkid); err != nil {
			return err
		}
		problems = append(problems, fmt.Sprintf("foreign key: %s row %d has no parent in %s", table, rowid.Int64, parent))
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("check foreign keys: %w", err)
	}
	// Rows whose parent within the trial is missing (these have only a
	// foreign key to trials).
	for _, c := range []struct{ name, query string }{
		{"measurement without category", `SELECT m.trial_id, m.outcome_pos FROM measurements m
			WHERE NOT EXISTS (SELECT 1 FROM categories g WHERE g.trial_id = m.trial_id AND g.outcome_pos = m.outcome_pos
				AND g.class_pos = m.class_pos AND g.category_pos = m.category_pos)`},
		{"category without class", `SELECT g.trial_id, g.outcome_pos FROM categories g
			WHERE NOT EXISTS (SELECT 1 FROM classes c WHERE c.trial_id = g.trial_id AND c.outcome_pos = g.outcome_pos
				AND c.class_pos = g.class_pos)`},
		{"class without outcome", `SELECT c.trial_id, c.outcome_pos FROM classes c
			WHERE NOT EXISTS (SELECT 1 FROM outcomes o WHERE o.trial_id = c.trial_id AND o.outcome_pos = c.outcome_pos)`},
		{"group without outcome", `SELECT g.trial_id, g.outcome_pos FROM result_groups g
			WHERE NOT EXISTS (SELECT 1 FROM outcomes o WHERE o.trial_id = g.trial_id AND o.outcome_pos = g.outcome_pos)`},
		{"analysis without outcome", `SELECT a.trial_id, a.outcome_pos FROM analyses a
			WHERE NOT EXISTS (SELECT 1 FROM outcomes o WHERE o.trial_id = a.trial_id AND o.outcome_pos = a.outcome_pos)`},
		{"denominator without outcome", `SELECT d.trial_id, d.outcome_pos FROM denoms d
			WHERE NOT EXISTS (SELECT 1 FROM outcomes o WHERE o.trial_id = d.trial_id AND o.outcome_pos = d.outcome_pos)`},
	} {
		err := eachRow(ctx, tx, c.query+` LIMIT 20`, nil, func(r *sql.Rows) error {
			var id string
			var op int
			if err := r.Scan(&id, &op); err != nil {
				return err
			}
			problems = append(problems, fmt.Sprintf("%s: trial %s outcome %d", c.name, id, op))
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("check %s: %w", c.name, err)
		}
	}
	return problems, nil
}
