package demodata

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"syscall"
	"testing"

	"trendsql/store"
)

// TestCreateDemoRefusesStoreInUse: even with force, the demo does not
// replace a store while another connection holds its write lock (an
// import) or a summary run holds its summarize lock; the store keeps its
// data.
func TestCreateDemoRefusesStoreInUse(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "busy.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if _, err := s.DB.Exec(`INSERT INTO stations(id, name) VALUES ('MINE', 'user station')`); err != nil {
		t.Fatal(err)
	}
	opt := Options{Stations: 2, MaxYears: 0.1}

	tx, err := s.DB.BeginTx(ctx, nil) // immediate: the write lock, as an import holds it
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Create(ctx, path, opt, true); !errors.Is(err, store.ErrInUse) {
		t.Errorf("demo over a store with a writer: %v, want ErrInUse", err)
	}
	tx.Rollback()

	f, err := os.OpenFile(path+store.SummarizeLockSuffix, os.O_CREATE|os.O_RDWR, 0o644)
	if err != nil {
		t.Fatal(err)
	}
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX); err != nil {
		t.Fatal(err)
	}
	if _, err := Create(ctx, path, opt, true); !errors.Is(err, store.ErrInUse) {
		t.Errorf("demo over a store with a summary run: %v, want ErrInUse", err)
	}
	f.Close()

	var n int
	if err := s.DB.QueryRow(`SELECT count(*) FROM stations WHERE id = 'MINE'`).Scan(&n); err != nil || n != 1 {
		t.Fatalf("the user's station: %d (%v)", n, err)
	}
}
