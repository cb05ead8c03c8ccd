package store

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"errors"
	"fmt"
	"io"
	"strings"
	"unsafe"

	"unshelved/ingest"
)

// DefaultBatchSize is the number of trials a TrialWriter commits at once
// when NewTrialWriter is given a size of 0 or less.
const DefaultBatchSize = 2000

// maxChunkRows is the largest number of rows one multi-row INSERT carries.
// A trial's rows of one table go in chunks of powers of two up to this
// (at most 128 x 30 parameters, well under SQLite's limit of 32766), so a
// transaction prepares at most chunkLevels statements per table.
const (
	maxChunkRows = 128
	chunkLevels  = 8 // 1, 2, 4, ..., 128
)

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

// TrialWriter upserts trials in transactions of BatchSize trials. It is not
// safe for concurrent use: run one writer goroutine. Each trial is replaced
// inside the batch's transaction, so readers never see a half-written trial.
//
// Any error from Write or Flush rolls back the open batch and sticks: every
// later call returns the same error. Use ValidateTrial first to reject a
// single bad record without losing the batch.
//
// The writer holds the write connection for the open batch and runs its
// statements on the driver's connection (sql.Conn.Raw): a trial's rows of
// one table go in multi-row INSERTs, the trial id is bound once per
// statement, and empty texts, zero integers and NULLs are not bound at all
// (the statement supplies them), so most values cost no call into C.
type TrialWriter struct {
	db        *DB
	batchSize int
	maxRows   int  // rows per INSERT at most: a power of two <= maxChunkRows
	noRaw     bool // use the driver's statements for the INSERTs (tests)

	conn    *sql.Conn // held while a batch is open
	tx      *sql.Tx
	pending int
	err     error
	closed  bool

	// Valid only while a batch is open, and used only inside conn.Raw.
	dc      driver.ConnPrepareContext
	lookup  driver.Stmt
	deletes [numTables]driver.Stmt
	stmts   [numTables][chunkLevels]driver.Stmt
	// The connection's SQLite handle and the INSERTs prepared on it
	// (rawinsert.go); raw is nil when the driver's statements are used.
	raw      unsafe.Pointer
	rawStmts [numTables][chunkLevels]*rawStmt
	rawArgs  rawArgs

	rows [numTables]rowBuf
	args []driver.NamedValue // reused for each statement
	dest []driver.Value      // reused for the version lookup
}

// NewTrialWriter returns a writer committing every batchSize trials
// (DefaultBatchSize when batchSize <= 0). No transaction is open until the
// first Write.
func (db *DB) NewTrialWriter(ctx context.Context, batchSize int) (*TrialWriter, error) {
	if err := db.writable(); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if batchSize <= 0 {
		batchSize = DefaultBatchSize
	}
	w := &TrialWriter{db: db, batchSize: batchSize, maxRows: maxChunkRows, dest: make([]driver.Value, 3)}
	for i := range w.rows {
		w.rows[i].tab = &tables[i]
	}
	return w, nil
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
	sctx := context.WithoutCancel(ctx)
	var out WriteOutcome
	err := w.conn.Raw(func(dc any) error {
		var err error
		out, err = w.upsert(sctx, dc, t)
		return err
	})
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
	conn, err := w.db.write.Conn(ctx)
	if err != nil {
		return fmt.Errorf("begin batch: %w", err)
	}
	// Foreign keys are not enforced during the batch (the pragma must come
	// before BEGIN): every child row is inserted right after its trial's
	// row, and a replaced trial's children are deleted table by table
	// (deleteTrial), so the parent lookup SQLite would make for each
	// child row checks nothing the writer does not already guarantee.
	// release turns enforcement back on before the connection is reused.
	if _, err := conn.ExecContext(ctx, "PRAGMA foreign_keys = OFF"); err != nil {
		_ = conn.Close()
		return fmt.Errorf("begin batch: %w", err)
	}
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		w.conn = conn
		w.release()
		return fmt.Errorf("begin batch: %w", err)
	}
	w.conn, w.tx, w.pending = conn, tx, 0
	return nil
}

