// Command trendsqlext is trendsql's SQL functions as a SQLite run-time
// loadable extension, for the sqlite3 shell, Python's sqlite3 module and any
// other SQLite client. It is built as a shared library with cgo:
//
//	go build -tags trendsqlext -buildmode=c-shared -o trendsql.so ./cmd/trendsqlext
//
// and loaded with `.load ./trendsql` or `SELECT load_extension('./trendsql')`
// (entry point sqlite3_trendsql_init). It needs SQLite 3.25.0 or later
// (window functions) and checks the version when it is loaded.
//
// Every function the binary registers is registered under the same name
// with the same arguments, NULL rules, errors and JSON, by calling the same
// Go code (sqlfuncs.HostFunctions). An aggregate's xStep runs in C and only
// stores the row in SQLite's aggregate context: a row of plain numbers into
// column arrays of doubles (one per leading argument, in chunks of doubling
// size), anything else (the group's first row, text, options that differ, a
// NULL time, a series row with a NULL value) as tagged values in a log that
// also records where each run of number rows falls. Go is called when SQLite
// asks for a value (xValue, xFinal) and replays the stored rows through the
// binary's own step code, each run's columns copied once straight into the
// group's buffers, so the cost of crossing from C to Go is paid per group
// (per row only for window results and scalars). correlogram_rows is an eponymous virtual table whose
// argument is the HIDDEN column correlogram_json.
//
// Without cgo or without the trendsqlext tag the package builds to a
// program that only says how to build the library, so `go build ./...`,
// `go vet ./...` and `go test ./...` need neither a C compiler nor SQLite's
// headers. The tests in this directory build the library with the command
// above (they need gcc and Debian's libsqlite3-dev, plus sqlite3 and
// python3 for the hosts) and skip with a message when those are missing,
// except under CI=true, where they fail.
package main
