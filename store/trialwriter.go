package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strings"

	"unshelved/ingest"
)

// DefaultBatchSize is the number of trials a TrialWriter commits at once
// when NewTrialWriter is given a size of 0 or less.
const DefaultBatchSize = 2000

// measurementChunk is the number of measurement rows one multi-row INSERT
// carries (15 parameters each, well under SQLite's limit of 32766).
const measurementChunk = 64

// WriteOutcome says what TrialWriter.Write did with a trial.
type WriteOutcome int

const (
	// Inserted: the trial was new.
	Inserted WriteOutcome = iota + 1
	// Replaced: a newer (or equally dated, different) version replaced
	// the stored one, children included.
	Replaced
	// Unchanged: the stored trial has the same content hash; nothing written.
	Unchanged
	// Older: the stored trial is newer (LastUpdatePosted, then
	// VersionHolder); nothing written.
	Older
)

func (o WriteOutcome) String() string {
	switch o {
	case Inserted:
		return "inserted"
	case Replaced:
		return "replaced"
	case Unchanged:
		return "unchanged"
	case Older:
		return "older"
	}
	return fmt.Sprintf("WriteOutcome(%d)", int(o))
}

// BatchError is returned by TrialWriter when a write or commit failed and
// the open batch was rolled back. Discarded counts the trials of the batch
// written before the failure, which are not in the database either.
type BatchError struct {
	TrialID   string // the trial being written, "" when the commit failed
	Discarded int
	Err       error
}

func (e *BatchError) Error() string {
	if e.TrialID == "" {
		return fmt.Sprintf("commit batch: %v (batch of %d trials rolled back)", e.Err, e.Discarded)
	}
	return fmt.Sprintf("write trial %s: %v (batch of %d earlier trials rolled back)", e.TrialID, e.Err, e.Discarded)
}

func (e *BatchError) Unwrap() error { return e.Err }

// ErrWriterClosed is returned by a TrialWriter used after Close.
var ErrWriterClosed = errors.New("trial writer closed")

// TrialWriter upserts trials in transactions of BatchSize trials, with
// statements prepared once per transaction. It is not safe for concurrent
// use: run one writer goroutine. Each trial is replaced inside the batch's
// transaction, so readers never see a half-written trial.
//
// Any error from Write or Flush rolls back the open batch and sticks: every
// later call returns the same error. Use ValidateTrial first to reject a
// single bad record without losing the batch.
type TrialWriter struct {
	db        *DB
	batchSize int
	multiRow  bool // measurements by multi-row INSERT (true) or one row per statement

	tx      *sql.Tx
	st      *trialStmts
	pending int
	err     error
	closed  bool

	margs []any // reused argument buffer for multi-row measurement inserts
}

// NewTrialWriter returns a writer committing every batchSize trials
// (DefaultBatchSize when batchSize <= 0). No transaction is open until the
// first Write.
func (db *DB) NewTrialWriter(ctx context.Context, batchSize int) (*TrialWriter, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if batchSize <= 0 {
		batchSize = DefaultBatchSize
	}
	return &TrialWriter{db: db, batchSize: batchSize, multiRow: true}, nil
}

// BatchSize returns the number of trials per transaction.
func (w *TrialWriter) BatchSize() int { return w.batchSize }

