package store_test

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"trendsql/store"
)

func checkLevels(t *testing.T, path string) map[string]store.CheckItem {
	t.Helper()
	items, err := store.Check(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]store.CheckItem{}
	for _, it := range items {
		out[it.Name] = it
	}
	return out
}

// TestCheckFindsDamage: a healthy store checks ok; readings of a deleted
// series, a series without readings, a run left running and a second hard
// link are each found with their count.
func TestCheckFindsDamage(t *testing.T) {
	ctx := context.Background()
	path := guardedStore(t)
	for name, it := range checkLevels(t, path) {
		if it.Level != store.CheckOK {
			t.Errorf("healthy store: %s is %s: %s", name, it.Level, it.Message)
		}
	}
	s, err := store.Open(ctx, path, store.Options{UserSQL: true, AllowUnsafePragmas: true})
	if err != nil {
		t.Fatal(err)
	}
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{
		`PRAGMA foreign_keys = OFF`,
		`INSERT INTO series(station_id, variable) VALUES ('S1', 'empty')`,
		`DELETE FROM series WHERE variable = 'level'`,
		`INSERT INTO summary_runs(started_at, status, parameters, tool_version) VALUES ('2024-01-01T00:00:00Z', 'running', '{}', 'test')`,
		`INSERT INTO summary_runs(started_at, status, parameters, tool_version) VALUES ('2024-01-01T00:00:00Z', 'failed', '{}', 'test')`,
		`PRAGMA foreign_keys = ON`,
	} {
		if _, err := conn.ExecContext(ctx, q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
	conn.Close()
	s.Close()
	got := checkLevels(t, path)
	want := map[string]struct {
		level store.CheckLevel
		n     int64
	}{
		"foreign keys": {store.CheckProblem, 50}, "orphan readings": {store.CheckProblem, 50},
		"series without readings": {store.CheckNote, 1}, "summary runs left running": {store.CheckProblem, 1},
		"failed summary runs": {store.CheckNote, 1}, "integrity": {store.CheckOK, 0}, "schema version": {store.CheckOK, 0},
	}
	for name, w := range want {
		if it := got[name]; it.Level != w.level || it.Count != w.n {
			t.Errorf("%s: %s %d (%s), want %s %d", name, it.Level, it.Count, it.Message, w.level, w.n)
		}
	}
	second := filepath.Join(t.TempDir(), "second.db")
	if err := os.Link(path, second); err == nil {
		if it := checkLevels(t, path)["hard links"]; it.Level != store.CheckProblem || it.Count != 1 {
			t.Errorf("hard links: %+v", it)
		}
	}
}
