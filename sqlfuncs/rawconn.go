package sqlfuncs

import "modernc.org/libc"

// RawConn returns the sqlite3* handle and the libc TLS of a driver
// connection (the value database/sql's Conn.Raw hands to its callback), for
// code that calls SQLite's C-level API directly, such as the store's bulk
// reading insert.
//
// It applies the same checks as the aggregate adapter of fastpath.go: the
// driver must be modernc.org/sqlite FastPathDriverVersion with the
// connection layout this package was written against, and TRENDSQL_FASTPATH
// must not be "off". When any check fails it returns an error saying which,
// and the caller must use the database/sql API instead.
//
// The handle and TLS belong to the connection: they may be used only while
// the caller has the connection to itself (inside Conn.Raw, or on a
// connection no other goroutine uses), never after it is closed, and never
// from two goroutines at once.
func RawConn(driverConn any) (db uintptr, tls *libc.TLS, err error) {
	h, err := handleOf(driverConn)
	if err != nil {
		return 0, nil, err
	}
	return h.db, h.tls, nil
}