// Write upserts t: a new trial is inserted; a stored one with the same
// ContentHash is left alone (Unchanged); a stored one that is newer by
// LastUpdatePosted, then by VersionHolder, is kept (Older); otherwise the
// stored trial and all its children are deleted and t is inserted
// (Replaced). Dates are compared as text on their common precision, so
// "2024-05" equals "2024-05-17"; equal or missing dates fall through to
// VersionHolder, and a tie there replaces.
//
// The batch commits when it reaches BatchSize trials; call Flush or Close
// to commit the rest.
func (w *TrialWriter) Write(ctx context.Context, t ingest.Trial) (WriteOutcome, error) {
	if w.err != nil {
		return 0, w.err
	}
	if w.closed {
		return 0, ErrWriterClosed
	}
	if err := ctx.Err(); err != nil {
		return 0, w.fail(t.TrialID, err)
	}
	if err := ValidateTrial(t); err != nil {
		return 0, w.fail(t.TrialID, err)
	}
	if w.tx == nil {
		if err := w.begin(ctx); err != nil {
			return 0, w.fail(t.TrialID, err)
		}
	}
	// ctx was checked above, once per trial. The statements run under a
	// context that cannot be cancelled: the driver would otherwise start a
	// goroutine per statement to watch it, which costs more than the
	// insert itself.
	out, err := w.upsert(context.WithoutCancel(ctx), t)
	if err != nil {
		return 0, w.fail(t.TrialID, err)
	}
	w.pending++
	if w.pending >= w.batchSize {
		if err := w.commit(); err != nil {
			return 0, err
		}
	}
	return out, nil
}

// Flush commits the open batch, if any.
func (w *TrialWriter) Flush(ctx context.Context) error {
	if w.err != nil {
		return w.err
	}
	if w.closed {
		return ErrWriterClosed
	}
	if w.tx == nil {
		return nil
	}
	if err := ctx.Err(); err != nil {
		return w.fail("", err)
	}
	return w.commit()
}

// Close commits the open batch and releases the writer. After a failed
// Write it releases the writer and returns the failure.
func (w *TrialWriter) Close(ctx context.Context) error {
	if w.closed {
		return w.err
	}
	err := w.Flush(ctx)
	w.closed = true
	return err
}

func (w *TrialWriter) begin(ctx context.Context) error {
	// Not cancellable either: database/sql would roll the batch back on
	// its own when ctx ends, while Flush and Close decide that here.
	ctx = context.WithoutCancel(ctx)
	tx, err := w.db.write.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("begin batch: %w", err)
	}
	st, err := prepareTrialStmts(ctx, tx)
	if err != nil {
		rollback(tx)
		return err
	}
	w.tx, w.st, w.pending = tx, st, 0
	return nil
}

func (w *TrialWriter) commit() error {
	w.st.close()
	err := w.tx.Commit()
	n := w.pending
	w.tx, w.st, w.pending = nil, nil, 0
	if err != nil {
		w.err = &BatchError{Discarded: n, Err: err}
		return w.err
	}
	return nil
}

// fail rolls back the open batch and makes err sticky.
func (w *TrialWriter) fail(trialID string, err error) error {
	n := w.pending
	if w.tx != nil {
		w.st.close()
		rollback(w.tx)
		w.tx, w.st, w.pending = nil, nil, 0
	}
	w.err = &BatchError{TrialID: trialID, Discarded: n, Err: err}
	return w.err
}

// compareDateText compares two registry dates ("yyyy", "yyyy-MM" or
// "yyyy-MM-dd") on their common precision. A missing date compares equal.
func compareDateText(a, b string) int {
	if a == "" || b == "" {
		return 0
	}
	n := min(len(a), len(b))
	return strings.Compare(a[:n], b[:n])
}

func (w *TrialWriter) upsert(ctx context.Context, t ingest.Trial) (WriteOutcome, error) {
	var hash, lastUpdate, versionHolder string
	err := w.st.lookup.QueryRowContext(ctx, t.TrialID).Scan(&hash, &lastUpdate, &versionHolder)
	out := Inserted
	switch {
	case errors.Is(err, sql.ErrNoRows):
	case err != nil:
		return 0, fmt.Errorf("look up stored version: %w", err)
	case hash == t.ContentHash:
		return Unchanged, nil
	default:
		c := compareDateText(t.LastUpdatePosted.Text, lastUpdate)
		if c == 0 {
			c = compareDateText(t.VersionHolder, versionHolder)
		}
		if c < 0 {
			return Older, nil
		}
		if _, err := w.st.deleteTrial.ExecContext(ctx, t.TrialID); err != nil {
			return 0, fmt.Errorf("delete stored version: %w", err)
		}
		out = Replaced
	}
	if err := w.insert(ctx, t); err != nil {
		return 0, err
	}
	return out, nil
}

