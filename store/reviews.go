package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"

	"unshelved/ingest"
)

// SaveReviews stores reviews and their studies in one transaction. Each
// given review replaces the stored one of the same id together with all
// its studies; reviews not given are untouched. Every study must belong to
// one of the given reviews. Links to a replaced review are kept. Studies
// keep their order within each review.
func (db *DB) SaveReviews(ctx context.Context, reviews []ingest.Review, studies []ingest.ReviewStudy) error {
	if err := db.writable(); err != nil {
		return err
	}
	given := make(map[string]bool, len(reviews))
	for _, r := range reviews {
		if r.ReviewID == "" {
			return errors.New("save reviews: empty review id")
		}
		if given[r.ReviewID] {
			return fmt.Errorf("save reviews: review %s given twice", r.ReviewID)
		}
		given[r.ReviewID] = true
		if err := errors.Join(checkFloatPtr("timepoint weeks", r.TimepointWeeks), checkFloatPtr("mid", r.MID)); err != nil {
			return fmt.Errorf("save reviews: review %s: %w", r.ReviewID, err)
		}
	}
	for _, s := range studies {
		if !given[s.ReviewID] {
			return fmt.Errorf("save reviews: study %s: review %q not among the reviews saved", s.Study, s.ReviewID)
		}
		if err := errors.Join(checkFloatPtr("effect", s.Effect), checkFloatPtr("se", s.SE),
			checkFloatPtr("treat mean", s.TreatMean), checkFloatPtr("treat sd", s.TreatSD),
			checkFloatPtr("ctrl mean", s.CtrlMean), checkFloatPtr("ctrl sd", s.CtrlSD)); err != nil {
			return fmt.Errorf("save reviews: review %s: study %s: %w", s.ReviewID, s.Study, err)
		}
	}
	if err := ctx.Err(); err != nil {
		return err
	}

	tx, err := db.write.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("save reviews: begin: %w", err)
	}
	defer rollback(tx)
	now := timeText(db.now())
	upsert, err := tx.PrepareContext(ctx, `INSERT INTO reviews (review_id, title, measure, outcome, unit, better,
		timepoint_weeks, search_date, comparator, mid, source_path, source_sha256, source_position, ingested_at)
		VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
		ON CONFLICT (review_id) DO UPDATE SET title = excluded.title, measure = excluded.measure,
			outcome = excluded.outcome, unit = excluded.unit, better = excluded.better,
			timepoint_weeks = excluded.timepoint_weeks, search_date = excluded.search_date,
			comparator = excluded.comparator, mid = excluded.mid, source_path = excluded.source_path,
			source_sha256 = excluded.source_sha256, source_position = excluded.source_position,
			ingested_at = excluded.ingested_at`)
	if err != nil {
		return fmt.Errorf("save reviews: prepare: %w", err)
	}
	defer upsert.Close()
	clearTerms, err := tx.PrepareContext(ctx, `DELETE FROM review_terms WHERE review_id = ?`)
	if err != nil {
		return fmt.Errorf("save reviews: prepare: %w", err)
	}
	defer clearTerms.Close()
	clearStudies, err := tx.PrepareContext(ctx, `DELETE FROM review_studies WHERE review_id = ?`)
	if err != nil {
		return fmt.Errorf("save reviews: prepare: %w", err)
	}
	defer clearStudies.Close()
	insertTerm, err := tx.PrepareContext(ctx, insertSQL("review_terms", "review_id, kind, pos, term"))
	if err != nil {
		return fmt.Errorf("save reviews: prepare: %w", err)
	}
	defer insertTerm.Close()
	insertStudy, err := tx.PrepareContext(ctx, insertSQL("review_studies", `review_id, pos, study, registry_id, year,
		effect, se, treat_mean, treat_sd, treat_n, ctrl_mean, ctrl_sd, ctrl_n, note,
		source_path, source_sha256, source_position, ingested_at`))
	if err != nil {
		return fmt.Errorf("save reviews: prepare: %w", err)
	}
	defer insertStudy.Close()

	for _, r := range reviews {
		if _, err := upsert.ExecContext(ctx, r.ReviewID, r.Title, r.Measure, r.Outcome, r.Unit, r.Better,
			floatPtrArg(r.TimepointWeeks), r.SearchDate, r.Comparator, floatPtrArg(r.MID),
			r.Source.Path, r.Source.SHA256, r.Source.Position, now); err != nil {
			return fmt.Errorf("save review %s: %w", r.ReviewID, err)
		}
		for _, st := range []*sql.Stmt{clearTerms, clearStudies} {
			if _, err := st.ExecContext(ctx, r.ReviewID); err != nil {
				return fmt.Errorf("save review %s: clear: %w", r.ReviewID, err)
			}
		}
		for _, l := range []struct {
			kind  string
			terms []string
		}{{"condition", r.Conditions}, {"intervention", r.Interventions}} {
			for i, term := range l.terms {
				if _, err := insertTerm.ExecContext(ctx, r.ReviewID, l.kind, i, term); err != nil {
					return fmt.Errorf("save review %s: %s: %w", r.ReviewID, l.kind, err)
				}
			}
		}
	}
	pos := make(map[string]int)
	for _, s := range studies {
		p := pos[s.ReviewID]
		pos[s.ReviewID] = p + 1
		if _, err := insertStudy.ExecContext(ctx, s.ReviewID, p, s.Study, s.RegistryID, intPtrArg(s.Year),
			floatPtrArg(s.Effect), floatPtrArg(s.SE), floatPtrArg(s.TreatMean), floatPtrArg(s.TreatSD), intPtrArg(s.TreatN),
			floatPtrArg(s.CtrlMean), floatPtrArg(s.CtrlSD), intPtrArg(s.CtrlN), s.Note,
			s.Source.Path, s.Source.SHA256, s.Source.Position, now); err != nil {
			return fmt.Errorf("save review %s: study %s: %w", s.ReviewID, s.Study, err)
		}
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("save reviews: commit: %w", err)
	}
	return nil
}

