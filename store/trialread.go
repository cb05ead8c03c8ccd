package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"

	"unshelved/ingest"
)

// querier is what both *sql.DB and *sql.Tx offer for reading.
type querier interface {
	QueryContext(ctx context.Context, query string, args ...any) (*sql.Rows, error)
	QueryRowContext(ctx context.Context, query string, args ...any) *sql.Row
}

// eachRow runs query and calls scan once per row.
func eachRow(ctx context.Context, q querier, query string, args []any, scan func(*sql.Rows) error) error {
	rows, err := q.QueryContext(ctx, query, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		if err := scan(rows); err != nil {
			return err
		}
	}
	return rows.Err()
}

// errCorrupt is wrapped when child rows do not fit their parents.
var errCorrupt = errors.New("stored rows out of order")

func numFrom(text string, v sql.NullFloat64) ingest.Num {
	return ingest.Num{Text: text, Value: v.Float64, OK: v.Valid}
}

func intPtrFrom(v sql.NullInt64) *int {
	if !v.Valid {
		return nil
	}
	i := int(v.Int64)
	return &i
}

func boolPtrFrom(v sql.NullInt64) *bool {
	if !v.Valid {
		return nil
	}
	b := v.Int64 != 0
	return &b
}

func floatPtrFrom(v sql.NullFloat64) *float64 {
	if !v.Valid {
		return nil
	}
	x := v.Float64
	return &x
}

// Trial returns the stored trial with every field and nested list, lists
// in their original order. A trial that is not stored gives an error
// wrapping ErrNotFound. An id that no trial has exactly is matched in any
// case ("nct02552212" finds NCT02552212). The read runs in one snapshot, so a concurrent
// replace is seen entirely or not at all.
func (db *DB) Trial(ctx context.Context, trialID string) (ingest.Trial, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return ingest.Trial{}, err
	}
	defer rollback(tx)
	t, err := loadTrial(ctx, tx, trialID)
	if errors.Is(err, ErrNotFound) {
		// Ids are matched in any case ("nct02552212"): a person typing an
		// id should not have to know how the registry spells it.
		var canonical string
		switch qerr := tx.QueryRowContext(ctx, `SELECT trial_id FROM trials WHERE trial_id = ? COLLATE NOCASE ORDER BY trial_id LIMIT 1`, trialID).Scan(&canonical); {
		case qerr == nil && canonical != trialID:
			t, err = loadTrial(ctx, tx, canonical)
		case qerr != nil && !errors.Is(qerr, sql.ErrNoRows):
			err = fmt.Errorf("look up trial id: %w", qerr)
		}
	}
	if err != nil {
		return ingest.Trial{}, fmt.Errorf("load trial %s: %w", trialID, err)
	}
	return t, nil
}

// Trials returns the stored trials with the given ids, in the order of
// ids, leaving out those not stored, read in one snapshot with a fixed
// number of queries (one per table) whatever their count.
func (db *DB) Trials(ctx context.Context, ids []string) ([]ingest.Trial, error) {
	tx, err := db.readTx(ctx)
	if err != nil {
		return nil, err
	}
	defer rollback(tx)
	var out []ingest.Trial
	for start := 0; start < len(ids); start += maxTrialsPerRead {
		ts, err := loadTrials(ctx, tx, ids[start:min(start+maxTrialsPerRead, len(ids))])
		if err != nil {
			return nil, fmt.Errorf("load trials: %w", err)
		}
		for _, t := range ts {
			out = append(out, *t)
		}
	}
	return out, nil
}

// maxTrialsPerRead keeps the number of bound parameters of one query well
// below SQLite's limit.
const maxTrialsPerRead = 500

func loadTrial(ctx context.Context, tx *sql.Tx, id string) (ingest.Trial, error) {
	ts, err := loadTrials(ctx, tx, []string{id})
	if err != nil {
		return ingest.Trial{}, err
	}
	if len(ts) == 0 {
		return ingest.Trial{}, ErrNotFound
	}
	return *ts[0], nil
}

