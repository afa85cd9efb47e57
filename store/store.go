// Package store owns a trendsql store: opening it with the right pragmas,
// its schema (applied from package migrations), the catalog queries and
// the typed errors of the store core. The SQL the tool itself issues lives
// here and in the packages below: csvimport (CSV import of stations and
// readings), summaries (summary runs), demodata (the demo store) and
// benchmark (the bench harness); storetest holds the helpers tests share.
// Commands in cmd/ call these packages and never build SQL of their own.
package store

import (
	"context"
	"database/sql"
	"fmt"
	"net/url"
	"os"
	"time"

	_ "modernc.org/sqlite" // registers the "sqlite" driver

	"trendsql/migrations"
	"trendsql/sqlfuncs"
)

// DefaultPath is the store used when no path is given and TRENDSQL_DB is
// unset.
const DefaultPath = "readings.db"

// EnvDB names the environment variable that selects the store.
const EnvDB = "TRENDSQL_DB"

// BusyTimeout is how long a connection waits for another writer.
const BusyTimeout = 10 * time.Second

// ResolvePath picks the store path: the given one, else $TRENDSQL_DB, else
// ./readings.db.
func ResolvePath(given string) string {
	if given != "" {
		return given
	}
	if env := os.Getenv(EnvDB); env != "" {
		return env
	}
	return DefaultPath
}

// Options controls Open.
type Options struct {
	// ReadOnly opens the file read-only (mode=ro plus PRAGMA query_only
	// plus the guard in guard.go): no statement can write the store or any
	// other file.
	ReadOnly bool
	// UserSQL marks a writable store that runs SQL typed by a user: the
	// PRAGMAs that switch off a safety of the store are refused. Stores
	// opened with ReadOnly or UserSQL check censoring in PrepareUser.
	UserSQL bool
	// AllowUnsafePragmas lifts that refusal (expert use).
	AllowUnsafePragmas bool
	// Wait is how long a writer waits for another writer's lock (the busy
	// timeout of the connections): 0 means BusyTimeout, a negative value
	// not at all.
	Wait time.Duration
	// OnWait, if set, is called once when a writable open or AwaitWriter
	// has waited WaitNotice for another writer (to say so to the user).
	OnWait func()
}

// Store is an open trendsql store.
type Store struct {
	DB       *sql.DB
	Path     string
	ReadOnly bool
	watches  *watches
	wait     time.Duration
	onWait   func()
}

// DSN builds the driver connection string for path, with BusyTimeout.
func DSN(path string, readOnly bool) string { return dsnWait(path, readOnly, BusyTimeout) }

// dsnWait is DSN with busy timeout wait.
func dsnWait(path string, readOnly bool, wait time.Duration) string {
	q := url.Values{}
	q.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", wait.Milliseconds()))
	q.Add("_pragma", "foreign_keys(1)")
	if readOnly {
		q.Add("mode", "ro")
		q.Add("_pragma", "query_only(1)")
		q.Add("_defensive", "1")
	} else {
		q.Add("_pragma", "journal_mode(WAL)")
		q.Add("_pragma", "synchronous(NORMAL)")
		q.Add("_txlock", "immediate")
	}
	return "file:" + (&url.URL{Path: path}).EscapedPath() + "?" + q.Encode()
}