const reviewColumns = `review_id, title, measure, outcome, unit, better, timepoint_weeks, search_date,
	comparator, mid, source_path, source_sha256, source_position`

// Reviews returns every stored review, sorted by review id.
func (db *DB) Reviews(ctx context.Context) ([]ingest.Review, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	rs, err := loadReviews(ctx, tx, "")
	if err != nil {
		return nil, fmt.Errorf("list reviews: %w", err)
	}
	return rs, nil
}

// ReviewIDs returns the ids of every stored review, sorted (the order of
// Reviews).
func (db *DB) ReviewIDs(ctx context.Context) ([]string, error) {
	ids, err := db.stringColumn(ctx, `SELECT review_id FROM reviews ORDER BY review_id`)
	if err != nil {
		return nil, fmt.Errorf("list review ids: %w", err)
	}
	return ids, nil
}

// Review returns one review; an unknown id gives an error wrapping ErrNotFound.
func (db *DB) Review(ctx context.Context, id string) (ingest.Review, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return ingest.Review{}, err
	}
	defer rollback(tx)
	rs, err := loadReviews(ctx, tx, id)
	if err != nil {
		return ingest.Review{}, fmt.Errorf("load review %s: %w", id, err)
	}
	if len(rs) == 0 {
		return ingest.Review{}, fmt.Errorf("load review %s: %w", id, ErrNotFound)
	}
	return rs[0], nil
}

// loadReviews loads the review id, or all reviews when id is "".
func loadReviews(ctx context.Context, tx *sql.Tx, id string) ([]ingest.Review, error) {
	where, args := "", []any(nil)
	if id != "" {
		where, args = " WHERE review_id = ?", []any{id}
	}
	return loadReviewsWhere(ctx, tx, where, args)
}

// loadReviewsWhere loads the reviews a WHERE clause on review_id selects.
func loadReviewsWhere(ctx context.Context, tx *sql.Tx, where string, args []any) ([]ingest.Review, error) {
	var out []ingest.Review
	index := make(map[string]int)
	err := eachRow(ctx, tx, `SELECT `+reviewColumns+` FROM reviews`+where+` ORDER BY review_id`, args,
		func(r *sql.Rows) error {
			var v ingest.Review
			var weeks, mid sql.NullFloat64
			if err := r.Scan(&v.ReviewID, &v.Title, &v.Measure, &v.Outcome, &v.Unit, &v.Better, &weeks,
				&v.SearchDate, &v.Comparator, &mid, &v.Source.Path, &v.Source.SHA256, &v.Source.Position); err != nil {
				return err
			}
			v.TimepointWeeks, v.MID = floatPtrFrom(weeks), floatPtrFrom(mid)
			index[v.ReviewID] = len(out)
			out = append(out, v)
			return nil
		})
	if err != nil {
		return nil, err
	}
	err = eachRow(ctx, tx, `SELECT review_id, kind, term FROM review_terms`+where+` ORDER BY review_id, kind, pos`, args,
		func(r *sql.Rows) error {
			var rid, kind, term string
			if err := r.Scan(&rid, &kind, &term); err != nil {
				return err
			}
			i, ok := index[rid]
			if !ok {
				return errCorrupt
			}
			if kind == "condition" {
				out[i].Conditions = append(out[i].Conditions, term)
			} else {
				out[i].Interventions = append(out[i].Interventions, term)
			}
			return nil
		})
	if err != nil {
		return nil, err
	}
	return out, nil
}

