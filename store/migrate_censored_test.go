package store

import (
	"context"
	"database/sql"
	"path/filepath"
	"testing"

	"trendsql/migrations"
	"trendsql/sqlfuncs"
)

// TestMigrationCensoringKeepsOldStores builds a store at schema version 2
// with readings, opens it with the current code and checks that every
// reading is intact and uncensored, and that readings_view shows the
// censoring mark once a censored reading exists.
func TestMigrationCensoringKeepsOldStores(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "v2.db")
	db := createAtVersion(t, path, 2)
	for _, q := range []string{
		`INSERT INTO stations (id, name) VALUES ('S1', 'old station')`,
		`INSERT INTO series (id, station_id, variable, unit) VALUES (1, 'S1', 'tp', 'ug/L')`,
		`INSERT INTO readings (series_id, t, value, qualifier) VALUES (1, 1000, 5.5, NULL), (1, 2000, 0.25, 'E'), (1, 3000, 7, NULL)`,
	} {
		if _, err := db.Exec(q); err != nil {
			t.Fatalf("%s: %v", q, err)
		}
	}
	db.Close()

	s, err := Open(ctx, path, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if cur, latest, err := s.SchemaVersion(ctx); err != nil || cur != latest || cur < 3 {
		t.Fatalf("schema %d of %d: %v", cur, latest, err)
	}
	type row struct {
		t      int64
		value  any
		qual   *string
		cens   *string
		number float64
	}
	read := func() []row {
		rows, err := s.DB.Query(`SELECT t, value, qualifier, censored, value_number FROM readings_view ORDER BY t`)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		var out []row
		for rows.Next() {
			var r row
			if err := rows.Scan(&r.t, &r.value, &r.qual, &r.cens, &r.number); err != nil {
				t.Fatal(err)
			}
			out = append(out, r)
		}
		return out
	}
	got := read()
	want := []float64{5.5, 0.25, 7}
	if len(got) != 3 {
		t.Fatalf("%d readings after migration", len(got))
	}
	for i, r := range got {
		if r.value != want[i] || r.number != want[i] || r.cens != nil {
			t.Errorf("reading %d after migration: %+v", i, r)
		}
	}
	if got[1].qual == nil || *got[1].qual != "E" {
		t.Errorf("qualifier lost: %+v", got[1])
	}
	// A censored reading shows as reported in value.
	if _, err := s.DB.Exec(`UPDATE readings SET censored = '<' WHERE t = 2000`); err != nil {
		t.Fatal(err)
	}
	if r := read()[1]; r.value != "<0.25" || r.cens == nil || *r.cens != "<" || r.number != 0.25 {
		t.Errorf("censored reading in the view: %+v", r)
	}
	if _, err := s.DB.Exec(`UPDATE readings SET censored = '=' WHERE t = 1000`); err == nil {
		t.Error("a mark other than '<' or '>' was accepted")
	}
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Fatal(err)
	}
}

// createAtVersion creates a store at path with the schema of the migrations
// up to version only, as a binary of that schema left it, and returns a
// connection to it (the caller closes it).
func createAtVersion(t *testing.T, path string, version int) *sql.DB {
	t.Helper()
	if err := sqlfuncs.Register(); err != nil {
		t.Fatal(err)
	}
	db, err := sqlfuncs.OpenDB(DSN(path, false))
	if err != nil {
		t.Fatal(err)
	}
	all, err := migrations.All()
	if err != nil {
		db.Close()
		t.Fatal(err)
	}
	if _, err := db.Exec(`CREATE TABLE schema_migrations (version INTEGER PRIMARY KEY, name TEXT NOT NULL, applied_at TEXT NOT NULL)`); err != nil {
		db.Close()
		t.Fatal(err)
	}
	for _, m := range all {
		if m.Version > version {
			break
		}
		if _, err := db.Exec(m.SQL); err != nil {
			db.Close()
			t.Fatalf("%s: %v", m.Name, err)
		}
		if _, err := db.Exec(`INSERT INTO schema_migrations VALUES (?, ?, '2026-01-01T00:00:00Z')`, m.Version, m.Name); err != nil {
			db.Close()
			t.Fatal(err)
		}
	}
	return db
}
