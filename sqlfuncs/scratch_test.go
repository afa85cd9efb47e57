package sqlfuncs_test

import (
	"context"
	"path/filepath"
	"testing"

	"trendsql/store"
)

// openScratchStore opens a fresh store in tb's temporary directory, runs
// ddl (the test's own scratch table) and checks PRAGMA integrity_check when
// the test ends.
func openScratchStore(tb testing.TB, file, ddl string) *store.Store {
	tb.Helper()
	ctx := context.Background()
	s, err := store.Open(ctx, filepath.Join(tb.TempDir(), file), store.Options{})
	if err != nil {
		tb.Fatalf("open store: %v", err)
	}
	tb.Cleanup(func() {
		if err := s.IntegrityCheck(ctx); err != nil {
			tb.Errorf("integrity: %v", err)
		}
		s.Close()
	})
	if _, err := s.DB.Exec(ddl); err != nil {
		tb.Fatalf("create scratch table: %v", err)
	}
	return s
}
