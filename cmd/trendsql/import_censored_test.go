package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestImportCmdCensoredMissingOffset: a laboratory file with results below
// the reporting limit and declared missing values, on a fixed-offset clock;
// the summary line accounts for every row.
func TestImportCmdCensoredMissingOffset(t *testing.T) {
	dir := t.TempDir()
	db := filepath.Join(dir, "lab.db")
	initStore(t, db)
	file := filepath.Join(dir, "tp.csv")
	text := "station,time,value,remark\n" +
		"P1,2021-01-05 09:00,<5,\n" +
		"P1,2021-02-02 09:00,12,\n" +
		"P1,2021-03-02 09:00,5,<\n" +
		"P1,2021-04-06 09:00,-999,\n" +
		"P1,2021-05-04 09:00,n.d.,\n" +
		"P1,2021-06-01 09:00,17,\n"
	if err := os.WriteFile(file, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	_, errs, code := importRunMain(t, "--db", db, "import", "readings", "--variable", "total_phosphorus", "--unit", "ug/L",
		"--censor-col", "remark", "--missing-values", "-999,NA", "--tz", "UTC+1", file)
	want := "tp.csv → batch 1: 6 rows read, 4 stored (2 of them censored), 1 declared missing, 1 rejected (listed in import_rejects, batch_id 1), 0 duplicates; created 1 station (id only) and 1 series\n"
	if code != 0 || !strings.HasSuffix(errs, want) {
		t.Fatalf("exit %d\n got %q\nwant suffix %q", code, errs, want)
	}
	s := importStoreCheck(t, db)
	var first string
	var tFirst int64
	if err := s.DB.QueryRow(`SELECT value, t FROM readings_view ORDER BY t LIMIT 1`).Scan(&first, &tFirst); err != nil || first != "<5" || tFirst != 1609833600 {
		t.Errorf("first reading %q at %d (%v), want <5 at 2021-01-05T08:00:00Z", first, tFirst, err)
	}
	var reason string
	if err := s.DB.QueryRow(`SELECT reason FROM import_rejects WHERE line = 5`).Scan(&reason); err != nil || reason != "declared missing-value marker" {
		t.Errorf("line 5 reason %q (%v)", reason, err)
	}

	// Censoring turned off: the censored rows are rejected with the reason.
	db2 := filepath.Join(dir, "off.db")
	initStore(t, db2)
	_, errs, code = importRunMain(t, "--db", db2, "import", "readings", "--variable", "tp", "--censor-col", "remark", "--reject-censored", file)
	if code != 0 || !strings.Contains(errs, "3 stored, 3 rejected") {
		t.Errorf("--reject-censored: exit %d, %q", code, errs)
	}
	s2 := importStoreCheck(t, db2)
	if err := s2.DB.QueryRow(`SELECT reason FROM import_rejects WHERE line = 2`).Scan(&reason); err != nil || !strings.Contains(reason, "censored values are turned off") {
		t.Errorf("line 2 reason %q (%v)", reason, err)
	}

	// An unknown zone lists both accepted forms.
	_, errs, code = importRunMain(t, "--db", db2, "import", "readings", "--variable", "tp", "--tz", "CET+1", file)
	if code != ExitUsage || !strings.Contains(errs, "IANA time zone name") || !strings.Contains(errs, "+01:00, -05:00, UTC+1") {
		t.Errorf("bad --tz: exit %d, %q", code, errs)
	}
}
