package store_test

import (
	"context"
	"crypto/sha256"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

// guardedStore builds a store with one series of 50 readings, closes it
// (checkpointing the log) and returns its path.
func guardedStore(t *testing.T) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "guard.db")
	s, err := store.Open(context.Background(), path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	ts := make([]int64, 50)
	ys := make([]float64, 50)
	for i := range ts {
		ts[i] = 1_600_000_000 + int64(i)*3600
		ys[i] = float64(i)
	}
	storetest.InsertSeries(t, s.DB, "S1", "level", ts, ys)
	if err := s.Checkpoint(context.Background()); err != nil {
		t.Fatal(err)
	}
	s.Close()
	return path
}

func fileSum(t *testing.T, path string) [32]byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return sha256.Sum256(b)
}

func countReadings(t *testing.T, s *store.Store) int {
	t.Helper()
	var n int
	if err := s.DB.QueryRow(`SELECT count(*) FROM readings`).Scan(&n); err != nil {
		t.Fatal(err)
	}
	return n
}

// TestReadOnlyRefusesEveryWrite runs each known way of writing through a
// read-only open; each must fail, the store file must keep its bytes and
// no other file may appear.
func TestReadOnlyRefusesEveryWrite(t *testing.T) {
	path := guardedStore(t)
	dir := filepath.Dir(path)
	before := fileSum(t, path)
	out := filepath.Join(dir, "copy.db")
	other := filepath.Join(dir, "other.db")
	q := func(s string) string { return "'" + strings.ReplaceAll(s, "'", "''") + "'" }
	tricks := [][]string{
		{"PRAGMA query_only=0", "ATTACH DATABASE " + q(path) + " AS w", "DELETE FROM w.readings"},
		{"ATTACH DATABASE " + q(path) + " AS w", "DELETE FROM w.readings"},
		{"ATTACH DATABASE " + q("file:"+path+"?mode=rw") + " AS w", "DELETE FROM w.readings"},
		{"ATTACH DATABASE " + q(other) + " AS x", "CREATE TABLE x.t(a)"},
		{"ATTACH DATABASE ':memory:' AS m"},
		{"PRAGMA query_only=0", "VACUUM INTO " + q(out)},
		{"PRAGMA query_only=false", "VACUUM INTO " + q(out)},
		{"PRAGMA main.query_only=OFF", "VACUUM INTO " + q(out)},
		{"VACUUM INTO " + q(out)},
		{"SELECT * FROM pragma_query_only(0)", "VACUUM INTO " + q(out)},
		{"PRAGMA query_only=0", "DELETE FROM readings"},
		{"DELETE FROM readings"},
		{"PRAGMA writable_schema=1"},
		{"PRAGMA user_version=7"},
		{"PRAGMA journal_mode=DELETE"},
		{"PRAGMA wal_checkpoint(TRUNCATE)"},
		{"PRAGMA optimize"},
		{"PRAGMA foreign_keys=0"},
		{"SELECT load_extension('/nonexistent/x')"},
		{"VACUUM"},
		{"REINDEX"},
		{"ANALYZE"},
	}
	for _, trick := range tricks {
		s, err := store.Open(context.Background(), path, store.Options{ReadOnly: true})
		if err != nil {
			t.Fatal(err)
		}
		var last error
		for _, st := range trick {
			if _, last = s.DB.Exec(st); last != nil {
				break
			}
		}
		if last == nil {
			t.Errorf("%q: ran without error on a read-only store", strings.Join(trick, "; "))
		}
		if n := countReadings(t, s); n != 50 {
			t.Errorf("%q: %d readings left, want 50", strings.Join(trick, "; "), n)
		}
		s.Close()
		if fileSum(t, path) != before {
			t.Errorf("%q: the store file changed", strings.Join(trick, "; "))
		}
		for _, p := range []string{out, other} {
			if _, err := os.Stat(p); err == nil {
				t.Errorf("%q: created %s", strings.Join(trick, "; "), p)
				os.Remove(p)
			}
		}
	}
}

// TestReadOnlyAllowsReading: the reads a user does still work.
func TestReadOnlyAllowsReading(t *testing.T) {
	path := guardedStore(t)
	s, err := store.Open(context.Background(), path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	for _, q := range []string{
		"PRAGMA table_info(readings)", "PRAGMA query_only", "PRAGMA foreign_keys", "PRAGMA integrity_check",
		"PRAGMA foreign_key_check", "SELECT * FROM pragma_table_info('readings')", "PRAGMA journal_mode",
		"SELECT count(*) FROM readings_view",
	} {
		if _, err := s.DB.Exec(q); err != nil {
			t.Errorf("%s: %v", q, err)
		}
	}
}
