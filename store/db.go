package store

import (
	"context"
	"database/sql"
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"

	_ "github.com/mattn/go-sqlite3" // registers the "sqlite3" driver
)

//go:embed migrations/*.sql
var migrationFiles embed.FS

// ErrNotFound is returned when a trial, review or run does not exist.
var ErrNotFound = errors.New("not found")

// DB is an open workspace database.
type DB struct {
	path     string
	readOnly bool    // opened read-only: the file or its folder may not be written
	write    *sql.DB // one connection; transactions begin IMMEDIATE
	read     *sql.DB // read-only pool; transactions begin DEFERRED
	now      func() time.Time
}

// Open opens (creating if needed) the workspace database at path and
// brings its schema up to date. It is an error when the file's schema is
// newer than this binary's.
func Open(ctx context.Context, path string) (_ *DB, err error) {
	if strings.ContainsAny(path, "?#") {
		return nil, fmt.Errorf("open %s: file name may not contain ? or #", path)
	}
	db := &DB{path: path, now: time.Now}
	defer func() {
		if err != nil {
			_ = db.Close()
		}
	}()
	if notWritable(path) {
		return db, db.openReadOnly(ctx)
	}
	if err := createFile(ctx, path); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	if db.write, err = sql.Open("sqlite3", dsn(path, false)); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	db.write.SetMaxOpenConns(1)
	db.write.SetConnMaxIdleTime(0)

	var mode string
	if err := db.write.QueryRowContext(ctx, "PRAGMA journal_mode").Scan(&mode); err != nil {
		return nil, fmt.Errorf("open %s: read journal mode: %w", path, err)
	}
	if !strings.EqualFold(mode, "wal") {
		return nil, fmt.Errorf("open %s: journal mode is %q, want wal", path, mode)
	}
	if err := db.migrate(ctx); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	if db.read, err = sql.Open("sqlite3", dsn(path, true)); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	if err := db.read.PingContext(ctx); err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	return db, nil
}

// ReadOnlyError is returned by the methods that write when the workspace
// was opened read-only.
type ReadOnlyError struct{ Path string }

func (e *ReadOnlyError) Error() string {
	return fmt.Sprintf("workspace %s is read-only (the file or its folder may not be written)", e.Path)
}

// ReadOnly reports whether the workspace was opened read-only because the
// file or its folder may not be written.
func (db *DB) ReadOnly() bool { return db.readOnly }

// writable returns a *ReadOnlyError when the workspace is read-only.
func (db *DB) writable() error {
	if db.readOnly {
		return &ReadOnlyError{Path: db.path}
	}
	return nil
}

// notWritable reports whether an existing database file, or the folder
// that must hold its write-ahead log, may not be written by this process.
func notWritable(path string) bool {
	if _, err := os.Stat(path); err != nil {
		return false // a missing file is created (or fails) as usual
	}
	return !canWrite(path) || !canWrite(filepath.Dir(path))
}

// openReadOnly opens a workspace that may not be written: both pools read
// only, no migration. SQLite needs the write-ahead log's index file; when
// it cannot be created (a read-only folder) the file is opened as
// immutable, which is safe because nobody with these permissions can be
// writing it.
func (db *DB) openReadOnly(ctx context.Context) error {
	db.readOnly = true
	var err error
	for _, extra := range []string{"", "&immutable=1"} {
		if db.read != nil {
			_ = db.read.Close()
		}
		if db.read, err = sql.Open("sqlite3", "file:"+db.path+"?mode=ro&_busy_timeout=5000&_txlock=deferred&_query_only=1&_foreign_keys=on&_stmt_cache_size=64"+extra); err != nil {
			return fmt.Errorf("open %s: %w", db.path, err)
		}
		var v int
		if err = db.read.QueryRowContext(ctx, "PRAGMA user_version").Scan(&v); err != nil {
			continue
		}
		latest := LatestSchemaVersion()
		switch {
		case v > latest:
			return fmt.Errorf("open %s: database schema version %d is newer than this binary's version %d", db.path, v, latest)
		case v < latest:
			return fmt.Errorf("open %s: the workspace is read-only and has schema version %d, older than this binary's %d; "+
				"make it writable and run any command once to upgrade it", db.path, v, latest)
		}
		db.write = db.read
		return nil
	}
	return fmt.Errorf("open %s read-only: %w", db.path, err)
}

