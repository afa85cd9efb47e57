package csvimport

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"trendsql/store"
	"trendsql/store/storetest"
)

func censWrite(t *testing.T, name, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

type censReading struct {
	t    int64
	v    float64
	mark string
}

func censReadings(t *testing.T, s *store.Store, station string) []censReading {
	t.Helper()
	rows, err := s.DB.Query(`SELECT r.t, r.value, coalesce(r.censored, '') FROM readings r JOIN series se ON se.id = r.series_id WHERE se.station_id = ? ORDER BY r.t`, station)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []censReading
	for rows.Next() {
		var r censReading
		if err := rows.Scan(&r.t, &r.v, &r.mark); err != nil {
			t.Fatal(err)
		}
		out = append(out, r)
	}
	return out
}

func day(d int) int64 { return time.Date(2020, 1, d, 0, 0, 0, 0, time.UTC).Unix() }

// TestImportCensoredAndMissing: a laboratory export with results below the
// reporting limit in several spellings, declared missing-value markers and
// bad rows; every row is accounted for.
func TestImportCensoredAndMissing(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	text := "station,time,value\n" +
		"P1,2020-01-01,<5\n" + // 2
		"P1,2020-01-02,< 5\n" + // 3
		"P1,2020-01-03,12.5\n" + // 4
		"P1,2020-01-04,-999\n" + // 5 missing
		"P1,2020-01-05,NA\n" + // 6 missing
		"P1,2020-01-06,>2000\n" + // 7
		"P1,2020-01-07,<abc\n" + // 8 rejected
		"P1,2020-01-08,<0.05\n" + // 9
		"P1,2020-01-09, -999\n" + // 10 not the declared text: rejected? no, a number
		"P1,2020-01-10,\n" // 11 empty: rejected
	p := censWrite(t, "tp.csv", text)
	res, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "tp", MissingValues: []string{"-999", "NA"}})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 10, stored: 6, rejected: 4})
	if res.RowsCensored != 4 || res.RowsMissing != 2 {
		t.Errorf("censored %d missing %d, want 4 and 2", res.RowsCensored, res.RowsMissing)
	}
	if n := impCount(t, s, `SELECT rows_censored * 100 + rows_missing FROM import_batches WHERE id = ?`, res.BatchID); n != 402 {
		t.Errorf("batch record censored*100+missing = %d", n)
	}
	impCheckRejects(t, s, res.BatchID, map[int]string{
		5: "declared missing-value marker", 6: "declared missing-value marker",
		8: `value "<abc": a censored value needs a number after "<"`, 11: "empty value",
	})
	want := []censReading{{day(1), 5, "<"}, {day(2), 5, "<"}, {day(3), 12.5, ""}, {day(6), 2000, ">"}, {day(8), 0.05, "<"}, {day(9), -999, ""}}
	if got := censReadings(t, s, "P1"); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("readings\n got %v\nwant %v", got, want)
	}
	var shown string
	if err := s.DB.QueryRow(`SELECT group_concat(value, ' ') FROM (SELECT value FROM readings_view WHERE station_id = 'P1' ORDER BY t)`).Scan(&shown); err != nil || shown != "<5 <5 12.5 >2000 <0.05 -999.0" {
		t.Errorf("readings_view values %q (%v)", shown, err)
	}
}

func TestImportCensoredDecimalCommaAndRemarkColumn(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	text := "station;time;value;remark\n" +
		"P2;2020-01-01;<0,05;\n" + // 2 mark in the value
		"P2;2020-01-02;0,05;<\n" + // 3 mark in the remark
		"P2;2020-01-03;1,5;\n" + // 4
		"P2;2020-01-04;<0,05;<\n" + // 5 both, agreeing
		"P2;2020-01-05;0,07;>\n" + // 6
		"P2;2020-01-06;<0,05;>\n" + // 7 disagree: rejected
		"P2;2020-01-07;0,05;ND\n" + // 8 unknown remark: rejected
		"P2;2020-01-08;<0.05;\n" // 9 point under decimal comma: rejected
	p := censWrite(t, "lab.csv", text)
	res, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "tp", Delimiter: ';', DecimalComma: true, CensorCol: "remark"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 8, stored: 5, rejected: 3})
	impCheckRejects(t, s, res.BatchID, map[int]string{
		7: `value "<0,05" and censoring remark ">" disagree`, 8: `censoring remark "ND" is not '<', '>' or empty`,
		9: "has a point, but decimal comma is set",
	})
	want := []censReading{{day(1), 0.05, "<"}, {day(2), 0.05, "<"}, {day(3), 1.5, ""}, {day(4), 0.05, "<"}, {day(5), 0.07, ">"}}
	if got := censReadings(t, s, "P2"); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("readings\n got %v\nwant %v", got, want)
	}
	// A missing remark column is an error naming it.
	if _, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "tp", Delimiter: ';', DecimalComma: true, CensorCol: "flag", OnDuplicate: DupKeepFirst}); err == nil || !strings.Contains(err.Error(), `no column "flag"`) {
		t.Errorf("missing censor column: %v", err)
	}
}

