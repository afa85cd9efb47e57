package csvimport

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

// TestImportStationsSameFileAgain: a stations file whose SHA-256 equals an
// earlier stations batch is refused before anything is written, naming that
// batch, from a path and from standard input; with Again it is merged and
// the result names the earlier batch and leaves the stations as they were.
func TestImportStationsSameFileAgain(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	file := impFixture("stations.csv")
	first, err := ImportStations(ctx, s, file, StationsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if first.SameFileBatch != 0 {
		t.Errorf("first import names an earlier batch %d", first.SameFileBatch)
	}
	before := impSnapshot(t, s)
	stationsBefore := fmt.Sprint(storetest.ScanAll(t, mustQuery(t, s.DB, `SELECT * FROM stations ORDER BY id`)))
	batches := impCount(t, s, `SELECT count(*) FROM import_batches`)
	want := fmt.Sprintf("already imported as batch %d", first.BatchID)
	_, err = ImportStations(ctx, s, file, StationsOptions{})
	var ae *AlreadyImportedError
	if !errors.As(err, &ae) || ae.Batch != first.BatchID || ae.SHA256 != first.SHA256 || !strings.Contains(err.Error(), want) {
		t.Fatalf("the same stations file again: %v, want an AlreadyImportedError naming batch %d", err, first.BatchID)
	}
	text, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	stdin := bytes.NewReader(text)
	if _, err := ImportStations(ctx, s, StdinPath, StationsOptions{Stdin: stdin}); !errors.Is(err, ErrAlreadyImported) || !strings.Contains(err.Error(), want) {
		t.Fatalf("the same stations file on standard input: %v, want the earlier batch named", err)
	}
	if impSnapshot(t, s) != before || impCount(t, s, `SELECT count(*) FROM import_batches`) != batches {
		t.Fatal("a refused stations import changed the store")
	}
	again, err := ImportStations(ctx, s, file, StationsOptions{Again: true})
	if err != nil {
		t.Fatal(err)
	}
	if again.SameFileBatch != first.BatchID || again.RowsStored != 0 || again.RowsReplaced != 0 {
		t.Errorf("Again: same-file batch %d (want %d), %d stored, %d replaced (want 0, 0)", again.SameFileBatch, first.BatchID, again.RowsStored, again.RowsReplaced)
	}
	if got := fmt.Sprint(storetest.ScanAll(t, mustQuery(t, s.DB, `SELECT * FROM stations ORDER BY id`))); got != stationsBefore {
		t.Errorf("merging an unchanged stations file changed the stations:\n%s\nwas\n%s", got, stationsBefore)
	}
}

func mustQuery(t *testing.T, db *sql.DB, q string) *sql.Rows {
	t.Helper()
	rows, err := db.Query(q)
	if err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return rows
}
