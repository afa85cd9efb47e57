package csvimport

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/sqlfuncs/timefmt"
	"trendsql/store/storetest"
)

// TestImportRejectsLookAlikeIDs: station ids and variable names with a NUL
// byte, another control character, an invisible format character or
// invalid UTF-8 are rejected with the reason; they never create a station
// that prints like S1.
func TestImportRejectsLookAlikeIDs(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	dir := t.TempDir()
	text := "station,variable,time,value\n" +
		"S1,level,1600000000,1\n" +
		"S1\x00,level,1600003600,2\n" +
		"S1\x1b[0m,level,1600007200,3\n" +
		"S\xff1,level,1600010800,4\n" +
		"S1\u200b,level,1600014400,5\n" +
		"S1,lev\x00el,1600018000,6\n" +
		"Zürich-Ost,level,1600021600,7\n"
	path := filepath.Join(dir, "ids.csv")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, path, ReadingsOptions{VariableCol: "variable"})
	if err != nil {
		t.Fatal(err)
	}
	if res.RowsStored != 2 || res.RowsRejected != 5 {
		t.Errorf("%d stored, %d rejected; want 2 and 5", res.RowsStored, res.RowsRejected)
	}
	impCheckRejects(t, s, res.BatchID, map[int]string{3: "U+0000", 4: "U+001B", 5: "not valid UTF-8", 6: "U+200B", 7: "variable"})
	if n := impCount(t, s, `SELECT count(*) FROM stations`); n != 2 {
		t.Errorf("%d stations, want 2 (S1 and Zürich-Ost)", n)
	}
	if _, err := ImportReadings(ctx, s, path, ReadingsOptions{Variable: "lev\tel"}); err == nil || !strings.Contains(err.Error(), "U+0009") {
		t.Errorf("fixed variable with a tab: %v", err)
	}

	st := filepath.Join(dir, "st.csv")
	os.WriteFile(st, []byte("id,name\nA\x00,x\nB,y\n"), 0o644)
	res, err = ImportStations(ctx, s, st, StationsOptions{})
	if err != nil || res.RowsRejected != 1 || res.RowsStored != 1 {
		t.Errorf("stations: %+v, %v", res, err)
	}
}

// TestImportRejectsOutOfRangeTimes: unix seconds beyond the ISO 8601 years
// 0001–9999 are rejected, not stored with an empty ISO time.
func TestImportRejectsOutOfRangeTimes(t *testing.T) {
	s := storetest.Open(t)
	path := filepath.Join(t.TempDir(), "t.csv")
	os.WriteFile(path, []byte("station,time,value\nS1,1600000000,1\nS1,9200000000000000000,2\nS1,-9200000000000000000,3\nS1,253402300800,4\n"), 0o644)
	res, err := ImportReadings(context.Background(), s, path, ReadingsOptions{Variable: "level"})
	if err != nil {
		t.Fatal(err)
	}
	if res.RowsStored != 1 || res.RowsRejected != 3 {
		t.Errorf("%d stored, %d rejected; want 1 and 3", res.RowsStored, res.RowsRejected)
	}
	impCheckRejects(t, s, res.BatchID, map[int]string{3: timefmt.ErrOutOfRange.Error(), 4: "0001 to 9999", 5: "0001 to 9999"})
	if n := impCount(t, s, `SELECT count(*) FROM readings_view WHERE time_utc IS NULL`); n != 0 {
		t.Errorf("%d readings without an ISO time", n)
	}
}
