package store

import (
	"context"
	"database/sql"
	"fmt"
	"strings"
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
// bulkRows rows per statement. Call Add for each row and Flush at the end.
type ReadingWriter struct {
	tx       *sql.Tx
	conflict Conflict
	full     *sql.Stmt
	buf      []any
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

func insertSQL(c Conflict, n int) string {
	var b strings.Builder
	b.WriteString(c.clause())
	b.WriteString(" INTO readings(series_id, t, value, qualifier) VALUES ")
	for i := 0; i < n; i++ {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString("(?,?,?,?)")
	}
	return b.String()
}

// Add queues one reading, writing a full batch when one is ready.
func (w *ReadingWriter) Add(ctx context.Context, r Reading) error {
	var q any
	if r.Qualifier != nil {
		q = *r.Qualifier
	}
	w.buf = append(w.buf, r.SeriesID, r.T, r.Value, q)
	w.n++
	if w.n == bulkRows {
		return w.write(w.full.ExecContext(ctx, w.buf...))
	}
	return nil
}

// write accounts for one executed batch and empties the queue.
func (w *ReadingWriter) write(res sql.Result, err error) error {
	if err != nil {
		return fmt.Errorf("insert readings: %w", err)
	}
	k, _ := res.RowsAffected()
	w.stored += k
	w.buf = w.buf[:0]
	w.n = 0
	return nil
}

// Flush writes any queued rows and releases the statement. It returns the
// number of rows the inserts affected in total.
func (w *ReadingWriter) Flush(ctx context.Context) (int64, error) {
	defer w.full.Close()
	err := w.Sync(ctx)
	return w.stored, err
}

// Sync writes any queued rows now, so that queries in the same transaction
// see them; the writer stays usable.
func (w *ReadingWriter) Sync(ctx context.Context) error {
	if w.n > 0 {
		return w.write(w.tx.ExecContext(ctx, insertSQL(w.conflict, w.n), w.buf...))
	}
	return nil
}