// ReviewStudies returns the studies of a review in file order. An unknown
// review has no studies (an empty result, not an error).
func (db *DB) ReviewStudies(ctx context.Context, reviewID string) ([]ingest.ReviewStudy, error) {
	out, err := loadStudies(ctx, db.read, " WHERE review_id = ?", []any{reviewID})
	if err != nil {
		return nil, fmt.Errorf("list studies of review %s: %w", reviewID, err)
	}
	return out, nil
}

// loadStudies reads the studies a WHERE clause on review_id selects, by
// review and in file order.
func loadStudies(ctx context.Context, q querier, where string, args []any) ([]ingest.ReviewStudy, error) {
	var out []ingest.ReviewStudy
	err := eachRow(ctx, q, `SELECT review_id, study, registry_id, year, effect, se,
		treat_mean, treat_sd, treat_n, ctrl_mean, ctrl_sd, ctrl_n, note, source_path, source_sha256, source_position
		FROM review_studies`+where+` ORDER BY review_id, pos`, args, func(r *sql.Rows) error {
		var s ingest.ReviewStudy
		var year, tn, cn sql.NullInt64
		var effect, se, tm, tsd, cm, csd sql.NullFloat64
		if err := r.Scan(&s.ReviewID, &s.Study, &s.RegistryID, &year, &effect, &se, &tm, &tsd, &tn,
			&cm, &csd, &cn, &s.Note, &s.Source.Path, &s.Source.SHA256, &s.Source.Position); err != nil {
			return err
		}
		s.Year, s.TreatN, s.CtrlN = intPtrFrom(year), intPtrFrom(tn), intPtrFrom(cn)
		s.Effect, s.SE = floatPtrFrom(effect), floatPtrFrom(se)
		s.TreatMean, s.TreatSD = floatPtrFrom(tm), floatPtrFrom(tsd)
		s.CtrlMean, s.CtrlSD = floatPtrFrom(cm), floatPtrFrom(csd)
		out = append(out, s)
		return nil
	})
	return out, err
}

// ReviewData is a review with its studies and links.
type ReviewData struct {
	Review  ingest.Review
	Studies []ingest.ReviewStudy // in file order
	Links   []ingest.Link        // by trial id and outcome index
}

// ReviewsData reads the named reviews with their studies and links in
// one read transaction and a fixed number of queries, in the order of
// ids. A review that is not stored gives an error wrapping ErrNotFound.
func (db *DB) ReviewsData(ctx context.Context, ids []string) ([]ReviewData, error) {
	if len(ids) == 0 {
		return nil, nil
	}
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	in, args := inList(ids)
	where := " WHERE review_id IN (" + in + ")"
	reviews, err := loadReviewsWhere(ctx, tx, where, args)
	if err != nil {
		return nil, fmt.Errorf("load reviews: %w", err)
	}
	byID := make(map[string]*ReviewData, len(reviews))
	for _, rv := range reviews {
		byID[rv.ReviewID] = &ReviewData{Review: rv}
	}
	studies, err := loadStudies(ctx, tx, where, args)
	if err != nil {
		return nil, fmt.Errorf("load studies: %w", err)
	}
	for _, s := range studies {
		if d := byID[s.ReviewID]; d != nil {
			d.Studies = append(d.Studies, s)
		}
	}
	links, err := loadLinks(ctx, tx, where, args)
	if err != nil {
		return nil, err
	}
	for _, l := range links {
		if d := byID[l.ReviewID]; d != nil {
			d.Links = append(d.Links, l.Link)
		}
	}
	out := make([]ReviewData, len(ids))
	for i, id := range ids {
		d := byID[id]
		if d == nil {
			return nil, fmt.Errorf("load review %s: %w", id, ErrNotFound)
		}
		out[i] = *d
	}
	return out, nil
}
