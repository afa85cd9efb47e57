package csvimport

// C-level bulk insert of readings.
//
// Why. Through database/sql every batch of bulkRows readings passes its
// 4*bulkRows arguments as interfaces (each number boxed on the heap), which
// the driver then converts and binds one by one. A readings import spends a
// large part of its time there. rawInsert prepares the very same full-batch
// statement (insertSQL(conflict, bulkRows)) with sqlite3_prepare_v2 on the
// import's own connection and binds the values with sqlite3_bind_int64,
// _double, _text and _null directly: no boxing, no per-value conversion.
//
// How. The import takes a *sql.Conn, begins its transaction on it and asks
// sqlfuncs.RawConn (under Conn.Raw) for the connection's sqlite3* handle and
// libc TLS. Every later use of the handle — each batch, and the final
// sqlite3_finalize — again runs inside Conn.Raw, which holds database/sql's
// lock of that connection, so it can never overlap a rollback that
// database/sql starts from another goroutine when the import's context is
// cancelled. Before each batch the context is checked and
// sqlite3_get_autocommit must report an open transaction, so rows are never
// written outside the import's transaction (which database/sql may already
// have rolled back).
//
// Qualifier texts of a batch are copied into one C buffer owned by
// rawInsert and bound with SQLITE_STATIC: every parameter is bound again
// before each step, so no binding ever refers to text of an earlier batch
// when the statement runs, and the buffer is freed only after the statement
// is finalized. An empty qualifier is bound as empty text (a non-NULL
// pointer), a missing one as NULL, exactly as the database/sql path stores
// "" and nil.
//
// Errors carry SQLite's own text in the driver's form ("<errstr>: <errmsg>
// (<extended code>)"), so an import fails with the same message on either
// path. When the raw handle is not available (TRENDSQL_FASTPATH=off, or a
// driver version or connection layout the check in sqlfuncs does not know)
// the writer keeps the database/sql statement: same rows, same counts.

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"math"
	"sync/atomic"
	"unsafe"

	"modernc.org/libc"
	sqlite3 "modernc.org/sqlite/lib"

	"trendsql/sqlfuncs"
)

// rawInsertStats is for tests and diagnostics: off forces the database/sql
// path, batches counts the batches written through the C API.
var rawInsertStats struct {
	off     atomic.Bool
	batches atomic.Int64
}

// rawInsert is the prepared full-batch insert on one connection.
type rawInsert struct {
	conn    *sql.Conn
	db      uintptr   // sqlite3*
	tls     *libc.TLS // the connection's TLS
	stmt    uintptr   // sqlite3_stmt*
	text    uintptr   // C buffer for the qualifier texts of one batch
	textCap int
}

// rawError is an SQLite error from the C-level path, worded as the driver
// words it.
type rawError struct {
	msg  string
	code int
}

func (e *rawError) Error() string { return e.msg }

// Code returns SQLite's (extended) result code.
func (e *rawError) Code() int { return e.code }

// rawErr builds the error of result code rc on connection db: the driver's
// form "errstr: errmsg (rc)", or "errstr (rc)" when both texts are equal.
func rawErr(tls *libc.TLS, db uintptr, rc int32) error {
	str := libc.GoString(sqlite3.Xsqlite3_errstr(tls, rc))
	busy := ""
	if rc == sqlite3.SQLITE_BUSY {
		busy = " (SQLITE_BUSY)"
	}
	if msg := libc.GoString(sqlite3.Xsqlite3_errmsg(tls, db)); msg != str {
		return &rawError{msg: fmt.Sprintf("%s: %s (%d)%s", str, msg, rc, busy), code: int(rc)}
	}
	return &rawError{msg: fmt.Sprintf("%s (%d)%s", str, rc, busy), code: int(rc)}
}

// cPtr converts an address from SQLite into a Go pointer (the memory is
// SQLite's, outside the Go heap).
func cPtr[T any](p uintptr) *T {
	return *(**T)(unsafe.Pointer(&p))
}

// newRawInsert prepares the full-batch insert on conn. It returns nil and
// no error when the C-level path is not available, so the caller uses
// database/sql.
func newRawInsert(conn *sql.Conn, conflict Conflict) (*rawInsert, error) {
	if rawInsertStats.off.Load() {
		return nil, nil
	}
	ri := &rawInsert{conn: conn}
	unavailable := false
	err := conn.Raw(func(dc any) error {
		db, tls, err := sqlfuncs.RawConn(dc)
		if err != nil {
			unavailable = true
			return nil
		}
		zSQL, err := libc.CString(insertSQL(conflict, bulkRows))
		if err != nil {
			return err
		}
		defer libc.Xfree(tls, zSQL)
		pp := sqlite3.Xsqlite3_malloc64(tls, uint64(unsafe.Sizeof(uintptr(0))))
		if pp == 0 {
			return rawErr(tls, db, sqlite3.SQLITE_NOMEM)
		}
		defer sqlite3.Xsqlite3_free(tls, pp)
		*cPtr[uintptr](pp) = 0
		if rc := sqlite3.Xsqlite3_prepare_v2(tls, db, zSQL, -1, pp, 0); rc != sqlite3.SQLITE_OK {
			return rawErr(tls, db, rc)
		}
		const textCap = 4096
		text := sqlite3.Xsqlite3_malloc64(tls, textCap)
		if text == 0 {
			sqlite3.Xsqlite3_finalize(tls, *cPtr[uintptr](pp))
			return rawErr(tls, db, sqlite3.SQLITE_NOMEM)
		}
		ri.db, ri.tls, ri.stmt, ri.text, ri.textCap = db, tls, *cPtr[uintptr](pp), text, textCap
		return nil
	})
	if err != nil {
		return nil, err
	}
	if unavailable {
		return nil, nil
	}
	return ri, nil
}

