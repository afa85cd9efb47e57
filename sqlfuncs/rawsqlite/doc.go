// Package rawsqlite is trendsql's only C-level access to the modernc.org/sqlite
// driver, and the only package of the project that imports unsafe.
//
// What it does. It hands out the sqlite3* handle and libc TLS of a driver
// connection (ConnOf) and offers two things on top of them:
//
//   - window aggregates whose callbacks SQLite calls directly
//     (Conn.CreateFunction with a Function): arguments are read in place with
//     sqlite3_value_* (Args, Value), results are set with sqlite3_result_*
//     (Context), and a group's Go state is reached from its
//     sqlite3_aggregate_context memory (Slots);
//   - a prepared statement with direct parameter binding (Conn.Prepare,
//     Stmt), used by the readings import for its full-batch insert.
//
// Why. The driver's public API hands every argument and every bound
// parameter to or from Go as a driver.Value; each int64 or float64 is boxed
// into an interface, one heap allocation per value. Over millions of rows
// that costs more than the arithmetic. Through this package the per-row
// path of an aggregate and of the batch insert allocates nothing.
//
// What it relies on. The handle and TLS are unexported fields of the
// driver's connection type (conn.db, conn.tls). Callbacks are Go functions
// passed to the transpiled SQLite as function pointers, which assumes
// modernc.org/libc's calling convention (a C function pointer is the
// address of a Go func value; every C function takes the *libc.TLS first).
// The package was verified against
//
//	modernc.org/sqlite v1.62.0 (SQLiteVersion)
//	modernc.org/libc   v1.80.1 (LibcVersion)
//
// Fallback. Check and ConnOf return an error, and the caller keeps the
// driver's public API with identical results, when TRENDSQL_FASTPATH=off
// (EnvVar), when the binary's build information names another version of
// either module (or a replacement), or when the connection type, its
// field names, types or offsets differ from the ones above. Test binaries
// record no dependency versions; TestVersionsPinned compares the constants
// with go.mod instead, so a go.mod upgrade fails the tests until this
// package is re-verified.
//
// After upgrading either module: re-read the driver's conn.go (the first
// fields of conn), its function trampolines and cFuncPointer in sqlite.go,
// and libc's TLS; if all still match, update SQLiteVersion and LibcVersion.
// The sqlfuncs tests TestFastPathActive and TestFastSeriesActive fail in
// capitals while the fast path is off for a reason other than EnvVar.
//
// Rules for callers. A Conn may be used only while the caller has the
// driver connection to itself (inside database/sql's Conn.Raw, or in a
// callback SQLite makes on that connection) and never after the connection
// is closed. Args, Value and Context are valid only during the callback
// that received them, and the bytes returned by Value.Text must not be kept
// beyond it.
package rawsqlite
