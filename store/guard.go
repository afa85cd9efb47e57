package store

import (
	"context"
	"database/sql/driver"
	"errors"
	"fmt"
	"strings"

	sqlite "modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// The guard is an SQLite authorizer installed on every connection of a
// read-only store and of a writable store opened for SQL typed by a user
// (Options.UserSQL). It decides while a statement is compiled, so a refused
// statement never runs.
//
// Read-only connections (on top of mode=ro and PRAGMA query_only):
//   - ATTACH and DETACH are refused: an attached file would be opened
//     read-write, whatever the mode of the store itself;
//   - a PRAGMA that sets a value is refused, except the ones that only
//     take an argument to read something (table_info(t), …); so
//     query_only cannot be switched off, which keeps VACUUM INTO and every
//     other writing statement refused;
//   - PRAGMAs that act without a value (optimize, wal_checkpoint,
//     incremental_vacuum) are refused;
//   - load_extension() is refused.
//
// Writable connections for user SQL refuse the PRAGMAs that switch off a
// safety of the store (unsafePragma) unless Options.AllowUnsafePragmas.

// readPragmas take an argument that names what to read, not a new value.
var readPragmas = map[string]bool{
	"table_info": true, "table_xinfo": true, "table_list": true, "index_info": true, "index_xinfo": true,
	"index_list": true, "foreign_key_list": true, "foreign_key_check": true, "integrity_check": true,
	"quick_check": true, "function_list": true, "module_list": true, "pragma_list": true,
	"collation_list": true, "database_list": true, "compile_options": true,
}

// actingPragmas change the file even without a value.
var actingPragmas = map[string]bool{
	"optimize": true, "wal_checkpoint": true, "incremental_vacuum": true,
}

// unsafePragma reports whether setting PRAGMA name to value switches off a
// safety of the store: writable_schema (any value), foreign_keys off,
// ignore_check_constraints on, journal_mode off or memory, synchronous off,
// and writing schema_version.
func unsafePragma(name, value string) bool {
	v := strings.ToLower(strings.Trim(strings.TrimSpace(value), `'"`))
	if v == "" {
		return false
	}
	off := v == "0" || v == "off" || v == "false" || v == "no"
	switch name {
	case "writable_schema", "schema_version":
		return true
	case "foreign_keys":
		return off
	case "ignore_check_constraints":
		return !off
	case "journal_mode":
		return v == "off" || v == "memory"
	case "synchronous":
		return off
	}
	return false
}

// readOnlyAuthorizer is the read-only policy. SQLite reports a refused
// statement as "not authorized"; IsNotAuthorized recognises it.
func readOnlyAuthorizer(action sqlite.AuthorizerActionCode, arg1, arg2, _, _ string) sqlite.AuthorizerReturnCode {
	switch action {
	case sqlite.AuthAttach, sqlite.AuthDetach:
		return sqlite.AuthorizerDeny
	case sqlite.AuthPragma:
		name := strings.ToLower(arg1)
		if readPragmas[name] {
			return sqlite.AuthorizerOK
		}
		if arg2 != "" || actingPragmas[name] {
			return sqlite.AuthorizerDeny
		}
	case sqlite.AuthFunction:
		if strings.EqualFold(arg2, "load_extension") {
			return sqlite.AuthorizerDeny
		}
	}
	return sqlite.AuthorizerOK
}

func userWriteAuthorizer(action sqlite.AuthorizerActionCode, arg1, arg2, _, _ string) sqlite.AuthorizerReturnCode {
	switch action {
	case sqlite.AuthPragma:
		if unsafePragma(strings.ToLower(arg1), arg2) {
			return sqlite.AuthorizerDeny
		}
	case sqlite.AuthFunction:
		if strings.EqualFold(arg2, "load_extension") {
			return sqlite.AuthorizerDeny
		}
	}
	return sqlite.AuthorizerOK
}

// guardSetup returns the per-connection setup that installs the guard
// chosen by opt, or nil when no guard applies. Every guarded connection
// also records what its statements read and call for PrepareUser
// (censorguard.go), registered in ws; with AllowUnsafePragmas that record
// is all the authorizer does.
func guardSetup(opt Options, ws *watches) func(context.Context, driver.Conn) error {
	var policy sqlite.AuthorizerFn
	switch {
	case opt.ReadOnly:
		policy = readOnlyAuthorizer
	case opt.UserSQL && !opt.AllowUnsafePragmas:
		policy = userWriteAuthorizer
	case opt.UserSQL:
		policy = func(sqlite.AuthorizerActionCode, string, string, string, string) sqlite.AuthorizerReturnCode {
			return sqlite.AuthorizerOK
		}
	default:
		return nil
	}
	return func(_ context.Context, conn driver.Conn) error {
		r, ok := conn.(sqlite.AuthorizerRegisterer)
		if !ok {
			return fmt.Errorf("%w: the sqlite driver offers no authorizer", ErrGuard)
		}
		w := ws.add(conn)
		return r.RegisterAuthorizer(func(action sqlite.AuthorizerActionCode, arg1, arg2, db, view string) sqlite.AuthorizerReturnCode {
			w.observe(action, arg1, arg2, db, view)
			return policy(action, arg1, arg2, db, view)
		})
	}
}

// IsNotAuthorized reports whether err is SQLite refusing a statement
// through the guard (or another authorizer).
func IsNotAuthorized(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) && se.Code()&0xff == sqlite3.SQLITE_AUTH {
		return true
	}
	return err != nil && strings.Contains(err.Error(), "not authorized")
}
