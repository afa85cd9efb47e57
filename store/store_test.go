package store_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"trendsql/migrations"
	"trendsql/store"
	"trendsql/store/storetest"
)

type migrationRow struct {
	Version   int
	Name      string
	AppliedAt string
}

func migrationRows(t *testing.T, s *store.Store) []migrationRow {
	t.Helper()
	rows, err := s.DB.Query(`SELECT version, name, applied_at FROM schema_migrations ORDER BY version`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []migrationRow
	for rows.Next() {
		var r migrationRow
		if err := rows.Scan(&r.Version, &r.Name, &r.AppliedAt); err != nil {
			t.Fatal(err)
		}
		out = append(out, r)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

func TestMigrateFromEmpty(t *testing.T) {
	s := storetest.Open(t)
	ctx := context.Background()
	all, err := migrations.All()
	if err != nil {
		t.Fatal(err)
	}
	cur, latest, err := s.SchemaVersion(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if cur != latest || latest != all[len(all)-1].Version {
		t.Fatalf("schema version %d, latest %d, last migration %d", cur, latest, all[len(all)-1].Version)
	}
	got := migrationRows(t, s)
	if len(got) != len(all) {
		t.Fatalf("schema_migrations has %d rows, want one per migration (%d)", len(got), len(all))
	}
	for i, m := range all {
		if got[i].Version != m.Version || got[i].Name != m.Name {
			t.Errorf("schema_migrations row %d = %+v, want version %d name %s", i, got[i], m.Version, m.Name)
		}
	}
	// The first migration's objects exist.
	for _, name := range []string{"stations", "series", "readings", "import_batches", "import_rejects", "series_batches", "readings_view"} {
		var n int
		if err := s.DB.QueryRow(`SELECT count(*) FROM sqlite_schema WHERE name = ?`, name).Scan(&n); err != nil {
			t.Fatal(err)
		}
		if n != 1 {
			t.Errorf("schema object %s missing after migration", name)
		}
	}
	var fk int
	if err := s.DB.QueryRow(`PRAGMA foreign_keys`).Scan(&fk); err != nil || fk != 1 {
		t.Errorf("foreign_keys = %d (%v), want 1", fk, err)
	}
	var jm string
	if err := s.DB.QueryRow(`PRAGMA journal_mode`).Scan(&jm); err != nil || jm != "wal" {
		t.Errorf("journal_mode = %q (%v), want wal", jm, err)
	}
}

func TestMigrateIsIdempotent(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "idem.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	first := migrationRows(t, s)
	applied, err := s.Migrate(ctx)
	if err != nil {
		t.Fatalf("second Migrate: %v", err)
	}
	if len(applied) != 0 {
		t.Errorf("second Migrate applied %v, want nothing", applied)
	}
	if again := migrationRows(t, s); !reflect.DeepEqual(first, again) {
		t.Errorf("schema_migrations changed by a second Migrate:\nbefore %+v\nafter  %+v", first, again)
	}
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Error(err)
	}
	s.Close()
	// Reopening (which migrates again) changes nothing either.
	s, err = store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatalf("reopen: %v", err)
	}
	defer s.Close()
	if again := migrationRows(t, s); !reflect.DeepEqual(first, again) {
		t.Errorf("schema_migrations changed by reopening:\nbefore %+v\nafter  %+v", first, again)
	}
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Error(err)
	}
}

func TestReadOnlyOpenRefusesWrites(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "ro.db")
	w, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := w.DB.Exec(`INSERT INTO stations(id, name) VALUES ('S1', 'first')`); err != nil {
		t.Fatal(err)
	}
	w.Close()

	r, err := store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatalf("read-only open: %v", err)
	}
	defer r.Close()
	for _, stmt := range []string{
		`INSERT INTO stations(id) VALUES ('S2')`,
		`UPDATE stations SET name = 'changed'`,
		`DELETE FROM stations`,
		`CREATE TABLE scratch(x)`,
	} {
		_, err := r.DB.Exec(stmt)
		if err == nil {
			t.Errorf("read-only store accepted %q", stmt)
			continue
		}
		if !strings.Contains(err.Error(), "readonly") {
			t.Errorf("%q: error %q does not say readonly", stmt, err)
		}
	}
	var n int
	var name string
	if err := r.DB.QueryRow(`SELECT count(*), max(name) FROM stations`).Scan(&n, &name); err != nil {
		t.Fatal(err)
	}
	if n != 1 || name != "first" {
		t.Errorf("stations after refused writes: %d rows, name %q; want 1, first", n, name)
	}
	if err := r.IntegrityCheck(ctx); err != nil {
		t.Error(err)
	}
}

func TestReadOnlyOpenOfMissingFile(t *testing.T) {
	path := filepath.Join(t.TempDir(), "absent.db")
	s, err := store.Open(context.Background(), path, store.Options{ReadOnly: true})
	if err == nil {
		s.Close()
		t.Fatal("read-only open of a missing file succeeded")
	}
	if !errors.Is(err, store.ErrNoStore) || !strings.Contains(err.Error(), path) {
		t.Errorf("error %q: want store.ErrNoStore naming %s", err, path)
	}
	if _, err := os.Stat(path); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("read-only open created %s", path)
	}
}

func TestIntegrityCheckOnFreshStore(t *testing.T) {
	s := storetest.Open(t)
	if err := s.IntegrityCheck(context.Background()); err != nil {
		t.Fatal(err)
	}
}

func TestResolvePath(t *testing.T) {
	t.Setenv(store.EnvDB, "")
	if got := store.ResolvePath(""); got != store.DefaultPath {
		t.Errorf("store.ResolvePath with nothing set = %q, want %q", got, store.DefaultPath)
	}
	t.Setenv(store.EnvDB, "/tmp/env.db")
	if got := store.ResolvePath(""); got != "/tmp/env.db" {
		t.Errorf("store.ResolvePath with $%s = %q", store.EnvDB, got)
	}
	if got := store.ResolvePath("flag.db"); got != "flag.db" {
		t.Errorf("store.ResolvePath with a flag = %q, want flag.db", got)
	}
}
