package csvimport

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"trendsql/store/storetest"
)

// The readings import switches SQLite's per-row foreign-key check off on
// its own connection and must switch it back on before the connection
// returns to the pool, after a successful import and after a failed one;
// the store's foreign keys then still refuse an orphan reading.
func TestImportRestoresForeignKeys(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	s.DB.SetMaxOpenConns(1) // the import's connection is the one checked below
	fkOn := func(when string) {
		t.Helper()
		var on int
		if err := s.DB.QueryRow(`PRAGMA foreign_keys`).Scan(&on); err != nil {
			t.Fatal(err)
		}
		if on != 1 {
			t.Fatalf("%s: foreign_keys = %d on the pooled connection, want 1", when, on)
		}
		if _, err := s.DB.Exec(`INSERT INTO readings(series_id, t, value) VALUES (987654, 0, 1)`); err == nil {
			t.Fatalf("%s: an orphan reading was accepted", when)
		}
	}
	dir := t.TempDir()
	good := filepath.Join(dir, "good.csv")
	if err := os.WriteFile(good, []byte("station,time,value\nW1,2024-01-01T00:00:00Z,1.5\nW1,2024-01-01T01:00:00Z,1.7\nW2,2024-01-01T00:00:00Z,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, good, ReadingsOptions{Variable: "stage"})
	if err != nil {
		t.Fatal(err)
	}
	if res.RowsStored != 3 {
		t.Fatalf("stored %d rows, want 3", res.RowsStored)
	}
	fkOn("after a successful import")
	// The same rows again with the default duplicate policy: the import
	// fails and changes nothing.
	before := impSnapshot(t, s)
	if _, err := ImportReadings(ctx, s, good, ReadingsOptions{Variable: "stage"}); err == nil {
		t.Fatal("a repeated file was accepted under on-duplicate=error")
	}
	if after := impSnapshot(t, s); after != before {
		t.Fatalf("a failed import changed the store:\n%s\nthen\n%s", before, after)
	}
	fkOn("after a failed import")
	storetest.Integrity(t, s)
	var problems int
	if err := s.DB.QueryRow(`SELECT count(*) FROM pragma_foreign_key_check`).Scan(&problems); err != nil {
		t.Fatal(err)
	}
	if problems != 0 {
		t.Fatalf("foreign_key_check reports %d problems", problems)
	}
}