// trialRowScanner scans a row whose first column is the trial id, then points
// *cur at that trial.
type trialRowScanner struct {
	rows *sql.Rows
	id   string
	cur  **ingest.Trial
	byID map[string]*ingest.Trial
}

func (r *trialRowScanner) Scan(dest ...any) error {
	if err := r.rows.Scan(append([]any{&r.id}, dest...)...); err != nil {
		return err
	}
	t, ok := r.byID[r.id]
	if !ok {
		return errCorrupt
	}
	*r.cur = t
	return nil
}

// inListStep rounds the length of IN lists up, so that reads of sets of
// any size share a few statement texts (and the prepared statements
// cached for them on each connection).
const inListStep = 64

// inList returns the placeholders of an IN list for ids (not empty) and
// its arguments, padded to a multiple of inListStep by repeating the
// first id (an IN list is a set: the repeats change nothing).
func inList(ids []string) (string, []any) {
	n := (len(ids) + inListStep - 1) / inListStep * inListStep
	args := make([]any, n)
	for i := range args {
		args[i] = ids[0]
	}
	for i, id := range ids {
		args[i] = id
	}
	return "?" + strings.Repeat(", ?", n-1), args
}

// loadTrials reads the stored trials with the given ids (those not
// stored are left out), in the order of ids, with a fixed number of
// queries whatever their count.
func loadTrials(ctx context.Context, tx *sql.Tx, ids []string) ([]*ingest.Trial, error) {
	if len(ids) == 0 {
		return nil, nil
	}
	in, args := inList(ids)
	byID := make(map[string]*ingest.Trial, len(ids))
	err := eachRow(ctx, tx, `SELECT trial_id, registry, org_study_id, brief_title, official_title, acronym,
		organization_name, organization_class, overall_status, last_known_status, why_stopped, status_verified,
		study_type, allocation, intervention_model, primary_purpose, masking, enrollment, enrollment_type,
		lead_sponsor_name, lead_sponsor_class, start_date, start_date_type,
		primary_completion_date, primary_completion_date_type, completion_date, completion_date_type,
		first_posted_date, first_posted_date_type, results_first_posted, results_first_posted_type,
		last_update_posted, last_update_posted_type, version_holder, has_results, publication, content_hash,
		source_path, source_sha256, source_position, coalesce(source_crc32, 0), coalesce(source_size, 0)
		FROM trials WHERE trial_id IN (`+in+`)`, args, func(r *sql.Rows) error {
		t := new(ingest.Trial)
		var enrollment, hasResults sql.NullInt64
		if err := r.Scan(&t.TrialID, &t.Registry, &t.OrgStudyID, &t.BriefTitle, &t.OfficialTitle, &t.Acronym,
			&t.Organization.Name, &t.Organization.Class, &t.OverallStatus, &t.LastKnownStatus, &t.WhyStopped, &t.StatusVerified,
			&t.StudyType, &t.Allocation, &t.InterventionModel, &t.PrimaryPurpose, &t.Masking, &enrollment, &t.EnrollmentType,
			&t.LeadSponsor.Name, &t.LeadSponsor.Class, &t.StartDate.Text, &t.StartDate.Type,
			&t.PrimaryCompletionDate.Text, &t.PrimaryCompletionDate.Type, &t.CompletionDate.Text, &t.CompletionDate.Type,
			&t.FirstPostedDate.Text, &t.FirstPostedDate.Type, &t.ResultsFirstPosted.Text, &t.ResultsFirstPosted.Type,
			&t.LastUpdatePosted.Text, &t.LastUpdatePosted.Type, &t.VersionHolder, &hasResults, &t.Publication, &t.ContentHash,
			&t.Source.Path, &t.Source.SHA256, &t.Source.Position, &t.Source.EntryCRC32, &t.Source.EntrySize); err != nil {
			return err
		}
		t.Enrollment = intPtrFrom(enrollment)
		t.HasResults = boolPtrFrom(hasResults)
		byID[t.TrialID] = t
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("read trial rows: %w", err)
	}
	var t *ingest.Trial // the trial of the row being read

	steps := []struct {
		name  string
		query string
		scan  func(*trialRowScanner) error
	}{
		{"ids", `SELECT trial_id, kind, other_id, id_type, domain, link FROM trial_ids WHERE trial_id IN (%s) ORDER BY trial_id, kind, pos`,
			func(r *trialRowScanner) error {
				var kind string
				var s ingest.SecondaryID
				if err := r.Scan(&kind, &s.ID, &s.Type, &s.Domain, &s.Link); err != nil {
					return err
				}
				if kind == "alias" {
					t.Aliases = append(t.Aliases, s.ID)
				} else {
					t.SecondaryIDs = append(t.SecondaryIDs, s)
				}
				return nil
			}},
		{"phases", `SELECT trial_id, phase FROM trial_phases WHERE trial_id IN (%s) ORDER BY trial_id, pos`,
			func(r *trialRowScanner) error {
				var p string
				if err := r.Scan(&p); err != nil {
					return err
				}
				t.Phases = append(t.Phases, p)
				return nil
			}},
		{"terms", `SELECT trial_id, kind, term FROM trial_terms WHERE trial_id IN (%s) ORDER BY trial_id, kind, pos`,
			func(r *trialRowScanner) error {
				var kind, term string
				if err := r.Scan(&kind, &term); err != nil {
					return err
				}
				switch kind {
				case "condition":
					t.Conditions = append(t.Conditions, term)
				case "keyword":
					t.Keywords = append(t.Keywords, term)
				case "condition_term":
					t.ConditionTerms = append(t.ConditionTerms, term)
				case "intervention_term":
					t.InterventionTerms = append(t.InterventionTerms, term)
				}
				return nil
			}},
		{"collaborators", `SELECT trial_id, name, class FROM trial_collaborators WHERE trial_id IN (%s) ORDER BY trial_id, pos`,
			func(r *trialRowScanner) error {
				var o ingest.Org
				if err := r.Scan(&o.Name, &o.Class); err != nil {
					return err
				}
				t.Collaborators = append(t.Collaborators, o)
				return nil
			}},
		{"arms", `SELECT trial_id, label, type, description FROM arms WHERE trial_id IN (%s) ORDER BY trial_id, arm_pos`,
			func(r *trialRowScanner) error {
				var a ingest.Arm
				if err := r.Scan(&a.Label, &a.Type, &a.Description); err != nil {
					return err
				}
				t.Arms = append(t.Arms, a)
				return nil
			}},
		{"arm intervention names", `SELECT trial_id, arm_pos, name FROM arm_intervention_names WHERE trial_id IN (%s) ORDER BY trial_id, arm_pos, pos`,
			func(r *trialRowScanner) error {
				var i int
				var n string
				if err := r.Scan(&i, &n); err != nil {
					return err
				}
				if i < 0 || i >= len(t.Arms) {
					return errCorrupt
				}
				t.Arms[i].InterventionNames = append(t.Arms[i].InterventionNames, n)
				return nil
			}},
		{"interventions", `SELECT trial_id, type, name, description FROM interventions WHERE trial_id IN (%s) ORDER BY trial_id, intervention_pos`,
			func(r *trialRowScanner) error {
				var iv ingest.Intervention
				if err := r.Scan(&iv.Type, &iv.Name, &iv.Description); err != nil {
					return err
				}
				t.Interventions = append(t.Interventions, iv)
				return nil
			}},
		{"intervention names", `SELECT trial_id, intervention_pos, kind, name FROM intervention_names WHERE trial_id IN (%s)
			ORDER BY trial_id, intervention_pos, kind, pos`,
			func(r *trialRowScanner) error {
				var i int
				var kind, n string
				if err := r.Scan(&i, &kind, &n); err != nil {
					return err
				}
				if i < 0 || i >= len(t.Interventions) {
					return errCorrupt
				}
				iv := &t.Interventions[i]
				if kind == "arm_label" {
					iv.ArmGroupLabels = append(iv.ArmGroupLabels, n)
				} else {
					iv.OtherNames = append(iv.OtherNames, n)
				}
				return nil
			}},
		{"registered outcomes", `SELECT trial_id, kind, measure, description, time_frame FROM registered_outcomes WHERE trial_id IN (%s) ORDER BY trial_id, pos`,
			func(r *trialRowScanner) error {
				var o ingest.RegisteredOutcome
				if err := r.Scan(&o.Kind, &o.Measure, &o.Description, &o.TimeFrame); err != nil {
					return err
				}
				t.RegisteredOutcomes = append(t.RegisteredOutcomes, o)
				return nil
			}},
		{"references", `SELECT trial_id, pmid, type, citation FROM trial_references WHERE trial_id IN (%s) ORDER BY trial_id, pos`,
			func(r *trialRowScanner) error {
				var ref ingest.Reference
				if err := r.Scan(&ref.PMID, &ref.Type, &ref.Citation); err != nil {
					return err
				}
				t.References = append(t.References, ref)
				return nil
			}},
		{"outcomes", `SELECT trial_id, outcome_index, type, title, description, population, time_frame, reporting_status,
			param_type, dispersion_text, dispersion, unit, denom_units, units_analyzed, anticipated_post, calculate_pct
			FROM outcomes WHERE trial_id IN (%s) ORDER BY trial_id, outcome_pos`,
			func(r *trialRowScanner) error {
				var o ingest.Outcome
				var pct sql.NullInt64
				if err := r.Scan(&o.Index, &o.Type, &o.Title, &o.Description, &o.Population, &o.TimeFrame,
					&o.ReportingStatus, &o.ParamType, &o.DispersionText, &o.Dispersion, &o.Unit, &o.DenomUnits,
					&o.UnitsAnalyzed, &o.AnticipatedPost, &pct); err != nil {
					return err
				}
				o.CalculatePct = boolPtrFrom(pct)
				t.Outcomes = append(t.Outcomes, o)
				return nil
			}},
		{"groups", `SELECT trial_id, outcome_pos, group_id, title, description, role FROM result_groups WHERE trial_id IN (%s)
			ORDER BY trial_id, outcome_pos, group_pos`,
			func(r *trialRowScanner) error {
				var op int
				var g ingest.Group
				if err := r.Scan(&op, &g.ID, &g.Title, &g.Description, &g.Role); err != nil {
					return err
				}
				o, err := outcomeAt(t, op)
				if err != nil {
					return err
				}
				o.Groups = append(o.Groups, g)
				return nil
			}},
		{"classes", `SELECT trial_id, outcome_pos, title FROM classes WHERE trial_id IN (%s) ORDER BY trial_id, outcome_pos, class_pos`,
			func(r *trialRowScanner) error {
				var op int
				var c ingest.Class
				if err := r.Scan(&op, &c.Title); err != nil {
					return err
				}
				o, err := outcomeAt(t, op)
				if err != nil {
					return err
				}
				o.Classes = append(o.Classes, c)
				return nil
			}},
		{"categories", `SELECT trial_id, outcome_pos, class_pos, title FROM categories WHERE trial_id IN (%s)
			ORDER BY trial_id, outcome_pos, class_pos, category_pos`,
			func(r *trialRowScanner) error {
				var op, cp int
				var g ingest.Category
				if err := r.Scan(&op, &cp, &g.Title); err != nil {
					return err
				}
				c, err := classAt(t, op, cp)
				if err != nil {
					return err
				}
				c.Categories = append(c.Categories, g)
				return nil
			}},
		{"denoms", `SELECT trial_id, outcome_pos, class_pos, units FROM denoms WHERE trial_id IN (%s)
			ORDER BY trial_id, outcome_pos, class_pos NULLS FIRST, denom_pos`,
			func(r *trialRowScanner) error {
				var op int
				var cp sql.NullInt64
				var d ingest.Denom
				if err := r.Scan(&op, &cp, &d.Units); err != nil {
					return err
				}
				list, err := denomList(t, op, cp)
				if err != nil {
					return err
				}
				*list = append(*list, d)
				return nil
			}},
		{"denom counts", `SELECT trial_id, outcome_pos, class_pos, denom_pos, group_id, value_text, value FROM denom_counts
			WHERE trial_id IN (%s) ORDER BY trial_id, outcome_pos, class_pos NULLS FIRST, denom_pos, count_pos`,
			func(r *trialRowScanner) error {
				var op, dp int
				var cp sql.NullInt64
				var c ingest.Count
				var text string
				var v sql.NullFloat64
				if err := r.Scan(&op, &cp, &dp, &c.GroupID, &text, &v); err != nil {
					return err
				}
				c.Value = numFrom(text, v)
				list, err := denomList(t, op, cp)
				if err != nil {
					return err
				}
				if dp < 0 || dp >= len(*list) {
					return errCorrupt
				}
				(*list)[dp].Counts = append((*list)[dp].Counts, c)
				return nil
			}},
		{"measurements", `SELECT trial_id, outcome_pos, class_pos, category_pos, group_id, value_text, value, spread_text, spread,
			lower_text, lower, upper_text, upper, comment FROM measurements WHERE trial_id IN (%s)
			ORDER BY trial_id, outcome_pos, class_pos, category_pos, measurement_pos`,
			func(r *trialRowScanner) error {
				var op, cp, gp int
				var m ingest.Measurement
				var vt, st, lt, ut string
				var v, s, l, u sql.NullFloat64
				if err := r.Scan(&op, &cp, &gp, &m.GroupID, &vt, &v, &st, &s, &lt, &l, &ut, &u, &m.Comment); err != nil {
					return err
				}
				m.Value, m.Spread, m.Lower, m.Upper = numFrom(vt, v), numFrom(st, s), numFrom(lt, l), numFrom(ut, u)
				c, err := classAt(t, op, cp)
				if err != nil {
					return err
				}
				if gp < 0 || gp >= len(c.Categories) {
					return errCorrupt
				}
				c.Categories[gp].Measurements = append(c.Categories[gp].Measurements, m)
				return nil
			}},
		{"analyses", `SELECT trial_id, outcome_pos, group_description, param_type, param_value_text, param_value,
			dispersion_type, dispersion_value_text, dispersion_value, ci_pct_text, ci_pct, ci_sides,
			ci_lower_text, ci_lower, ci_upper_text, ci_upper, p_text, p_op, p_value,
			method, statistical_comment, estimate_comment, non_inferiority_type,
			ci_lower_comment, ci_upper_comment, p_comment, tested_non_inferiority, non_inferiority_comment, other_description
			FROM analyses WHERE trial_id IN (%s) ORDER BY trial_id, outcome_pos, analysis_pos`,
			func(r *trialRowScanner) error {
				var op int
				var a ingest.Analysis
				var pvt, dvt, cpt, clt, cut string
				var pv, dv, cp, cl, cu, p sql.NullFloat64
				var tested sql.NullInt64
				if err := r.Scan(&op, &a.GroupDescription, &a.ParamType, &pvt, &pv, &a.DispersionType, &dvt, &dv,
					&cpt, &cp, &a.CISides, &clt, &cl, &cut, &cu, &a.PValue.Text, &a.PValue.Op, &p,
					&a.Method, &a.StatisticalComment, &a.EstimateComment, &a.NonInferiorityType,
					&a.CILowerComment, &a.CIUpperComment, &a.PValueComment, &tested,
					&a.NonInferiorityComment, &a.OtherDescription); err != nil {
					return err
				}
				a.TestedNonInferiority = boolPtrFrom(tested)
				a.ParamValue, a.DispersionValue, a.CIPct = numFrom(pvt, pv), numFrom(dvt, dv), numFrom(cpt, cp)
				a.CILower, a.CIUpper = numFrom(clt, cl), numFrom(cut, cu)
				a.PValue.Value, a.PValue.OK = p.Float64, p.Valid
				o, err := outcomeAt(t, op)
				if err != nil {
					return err
				}
				o.Analyses = append(o.Analyses, a)
				return nil
			}},
		{"analysis groups", `SELECT trial_id, outcome_pos, analysis_pos, group_id FROM analysis_groups WHERE trial_id IN (%s)
			ORDER BY trial_id, outcome_pos, analysis_pos, pos`,
			func(r *trialRowScanner) error {
				var op, ap int
				var g string
				if err := r.Scan(&op, &ap, &g); err != nil {
					return err
				}
				o, err := outcomeAt(t, op)
				if err != nil {
					return err
				}
				if ap < 0 || ap >= len(o.Analyses) {
					return errCorrupt
				}
				o.Analyses[ap].GroupIDs = append(o.Analyses[ap].GroupIDs, g)
				return nil
			}},
	}
	for _, s := range steps {
		tr := &trialRowScanner{cur: &t, byID: byID}
		err := eachRow(ctx, tx, fmt.Sprintf(s.query, in), args, func(r *sql.Rows) error {
			tr.rows = r
			return s.scan(tr)
		})
		if err != nil {
			return nil, fmt.Errorf("read %s: %w", s.name, err)
		}
	}
	out := make([]*ingest.Trial, 0, len(byID))
	for _, id := range ids {
		if t, ok := byID[id]; ok {
			out = append(out, t)
			delete(byID, id) // an id given twice comes once
		}
	}
	return out, nil
}

func outcomeAt(t *ingest.Trial, op int) (*ingest.Outcome, error) {
	if op < 0 || op >= len(t.Outcomes) {
		return nil, errCorrupt
	}
	return &t.Outcomes[op], nil
}

func classAt(t *ingest.Trial, op, cp int) (*ingest.Class, error) {
	o, err := outcomeAt(t, op)
	if err != nil {
		return nil, err
	}
	if cp < 0 || cp >= len(o.Classes) {
		return nil, errCorrupt
	}
	return &o.Classes[cp], nil
}

func denomList(t *ingest.Trial, op int, cp sql.NullInt64) (*[]ingest.Denom, error) {
	if !cp.Valid {
		o, err := outcomeAt(t, op)
		if err != nil {
			return nil, err
		}
		return &o.Denoms, nil
	}
	c, err := classAt(t, op, int(cp.Int64))
	if err != nil {
		return nil, err
	}
	return &c.Denoms, nil
}

// TrialIDs returns the ids of all stored trials, sorted.
func (db *DB) TrialIDs(ctx context.Context) ([]string, error) {
	ids, err := db.stringColumn(ctx, `SELECT trial_id FROM trials ORDER BY trial_id`)
	if err != nil {
		return nil, fmt.Errorf("list trials: %w", err)
	}
	return ids, nil
}

// stringColumn returns the single text column of every row of query.
func (db *DB) stringColumn(ctx context.Context, query string) ([]string, error) {
	var out []string
	err := eachRow(ctx, db.read, query, nil, func(r *sql.Rows) error {
		var v string
		if err := r.Scan(&v); err != nil {
			return err
		}
		out = append(out, v)
		return nil
	})
	return out, err
}

// TrialBySecondaryID returns, sorted, the ids of the trials that list id
// as a secondary id or an alias. None found is an empty result, not an
// error.
func (db *DB) TrialBySecondaryID(ctx context.Context, id string) ([]string, error) {
	var ids []string
	err := eachRow(ctx, db.read, `SELECT DISTINCT trial_id FROM trial_ids WHERE other_id = ? ORDER BY trial_id`,
		[]any{id}, func(r *sql.Rows) error {
			var tid string
			if err := r.Scan(&tid); err != nil {
				return err
			}
			ids = append(ids, tid)
			return nil
		})
	if err != nil {
		return nil, fmt.Errorf("find trials by secondary id %s: %w", id, err)
	}
	return ids, nil
}