func TestImportCensoredTurnedOff(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	p := censWrite(t, "off.csv", "station,time,value\nP3,2020-01-01,<5\nP3,2020-01-02,7\nP3,2020-01-03,>9\n")
	res, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "tp", NoCensored: true})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 3, stored: 1, rejected: 2})
	impCheckRejects(t, s, res.BatchID, map[int]string{
		2: `value "<5" is censored (below the reporting limit) and censored values are turned off`,
		4: `value ">9" is censored (above the measuring limit) and censored values are turned off`,
	})
}

type censDup struct {
	line             int
	policy           string
	kept             float64
	keptC            string
	dropped          float64
	droppedC         string
	batch, seriesHit int64
}

func censDups(t *testing.T, s *store.Store, batch int64) []censDup {
	t.Helper()
	rows, err := s.DB.Query(`SELECT line, policy, kept_value, coalesce(kept_censored, ''), dropped_value, coalesce(dropped_censored, ''), batch_id FROM import_duplicates WHERE batch_id = ? ORDER BY line`, batch)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []censDup
	for rows.Next() {
		var d censDup
		if err := rows.Scan(&d.line, &d.policy, &d.kept, &d.keptC, &d.dropped, &d.droppedC, &d.batch); err != nil {
			t.Fatal(err)
		}
		out = append(out, d)
	}
	return out
}

