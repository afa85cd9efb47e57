package rawsqlite

import (
	"fmt"
	"math"
	"unsafe"

	"modernc.org/libc"
	sqlite3 "modernc.org/sqlite/lib"
)

// Error is an SQLite error from the C-level path, worded as the driver
// words its errors, so a caller fails with the same message on either path.
type Error struct {
	msg  string
	code int
}

func (e *Error) Error() string { return e.msg }

// Code returns SQLite's (extended) result code.
func (e *Error) Code() int { return e.code }

// errorOf builds the error of result code rc: the driver's form
// "errstr: errmsg (rc)", or "errstr (rc)" when both texts are equal.
func (c Conn) errorOf(rc int32) error {
	str := libc.GoString(sqlite3.Xsqlite3_errstr(c.tls, rc))
	busy := ""
	if rc == sqlite3.SQLITE_BUSY {
		busy = " (SQLITE_BUSY)"
	}
	if msg := libc.GoString(sqlite3.Xsqlite3_errmsg(c.tls, c.db)); msg != str {
		return &Error{msg: fmt.Sprintf("%s: %s (%d)%s", str, msg, rc, busy), code: int(rc)}
	}
	return &Error{msg: fmt.Sprintf("%s (%d)%s", str, rc, busy), code: int(rc)}
}

// Stmt is a statement prepared on a Conn with direct parameter binding.
// Text parameters are copied into a buffer the Stmt owns and bound without
// a further copy (SQLITE_STATIC); BeginTexts empties that buffer, so every
// text parameter must be bound again after it, before the next Exec. The
// rules of Conn apply: use a Stmt only while the connection is the
// caller's, and Close it before the connection closes.
type Stmt struct {
	conn    Conn
	stmt    uintptr // sqlite3_stmt*
	text    uintptr // buffer for the text parameters of one execution
	textCap int
	textLen int
}

// Prepare compiles one SQL statement (sqlite3_prepare_v2).
func (c Conn) Prepare(sql string) (*Stmt, error) {
	zSQL, err := libc.CString(sql)
	if err != nil {
		return nil, err
	}
	defer libc.Xfree(c.tls, zSQL)
	pp := sqlite3.Xsqlite3_malloc64(c.tls, uint64(unsafe.Sizeof(uintptr(0))))
	if pp == 0 {
		return nil, c.errorOf(sqlite3.SQLITE_NOMEM)
	}
	defer sqlite3.Xsqlite3_free(c.tls, pp)
	*cMemory[uintptr](pp) = 0
	if rc := sqlite3.Xsqlite3_prepare_v2(c.tls, c.db, zSQL, -1, pp, 0); rc != sqlite3.SQLITE_OK {
		return nil, c.errorOf(rc)
	}
	return &Stmt{conn: c, stmt: *cMemory[uintptr](pp)}, nil
}

// BeginTexts empties the text buffer and makes room for n bytes of text
// parameters (the total of the texts to be bound before the next Exec).
func (s *Stmt) BeginTexts(n int) error {
	if n > math.MaxInt32 {
		return fmt.Errorf("%d bytes of text parameters are too many", n)
	}
	s.textLen = 0
	if n <= s.textCap && s.text != 0 {
		return nil
	}
	c := max(n, 2*s.textCap, 4096)
	p := sqlite3.Xsqlite3_realloc64(s.conn.tls, s.text, uint64(c))
	if p == 0 {
		return s.conn.errorOf(sqlite3.SQLITE_NOMEM)
	}
	s.text, s.textCap = p, c
	return nil
}

// BindInt64 binds parameter i (1-based).
func (s *Stmt) BindInt64(i int, v int64) error {
	return s.check(sqlite3.Xsqlite3_bind_int64(s.conn.tls, s.stmt, int32(i), v))
}

// BindFloat64 binds parameter i (1-based).
func (s *Stmt) BindFloat64(i int, v float64) error {
	return s.check(sqlite3.Xsqlite3_bind_double(s.conn.tls, s.stmt, int32(i), v))
}

// BindNull binds NULL to parameter i (1-based).
func (s *Stmt) BindNull(i int) error {
	return s.check(sqlite3.Xsqlite3_bind_null(s.conn.tls, s.stmt, int32(i)))
}

// BindText binds v as TEXT to parameter i (1-based); the empty string is
// bound as empty text, not NULL. The bytes are copied into the text buffer,
// which must have room left since BeginTexts.
func (s *Stmt) BindText(i int, v string) error {
	if s.textCap-s.textLen < len(v) {
		return fmt.Errorf("internal error: text parameters exceed the %d bytes reserved", s.textCap)
	}
	n := copy(cBytes(s.text, s.textCap)[s.textLen:], v)
	rc := sqlite3.Xsqlite3_bind_text(s.conn.tls, s.stmt, int32(i), s.text+uintptr(s.textLen), int32(n), 0) // SQLITE_STATIC
	s.textLen += n
	return s.check(rc)
}

func (s *Stmt) check(rc int32) error {
	if rc != sqlite3.SQLITE_OK {
		return s.conn.errorOf(rc)
	}
	return nil
}

// Exec runs the statement to completion with the current bindings and
// resets it for the next execution. It returns the number of rows changed
// (sqlite3_changes).
func (s *Stmt) Exec() (int64, error) {
	if s.stmt == 0 {
		return 0, fmt.Errorf("internal error: the statement is closed")
	}
	tls := s.conn.tls
	if rc := sqlite3.Xsqlite3_step(tls, s.stmt); rc != sqlite3.SQLITE_DONE {
		err := s.conn.errorOf(rc)
		sqlite3.Xsqlite3_reset(tls, s.stmt) // returns rc again; the statement is ready for reuse
		return 0, err
	}
	changed := int64(sqlite3.Xsqlite3_changes(tls, s.conn.db))
	if rc := sqlite3.Xsqlite3_reset(tls, s.stmt); rc != sqlite3.SQLITE_OK {
		return 0, s.conn.errorOf(rc)
	}
	return changed, nil
}

// Close finalizes the statement and frees the text buffer; it is safe to
// call more than once.
func (s *Stmt) Close() {
	if s.stmt != 0 {
		// The result repeats the error of the last step, if any; the
		// statement is released either way.
		sqlite3.Xsqlite3_finalize(s.conn.tls, s.stmt)
		s.stmt = 0
	}
	if s.text != 0 {
		sqlite3.Xsqlite3_free(s.conn.tls, s.text)
		s.text, s.textCap, s.textLen = 0, 0, 0
	}
}
