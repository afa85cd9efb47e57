package store

import (
	"errors"
	"fmt"
)

// Errors of the store core. Callers test them with errors.Is; the command
// line adds the wording that names its commands and flags.
var (
	// ErrNoStore: a read-only open found no store file.
	ErrNoStore = errors.New("no store at this path")
	// ErrSchemaOutdated: the store's schema is older than this build
	// needs; a writable open migrates it (see SchemaError).
	ErrSchemaOutdated = errors.New("store schema is outdated")
	// ErrNoTable: a catalog query names a table or view that is not there.
	ErrNoTable = errors.New("no such table or view")
	// ErrGuard: the statement guard could not be installed on a
	// connection (see guard.go).
	ErrGuard = errors.New("cannot guard the store's connections")
	// ErrCensoredRead: a statement of user SQL would hand the stored
	// limits of censored readings to a function that does not handle
	// censoring (see CensoredReadError).
	ErrCensoredRead = errors.New("statement uses censored readings as measured values")
	// ErrHardLinks: the store file has more than one name (see LinkError).
	ErrHardLinks = errors.New("store file has more than one hard link")
)

// SchemaError is returned by a read-only Open of a store whose schema
// version is older than the latest migration. It matches ErrSchemaOutdated.
type SchemaError struct {
	Path            string
	Current, Latest int
}

func (e *SchemaError) Error() string {
	return fmt.Sprintf("open %s: store schema is version %d, this trendsql needs %d", e.Path, e.Current, e.Latest)
}

func (e *SchemaError) Unwrap() error { return ErrSchemaOutdated }

// tableError names the missing table (and schema) and matches ErrNoTable.
type tableError struct{ table, schema string }

func (e *tableError) Error() string {
	if e.schema != "" {
		return fmt.Sprintf("no table or view named %q in schema %q", e.table, e.schema)
	}
	return fmt.Sprintf("no table or view named %q", e.table)
}

func (e *tableError) Unwrap() error { return ErrNoTable }

// LinkError refuses a store file with several hard links: SQLite keeps its
// write-ahead log and lock files under the name it was opened by, so two
// names of one file would each have their own log and locks, and writers
// through both would corrupt the store. It matches ErrHardLinks.
type LinkError struct {
	Path  string
	Links uint64
}

func (e *LinkError) Error() string {
	return fmt.Sprintf("open %s: the store file has %d hard links (names); SQLite keeps its log and locks per name, so writers through two names would corrupt it: keep one name (remove the other links) or work on a copy", e.Path, e.Links)
}

func (e *LinkError) Unwrap() error { return ErrHardLinks }