// Open opens (and for a writable open, creates) the store at path and
// registers trendsql's SQL functions. A writable open also applies pending
// migrations; a read-only open requires the store to exist and be current.
func Open(ctx context.Context, path string, opt Options) (*Store, error) {
	if err := sqlfuncs.Register(); err != nil {
		return nil, err
	}
	if st, err := os.Stat(path); err != nil {
		if opt.ReadOnly {
			return nil, fmt.Errorf("open %s: %w", path, ErrNoStore)
		}
	} else if n := linkCount(st); n > 1 {
		return nil, &LinkError{Path: path, Links: n}
	}
	wait := opt.Wait
	if wait == 0 || opt.ReadOnly {
		wait = BusyTimeout
	}
	wait = max(wait, 0)
	ws := &watches{}
	db, err := sqlfuncs.OpenDBWith(dsnWait(path, opt.ReadOnly, wait), guardSetup(opt, ws))
	if err != nil {
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	s := &Store{DB: db, Path: path, ReadOnly: opt.ReadOnly, watches: ws, wait: wait, onWait: opt.OnWait}
	// The schema version is read without the write lock, so opening a
	// current store never waits for another writer; only a store with a
	// migration due waits for and takes the write lock.
	cur, latest, err := s.SchemaVersion(ctx)
	if err != nil {
		db.Close()
		return nil, err
	}
	if cur < latest {
		if opt.ReadOnly {
			db.Close()
			return nil, &SchemaError{Path: path, Current: cur, Latest: latest}
		}
		if err := s.AwaitWriter(ctx); err != nil {
			db.Close()
			return nil, fmt.Errorf("open %s: migrate: %w", path, err)
		}
		if _, err := s.Migrate(ctx); err != nil {
			db.Close()
			return nil, err
		}
	}
	return s, nil
}

// Close closes the store.
func (s *Store) Close() error { return s.DB.Close() }

// SchemaVersion returns the applied and the latest known schema versions.
func (s *Store) SchemaVersion(ctx context.Context) (current, latest int, err error) {
	all, err := migrations.All()
	if err != nil {
		return 0, 0, err
	}
	if len(all) > 0 {
		latest = all[len(all)-1].Version
	}
	var exists int
	if err := s.DB.QueryRowContext(ctx, `SELECT count(*) FROM sqlite_schema WHERE type='table' AND name='schema_migrations'`).Scan(&exists); err != nil {
		return 0, 0, fmt.Errorf("read schema version: %w", err)
	}
	if exists == 0 {
		return 0, latest, nil
	}
	if err := s.DB.QueryRowContext(ctx, `SELECT coalesce(max(version), 0) FROM schema_migrations`).Scan(&current); err != nil {
		return 0, 0, fmt.Errorf("read schema version: %w", err)
	}
	return current, latest, nil
}

// Migrate applies every migration newer than the store's schema version, each
// in its own transaction, and returns the versions applied. Re-running it on a
// current store does nothing.
func (s *Store) Migrate(ctx context.Context) ([]int, error) {
	all, err := migrations.All()
	if err != nil {
		return nil, err
	}
	if _, err := s.DB.ExecContext(ctx, `CREATE TABLE IF NOT EXISTS schema_migrations (
		version    INTEGER PRIMARY KEY,
		name       TEXT NOT NULL,
		applied_at TEXT NOT NULL)`); err != nil {
		return nil, fmt.Errorf("create schema_migrations: %w", err)
	}
	var applied []int
	for _, m := range all {
		done, err := s.applyOne(ctx, m)
		if err != nil {
			return applied, err
		}
		if done {
			applied = append(applied, m.Version)
		}
	}
	return applied, nil
}

func (s *Store) applyOne(ctx context.Context, m migrations.Migration) (bool, error) {
	tx, err := s.DB.BeginTx(ctx, nil)
	if err != nil {
		return false, fmt.Errorf("migration %s: begin: %w", m.Name, err)
	}
	defer tx.Rollback()
	var n int
	if err := tx.QueryRowContext(ctx, `SELECT count(*) FROM schema_migrations WHERE version = ?`, m.Version).Scan(&n); err != nil {
		return false, fmt.Errorf("migration %s: %w", m.Name, err)
	}
	if n > 0 {
		return false, nil
	}
	if _, err := tx.ExecContext(ctx, m.SQL); err != nil {
		return false, fmt.Errorf("migration %s: %w", m.Name, err)
	}
	if _, err := tx.ExecContext(ctx, `INSERT INTO schema_migrations(version, name, applied_at) VALUES (?, ?, ?)`,
		m.Version, m.Name, time.Now().UTC().Format(time.RFC3339)); err != nil {
		return false, fmt.Errorf("migration %s: record: %w", m.Name, err)
	}
	if err := tx.Commit(); err != nil {
		return false, fmt.Errorf("migration %s: commit: %w", m.Name, err)
	}
	return true, nil
}

// IntegrityCheck runs PRAGMA integrity_check and returns nil when it says ok.
func (s *Store) IntegrityCheck(ctx context.Context) error {
	rows, err := s.DB.QueryContext(ctx, `PRAGMA integrity_check`)
	if err != nil {
		return fmt.Errorf("integrity check: %w", err)
	}
	defer rows.Close()
	var msgs []string
	for rows.Next() {
		var m string
		if err := rows.Scan(&m); err != nil {
			return err
		}
		msgs = append(msgs, m)
	}
	if err := rows.Err(); err != nil {
		return err
	}
	if len(msgs) == 1 && msgs[0] == "ok" {
		return nil
	}
	return fmt.Errorf("integrity check failed: %v", msgs)
}
