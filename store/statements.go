package store

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"fmt"
	"strings"
	"time"
)

// NowISO is the time stamp the store records (import batches, summary
// runs): ISO 8601 UTC with milliseconds.
func NowISO() string { return time.Now().UTC().Format("2006-01-02T15:04:05.000Z") }

// ValuesList is the placeholder list of a multi-row INSERT: n rows of cols
// parameters, "(?,?),(?,?)" for n = cols = 2.
func ValuesList(n, cols int) string {
	row := "(" + strings.Repeat("?,", cols-1) + "?)"
	return strings.Repeat(row+",", n-1) + row
}

// Placeholders is a list of n parameters for an IN (...) list: "?,?,?".
func Placeholders(n int) string { return strings.TrimSuffix(strings.Repeat("?,", n), ",") }

// RestorePragma sets a per-connection PRAGMA back to want on a connection
// about to return to the pool (after an import or a summary write changed it
// for its own work), and discards the connection when the setting cannot be
// confirmed, so no pooled connection keeps a changed setting.
func RestorePragma(conn *sql.Conn, name string, want int64) {
	ctx := context.Background()
	got := want + 1
	if _, err := conn.ExecContext(ctx, fmt.Sprintf("PRAGMA %s = %d", name, want)); err == nil {
		_ = conn.QueryRowContext(ctx, "PRAGMA "+name).Scan(&got)
	}
	if got != want {
		_ = conn.Raw(func(any) error { return driver.ErrBadConn })
	}
}

// Checkpoint copies the write-ahead log into the main database file and
// truncates the log (PRAGMA wal_checkpoint(TRUNCATE)).
func (s *Store) Checkpoint(ctx context.Context) error {
	if _, err := s.DB.ExecContext(ctx, `PRAGMA wal_checkpoint(TRUNCATE)`); err != nil {
		return fmt.Errorf("checkpoint: %w", err)
	}
	return nil
}