// release finalizes the batch's statements, turns foreign keys back on
// and returns the connection to the pool; the transaction must be over.
// A connection whose foreign keys cannot be turned back on is discarded.
func (w *TrialWriter) release() {
	_ = w.conn.Raw(func(any) error {
		w.closeStmts()
		return nil
	})
	if _, err := w.conn.ExecContext(context.Background(), "PRAGMA foreign_keys = ON"); err != nil {
		_ = w.conn.Raw(func(any) error { return driver.ErrBadConn })
	}
	_ = w.conn.Close()
	w.conn, w.tx, w.dc, w.pending = nil, nil, nil, 0
	for i := range w.rows {
		w.rows[i].reset()
	}
}

func (w *TrialWriter) closeStmts() {
	if w.lookup != nil {
		_ = w.lookup.Close()
		w.lookup = nil
	}
	for i, st := range w.deletes {
		if st != nil {
			_ = st.Close()
			w.deletes[i] = nil
		}
	}
	for i := range w.stmts {
		for j, st := range w.stmts[i] {
			if st != nil {
				_ = st.Close()
				w.stmts[i][j] = nil
			}
		}
	}
	for i := range w.rawStmts {
		for j, st := range w.rawStmts[i] {
			st.close()
			w.rawStmts[i][j] = nil
		}
	}
	w.raw = nil
}