// PageSize is the page size of a database file Open creates. Larger pages
// than SQLite's default of 4096 make shallower B-trees and fewer WAL frames
// per stored row; a file created with another page size keeps it.
const PageSize = 16384

// createFile gives a missing or empty database file its page size, which
// can only be set before the first table is created and before the file
// is switched to WAL.
func createFile(ctx context.Context, path string) error {
	if fi, err := os.Stat(path); err == nil && fi.Size() > 0 {
		return nil
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	c, err := sql.Open("sqlite3", "file:"+path+"?_busy_timeout=5000")
	if err != nil {
		return err
	}
	defer c.Close()
	// PRAGMA takes no placeholders; the size is our own constant.
	if _, err := c.ExecContext(ctx, "PRAGMA page_size = "+strconv.Itoa(PageSize)); err != nil {
		return fmt.Errorf("set page size: %w", err)
	}
	// Incremental vacuum lets deleting runs give their pages back to the
	// file system (store.DeleteRuns); it too must precede the first table.
	if _, err := c.ExecContext(ctx, "PRAGMA auto_vacuum = INCREMENTAL"); err != nil {
		return fmt.Errorf("set auto_vacuum: %w", err)
	}
	var mode string
	if err := c.QueryRowContext(ctx, "PRAGMA journal_mode = WAL").Scan(&mode); err != nil {
		return fmt.Errorf("set journal mode: %w", err)
	}
	return c.Close()
}

// dsn builds the driver's connection string. Writers begin IMMEDIATE
// transactions; readers begin DEFERRED ones and may not change the file.
func dsn(file string, readOnly bool) string {
	q := "_journal_mode=WAL&_busy_timeout=5000&_foreign_keys=on"
	if readOnly {
		// Readers run the same few queries over and over (about twenty
		// per trial record): the driver keeps up to 64 of them prepared
		// per connection instead of preparing each anew.
		q += "&_txlock=deferred&_query_only=1&_stmt_cache_size=64"
	} else {
		// synchronous=NORMAL in WAL mode: a commit is durable once the
		// operating system has the WAL pages, so a killed process loses
		// nothing it committed and the file never corrupts; only a power
		// cut can lose the last commits. A 64 MiB page cache keeps the
		// index pages of a growing database in memory during bulk loads.
		// _mutex=no opens the connection without SQLite's per-connection
		// mutex, which every bind and step would otherwise take: the write
		// pool has one connection and database/sql hands it to one
		// goroutine at a time (the driver's cancellation watcher only calls
		// sqlite3_interrupt, which is safe from any thread).
		q += "&_txlock=immediate&_synchronous=NORMAL&_cache_size=-65536&_mutex=no"
	}
	return "file:" + file + "?" + q
}

// Close closes both connection pools.
func (db *DB) Close() error {
	var errs []error
	if db.write == db.read {
		db.write = nil
	}
	if db.read != nil {
		errs = append(errs, db.read.Close())
		db.read = nil
	}
	if db.write != nil {
		errs = append(errs, db.write.Close())
		db.write = nil
	}
	return errors.Join(errs...)
}

// Path returns the file name the database was opened with.
func (db *DB) Path() string { return db.path }

// SchemaVersion returns the file's schema version (PRAGMA user_version).
func (db *DB) SchemaVersion(ctx context.Context) (int, error) {
	var v int
	if err := db.read.QueryRowContext(ctx, "PRAGMA user_version").Scan(&v); err != nil {
		return 0, fmt.Errorf("read schema version: %w", err)
	}
	return v, nil
}

// LatestSchemaVersion is the schema version this binary writes.
func LatestSchemaVersion() int {
	ms, err := migrations()
	if err != nil || len(ms) == 0 {
		return 0
	}
	return ms[len(ms)-1].version
}

type migration struct {
	version int
	name    string
	sql     string
}

// migrations lists the embedded migration files in version order. A file
// is named NNNN_description.sql; versions start at 1 and have no gaps.
func migrations() ([]migration, error) {
	entries, err := fs.ReadDir(migrationFiles, "migrations")
	if err != nil {
		return nil, fmt.Errorf("list migrations: %w", err)
	}
	var ms []migration
	for _, e := range entries {
		name := e.Name()
		num, _, ok := strings.Cut(name, "_")
		if !ok || !strings.HasSuffix(name, ".sql") {
			return nil, fmt.Errorf("migration %s: name is not NNNN_name.sql", name)
		}
		v, err := strconv.Atoi(num)
		if err != nil {
			return nil, fmt.Errorf("migration %s: bad number: %w", name, err)
		}
		b, err := migrationFiles.ReadFile(path.Join("migrations", name))
		if err != nil {
			return nil, fmt.Errorf("read migration %s: %w", name, err)
		}
		ms = append(ms, migration{version: v, name: name, sql: string(b)})
	}
	sort.Slice(ms, func(i, j int) bool { return ms[i].version < ms[j].version })
	for i, m := range ms {
		if m.version != i+1 {
			return nil, fmt.Errorf("migration %s: version %d, want %d", m.name, m.version, i+1)
		}
	}
	return ms, nil
}

// migrate applies every migration newer than the file's user_version, each
// in its own transaction together with its PRAGMA user_version.
func (db *DB) migrate(ctx context.Context) error {
	ms, err := migrations()
	if err != nil {
		return err
	}
	latest := len(ms)
	var current int
	if err := db.write.QueryRowContext(ctx, "PRAGMA user_version").Scan(&current); err != nil {
		return fmt.Errorf("read schema version: %w", err)
	}
	if current > latest {
		return fmt.Errorf("database schema version %d is newer than this binary's version %d", current, latest)
	}
	for _, m := range ms[current:] {
		if err := db.applyMigration(ctx, m); err != nil {
			return err
		}
	}
	return nil
}

func (db *DB) applyMigration(ctx context.Context, m migration) error {
	tx, err := db.write.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("migration %s: begin: %w", m.name, err)
	}
	defer rollback(tx)
	// Another process may have migrated while this one waited for the lock.
	var current int
	if err := tx.QueryRowContext(ctx, "PRAGMA user_version").Scan(&current); err != nil {
		return fmt.Errorf("migration %s: read schema version: %w", m.name, err)
	}
	if current >= m.version {
		return nil
	}
	if _, err := tx.ExecContext(ctx, m.sql); err != nil {
		return fmt.Errorf("migration %s: %w", m.name, err)
	}
	// PRAGMA takes no placeholders; the version is our own integer.
	if _, err := tx.ExecContext(ctx, "PRAGMA user_version = "+strconv.Itoa(m.version)); err != nil {
		return fmt.Errorf("migration %s: set schema version: %w", m.name, err)
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("migration %s: commit: %w", m.name, err)
	}
	return nil
}

// rollback rolls tx back, ignoring the error of a transaction that was
// already committed or rolled back.
func rollback(tx *sql.Tx) {
	_ = tx.Rollback()
}

// readTx begins a read-only snapshot transaction.
func (db *DB) readTx(ctx context.Context) (*sql.Tx, error) {
	tx, err := db.read.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
	if err != nil {
		return nil, fmt.Errorf("begin read: %w", err)
	}
	return tx, nil
}

// timeText formats a wall-clock time for the *_at columns.
func timeText(t time.Time) string {
	return t.UTC().Format(time.RFC3339Nano)
}

func parseTimeText(s string) (time.Time, error) {
	t, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		return time.Time{}, fmt.Errorf("parse time %q: %w", s, err)
	}
	return t, nil
}
