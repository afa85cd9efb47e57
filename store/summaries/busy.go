package summaries

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"sync/atomic"
	"time"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"

	"trendsql/store"
)

// DefaultWriteWait is how long a summary run's final write waits for
// another writer by default.
const DefaultWriteWait = 15 * time.Minute

// writeAttempt bounds one write attempt's wait for the lock (SQLite's busy
// timeout on the write connection); a variable so tests can shorten it.
var writeAttempt = store.BusyTimeout

// writeRetries counts write attempts that found the store busy (for tests
// and diagnostics).
var writeRetries atomic.Int64

// writeRunWaiting runs writeRun, and while it fails because another
// connection holds the write lock, tries again (with a growing pause, at
// most 5 s) until wait has passed or ctx ends. A failed attempt has rolled
// back, so nothing is stored twice.
func writeRunWaiting(ctx context.Context, s *store.Store, res *Result, results []*seriesResult, wait time.Duration) error {
	deadline := time.Now().Add(wait)
	pause := 100 * time.Millisecond
	for {
		attempt := min(writeAttempt, max(time.Until(deadline), time.Millisecond))
		err := writeRun(ctx, s, res, results, attempt)
		if err == nil || !isBusy(err) {
			return err
		}
		writeRetries.Add(1)
		if !time.Now().Before(deadline) {
			return fmt.Errorf("%w; another writer held the store for longer than the write wait (%s)", err, wait)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(min(pause, time.Until(deadline))):
		}
		pause = min(2*pause, 5*time.Second)
	}
}

// failRecordWait bounds how long a failed run keeps trying to record its
// status while another connection holds the write lock (a variable so tests
// can shorten it). An interrupted run (the user cancelled it) makes one
// attempt of at most the busy timeout.
var failRecordWait = time.Minute

// failRecordRetries counts attempts to record a run's end that found the
// store busy (for tests and diagnostics).
var failRecordRetries atomic.Int64

// recordRunEnd marks the run failed or interrupted with the error text,
// retrying while the store is busy (see failRecordWait). If it still cannot,
// the run stays 'running' until the next run marks it 'interrupted'.
func recordRunEnd(s *store.Store, id int64, status, msg string) {
	ctx := context.Background()
	wait := failRecordWait
	if status == "interrupted" {
		wait = 0
	}
	deadline := time.Now().Add(wait)
	pause := 100 * time.Millisecond
	for {
		attempt := writeAttempt
		if wait > 0 {
			attempt = min(writeAttempt, max(time.Until(deadline), time.Millisecond))
		}
		err := execBusyWait(ctx, s, attempt, `UPDATE summary_runs SET status = ?, error = ?, finished_at = ? WHERE id = ?`,
			status, msg, store.NowISO(), id)
		if err == nil || !isBusy(err) || !time.Now().Before(deadline) {
			return
		}
		failRecordRetries.Add(1)
		time.Sleep(min(pause, time.Until(deadline)))
		pause = min(2*pause, 5*time.Second)
	}
}

// execBusyWait runs one statement on a connection of its own whose busy
// timeout is busyWait for the duration.
func execBusyWait(ctx context.Context, s *store.Store, busyWait time.Duration, query string, args ...any) error {
	conn, done, err := connBusyWait(ctx, s, busyWait)
	if err != nil {
		return err
	}
	defer done()
	_, err = conn.ExecContext(ctx, query, args...)
	return err
}

// connBusyWait takes a connection of its own with busy timeout busyWait;
// done restores the timeout (or discards the connection) and returns it to
// the pool.
func connBusyWait(ctx context.Context, s *store.Store, busyWait time.Duration) (conn *sql.Conn, done func(), err error) {
	conn, err = s.DB.Conn(ctx)
	if err != nil {
		return nil, nil, err
	}
	if busyWait == store.BusyTimeout {
		return conn, func() { conn.Close() }, nil
	}
	if _, err := conn.ExecContext(ctx, fmt.Sprintf("PRAGMA busy_timeout = %d", busyWait.Milliseconds())); err != nil {
		conn.Close()
		return nil, nil, err
	}
	return conn, func() {
		store.RestorePragma(conn, "busy_timeout", store.BusyTimeout.Milliseconds())
		conn.Close()
	}, nil
}

// isBusy reports whether err is SQLite's "database is locked" (SQLITE_BUSY)
// or "table is locked" (SQLITE_LOCKED), extended codes included.
func isBusy(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_BUSY || c == sqlite3.SQLITE_LOCKED
	}
	return false
}
