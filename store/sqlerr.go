package store

import (
	"errors"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// sqliteCode is the primary SQLite result code in err's chain (0: none).
func sqliteCode(err error) int {
	var se *sqlite.Error
	if errors.As(err, &se) {
		return se.Code() & 0xff
	}
	return 0
}

// IsBusy reports whether err is SQLite's "database is locked"
// (SQLITE_BUSY) or "table is locked" (SQLITE_LOCKED), extended codes
// included: another connection held a lock for longer than the wait.
func IsBusy(err error) bool {
	c := sqliteCode(err)
	return c == sqlite3.SQLITE_BUSY || c == sqlite3.SQLITE_LOCKED
}

// isDamaged reports whether err says the store file is damaged: SQLite
// found a malformed page (SQLITE_CORRUPT) or no database header
// (SQLITE_NOTADB).
func isDamaged(err error) bool {
	c := sqliteCode(err)
	return c == sqlite3.SQLITE_CORRUPT || c == sqlite3.SQLITE_NOTADB
}

// sqliteMessage is SQLite's own message in err's chain, without the
// context wrapped around it (err's text when there is none).
func sqliteMessage(err error) string {
	var se *sqlite.Error
	if errors.As(err, &se) {
		return se.Error()
	}
	return err.Error()
}
