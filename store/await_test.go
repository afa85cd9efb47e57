package store

import (
	"context"
	"errors"
	"path/filepath"
	"testing"
	"time"
)

// TestOpenWaitsToMigrate: a writable open of a store with a migration due
// needs the write lock. While another connection holds it, an open that
// may not wait returns a BusyError (matching ErrBusy) and leaves the schema
// as it was; an open with a long wait calls OnWait once and migrates after
// the other writer releases the lock (released when OnWait is called, not
// after a sleep).
func TestOpenWaitsToMigrate(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "v2.db")
	db := createAtVersion(t, path, 2)
	defer db.Close()
	tx, err := db.BeginTx(ctx, nil) // immediate: the write lock
	if err != nil {
		t.Fatal(err)
	}
	_, err = Open(ctx, path, Options{Wait: -1})
	var be *BusyError
	if !errors.Is(err, ErrBusy) || !errors.As(err, &be) || be.Path != path {
		t.Fatalf("open to migrate while another writer holds the lock, no wait: %v, want a BusyError", err)
	}
	var version int
	if err := tx.QueryRow(`SELECT max(version) FROM schema_migrations`).Scan(&version); err != nil || version != 2 {
		t.Fatalf("schema version after the refused open: %d (%v), want 2", version, err)
	}

	noticed := 0
	s, err := Open(ctx, path, Options{Wait: time.Hour, OnWait: func() {
		noticed++
		tx.Rollback()
	}})
	if err != nil {
		t.Fatalf("open with a long wait: %v", err)
	}
	defer s.Close()
	if noticed != 1 {
		t.Errorf("OnWait called %d times, want 1", noticed)
	}
	cur, latest, err := s.SchemaVersion(ctx)
	if err != nil || cur != latest {
		t.Errorf("schema version after the waiting open: %d of %d (%v)", cur, latest, err)
	}
}