// TestImportDuplicatesOnRecord: every reading dropped by keep-first or
// overwritten by replace is recorded with both values, its line and batch;
// the same file again fails by default naming the earlier batch.
func TestImportDuplicatesOnRecord(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	first := censWrite(t, "a.csv", "station,time,value\nP4,2020-01-01,<5\nP4,2020-01-02,3\nP4,2020-01-03,4\n")
	r1, err := ImportReadings(ctx, s, first, ReadingsOptions{Variable: "tp"})
	if err != nil {
		t.Fatal(err)
	}
	before := impSnapshot(t, s)
	_, err = ImportReadings(ctx, s, first, ReadingsOptions{Variable: "tp"})
	var ae *AlreadyImportedError
	if !errors.As(err, &ae) || ae.Batch != r1.BatchID || !errors.Is(err, ErrDuplicate) || !strings.Contains(err.Error(), fmt.Sprintf("already imported as batch %d", r1.BatchID)) {
		t.Fatalf("same file again: %v", err)
	}
	if impSnapshot(t, s) != before {
		t.Fatal("refused import changed the store")
	}
	// keep-first with the same file: goes ahead, names the earlier batch,
	// records every dropped row.
	r2, err := ImportReadings(ctx, s, first, ReadingsOptions{Variable: "tp", OnDuplicate: DupKeepFirst})
	if err != nil || r2.SameFileBatch != r1.BatchID {
		t.Fatalf("keep-first same file: %v, same-file batch %d", err, r2.SameFileBatch)
	}
	if d := censDups(t, s, r2.BatchID); len(d) != 3 || d[0] != (censDup{2, "keep-first", 5, "<", 5, "<", r2.BatchID, 0}) {
		t.Errorf("keep-first records %v", d)
	}
	// A second file: overlaps stored times and repeats a time within itself.
	second := censWrite(t, "b.csv", "station,time,value\n"+
		"P4,2020-01-01,4.2\n"+ // 2 stored "<5" → replaced by 4.2
		"P4,2020-01-02,3\n"+ // 3 same as stored: not replaced, not recorded
		"P4,2020-01-05,<1\n"+ // 4 new, censored
		"P4,2020-01-05,0.7\n"+ // 5 repeat within the file: replaces line 4
		"P4,2020-01-03,>9\n") // 6 stored 4 → replaced by ">9"
	r3, err := ImportReadings(ctx, s, second, ReadingsOptions{Variable: "tp", OnDuplicate: DupReplace})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, r3, impCounts{read: 5, stored: 1, dup: 4, replaced: 3})
	wantDups := []censDup{
		{2, "replace", 4.2, "", 5, "<", r3.BatchID, 0},
		{5, "replace", 0.7, "", 1, "<", r3.BatchID, 0},
		{6, "replace", 9, ">", 4, "", r3.BatchID, 0},
	}
	if d := censDups(t, s, r3.BatchID); fmt.Sprint(d) != fmt.Sprint(wantDups) {
		t.Errorf("replace records\n got %v\nwant %v", d, wantDups)
	}
	want := []censReading{{day(1), 4.2, ""}, {day(2), 3, ""}, {day(3), 9, ">"}, {day(5), 0.7, ""}}
	if got := censReadings(t, s, "P4"); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("readings after replace\n got %v\nwant %v", got, want)
	}
	// keep-first of a censored value over a stored one and a repeat in the
	// file: the kept value is what stays stored.
	third := censWrite(t, "c.csv", "station,time,value\nP4,2020-01-03,<2\nP4,2020-01-06,8\nP4,2020-01-06,<8\n")
	r4, err := ImportReadings(ctx, s, third, ReadingsOptions{Variable: "tp", OnDuplicate: DupKeepFirst})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, r4, impCounts{read: 3, stored: 1, dup: 2})
	wantDups = []censDup{{2, "keep-first", 9, ">", 2, "<", r4.BatchID, 0}, {4, "keep-first", 8, "", 8, "<", r4.BatchID, 0}}
	if d := censDups(t, s, r4.BatchID); fmt.Sprint(d) != fmt.Sprint(wantDups) {
		t.Errorf("keep-first records\n got %v\nwant %v", d, wantDups)
	}
	// Standard input cannot be hashed first: the check happens at its end,
	// before the commit. By default the first duplicate reading stops it
	// earlier; with keep-first the earlier batch is named.
	before = impSnapshot(t, s)
	b, _ := os.ReadFile(third)
	_, err = ImportReadings(ctx, s, StdinPath, ReadingsOptions{Variable: "tp", Stdin: strings.NewReader(string(b))})
	if !errors.Is(err, ErrDuplicate) {
		t.Errorf("stdin same file: %v", err)
	}
	if impSnapshot(t, s) != before {
		t.Error("refused stdin import changed the store")
	}
	r5, err := ImportReadings(ctx, s, StdinPath, ReadingsOptions{Variable: "tp", OnDuplicate: DupKeepFirst, Stdin: strings.NewReader(string(b))})
	if err != nil || r5.SameFileBatch != r4.BatchID {
		t.Errorf("stdin keep-first: %v, same-file batch %v", err, r5)
	}
	// A file whose rows are all declared missing stores nothing; the same
	// text on standard input is refused at its end by default.
	allMissing := "station,time,value\nP4,2020-02-01,-999\n"
	if _, err := ImportReadings(ctx, s, StdinPath, ReadingsOptions{Variable: "tp", MissingValues: []string{"-999"}, Stdin: strings.NewReader(allMissing)}); err != nil {
		t.Fatal(err)
	}
	_, err = ImportReadings(ctx, s, StdinPath, ReadingsOptions{Variable: "tp", MissingValues: []string{"-999"}, Stdin: strings.NewReader(allMissing)})
	if !errors.As(err, &ae) || ae.File != StdinName {
		t.Errorf("stdin all missing again: %v", err)
	}
}

func TestImportFixedOffsetZone(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	// A logger on standard time all year (UTC+1): July readings stay at +01:00.
	p := censWrite(t, "logger.csv", "station,time,value\nL1,2021-01-15 12:00,1\nL1,2021-07-15 12:00,2\n")
	if _, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage", TZ: "UTC+1"}); err != nil {
		t.Fatal(err)
	}
	want := []censReading{{time.Date(2021, 1, 15, 11, 0, 0, 0, time.UTC).Unix(), 1, ""}, {time.Date(2021, 7, 15, 11, 0, 0, 0, time.UTC).Unix(), 2, ""}}
	if got := censReadings(t, s, "L1"); fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("got %v want %v", got, want)
	}
	if _, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage", TZ: "CET+1"}); err == nil || !strings.Contains(err.Error(), "+01:00") || !strings.Contains(err.Error(), "Europe/Berlin") {
		t.Errorf("bad zone: %v", err)
	}
}
