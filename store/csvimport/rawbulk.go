package csvimport

// C-level bulk insert of readings.
//
// Through database/sql every batch of bulkRows readings passes its
// 4*bulkRows arguments as interfaces (each number boxed on the heap), which
// the driver then converts and binds one by one. rawInsert prepares the
// very same full-batch statement (insertSQL(conflict, bulkRows)) on the
// import's own connection through package rawsqlite and binds the values
// directly: no boxing, no per-value conversion.
//
// The import takes a *sql.Conn, begins its transaction on it and asks
// rawsqlite.ConnOf (under Conn.Raw) for the connection's C-level handle.
// Every later use of the handle — each batch, and the final Close — again
// runs inside Conn.Raw, which holds database/sql's lock of that connection,
// so it can never overlap a rollback that database/sql starts from another
// goroutine when the import's context is cancelled. Before each batch the
// context is checked and the connection must report an open transaction,
// so rows are never written outside the import's transaction (which
// database/sql may already have rolled back).
//
// Qualifier texts are bound as text (an empty qualifier as empty text), a
// missing qualifier as NULL, exactly as the database/sql path stores "" and
// nil. Errors carry SQLite's own text in the driver's form, so an import
// fails with the same message on either path. When the handle is not
// available (TRENDSQL_FASTPATH=off, or driver or libc versions or a
// connection layout rawsqlite does not know) the writer keeps the
// database/sql statement: same rows, same counts.

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"sync/atomic"

	"trendsql/sqlfuncs/rawsqlite"
)

// rawInsertStats is for tests and diagnostics: off forces the database/sql
// path, batches counts the batches written through the C API.
var rawInsertStats struct {
	off     atomic.Bool
	batches atomic.Int64
}

// rawInsert is the prepared full-batch insert on one connection.
type rawInsert struct {
	conn   *sql.Conn
	handle rawsqlite.Conn
	stmt   *rawsqlite.Stmt
}

// newRawInsert prepares the full-batch insert on conn. It returns nil and
// no error when the C-level path is not available, so the caller uses
// database/sql.
func newRawInsert(conn *sql.Conn, conflict Conflict) (*rawInsert, error) {
	if rawInsertStats.off.Load() {
		return nil, nil
	}
	var ri *rawInsert
	err := conn.Raw(func(dc any) error {
		handle, err := rawsqlite.ConnOf(dc)
		if err != nil {
			return nil // not available: database/sql it is
		}
		stmt, err := handle.Prepare(insertSQL(conflict, bulkRows))
		if err != nil {
			return err
		}
		ri = &rawInsert{conn: conn, handle: handle, stmt: stmt}
		return nil
	})
	if err != nil {
		return nil, err
	}
	return ri, nil
}

// exec writes one full batch (len(rows) == bulkRows) and returns the rows
// it changed (as database/sql's RowsAffected).
func (ri *rawInsert) exec(ctx context.Context, rows []Reading) (int64, error) {
	if len(rows) != bulkRows {
		return 0, fmt.Errorf("internal error: raw batch of %d rows, want %d", len(rows), bulkRows)
	}
	var changed int64
	err := ri.conn.Raw(func(any) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if ri.stmt == nil {
			return errors.New("internal error: the insert statement is closed")
		}
		if !ri.handle.InTransaction() {
			return errors.New("the import transaction is no longer open")
		}
		textBytes := 0
		for k := range rows {
			if q := rows[k].Qualifier; q != nil {
				textBytes += len(*q)
			}
		}
		st := ri.stmt
		if err := st.BeginTexts(textBytes); err != nil {
			return err
		}
		for k := range rows {
			r := &rows[k]
			param := 4*k + 1
			if err := st.BindInt64(param, r.SeriesID); err != nil {
				return err
			}
			if err := st.BindInt64(param+1, r.T); err != nil {
				return err
			}
			if err := st.BindFloat64(param+2, r.Value); err != nil {
				return err
			}
			var err error
			if r.Qualifier == nil {
				err = st.BindNull(param + 3)
			} else {
				err = st.BindText(param+3, *r.Qualifier)
			}
			if err != nil {
				return err
			}
		}
		n, err := st.Exec()
		changed = n
		return err
	})
	if err == nil {
		rawInsertStats.batches.Add(1)
	}
	return changed, err
}

// close finalizes the statement; it is safe to call more than once. It must
// run before the connection is closed.
func (ri *rawInsert) close() error {
	if ri == nil || ri.stmt == nil {
		return nil
	}
	return ri.conn.Raw(func(any) error {
		ri.stmt.Close()
		ri.stmt = nil
		return nil
	})
}
