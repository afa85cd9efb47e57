package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"strings"
)

// ErrInUse: another process writes the store or runs a summary on it.
var ErrInUse = errors.New("store is in use by another writer")

// CheckNotInUse returns an error matching ErrInUse when another connection
// holds the write lock of the store at path (an import, say) or a summary
// run holds its summarize lock. It never waits. A missing file is not in
// use.
func CheckNotInUse(ctx context.Context, path string) error {
	if _, err := os.Stat(path); errors.Is(err, os.ErrNotExist) {
		return nil
	}
	if SummarizeLockHeld(path) {
		return fmt.Errorf("%s: %w (a summary run)", path, ErrInUse)
	}
	db, err := sql.Open("sqlite", DSN(path, false))
	if err != nil {
		return err
	}
	defer db.Close()
	conn, err := db.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, `PRAGMA busy_timeout = 0`); err != nil {
		return err
	}
	tx, err := conn.BeginTx(ctx, nil) // immediate: asks for the write lock
	if err != nil {
		if strings.Contains(err.Error(), "locked") || strings.Contains(err.Error(), "busy") {
			return fmt.Errorf("%s: %w (it holds the write lock)", path, ErrInUse)
		}
		return err
	}
	return tx.Rollback()
}
