// Package storetest holds the helpers tests share: a scratch store in the
// test's temporary directory, a copy of an existing store, a read-only view
// of one, a series inserted in one call, the integrity check, and reading a
// result set whole.
package storetest

import (
	"context"
	"database/sql"
	"io"
	"os"
	"path/filepath"
	"testing"

	"trendsql/store"
)

// Open opens a new writable store in tb's temporary directory. When the
// test ends, PRAGMA integrity_check must say ok (else the test fails) and
// the store is closed.
func Open(tb testing.TB) *store.Store {
	tb.Helper()
	ctx := context.Background()
	path := filepath.Join(tb.TempDir(), "test.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		tb.Fatalf("open %s: %v", path, err)
	}
	tb.Cleanup(func() {
		if err := s.IntegrityCheck(ctx); err != nil {
			tb.Errorf("integrity check: %v", err)
		}
		s.Close()
	})
	return s
}

// OpenScratch is Open followed by ddl, the test's own scratch table(s).
func OpenScratch(tb testing.TB, ddl string) *store.Store {
	tb.Helper()
	s := Open(tb)
	if _, err := s.DB.Exec(ddl); err != nil {
		tb.Fatalf("create scratch table: %v", err)
	}
	return s
}

// Integrity runs PRAGMA integrity_check on s and stops the test unless it
// says ok.
func Integrity(tb testing.TB, s *store.Store) {
	tb.Helper()
	if err := s.IntegrityCheck(context.Background()); err != nil {
		tb.Fatalf("integrity check: %v", err)
	}
}

// OpenReadOnly opens the store at path read-only, checks its integrity
// (stopping the test unless it says ok) and closes it when the test ends.
func OpenReadOnly(tb testing.TB, path string) *store.Store {
	tb.Helper()
	s := View(tb, path)
	Integrity(tb, s)
	return s
}

// View opens the store at path read-only and closes it when the test ends,
// without the integrity check of OpenReadOnly: the view tests take of a
// store that another process may be writing, or of a shared fixture that
// many tests open.
func View(tb testing.TB, path string) *store.Store {
	tb.Helper()
	s, err := store.Open(context.Background(), path, store.Options{ReadOnly: true})
	if err != nil {
		tb.Fatalf("open %s read-only: %v", path, err)
	}
	tb.Cleanup(func() { s.Close() })
	return s
}

// Copy copies the store at src, with its write-ahead log when there is one,
// into a fresh directory under tb's temporary directory and returns the
// copy's path (same file name as src).
func Copy(tb testing.TB, src string) string {
	tb.Helper()
	dst := filepath.Join(tb.TempDir(), filepath.Base(src))
	for _, suffix := range []string{"", "-wal"} {
		in, err := os.Open(src + suffix)
		if err != nil {
			if suffix != "" && os.IsNotExist(err) {
				continue
			}
			tb.Fatal(err)
		}
		out, err := os.Create(dst + suffix)
		if err != nil {
			in.Close()
			tb.Fatal(err)
		}
		_, err = io.Copy(out, in)
		in.Close()
		if err != nil {
			out.Close()
			tb.Fatal(err)
		}
		if err := out.Close(); err != nil {
			tb.Fatal(err)
		}
	}
	return dst
}

// InsertSeries stores one series: station (created with its id as name
// when missing), series (station, variable) and its readings (t[i], y[i]) in
// one transaction. It returns the series id.
func InsertSeries(tb testing.TB, db *sql.DB, station, variable string, t []int64, y []float64) int64 {
	tb.Helper()
	if len(t) != len(y) {
		tb.Fatalf("InsertSeries: %d times, %d values", len(t), len(y))
	}
	tx, err := db.Begin()
	if err != nil {
		tb.Fatal(err)
	}
	defer tx.Rollback()
	if _, err := tx.Exec(`INSERT OR IGNORE INTO stations (id, name) VALUES (?, ?)`, station, station); err != nil {
		tb.Fatal(err)
	}
	var sid int64
	if err := tx.QueryRow(`INSERT INTO series (station_id, variable) VALUES (?, ?) RETURNING id`, station, variable).Scan(&sid); err != nil {
		tb.Fatal(err)
	}
	st, err := tx.Prepare(`INSERT INTO readings (series_id, t, value) VALUES (?, ?, ?)`)
	if err != nil {
		tb.Fatal(err)
	}
	defer st.Close()
	for i := range t {
		if _, err := st.Exec(sid, t[i], y[i]); err != nil {
			tb.Fatal(err)
		}
	}
	if err := tx.Commit(); err != nil {
		tb.Fatal(err)
	}
	return sid
}

// ScanAll reads every row of rows as []any per row and closes rows.
func ScanAll(tb testing.TB, rows *sql.Rows) [][]any {
	tb.Helper()
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		tb.Fatal(err)
	}
	var out [][]any
	for rows.Next() {
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			tb.Fatal(err)
		}
		out = append(out, vals)
	}
	if err := rows.Err(); err != nil {
		tb.Fatal(err)
	}
	return out
}