func (w *TrialWriter) commit() error {
	// Statements are finalized before the commit, as SQLite wants no
	// statement of the transaction still running.
	_ = w.conn.Raw(func(any) error {
		w.closeStmts()
		return nil
	})
	err := w.tx.Commit()
	n := w.pending
	w.release()
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
		_ = w.conn.Raw(func(any) error {
			w.closeStmts()
			return nil
		})
		rollback(w.tx)
		w.release()
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

// prepare prepares query on the driver connection of the open batch.
func (w *TrialWriter) prepare(ctx context.Context, query string) (driver.Stmt, error) {
	st, err := w.dc.PrepareContext(ctx, query)
	if err != nil {
		return nil, fmt.Errorf("prepare %q: %w", firstLine(query), err)
	}
	_, okExec := st.(driver.StmtExecContext)
	_, okQuery := st.(driver.StmtQueryContext)
	if !okExec || !okQuery {
		_ = st.Close()
		return nil, fmt.Errorf("prepare %q: driver statement %T lacks ExecContext or QueryContext", firstLine(query), st)
	}
	return st, nil
}

func (w *TrialWriter) exec(ctx context.Context, st driver.Stmt, args []driver.NamedValue) error {
	_, err := st.(driver.StmtExecContext).ExecContext(ctx, args)
	return err
}

// storedVersion returns the stored trial's content hash, last update and
// version holder; ok is false when the trial is not stored.
func (w *TrialWriter) storedVersion(ctx context.Context, id string) (hash, lastUpdate, versionHolder string, ok bool, err error) {
	if w.lookup == nil {
		if w.lookup, err = w.prepare(ctx,
			`SELECT content_hash, last_update_posted, version_holder FROM trials WHERE trial_id = ?`); err != nil {
			return "", "", "", false, err
		}
	}
	w.args = append(w.args[:0], driver.NamedValue{Ordinal: 1, Value: id})
	rows, err := w.lookup.(driver.StmtQueryContext).QueryContext(ctx, w.args)
	if err != nil {
		return "", "", "", false, err
	}
	defer rows.Close()
	switch err := rows.Next(w.dest); {
	case errors.Is(err, io.EOF):
		return "", "", "", false, nil
	case err != nil:
		return "", "", "", false, err
	}
	var s [3]string
	for i, v := range w.dest {
		switch v := v.(type) {
		case string:
			s[i] = v
		case []byte:
			s[i] = string(v)
		default:
			return "", "", "", false, fmt.Errorf("column %d is %T, want text", i, v)
		}
	}
	return s[0], s[1], s[2], true, nil
}

func (w *TrialWriter) upsert(ctx context.Context, dc any, t ingest.Trial) (WriteOutcome, error) {
	pc, ok := dc.(driver.ConnPrepareContext)
	if !ok {
		return 0, fmt.Errorf("driver connection %T cannot prepare with a context", dc)
	}
	w.dc = pc
	if w.raw == nil && !w.noRaw {
		w.raw = rawHandle(dc)
	}
	hash, lastUpdate, versionHolder, found, err := w.storedVersion(ctx, t.TrialID)
	out := Inserted
	switch {
	case err != nil:
		return 0, fmt.Errorf("look up stored version: %w", err)
	case !found:
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
		if err := w.deleteTrial(ctx, t.TrialID); err != nil {
			return 0, fmt.Errorf("delete stored version: %w", err)
		}
		out = Replaced
	}
	w.collect(t)
	if err := w.flush(ctx, t.TrialID); err != nil {
		return 0, err
	}
	return out, nil
}

// deleteTrial deletes a stored trial's rows from every table, children
// first (foreign keys are not enforced during a batch, so nothing
// cascades).
func (w *TrialWriter) deleteTrial(ctx context.Context, id string) error {
	for i := numTables - 1; i >= 0; i-- {
		if w.deletes[i] == nil {
			st, err := w.prepare(ctx, "DELETE FROM "+tables[i].name+" WHERE trial_id = ?")
			if err != nil {
				return err
			}
			w.deletes[i] = st
		}
		w.args = append(w.args[:0], driver.NamedValue{Ordinal: 1, Value: id})
		if err := w.exec(ctx, w.deletes[i], w.args); err != nil {
			return fmt.Errorf("%s: %w", tables[i].name, err)
		}
	}
	return nil
}

// flush inserts the collected rows of one trial, the trial row first (the
// children reference it), and empties the buffers.
func (w *TrialWriter) flush(ctx context.Context, id string) error {
	idv := any(id)
	for i := range w.rows {
		b := &w.rows[i]
		if b.n == 0 {
			continue
		}
		if err := w.insertRows(ctx, i, idv, b); err != nil {
			// The trial row's table reads "trials"; others name their table.
			return fmt.Errorf("insert %s: %w", b.tab.name, err)
		}
	}
	for i := range w.rows {
		w.rows[i].reset()
	}
	return nil
}

// insertRows writes b's rows in chunks of the largest power of two that
// fits, the statement per table and chunk size prepared once per batch.
func (w *TrialWriter) insertRows(ctx context.Context, table int, idv any, b *rowBuf) error {
	width := b.tab.width
	vi := 0
	for start := 0; start < b.n; {
		level := 0
		for level+1 < chunkLevels && 1<<(level+1) <= min(b.n-start, w.maxRows) {
			level++
		}
		k := 1 << level
		// Ordinals in b.vals count from 0 across all rows; in the
		// statement ?1 is the trial id and row r's column c is ?(2+r*width+c).
		base := start * width
		end := (start + k) * width
		if w.raw != nil {
			st := w.rawStmts[table][level]
			if st == nil {
				var err error
				if st, err = rawPrepare(w.raw, b.tab.insertSQL(k)); err != nil {
					return err
				}
				w.rawStmts[table][level] = st
			}
			a := &w.rawArgs
			a.reset()
			if err := a.add(1, idv); err != nil {
				return err
			}
			for ; vi < len(b.vals) && b.vals[vi].Ordinal < end; vi++ {
				if err := a.add(b.vals[vi].Ordinal+2-base, b.vals[vi].Value); err != nil {
					return err
				}
			}
			if err := st.exec(a); err != nil {
				return err
			}
			start += k
			continue
		}
		st := w.stmts[table][level]
		if st == nil {
			var err error
			if st, err = w.prepare(ctx, b.tab.insertSQL(k)); err != nil {
				return err
			}
			w.stmts[table][level] = st
		}
		args := append(w.args[:0], driver.NamedValue{Ordinal: 1, Value: idv})
		for ; vi < len(b.vals) && b.vals[vi].Ordinal < end; vi++ {
			nv := b.vals[vi]
			nv.Ordinal += 2 - base
			args = append(args, nv)
		}
		w.args = args
		if err := w.exec(ctx, st, args); err != nil {
			return err
		}
		start += k
	}
	return nil
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

func floatPtrArg(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

func intPtrArg(p *int) any {
	if p == nil {
		return nil
	}
	return int64(*p)
}

// numArg is the REAL column value of n: NULL unless n.OK.
func numArg(n ingest.Num) any {
	if !n.OK {
		return nil
	}
	return n.Value
}

func pArg(p ingest.PValue) any {
	if !p.OK {
		return nil
	}
	return p.Value
}

// collect puts t's rows in the writer's buffers, in the column order of
// tables.
func (w *TrialWriter) collect(t ingest.Trial) {
	r := &w.rows
	b := &r[tabTrials]
	b.text(t.Registry)
	b.text(t.OrgStudyID)
	b.text(t.BriefTitle)
	b.text(t.OfficialTitle)
	b.text(t.Acronym)
	b.text(t.Organization.Name)
	b.text(t.Organization.Class)
	b.text(t.OverallStatus)
	b.text(t.LastKnownStatus)
	b.text(t.WhyStopped)
	b.text(t.StatusVerified)
	b.text(t.StudyType)
	b.text(t.Allocation)
	b.text(t.InterventionModel)
	b.text(t.PrimaryPurpose)
	b.text(t.Masking)
	b.value(intPtrArg(t.Enrollment))
	b.text(t.EnrollmentType)
	b.text(t.LeadSponsor.Name)
	b.text(t.LeadSponsor.Class)
	for _, d := range []ingest.Date{t.StartDate, t.PrimaryCompletionDate, t.CompletionDate,
		t.FirstPostedDate, t.ResultsFirstPosted, t.LastUpdatePosted} {
		b.text(d.Text)
		b.text(d.Type)
	}
	b.text(t.VersionHolder)
	b.value(boolPtrArg(t.HasResults))
	b.text(t.Publication)
	b.text(t.ContentHash)
	b.text(t.Source.Path)
	b.text(t.Source.SHA256)
	b.text(t.Source.Position)
	b.text(timeText(w.db.now()))
	if t.Source.EntrySize > 0 {
		b.value(int64(t.Source.EntryCRC32))
		b.value(t.Source.EntrySize)
	} else {
		b.value(nil)
		b.value(nil)
	}
	b.end()

	b = &r[tabIDs]
	for i, a := range t.Aliases {
		b.text("alias")
		b.int(i)
		b.text(a)
		b.text("")
		b.text("")
		b.text("")
		b.end()
	}
	for i, s := range t.SecondaryIDs {
		b.text("secondary")
		b.int(i)
		b.text(s.ID)
		b.text(s.Type)
		b.text(s.Domain)
		b.text(s.Link)
		b.end()
	}
	b = &r[tabPhases]
	for i, p := range t.Phases {
		b.int(i)
		b.text(p)
		b.end()
	}
	b = &r[tabTerms]
	for _, l := range [...]struct {
		kind  string
		terms []string
	}{{"condition", t.Conditions}, {"keyword", t.Keywords}, {"condition_term", t.ConditionTerms}, {"intervention_term", t.InterventionTerms}} {
		for i, term := range l.terms {
			b.text(l.kind)
			b.int(i)
			b.text(term)
			b.end()
		}
	}
	b = &r[tabCollaborators]
	for i, c := range t.Collaborators {
		b.int(i)
		b.text(c.Name)
		b.text(c.Class)
		b.end()
	}
	for i, a := range t.Arms {
		b = &r[tabArms]
		b.int(i)
		b.text(a.Label)
		b.text(a.Type)
		b.text(a.Description)
		b.end()
		b = &r[tabArmNames]
		for j, n := range a.InterventionNames {
			b.int(i)
			b.int(j)
			b.text(n)
			b.end()
		}
	}
	for i, iv := range t.Interventions {
		b = &r[tabInterventions]
		b.int(i)
		b.text(iv.Type)
		b.text(iv.Name)
		b.text(iv.Description)
		b.end()
		b = &r[tabInterventionNames]
		for j, n := range iv.ArmGroupLabels {
			b.int(i)
			b.text("arm_label")
			b.int(j)
			b.text(n)
			b.end()
		}
		for j, n := range iv.OtherNames {
			b.int(i)
			b.text("other_name")
			b.int(j)
			b.text(n)
			b.end()
		}
	}
	b = &r[tabRegistered]
	for i, o := range t.RegisteredOutcomes {
		b.int(i)
		b.text(o.Kind)
		b.text(o.Measure)
		b.text(o.Description)
		b.text(o.TimeFrame)
		b.end()
	}
	b = &r[tabReferences]
	for i, ref := range t.References {
		b.int(i)
		b.text(ref.PMID)
		b.text(ref.Type)
		b.text(ref.Citation)
		b.end()
	}
	for i := range t.Outcomes {
		w.collectOutcome(i, &t.Outcomes[i])
	}
}

func (w *TrialWriter) collectOutcome(pos int, o *ingest.Outcome) {
	r := &w.rows
	b := &r[tabOutcomes]
	b.int(pos)
	b.int(o.Index)
	b.text(o.Type)
	b.text(o.Title)
	b.text(o.Description)
	b.text(o.Population)
	b.text(o.TimeFrame)
	b.text(o.ReportingStatus)
	b.text(o.ParamType)
	b.text(o.DispersionText)
	b.text(o.Dispersion)
	b.text(o.Unit)
	b.text(o.DenomUnits)
	b.text(o.UnitsAnalyzed)
	b.text(o.AnticipatedPost)
	b.value(boolPtrArg(o.CalculatePct))
	b.end()

	b = &r[tabGroups]
	for i, g := range o.Groups {
		b.int(pos)
		b.int(i)
		b.text(g.ID)
		b.text(g.Title)
		b.text(g.Description)
		b.text(g.Role)
		b.end()
	}
	w.collectDenoms(pos, nil, o.Denoms)
	for ci := range o.Classes {
		c := &o.Classes[ci]
		b = &r[tabClasses]
		b.int(pos)
		b.int(ci)
		b.text(c.Title)
		b.end()
		w.collectDenoms(pos, int64(ci), c.Denoms)
		for gi := range c.Categories {
			g := &c.Categories[gi]
			b = &r[tabCategories]
			b.int(pos)
			b.int(ci)
			b.int(gi)
			b.text(g.Title)
			b.end()
			b = &r[tabMeasurements]
			for mi := range g.Measurements {
				m := &g.Measurements[mi]
				b.int(pos)
				b.int(ci)
				b.int(gi)
				b.int(mi)
				b.text(m.GroupID)
				b.text(m.Value.Text)
				b.value(numArg(m.Value))
				b.text(m.Spread.Text)
				b.value(numArg(m.Spread))
				b.text(m.Lower.Text)
				b.value(numArg(m.Lower))
				b.text(m.Upper.Text)
				b.value(numArg(m.Upper))
				b.text(m.Comment)
				b.end()
			}
		}
	}
	for ai := range o.Analyses {
		a := &o.Analyses[ai]
		b = &r[tabAnalyses]
		b.int(pos)
		b.int(ai)
		b.text(a.GroupDescription)
		b.text(a.ParamType)
		b.text(a.ParamValue.Text)
		b.value(numArg(a.ParamValue))
		b.text(a.DispersionType)
		b.text(a.DispersionValue.Text)
		b.value(numArg(a.DispersionValue))
		b.text(a.CIPct.Text)
		b.value(numArg(a.CIPct))
		b.text(a.CISides)
		b.text(a.CILower.Text)
		b.value(numArg(a.CILower))
		b.text(a.CIUpper.Text)
		b.value(numArg(a.CIUpper))
		b.text(a.PValue.Text)
		b.text(a.PValue.Op)
		b.value(pArg(a.PValue))
		b.text(a.Method)
		b.text(a.StatisticalComment)
		b.text(a.EstimateComment)
		b.text(a.NonInferiorityType)
		b.text(a.CILowerComment)
		b.text(a.CIUpperComment)
		b.text(a.PValueComment)
		b.value(boolPtrArg(a.TestedNonInferiority))
		b.text(a.NonInferiorityComment)
		b.text(a.OtherDescription)
		b.end()
		b = &r[tabAnalysisGroups]
		for gi, g := range a.GroupIDs {
			b.int(pos)
			b.int(ai)
			b.int(gi)
			b.text(g)
			b.end()
		}
	}
}

// collectDenoms buffers denominators; classPos is nil (NULL) for the
// outcome-level ones, else an int64.
func (w *TrialWriter) collectDenoms(outcomePos int, classPos any, ds []ingest.Denom) {
	for di, d := range ds {
		b := &w.rows[tabDenoms]
		b.int(outcomePos)
		b.value(classPos)
		b.int(di)
		b.text(d.Units)
		b.end()
		b = &w.rows[tabCounts]
		for ki, c := range d.Counts {
			b.int(outcomePos)
			b.value(classPos)
			b.int(di)
			b.int(ki)
			b.text(c.GroupID)
			b.text(c.Value.Text)
			b.value(numArg(c.Value))
			b.end()
		}
	}
}

// rowBuf collects the rows of one table for one trial. Only the values
// that must be bound are kept, each with its 0-based position counted
// across all rows (row*width + column).
type rowBuf struct {
	tab  *table
	vals []driver.NamedValue
	n    int // complete rows
	col  int // next column of the row being built
}

func (b *rowBuf) reset() { b.vals, b.n, b.col = b.vals[:0], 0, 0 }

// text adds a NOT NULL TEXT value; "" is supplied by the statement.
func (b *rowBuf) text(s string) {
	if s != "" {
		b.vals = append(b.vals, driver.NamedValue{Ordinal: b.n*b.tab.width + b.col, Value: s})
	}
	b.col++
}

// int adds a NOT NULL INTEGER value; 0 is supplied by the statement.
func (b *rowBuf) int(i int) {
	if i != 0 {
		b.vals = append(b.vals, driver.NamedValue{Ordinal: b.n*b.tab.width + b.col, Value: int64(i)})
	}
	b.col++
}

// value adds a nullable value (nil, int64 or float64); nil stays unbound,
// which is NULL.
func (b *rowBuf) value(v any) {
	if v != nil {
		b.vals = append(b.vals, driver.NamedValue{Ordinal: b.n*b.tab.width + b.col, Value: v})
	}
	b.col++
}

func (b *rowBuf) end() {
	if b.col != b.tab.width {
		panic(fmt.Sprintf("store: row of %s has %d values, want %d", b.tab.name, b.col, b.tab.width))
	}
	b.n++
	b.col = 0
}

// table describes a table a trial writes: its columns after trial_id and
// their kinds, one letter each: 't' NOT NULL TEXT (unbound means ”), 'i'
// NOT NULL INTEGER (unbound means 0), 'n' nullable (unbound means NULL).
type table struct {
	name    string
	columns string
	kinds   string
	width   int
}

// insertSQL returns the INSERT of k rows: ?1 is the trial id, and row r's
// column c is ?(2+r*width+c).
//
// OR FAIL: a failing statement keeps the rows it inserted before the
// failure instead of undoing them. The writer rolls the whole batch back
// after any failure, so nothing partial survives; in return SQLite keeps
// no statement journal, which would otherwise copy each stored page a
// multi-row INSERT changes to a temporary file first.
func (t *table) insertSQL(k int) string {
	var sb strings.Builder
	sb.WriteString("INSERT OR FAIL INTO " + t.name + " (trial_id, " + t.columns + ") VALUES ")
	p := 2
	for r := 0; r < k; r++ {
		if r > 0 {
			sb.WriteString(", ")
		}
		sb.WriteString("(?1")
		for _, kind := range t.kinds {
			switch kind {
			case 't':
				fmt.Fprintf(&sb, ", coalesce(?%d, '')", p)
			case 'i':
				fmt.Fprintf(&sb, ", coalesce(?%d, 0)", p)
			default:
				fmt.Fprintf(&sb, ", ?%d", p)
			}
			p++
		}
		sb.WriteString(")")
	}
	return sb.String()
}

const (
	tabTrials = iota
	tabIDs
	tabPhases
	tabTerms
	tabCollaborators
	tabArms
	tabArmNames
	tabInterventions
	tabInterventionNames
	tabRegistered
	tabReferences
	tabOutcomes
	tabGroups
	tabDenoms
	tabCounts
	tabClasses
	tabCategories
	tabMeasurements
	tabAnalyses
	tabAnalysisGroups
	numTables
)

// tables lists what a trial writes, the trials row first.
var tables = func() [numTables]table {
	ts := [numTables]table{
		tabTrials: {"trials", `registry, org_study_id, brief_title, official_title, acronym,
			organization_name, organization_class, overall_status, last_known_status, why_stopped, status_verified,
			study_type, allocation, intervention_model, primary_purpose, masking, enrollment, enrollment_type,
			lead_sponsor_name, lead_sponsor_class, start_date, start_date_type,
			primary_completion_date, primary_completion_date_type, completion_date, completion_date_type,
			first_posted_date, first_posted_date_type, results_first_posted, results_first_posted_type,
			last_update_posted, last_update_posted_type, version_holder, has_results, publication, content_hash,
			source_path, source_sha256, source_position, ingested_at, source_crc32, source_size`,
			strings.Repeat("t", 16) + "n" + strings.Repeat("t", 16) + "n" + strings.Repeat("t", 6) + "nn", 0},
		tabIDs:               {"trial_ids", `kind, pos, other_id, id_type, domain, link`, "titttt", 0},
		tabPhases:            {"trial_phases", `pos, phase`, "it", 0},
		tabTerms:             {"trial_terms", `kind, pos, term`, "tit", 0},
		tabCollaborators:     {"trial_collaborators", `pos, name, class`, "itt", 0},
		tabArms:              {"arms", `arm_pos, label, type, description`, "ittt", 0},
		tabArmNames:          {"arm_intervention_names", `arm_pos, pos, name`, "iit", 0},
		tabInterventions:     {"interventions", `intervention_pos, type, name, description`, "ittt", 0},
		tabInterventionNames: {"intervention_names", `intervention_pos, kind, pos, name`, "itit", 0},
		tabRegistered:        {"registered_outcomes", `pos, kind, measure, description, time_frame`, "itttt", 0},
		tabReferences:        {"trial_references", `pos, pmid, type, citation`, "ittt", 0},
		tabOutcomes: {"outcomes", `outcome_pos, outcome_index, type, title, description,
			population, time_frame, reporting_status, param_type, dispersion_text, dispersion, unit, denom_units,
			units_analyzed, anticipated_post, calculate_pct`, "iitttttttttttttn", 0},
		tabGroups:     {"result_groups", `outcome_pos, group_pos, group_id, title, description, role`, "iitttt", 0},
		tabDenoms:     {"denoms", `outcome_pos, class_pos, denom_pos, units`, "init", 0},
		tabCounts:     {"denom_counts", `outcome_pos, class_pos, denom_pos, count_pos, group_id, value_text, value`, "iniittn", 0},
		tabClasses:    {"classes", `outcome_pos, class_pos, title`, "iit", 0},
		tabCategories: {"categories", `outcome_pos, class_pos, category_pos, title`, "iiit", 0},
		tabMeasurements: {"measurements", `outcome_pos, class_pos, category_pos, measurement_pos, group_id,
			value_text, value, spread_text, spread, lower_text, lower, upper_text, upper, comment`, "iiiittntntntnt", 0},
		tabAnalyses: {"analyses", `outcome_pos, analysis_pos, group_description, param_type,
			param_value_text, param_value, dispersion_type, dispersion_value_text, dispersion_value,
			ci_pct_text, ci_pct, ci_sides, ci_lower_text, ci_lower, ci_upper_text, ci_upper,
			p_text, p_op, p_value, method, statistical_comment, estimate_comment, non_inferiority_type,
			ci_lower_comment, ci_upper_comment, p_comment, tested_non_inferiority, non_inferiority_comment, other_description`,
			"iitttnttntnttntnttn" + strings.Repeat("t", 7) + "ntt", 0},
		tabAnalysisGroups: {"analysis_groups", `outcome_pos, analysis_pos, pos, group_id`, "iiit", 0},
	}
	for i := range ts {
		ts[i].width = len(ts[i].kinds)
		if n := strings.Count(ts[i].columns, ",") + 1; n != ts[i].width {
			panic(fmt.Sprintf("store: table %s lists %d columns and %d kinds", ts[i].name, n, ts[i].width))
		}
	}
	return ts
}()

// placeholders returns "(?, ?, ...)" with n marks.
func placeholders(n int) string {
	return "(" + strings.TrimSuffix(strings.Repeat("?, ", n), ", ") + ")"
}

func insertSQL(table, columns string) string {
	n := strings.Count(columns, ",") + 1
	return "INSERT INTO " + table + " (" + columns + ") VALUES " + placeholders(n)
}

func firstLine(s string) string {
	line, _, _ := strings.Cut(s, "\n")
	return line
}