func boolPtrArg(b *bool) any {
	if b == nil {
		return nil
	}
	if *b {
		return int64(1)
	}
	return int64(0)
}

func boolArg(b bool) int64 {
	if b {
		return 1
	}
	return 0
}

func intPtrArg(p *int) any {
	if p == nil {
		return nil
	}
	return int64(*p)
}

func floatPtrArg(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// numArg is the REAL column value of n: NULL unless n.OK.
func numArg(n ingest.Num) any {
	if !n.OK {
		return nil
	}
	return n.Value
}

func (w *TrialWriter) insert(ctx context.Context, t ingest.Trial) error {
	st := w.st
	id := t.TrialID
	if _, err := st.insertTrial.ExecContext(ctx,
		id, t.Registry, t.OrgStudyID, t.BriefTitle, t.OfficialTitle, t.Acronym,
		t.Organization.Name, t.Organization.Class,
		t.OverallStatus, t.LastKnownStatus, t.WhyStopped, t.StatusVerified,
		t.StudyType, t.Allocation, t.InterventionModel, t.PrimaryPurpose, t.Masking,
		intPtrArg(t.Enrollment), t.EnrollmentType,
		t.LeadSponsor.Name, t.LeadSponsor.Class,
		t.StartDate.Text, t.StartDate.Type,
		t.PrimaryCompletionDate.Text, t.PrimaryCompletionDate.Type,
		t.CompletionDate.Text, t.CompletionDate.Type,
		t.FirstPostedDate.Text, t.FirstPostedDate.Type,
		t.ResultsFirstPosted.Text, t.ResultsFirstPosted.Type,
		t.LastUpdatePosted.Text, t.LastUpdatePosted.Type,
		t.VersionHolder, boolPtrArg(t.HasResults), t.Publication, t.ContentHash,
		t.Source.Path, t.Source.SHA256, t.Source.Position, timeText(w.db.now()),
	); err != nil {
		return fmt.Errorf("insert trial: %w", err)
	}
	for i, a := range t.Aliases {
		if _, err := st.insertID.ExecContext(ctx, id, "alias", i, a, "", "", ""); err != nil {
			return fmt.Errorf("insert alias: %w", err)
		}
	}
	for i, s := range t.SecondaryIDs {
		if _, err := st.insertID.ExecContext(ctx, id, "secondary", i, s.ID, s.Type, s.Domain, s.Link); err != nil {
			return fmt.Errorf("insert secondary id: %w", err)
		}
	}
	for i, p := range t.Phases {
		if _, err := st.insertPhase.ExecContext(ctx, id, i, p); err != nil {
			return fmt.Errorf("insert phase: %w", err)
		}
	}
	for _, l := range []struct {
		kind  string
		terms []string
	}{{"condition", t.Conditions}, {"keyword", t.Keywords}, {"condition_term", t.ConditionTerms}, {"intervention_term", t.InterventionTerms}} {
		for i, term := range l.terms {
			if _, err := st.insertTerm.ExecContext(ctx, id, l.kind, i, term); err != nil {
				return fmt.Errorf("insert %s: %w", l.kind, err)
			}
		}
	}
	for i, c := range t.Collaborators {
		if _, err := st.insertCollaborator.ExecContext(ctx, id, i, c.Name, c.Class); err != nil {
			return fmt.Errorf("insert collaborator: %w", err)
		}
	}
	for i, a := range t.Arms {
		if _, err := st.insertArm.ExecContext(ctx, id, i, a.Label, a.Type, a.Description); err != nil {
			return fmt.Errorf("insert arm: %w", err)
		}
		for j, n := range a.InterventionNames {
			if _, err := st.insertArmName.ExecContext(ctx, id, i, j, n); err != nil {
				return fmt.Errorf("insert arm intervention name: %w", err)
			}
		}
	}
	for i, iv := range t.Interventions {
		if _, err := st.insertIntervention.ExecContext(ctx, id, i, iv.Type, iv.Name, iv.Description); err != nil {
			return fmt.Errorf("insert intervention: %w", err)
		}
		for j, n := range iv.ArmGroupLabels {
			if _, err := st.insertInterventionName.ExecContext(ctx, id, i, "arm_label", j, n); err != nil {
				return fmt.Errorf("insert intervention arm label: %w", err)
			}
		}
		for j, n := range iv.OtherNames {
			if _, err := st.insertInterventionName.ExecContext(ctx, id, i, "other_name", j, n); err != nil {
				return fmt.Errorf("insert intervention other name: %w", err)
			}
		}
	}
	for i, r := range t.RegisteredOutcomes {
		if _, err := st.insertRegistered.ExecContext(ctx, id, i, r.Kind, r.Measure, r.Description, r.TimeFrame); err != nil {
			return fmt.Errorf("insert registered outcome: %w", err)
		}
	}
	for i, r := range t.References {
		if _, err := st.insertReference.ExecContext(ctx, id, i, r.PMID, r.Type, r.Citation); err != nil {
			return fmt.Errorf("insert reference: %w", err)
		}
	}
	for i, o := range t.Outcomes {
		if err := w.insertOutcome(ctx, id, i, o); err != nil {
			return fmt.Errorf("outcome %d: %w", i, err)
		}
	}
	return nil
}

func (w *TrialWriter) insertOutcome(ctx context.Context, id string, pos int, o ingest.Outcome) error {
	st := w.st
	if _, err := st.insertOutcome.ExecContext(ctx, id, pos, o.Index, o.Type, o.Title, o.Description,
		o.Population, o.TimeFrame, o.ReportingStatus, o.ParamType, o.DispersionText, o.Dispersion,
		o.Unit, o.DenomUnits, o.UnitsAnalyzed, o.AnticipatedPost, boolPtrArg(o.CalculatePct)); err != nil {
		return fmt.Errorf("insert outcome: %w", err)
	}
	for i, g := range o.Groups {
		if _, err := st.insertGroup.ExecContext(ctx, id, pos, i, g.ID, g.Title, g.Description, g.Role); err != nil {
			return fmt.Errorf("insert group: %w", err)
		}
	}
	if err := w.insertDenoms(ctx, id, pos, nil, o.Denoms); err != nil {
		return err
	}
	w.margs = w.margs[:0]
	nrows := 0
	for ci, c := range o.Classes {
		if _, err := st.insertClass.ExecContext(ctx, id, pos, ci, c.Title); err != nil {
			return fmt.Errorf("insert class: %w", err)
		}
		classPos := ci
		if err := w.insertDenoms(ctx, id, pos, &classPos, c.Denoms); err != nil {
			return err
		}
		for gi, g := range c.Categories {
			if _, err := st.insertCategory.ExecContext(ctx, id, pos, ci, gi, g.Title); err != nil {
				return fmt.Errorf("insert category: %w", err)
			}
			for mi, m := range g.Measurements {
				args := []any{id, pos, ci, gi, mi, m.GroupID,
					m.Value.Text, numArg(m.Value), m.Spread.Text, numArg(m.Spread),
					m.Lower.Text, numArg(m.Lower), m.Upper.Text, numArg(m.Upper), m.Comment}
				if !w.multiRow {
					if _, err := st.insertMeasurement.ExecContext(ctx, args...); err != nil {
						return fmt.Errorf("insert measurement: %w", err)
					}
					continue
				}
				w.margs = append(w.margs, args...)
				nrows++
				if nrows == measurementChunk {
					if _, err := st.insertMeasurements.ExecContext(ctx, w.margs...); err != nil {
						return fmt.Errorf("insert measurements: %w", err)
					}
					w.margs, nrows = w.margs[:0], 0
				}
			}
		}
	}
	// The rest, fewer than a chunk, one row at a time.
	for i := 0; i < nrows; i++ {
		if _, err := st.insertMeasurement.ExecContext(ctx, w.margs[i*measurementCols:(i+1)*measurementCols]...); err != nil {
			return fmt.Errorf("insert measurement: %w", err)
		}
	}
	w.margs = w.margs[:0]
	for ai, a := range o.Analyses {
		if _, err := st.insertAnalysis.ExecContext(ctx, id, pos, ai, a.GroupDescription, a.ParamType,
			a.ParamValue.Text, numArg(a.ParamValue), a.DispersionType,
			a.DispersionValue.Text, numArg(a.DispersionValue),
			a.CIPct.Text, numArg(a.CIPct), a.CISides,
			a.CILower.Text, numArg(a.CILower), a.CIUpper.Text, numArg(a.CIUpper),
			a.PValue.Text, a.PValue.Op, pArg(a.PValue),
			a.Method, a.StatisticalComment, a.EstimateComment, a.NonInferiorityType,
			a.CILowerComment, a.CIUpperComment, a.PValueComment, boolPtrArg(a.TestedNonInferiority),
			a.NonInferiorityComment, a.OtherDescription); err != nil {
			return fmt.Errorf("insert analysis: %w", err)
		}
		for gi, g := range a.GroupIDs {
			if _, err := st.insertAnalysisGroup.ExecContext(ctx, id, pos, ai, gi, g); err != nil {
				return fmt.Errorf("insert analysis group: %w", err)
			}
		}
	}
	return nil
}

func pArg(p ingest.PValue) any {
	if !p.OK {
		return nil
	}
	return p.Value
}

func (w *TrialWriter) insertDenoms(ctx context.Context, id string, outcomePos int, classPos *int, ds []ingest.Denom) error {
	for di, d := range ds {
		if _, err := w.st.insertDenom.ExecContext(ctx, id, outcomePos, intPtrArg(classPos), di, d.Units); err != nil {
			return fmt.Errorf("insert denom: %w", err)
		}
		for ki, c := range d.Counts {
			if _, err := w.st.insertCount.ExecContext(ctx, id, outcomePos, intPtrArg(classPos), di, ki,
				c.GroupID, c.Value.Text, numArg(c.Value)); err != nil {
				return fmt.Errorf("insert denom count: %w", err)
			}
		}
	}
	return nil
}

const measurementCols = 15

const measurementColumns = `trial_id, outcome_pos, class_pos, category_pos, measurement_pos, group_id,
	value_text, value, spread_text, spread, lower_text, lower, upper_text, upper, comment`

// trialStmts are the statements of one batch transaction.
type trialStmts struct {
	all []*sql.Stmt

	lookup, deleteTrial, insertTrial                                     *sql.Stmt
	insertID, insertPhase, insertTerm, insertCollaborator                *sql.Stmt
	insertArm, insertArmName, insertIntervention, insertInterventionName *sql.Stmt
	insertRegistered, insertReference                                    *sql.Stmt
	insertOutcome, insertGroup, insertDenom, insertCount                 *sql.Stmt
	insertClass, insertCategory, insertMeasurement, insertMeasurements   *sql.Stmt
	insertAnalysis, insertAnalysisGroup                                  *sql.Stmt
}

func (s *trialStmts) close() {
	if s == nil {
		return
	}
	for _, st := range s.all {
		_ = st.Close()
	}
}

// placeholders returns "(?, ?, ...)" with n marks.
func placeholders(n int) string {
	return "(" + strings.TrimSuffix(strings.Repeat("?, ", n), ", ") + ")"
}

func insertSQL(table, columns string) string {
	n := strings.Count(columns, ",") + 1
	return "INSERT INTO " + table + " (" + columns + ") VALUES " + placeholders(n)
}

func prepareTrialStmts(ctx context.Context, tx *sql.Tx) (*trialStmts, error) {
	s := &trialStmts{}
	multi := "INSERT INTO measurements (" + measurementColumns + ") VALUES " +
		strings.TrimSuffix(strings.Repeat(placeholders(measurementCols)+", ", measurementChunk), ", ")
	for _, p := range []struct {
		dst   **sql.Stmt
		query string
	}{
		{&s.lookup, `SELECT content_hash, last_update_posted, version_holder FROM trials WHERE trial_id = ?`},
		{&s.deleteTrial, `DELETE FROM trials WHERE trial_id = ?`},
		{&s.insertTrial, insertSQL("trials", `trial_id, registry, org_study_id, brief_title, official_title, acronym,
			organization_name, organization_class, overall_status, last_known_status, why_stopped, status_verified,
			study_type, allocation, intervention_model, primary_purpose, masking, enrollment, enrollment_type,
			lead_sponsor_name, lead_sponsor_class, start_date, start_date_type,
			primary_completion_date, primary_completion_date_type, completion_date, completion_date_type,
			first_posted_date, first_posted_date_type, results_first_posted, results_first_posted_type,
			last_update_posted, last_update_posted_type, version_holder, has_results, publication, content_hash,
			source_path, source_sha256, source_position, ingested_at`)},
		{&s.insertID, insertSQL("trial_ids", `trial_id, kind, pos, other_id, id_type, domain, link`)},
		{&s.insertPhase, insertSQL("trial_phases", `trial_id, pos, phase`)},
		{&s.insertTerm, insertSQL("trial_terms", `trial_id, kind, pos, term`)},
		{&s.insertCollaborator, insertSQL("trial_collaborators", `trial_id, pos, name, class`)},
		{&s.insertArm, insertSQL("arms", `trial_id, arm_pos, label, type, description`)},
		{&s.insertArmName, insertSQL("arm_intervention_names", `trial_id, arm_pos, pos, name`)},
		{&s.insertIntervention, insertSQL("interventions", `trial_id, intervention_pos, type, name, description`)},
		{&s.insertInterventionName, insertSQL("intervention_names", `trial_id, intervention_pos, kind, pos, name`)},
		{&s.insertRegistered, insertSQL("registered_outcomes", `trial_id, pos, kind, measure, description, time_frame`)},
		{&s.insertReference, insertSQL("trial_references", `trial_id, pos, pmid, type, citation`)},
		{&s.insertOutcome, insertSQL("outcomes", `trial_id, outcome_pos, outcome_index, type, title, description,
			population, time_frame, reporting_status, param_type, dispersion_text, dispersion, unit, denom_units,
			units_analyzed, anticipated_post, calculate_pct`)},
		{&s.insertGroup, insertSQL("result_groups", `trial_id, outcome_pos, group_pos, group_id, title, description, role`)},
		{&s.insertDenom, insertSQL("denoms", `trial_id, outcome_pos, class_pos, denom_pos, units`)},
		{&s.insertCount, insertSQL("denom_counts", `trial_id, outcome_pos, class_pos, denom_pos, count_pos, group_id, value_text, value`)},
		{&s.insertClass, insertSQL("classes", `trial_id, outcome_pos, class_pos, title`)},
		{&s.insertCategory, insertSQL("categories", `trial_id, outcome_pos, class_pos, category_pos, title`)},
		{&s.insertMeasurement, insertSQL("measurements", measurementColumns)},
		{&s.insertMeasurements, multi},
		{&s.insertAnalysis, insertSQL("analyses", `trial_id, outcome_pos, analysis_pos, group_description, param_type,
			param_value_text, param_value, dispersion_type, dispersion_value_text, dispersion_value,
			ci_pct_text, ci_pct, ci_sides, ci_lower_text, ci_lower, ci_upper_text, ci_upper,
			p_text, p_op, p_value, method, statistical_comment, estimate_comment, non_inferiority_type,
			ci_lower_comment, ci_upper_comment, p_comment, tested_non_inferiority, non_inferiority_comment, other_description`)},
		{&s.insertAnalysisGroup, insertSQL("analysis_groups", `trial_id, outcome_pos, analysis_pos, pos, group_id`)},
	} {
		st, err := tx.PrepareContext(ctx, p.query)
		if err != nil {
			s.close()
			return nil, fmt.Errorf("prepare %q: %w", firstLine(p.query), err)
		}
		*p.dst = st
		s.all = append(s.all, st)
	}
	return s, nil
}

func firstLine(s string) string {
	line, _, _ := strings.Cut(s, "\n")
	return line
}
