package store

import (
	"errors"
	"fmt"
	"strings"

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

// UserMessage is err's text for a person: when err is from SQLite, without
// the result code the driver appends in parentheses ("(1)") and without the
// generic text of the code that heads a specific message ("SQL logic error:
// " before every error of code 1, "constraint failed: " before the
// constraint that failed), so a function's own message reads as written.
func UserMessage(err error) string {
	msg := err.Error()
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return msg
	}
	own := se.Error()
	plain := strings.TrimSuffix(own, fmt.Sprintf(" (%d)", se.Code()))
	for _, generic := range []string{"SQL logic error: ", "constraint failed: "} {
		plain = strings.TrimPrefix(plain, generic)
	}
	return strings.Replace(msg, own, plain, 1)
}