// exec writes one full batch (len(rows) == bulkRows) and returns the rows
// it changed (sqlite3_changes, as database/sql's RowsAffected).
func (ri *rawInsert) exec(ctx context.Context, rows []Reading) (int64, error) {
	if len(rows) != bulkRows {
		return 0, fmt.Errorf("internal error: raw batch of %d rows, want %d", len(rows), bulkRows)
	}
	var changed int64
	err := ri.conn.Raw(func(any) error {
		if err := ctx.Err(); err != nil {
			return err
		}
		if ri.stmt == 0 {
			return errors.New("internal error: the insert statement is closed")
		}
		tls, db, st := ri.tls, ri.db, ri.stmt
		if sqlite3.Xsqlite3_get_autocommit(tls, db) != 0 {
			return errors.New("the import transaction is no longer open")
		}
		need := 0
		for i := range rows {
			if q := rows[i].Qualifier; q != nil {
				if len(*q) > math.MaxInt32 {
					return fmt.Errorf("qualifier of %d bytes is too long", len(*q))
				}
				need += len(*q)
			}
		}
		if need > ri.textCap {
			c := max(need, 2*ri.textCap)
			p := sqlite3.Xsqlite3_realloc64(tls, ri.text, uint64(c))
			if p == 0 {
				return rawErr(tls, db, sqlite3.SQLITE_NOMEM)
			}
			ri.text, ri.textCap = p, c
		}
		buf := unsafe.Slice(cPtr[byte](ri.text), ri.textCap)
		off := 0
		for i := range rows {
			r := &rows[i]
			k := int32(4*i + 1)
			if rc := sqlite3.Xsqlite3_bind_int64(tls, st, k, r.SeriesID); rc != sqlite3.SQLITE_OK {
				return rawErr(tls, db, rc)
			}
			if rc := sqlite3.Xsqlite3_bind_int64(tls, st, k+1, r.T); rc != sqlite3.SQLITE_OK {
				return rawErr(tls, db, rc)
			}
			if rc := sqlite3.Xsqlite3_bind_double(tls, st, k+2, r.Value); rc != sqlite3.SQLITE_OK {
				return rawErr(tls, db, rc)
			}
			var rc int32
			if r.Qualifier == nil {
				rc = sqlite3.Xsqlite3_bind_null(tls, st, k+3)
			} else {
				n := copy(buf[off:], *r.Qualifier)
				rc = sqlite3.Xsqlite3_bind_text(tls, st, k+3, ri.text+uintptr(off), int32(n), 0) // SQLITE_STATIC
				off += n
			}
			if rc != sqlite3.SQLITE_OK {
				return rawErr(tls, db, rc)
			}
		}
		rc := sqlite3.Xsqlite3_step(tls, st)
		if rc != sqlite3.SQLITE_DONE {
			err := rawErr(tls, db, rc)
			sqlite3.Xsqlite3_reset(tls, st) // returns rc again; the statement is ready for reuse
			return err
		}
		changed = int64(sqlite3.Xsqlite3_changes(tls, db))
		if rc := sqlite3.Xsqlite3_reset(tls, st); rc != sqlite3.SQLITE_OK {
			return rawErr(tls, db, rc)
		}
		return nil
	})
	if err == nil {
		rawInsertStats.batches.Add(1)
	}
	return changed, err
}

// close finalizes the statement and frees the text buffer; it is safe to
// call more than once. It must run before the connection is closed.
func (ri *rawInsert) close() error {
	if ri == nil || (ri.stmt == 0 && ri.text == 0) {
		return nil
	}
	return ri.conn.Raw(func(any) error {
		if ri.stmt != 0 {
			// The result repeats the error of the last step, if any; the
			// statement is released either way.
			sqlite3.Xsqlite3_finalize(ri.tls, ri.stmt)
			ri.stmt = 0
		}
		if ri.text != 0 {
			sqlite3.Xsqlite3_free(ri.tls, ri.text)
			ri.text, ri.textCap = 0, 0
		}
		return nil
	})
}
