package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"time"

	"unshelved/ingest"
)

// LinkRecord is a stored link with the time its decision was made.
type LinkRecord struct {
	ingest.Link
	DecidedAt *time.Time // nil while undecided
}

// SaveLinks upserts links on (review id, trial id, outcome index) in one
// transaction. The review must be stored; the trial need not be.
//
// A stored decision survives an update that carries none: when the new
// link's Decision is "" and the stored one's is not, the decision and the
// fields it was made on (TreatGroups, CtrlGroups, Flip, UnitFrom) are kept
// and only the matching fields (Class, OutcomeTitle, TimeFrame, Score,
// Reasons, AutoAccepted, Source) are updated. A decision made by a person
// (AutoAccepted false) is also kept against a new automatic one
// (AutoAccepted true). Otherwise the new link replaces the stored one.
// DecidedAt is set when a decision is first stored or changes.
func (db *DB) SaveLinks(ctx context.Context, links []ingest.Link) error {
	if err := db.writable(); err != nil {
		return err
	}
	if err := checkLinks(links); err != nil {
		return err
	}
	tx, err := db.write.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("save links: begin: %w", err)
	}
	defer rollback(tx)
	stmts := make([]*sql.Stmt, 0, 5)
	defer func() {
		for _, s := range stmts {
			_ = s.Close()
		}
	}()
	prep := func(q string) (*sql.Stmt, error) {
		s, err := tx.PrepareContext(ctx, q)
		if err != nil {
			return nil, fmt.Errorf("save links: prepare: %w", err)
		}
		stmts = append(stmts, s)
		return s, nil
	}
	lookup, err := prep(`SELECT decision, auto_accepted, decided_at FROM links
		WHERE review_id = ? AND trial_id = ? AND outcome_index = ?`)
	if err != nil {
		return err
	}
	replace, err := prep(`INSERT INTO links (review_id, trial_id, outcome_index, flip, unit_from, decision,
		class, outcome_title, time_frame, score, reasons, auto_accepted, decided_at,
		source_path, source_sha256, source_position, ingested_at)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
		ON CONFLICT (review_id, trial_id, outcome_index) DO UPDATE SET flip = excluded.flip,
			unit_from = excluded.unit_from, decision = excluded.decision, class = excluded.class,
			outcome_title = excluded.outcome_title, time_frame = excluded.time_frame, score = excluded.score,
			reasons = excluded.reasons, auto_accepted = excluded.auto_accepted, decided_at = excluded.decided_at,
			source_path = excluded.source_path, source_sha256 = excluded.source_sha256,
			source_position = excluded.source_position, ingested_at = excluded.ingested_at`)
	if err != nil {
		return err
	}
	updateMatch, err := prep(`UPDATE links SET class = ?, outcome_title = ?, time_frame = ?, score = ?,
		reasons = ?, source_path = ?, source_sha256 = ?, source_position = ?, ingested_at = ?
		WHERE review_id = ? AND trial_id = ? AND outcome_index = ?`)
	if err != nil {
		return err
	}
	clearGroups, err := prep(`DELETE FROM link_groups WHERE review_id = ? AND trial_id = ? AND outcome_index = ?`)
	if err != nil {
		return err
	}
	insertGroup, err := prep(insertSQL("link_groups", "review_id, trial_id, outcome_index, role, pos, group_id"))
	if err != nil {
		return err
	}

	now := timeText(db.now())
	for _, l := range links {
		if err := ctx.Err(); err != nil {
			return err
		}
		key := []any{l.ReviewID, l.TrialID, l.OutcomeIndex}
		var storedDecision string
		var storedAuto bool
		var storedAt sql.NullString
		err := lookup.QueryRowContext(ctx, key...).Scan(&storedDecision, &storedAuto, &storedAt)
		found := err == nil
		if err != nil && !errors.Is(err, sql.ErrNoRows) {
			return fmt.Errorf("save link %s/%s/%d: look up: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
		}
		keep := found && storedDecision != "" &&
			(l.Decision == "" || (l.AutoAccepted && !storedAuto))
		if keep {
			// AutoAccepted describes the kept decision, so it stays too.
			if _, err := updateMatch.ExecContext(ctx, l.Class, l.OutcomeTitle, l.TimeFrame, floatPtrArg(l.Score),
				l.Reasons, l.Source.Path, l.Source.SHA256, l.Source.Position, now,
				l.ReviewID, l.TrialID, l.OutcomeIndex); err != nil {
				return fmt.Errorf("save link %s/%s/%d: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
			}
			continue
		}
		var decidedAt any
		switch {
		case l.Decision == "":
		case found && storedDecision == l.Decision && storedAt.Valid:
			decidedAt = storedAt.String
		default:
			decidedAt = now
		}
		if _, err := replace.ExecContext(ctx, l.ReviewID, l.TrialID, l.OutcomeIndex, boolArg(l.Flip), l.UnitFrom,
			l.Decision, l.Class, l.OutcomeTitle, l.TimeFrame, floatPtrArg(l.Score), l.Reasons, boolArg(l.AutoAccepted),
			decidedAt, l.Source.Path, l.Source.SHA256, l.Source.Position, now); err != nil {
			return fmt.Errorf("save link %s/%s/%d: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
		}
		if _, err := clearGroups.ExecContext(ctx, key...); err != nil {
			return fmt.Errorf("save link %s/%s/%d: clear groups: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
		}
		if err := insertLinkGroups(ctx, insertGroup, l); err != nil {
			return err
		}
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("save links: commit: %w", err)
	}
	return nil
}

// checkLinks refuses, before anything is written, a link whose score is not
// a number or whose decision is not one the links file allows.
func checkLinks(links []ingest.Link) error {
	for _, l := range links {
		if err := checkFloatPtr("score", l.Score); err != nil {
			return fmt.Errorf("save links: %s/%s/%d: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
		}
		switch l.Decision {
		case "", "accept", "reject", "accept-duplicate":
		default:
			return fmt.Errorf("save links: %s/%s/%d: decision %q is not accept, reject, accept-duplicate or empty",
				l.ReviewID, l.TrialID, l.OutcomeIndex, l.Decision)
		}
	}
	return nil
}

// insertLinkGroups stores the link's treatment and control group ids in
// order.
func insertLinkGroups(ctx context.Context, insertGroup *sql.Stmt, l ingest.Link) error {
	for _, side := range []struct {
		role string
		ids  []string
	}{{"treat", l.TreatGroups}, {"ctrl", l.CtrlGroups}} {
		for i, g := range side.ids {
			if _, err := insertGroup.ExecContext(ctx, l.ReviewID, l.TrialID, l.OutcomeIndex, side.role, i, g); err != nil {
				return fmt.Errorf("save link %s/%s/%d: group: %w", l.ReviewID, l.TrialID, l.OutcomeIndex, err)
			}
		}
	}
	return nil
}

// Links returns the links of a review ("" for all reviews), sorted by
// review id, trial id and outcome index.
func (db *DB) Links(ctx context.Context, reviewID string) ([]ingest.Link, error) {
	recs, err := db.LinkRecords(ctx, reviewID)
	if err != nil {
		return nil, err
	}
	var out []ingest.Link
	for _, r := range recs {
		out = append(out, r.Link)
	}
	return out, nil
}

// LinkRecords is Links with the decision times.
func (db *DB) LinkRecords(ctx context.Context, reviewID string) ([]LinkRecord, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	where, args := "", []any(nil)
	if reviewID != "" {
		where, args = " WHERE review_id = ?", []any{reviewID}
	}
	return loadLinks(ctx, tx, where, args)
}

// loadLinks reads the links a WHERE clause on review_id selects, sorted by
// review id, trial id and outcome index.
func loadLinks(ctx context.Context, tx *sql.Tx, where string, args []any) ([]LinkRecord, error) {
	var out []LinkRecord
	type key struct {
		review, trial string
		outcome       int
	}
	index := make(map[key]int)
	err := eachRow(ctx, tx, `SELECT review_id, trial_id, outcome_index, flip, unit_from, decision, class,
		outcome_title, time_frame, score, reasons, auto_accepted, decided_at, source_path, source_sha256, source_position
		FROM links`+where+` ORDER BY review_id, trial_id, outcome_index`, args, func(r *sql.Rows) error {
		var rec LinkRecord
		l := &rec.Link
		var score sql.NullFloat64
		var at sql.NullString
		if err := r.Scan(&l.ReviewID, &l.TrialID, &l.OutcomeIndex, &l.Flip, &l.UnitFrom, &l.Decision, &l.Class,
			&l.OutcomeTitle, &l.TimeFrame, &score, &l.Reasons, &l.AutoAccepted, &at,
			&l.Source.Path, &l.Source.SHA256, &l.Source.Position); err != nil {
			return err
		}
		l.Score = floatPtrFrom(score)
		if at.Valid {
			t, err := parseTimeText(at.String)
			if err != nil {
				return err
			}
			rec.DecidedAt = &t
		}
		index[key{l.ReviewID, l.TrialID, l.OutcomeIndex}] = len(out)
		out = append(out, rec)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list links: %w", err)
	}
	err = eachRow(ctx, tx, `SELECT review_id, trial_id, outcome_index, role, group_id FROM link_groups`+where+`
		ORDER BY review_id, trial_id, outcome_index, role, pos`, args, func(r *sql.Rows) error {
		var k key
		var role, g string
		if err := r.Scan(&k.review, &k.trial, &k.outcome, &role, &g); err != nil {
			return err
		}
		i, ok := index[k]
		if !ok {
			return errCorrupt
		}
		if role == "treat" {
			out[i].TreatGroups = append(out[i].TreatGroups, g)
		} else {
			out[i].CtrlGroups = append(out[i].CtrlGroups, g)
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("list link groups: %w", err)
	}
	return out, nil
}
