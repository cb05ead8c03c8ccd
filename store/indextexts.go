package store

import (
	"context"
	"database/sql"
	"fmt"
	"unshelved/ingest"
)

// Sides of a trial text for the candidate index (IndexTexts), as ingest
// names them.
const (
	IndexCondition    = ingest.IndexCondition
	IndexIntervention = ingest.IndexIntervention
)

// IndexTexts streams, in one snapshot, the texts of every stored trial that
// a candidate index reads, with the side each belongs to: titles on both
// sides, the acronym on the intervention side, conditions, keywords and
// condition terms on the condition side, intervention names, other names
// and intervention terms on the intervention side (the fields
// TrialSummary holds for them). Each trial's id comes first with its
// titles, in trial id order; the lists follow table by table. Unlike
// TrialSummaries it holds nothing in memory, so an index over the whole
// registry can be built without the summaries.
func (db *DB) IndexTexts(ctx context.Context, fn func(trialID string, side int, text string) error) error {
	tx, err := db.readTx(ctx)
	if err != nil {
		return err
	}
	defer rollback(tx)
	both := IndexCondition | IndexIntervention
	err = eachRow(ctx, tx, `SELECT trial_id, brief_title, official_title, acronym FROM trials ORDER BY trial_id`, nil, func(r *sql.Rows) error {
		var id, brief, official, acronym string
		if err := r.Scan(&id, &brief, &official, &acronym); err != nil {
			return err
		}
		if err := fn(id, both, brief); err != nil {
			return err
		}
		if err := fn(id, both, official); err != nil {
			return err
		}
		return fn(id, IndexIntervention, acronym)
	})
	if err != nil {
		return fmt.Errorf("read trial titles: %w", err)
	}
	lists := []struct {
		name, query string
	}{
		{"terms", `SELECT trial_id, term, kind FROM trial_terms ORDER BY trial_id`},
		{"interventions", `SELECT trial_id, name, '' FROM interventions ORDER BY trial_id`},
		{"other names", `SELECT trial_id, name, '' FROM intervention_names WHERE kind = 'other_name' ORDER BY trial_id`},
	}
	for _, l := range lists {
		err := eachRow(ctx, tx, l.query, nil, func(r *sql.Rows) error {
			var id, text, kind string
			if err := r.Scan(&id, &text, &kind); err != nil {
				return err
			}
			side := IndexIntervention
			if kind != "" && kind != "intervention_term" {
				side = IndexCondition
			}
			return fn(id, side, text)
		})
		if err != nil {
			return fmt.Errorf("read trial %s: %w", l.name, err)
		}
	}
	return nil
}
