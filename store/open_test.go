package store_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"testing"

	"trendsql/store"
)

// TestOpenRefusesHardLinkedStore: a store file with a second name is
// refused, read-only and writable, with the explanation; after the second
// name is removed it opens again.
func TestOpenRefusesHardLinkedStore(t *testing.T) {
	path := guardedStore(t)
	second := filepath.Join(t.TempDir(), "other-name.db")
	if err := os.Link(path, second); err != nil {
		t.Skipf("no hard links here: %v", err)
	}
	for _, p := range []string{path, second} {
		for _, ro := range []bool{true, false} {
			s, err := store.Open(context.Background(), p, store.Options{ReadOnly: ro})
			var le *store.LinkError
			if !errors.Is(err, store.ErrHardLinks) || !errors.As(err, &le) || le.Links != 2 {
				t.Errorf("open %s (read-only %v): %v, want a LinkError with 2 links", p, ro, err)
			}
			if s != nil {
				s.Close()
			}
		}
	}
	if _, err := os.Stat(second + "-wal"); err == nil {
		t.Error("a log file appeared under the second name")
	}
	os.Remove(second)
	s, err := store.Open(context.Background(), path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
}

// TestWritableOpenDoesNotWaitForWriter: opening a current store writable
// while another connection holds the write lock succeeds at once (the
// schema version is read without the write lock).
func TestWritableOpenDoesNotWaitForWriter(t *testing.T) {
	ctx := context.Background()
	path := guardedStore(t)
	w, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	tx, err := w.DB.BeginTx(ctx, nil) // immediate: takes the write lock
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback()
	if _, err := tx.Exec(`INSERT INTO stations(id, name) VALUES ('W', 'W')`); err != nil {
		t.Fatal(err)
	}
	ctx2, cancel := context.WithCancel(ctx)
	defer cancel()
	done := make(chan error, 1)
	go func() {
		s, err := store.Open(ctx2, path, store.Options{})
		if err == nil {
			s.Close()
		}
		done <- err
	}()
	// The open either returns, or waits on the lock that only the
	// rollback below releases.
	if err := <-done; err != nil {
		t.Fatalf("writable open while another writer holds the lock: %v", err)
	}
}
