package csvimport

import (
	"context"
	"database/sql"
	"fmt"

	"trendsql/store"
)

// Reading is one row of the readings table.
type Reading struct {
	SeriesID  int64
	T         int64 // unix seconds UTC
	Value     float64
	Qualifier *string // nil for no flag
}

// bulkRows is how many rows one multi-VALUES INSERT carries.
const bulkRows = 500

// Conflict says what an insert does when (series_id, t) already exists.
type Conflict int

const (
	ConflictError   Conflict = iota // fail the statement (and so the caller's transaction)
	ConflictIgnore                  // keep the stored reading
	ConflictReplace                 // overwrite the stored reading
)

func (c Conflict) clause() string {
	switch c {
	case ConflictIgnore:
		return "INSERT OR IGNORE"
	case ConflictReplace:
		return "INSERT OR REPLACE"
	default:
		return "INSERT"
	}
}

// ReadingWriter inserts readings inside a caller's transaction in batches of
// bulkRows rows per statement. Call Add for each row and Flush at the end
// (or Close on an error path).
//
// A writer made by newReadingWriterOn writes its full batches through
// SQLite's C API on the transaction's connection when that is available
// (rawbulk.go); partial batches, and every batch otherwise, go through
// database/sql. Both paths run the same statement text and store the same
// rows.
type ReadingWriter struct {
	tx       *sql.Tx
	conflict Conflict
	full     *sql.Stmt  // database/sql path (nil when raw is used)
	raw      *rawInsert // C-level path, or nil
	buf      []any      // database/sql path: queued arguments
	rows     []Reading  // C-level path: queued rows
	n        int
	stored   int64
}

// NewReadingWriter prepares the batched insert on tx.
func NewReadingWriter(ctx context.Context, tx *sql.Tx, conflict Conflict) (*ReadingWriter, error) {
	w := &ReadingWriter{tx: tx, conflict: conflict, buf: make([]any, 0, 4*bulkRows)}
	st, err := tx.PrepareContext(ctx, insertSQL(conflict, bulkRows))
	if err != nil {
		return nil, fmt.Errorf("prepare readings insert: %w", err)
	}
	w.full = st
	return w, nil
}

// newReadingWriterOn is NewReadingWriter for a transaction tx begun on
// conn: full batches use the C-level insert on conn when it is available.
func newReadingWriterOn(ctx context.Context, conn *sql.Conn, tx *sql.Tx, conflict Conflict) (*ReadingWriter, error) {
	raw, err := newRawInsert(conn, conflict)
	if err != nil {
		return nil, fmt.Errorf("prepare readings insert: %w", err)
	}
	if raw == nil {
		return NewReadingWriter(ctx, tx, conflict)
	}
	return &ReadingWriter{tx: tx, conflict: conflict, raw: raw, rows: make([]Reading, 0, bulkRows)}, nil
}

// ReadingsTx is a write transaction on a connection of its own with a
// ReadingWriter on it, so that full batches use the C-level insert
// (rawbulk.go) when it is available. The demo and benchmark loaders use it;
// the import sets its connection up itself (foreign keys, batch record).
type ReadingsTx struct {
	conn *sql.Conn
	Tx   *sql.Tx
	W    *ReadingWriter
}

// BeginReadingsTx takes a connection of s, begins a transaction on it and
// prepares a ReadingWriter with the given conflict rule. Call End when done
// (after Commit, or to roll back).
func BeginReadingsTx(ctx context.Context, s *store.Store, conflict Conflict) (*ReadingsTx, error) {
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		return nil, err
	}
	rt := &ReadingsTx{conn: conn}
	if rt.Tx, err = conn.BeginTx(ctx, nil); err != nil {
		conn.Close()
		return nil, err
	}
	if rt.W, err = newReadingWriterOn(ctx, conn, rt.Tx, conflict); err != nil {
		rt.End()
		return nil, err
	}
	return rt, nil
}

// End releases the writer, rolls back the transaction unless it was
// committed, and returns the connection to the pool, in that order.
func (rt *ReadingsTx) End() {
	if rt.W != nil {
		rt.W.Close()
	}
	rt.Tx.Rollback()
	rt.conn.Close()
}

func insertSQL(c Conflict, n int) string {
	return c.clause() + " INTO readings(series_id, t, value, qualifier) VALUES " + store.ValuesList(n, 4)
}

// queue appends r's four statement arguments to the database/sql batch (a
// missing qualifier is NULL).
func (w *ReadingWriter) queue(r *Reading) {
	var q any
	if r.Qualifier != nil {
		q = *r.Qualifier
	}
	w.buf = append(w.buf, r.SeriesID, r.T, r.Value, q)
}

// Add queues one reading, writing a full batch when one is ready.
func (w *ReadingWriter) Add(ctx context.Context, r Reading) error {
	if w.raw != nil {
		w.rows = append(w.rows, r)
		w.n++
		if w.n == bulkRows {
			k, err := w.raw.exec(ctx, w.rows)
			return w.done(k, err)
		}
		return nil
	}
	w.queue(&r)
	w.n++
	if w.n == bulkRows {
		return w.write(w.full.ExecContext(ctx, w.buf...))
	}
	return nil
}

// write accounts for one batch executed through database/sql.
func (w *ReadingWriter) write(res sql.Result, err error) error {
	var k int64
	if err == nil {
		k, _ = res.RowsAffected()
	}
	return w.done(k, err)
}

// done accounts for one executed batch of k affected rows and empties the
// queue.
func (w *ReadingWriter) done(k int64, err error) error {
	if err != nil {
		return fmt.Errorf("insert readings: %w", err)
	}
	w.stored += k
	w.buf = w.buf[:0]
	clear(w.rows) // drop the qualifier strings
	w.rows = w.rows[:0]
	w.n = 0
	return nil
}

// Flush writes any queued rows and releases the statement. It returns the
// number of rows the inserts affected in total.
func (w *ReadingWriter) Flush(ctx context.Context) (int64, error) {
	err := w.Sync(ctx)
	if cerr := w.Close(); err == nil && cerr != nil {
		err = fmt.Errorf("insert readings: close: %w", cerr)
	}
	return w.stored, err
}

// Close releases the statement without writing queued rows; it is safe to
// call more than once and after Flush. A writer made by newReadingWriterOn
// must be closed before its connection is.
func (w *ReadingWriter) Close() error {
	var err error
	if w.full != nil {
		err = w.full.Close()
		w.full = nil
	}
	if w.raw != nil {
		if rerr := w.raw.close(); err == nil {
			err = rerr
		}
	}
	return err
}

// Sync writes any queued rows now, so that queries in the same transaction
// see them; the writer stays usable.
func (w *ReadingWriter) Sync(ctx context.Context) error {
	if w.n == 0 {
		return nil
	}
	if w.raw != nil {
		// A partial batch: its own statement text, through database/sql on
		// the same connection and transaction.
		for i := range w.rows {
			w.queue(&w.rows[i])
		}
	}
	return w.write(w.tx.ExecContext(ctx, insertSQL(w.conflict, w.n), w.buf...))
}
