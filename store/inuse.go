package store

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"syscall"
)

// SummarizeLockSuffix names the lock file of summary runs: the store's
// path (symbolic links resolved) followed by this suffix.
const SummarizeLockSuffix = ".summarize-lock"

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
	lockPath := path
	if p, err := filepath.EvalSymlinks(path); err == nil {
		lockPath = p
	}
	if f, err := os.Open(lockPath + SummarizeLockSuffix); err == nil {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		}
		f.Close()
		if errors.Is(err, syscall.EWOULDBLOCK) {
			return fmt.Errorf("%s: %w (a summary run)", path, ErrInUse)
		}
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
