package csvimport

// Tests of the stations and readings import. The fixtures under
// testdata/import are invented, hand-written files (see its README.md).
// Expected unix seconds of local times were computed outside the project
// with Debian's /usr/bin/python3 3.11 datetime + zoneinfo, e.g.
//
//	int(datetime.fromisoformat("2021-03-28 06:00").replace(tzinfo=ZoneInfo("Europe/Berlin")).timestamp())

import (
	"bufio"
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"trendsql/store"
	"trendsql/store/storetest"
)

func impFixture(name string) string { return filepath.Join("..", "..", "testdata", "import", name) }

var impTables = []string{"stations", "series", "readings", "import_batches", "import_rejects", "series_batches"}

// snapshot renders the full content of every table the import writes, so
// two snapshots are equal only if nothing changed.
func impSnapshot(t *testing.T, s *store.Store) string {
	t.Helper()
	var b strings.Builder
	for _, tab := range impTables {
		rows, err := s.DB.Query("SELECT * FROM " + tab + " ORDER BY 1, 2")
		if err != nil {
			t.Fatal(err)
		}
		all := storetest.ScanAll(t, rows)
		for _, vals := range all {
			fmt.Fprintf(&b, "%s%v\n", tab, vals)
		}
		fmt.Fprintf(&b, "%s count %d\n", tab, len(all))
	}
	return b.String()
}

func impCount(t *testing.T, s *store.Store, q string, args ...any) int64 {
	t.Helper()
	var n int64
	if err := s.DB.QueryRow(q, args...).Scan(&n); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return n
}

type impCounts struct{ read, stored, rejected, dup, replaced int64 }

func impCheckCounts(t *testing.T, s *store.Store, res *ImportResult, want impCounts) {
	t.Helper()
	got := impCounts{res.RowsRead, res.RowsStored, res.RowsRejected, res.RowsDuplicate, res.RowsReplaced}
	if got != want {
		t.Errorf("result counts (read, stored, rejected, dup, replaced) = %+v, want %+v", got, want)
	}
	if got.read != got.stored+got.rejected+got.dup {
		t.Errorf("read %d != stored+rejected+duplicate %d", got.read, got.stored+got.rejected+got.dup)
	}
	var db impCounts
	if err := s.DB.QueryRow(`SELECT rows_read, rows_stored, rows_rejected, rows_duplicate, rows_replaced FROM import_batches WHERE id = ?`,
		res.BatchID).Scan(&db.read, &db.stored, &db.rejected, &db.dup, &db.replaced); err != nil {
		t.Fatal(err)
	}
	if db != want {
		t.Errorf("import_batches counts = %+v, want %+v", db, want)
	}
	if n := impCount(t, s, `SELECT count(*) FROM import_rejects WHERE batch_id = ?`, res.BatchID); n != want.rejected {
		t.Errorf("import_rejects has %d rows for the batch, want %d", n, want.rejected)
	}
	storetest.Integrity(t, s)
}

type impReading struct {
	station, variable string
	t                 int64
	v                 float64
	q                 string // "<nil>" for NULL
}

func impReadingsOf(t *testing.T, s *store.Store) []impReading {
	t.Helper()
	rows, err := s.DB.Query(`SELECT station_id, variable, t, value, qualifier FROM readings_view ORDER BY station_id, variable, t`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []impReading
	for rows.Next() {
		var r impReading
		var q sql.NullString
		if err := rows.Scan(&r.station, &r.variable, &r.t, &r.v, &q); err != nil {
			t.Fatal(err)
		}
		r.q = "<nil>"
		if q.Valid {
			r.q = q.String
		}
		out = append(out, r)
	}
	return out
}

func impCheckReadings(t *testing.T, s *store.Store, want []impReading) {
	t.Helper()
	got := impReadingsOf(t, s)
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("readings:\n got %v\nwant %v", got, want)
	}
}

// rejectsOf returns line -> (reason, raw) for a batch.
func impRejectsOf(t *testing.T, s *store.Store, batch int64) map[int][2]string {
	t.Helper()
	rows, err := s.DB.Query(`SELECT line, reason, raw FROM import_rejects WHERE batch_id = ?`, batch)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	out := map[int][2]string{}
	for rows.Next() {
		var line int
		var reason, raw string
		if err := rows.Scan(&line, &reason, &raw); err != nil {
			t.Fatal(err)
		}
		out[line] = [2]string{reason, raw}
	}
	return out
}

func impCheckRejects(t *testing.T, s *store.Store, batch int64, want map[int]string) {
	t.Helper()
	got := impRejectsOf(t, s, batch)
	for line, sub := range want {
		r, ok := got[line]
		if !ok {
			t.Errorf("line %d: not rejected (want a reason containing %q)", line, sub)
			continue
		}
		if !strings.Contains(r[0], sub) {
			t.Errorf("line %d: reason %q does not contain %q", line, r[0], sub)
		}
	}
	for line, r := range got {
		if _, ok := want[line]; !ok {
			t.Errorf("line %d rejected unexpectedly: %q (raw %q)", line, r[0], r[1])
		}
	}
}

func TestImportStationsAndMerge(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	res, err := ImportStations(ctx, s, impFixture("stations.csv"), StationsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 3, stored: 3})
	type st struct {
		name           sql.NullString
		lat, lon, elev sql.NullFloat64
		meta           string
	}
	get := func(id string) st {
		var x st
		if err := s.DB.QueryRow(`SELECT name, latitude, longitude, elevation_m, metadata FROM stations WHERE id = ?`, id).
			Scan(&x.name, &x.lat, &x.lon, &x.elev, &x.meta); err != nil {
			t.Fatalf("station %s: %v", id, err)
		}
		return x
	}
	g1 := get("G1")
	if g1.name.String != "Mill Weir gauge" || g1.lat.Float64 != 51.5 || g1.lon.Float64 != -0.25 || g1.elev.Float64 != 12.5 ||
		g1.meta != `{"install_date":"2015-06-01","sensor_model":"PT-200"}` {
		t.Errorf("G1 = %+v", g1)
	}
	// Metadata values stay text exactly as written ("007" keeps its zeros).
	if g2 := get("G2"); g2.elev.Valid || g2.meta != `{"aquifer":"chalk","install_date":"007"}` {
		t.Errorf("G2 = %+v", g2)
	}
	if w3 := get("W3"); w3.name.Valid || w3.lat.Valid || w3.meta != `{}` {
		t.Errorf("W3 = %+v", w3)
	}

	res, err = ImportStations(ctx, s, impFixture("stations_update.csv"), StationsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// G1 identical (duplicate), G2 and W3 changed (duplicate+replaced), N4
	// new, N4 again on line 12 (duplicate+replaced), six rejects.
	impCheckCounts(t, s, res, impCounts{read: 11, stored: 1, rejected: 6, dup: 4, replaced: 3})
	impCheckRejects(t, s, res.BatchID, map[int]string{
		6:  "latitude: 91 is outside [-90, 90]",
		7:  "longitude: -180.5 is outside [-180, 180]",
		8:  `latitude: value "abc" is not a number`,
		9:  `elevation_m: value "NA" is a missing-value marker`,
		10: "missing station id",
		11: `metadata: "[1]" is not a JSON object`,
	})
	if r := impRejectsOf(t, s, res.BatchID)[6][1]; r != "B5,Bad latitude,91,0,,," {
		t.Errorf("raw of line 6 = %q", r)
	}
	// G2: the empty name keeps the stored one; aquifer overwritten, the
	// metadata column's key merged, install_date kept.
	if g2 := get("G2"); g2.name.String != "Deep well 2" || g2.meta != `{"aquifer":"gravel","depth_m":35.5,"install_date":"007"}` {
		t.Errorf("G2 after merge = %+v", g2)
	}
	if w3 := get("W3"); w3.name.String != "Lake outlet" || w3.lat.Float64 != 52 || w3.lon.Float64 != -1 || w3.elev.Float64 != 80 {
		t.Errorf("W3 after merge = %+v", w3)
	}
	if n4 := get("N4"); n4.name.String != "New well renamed" || n4.lat.Float64 != -33.9 || n4.meta != `{"aquifer":"sand"}` {
		t.Errorf("N4 = %+v", n4)
	}
	if g1 := get("G1"); g1.meta != `{"install_date":"2015-06-01","sensor_model":"PT-200"}` {
		t.Errorf("G1 after merge = %+v", g1)
	}
	if n := impCount(t, s, `SELECT count(*) FROM stations WHERE id LIKE 'B%'`); n != 0 {
		t.Errorf("%d rejected stations were stored", n)
	}
}

func impFileSHA(t *testing.T, path string) string {
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

var impGoodReadings = []impReading{
	{"G1", "stage", 1609459200, 1.25, "<nil>"},
	{"G1", "stage", 1609462800, 1.5, "E"},
	{"G1", "stage", 1609466400, 1.75, "<nil>"},
	{"G2", "stage", 1609459200, 0.5, "below detection limit"},
	{"G2", "stage", 1609462800, -0.25, "<nil>"},
	{"G2", "stage", 1609545600, 0.03, " estimated "},
}

func TestImportReadingsGood(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	var last Progress
	calls := 0
	res, err := ImportReadings(ctx, s, impFixture("readings_good.csv"), ReadingsOptions{Variable: "stage", Unit: "m",
		Progress: func(p Progress) { last = p; calls++ }})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 6, stored: 6})
	if res.StationsCreated != 2 || res.SeriesCreated != 2 || res.SeriesWritten != 2 {
		t.Errorf("created stations %d, series %d, written %d; want 2, 2, 2", res.StationsCreated, res.SeriesCreated, res.SeriesWritten)
	}
	// The file has a byte order mark, CRLF line ends, a blank line, all time
	// forms and a qualifier with blanks that is kept verbatim.
	impCheckReadings(t, s, impGoodReadings)
	st, _ := os.Stat(impFixture("readings_good.csv"))
	if calls == 0 || last.Rows != 6 || last.Bytes != st.Size() || last.TotalBytes != st.Size() {
		t.Errorf("progress: %d calls, last %+v, file size %d", calls, last, st.Size())
	}
	var kind, source, sha, opts, started string
	var finished sql.NullString
	if err := s.DB.QueryRow(`SELECT kind, source, source_sha256, options, started_at, finished_at FROM import_batches WHERE id = ?`, res.BatchID).
		Scan(&kind, &source, &sha, &opts, &started, &finished); err != nil {
		t.Fatal(err)
	}
	abs, _ := filepath.Abs(impFixture("readings_good.csv"))
	if kind != "readings" || source != abs || sha != impFileSHA(t, impFixture("readings_good.csv")) || !finished.Valid || started == "" {
		t.Errorf("batch: kind %q source %q sha %q started %q finished %v", kind, source, sha, started, finished)
	}
	var o map[string]any
	if err := json.Unmarshal([]byte(opts), &o); err != nil {
		t.Fatal(err)
	}
	if o["tz"] != "UTC" || o["on_duplicate"] != "error" || o["variable"] != "stage" || o["unit"] != "m" || o["station_col"] != "station" || o["qualifier_col"] != "qualifier" {
		t.Errorf("options = %s", opts)
	}
	if n := impCount(t, s, `SELECT count(*) FROM series WHERE unit = 'm'`); n != 2 {
		t.Errorf("%d series with unit m, want 2", n)
	}
	if n := impCount(t, s, `SELECT count(*) FROM series_batches WHERE batch_id = ? AND rows = 3`, res.BatchID); n != 2 {
		t.Errorf("series_batches: %d series with 3 rows, want 2", n)
	}
	// Stations created by a readings import have their id only.
	if n := impCount(t, s, `SELECT count(*) FROM stations WHERE name IS NULL AND metadata = '{}'`); n != 2 {
		t.Errorf("%d bare stations, want 2", n)
	}
}

func TestImportReadingsAfterStations(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	if _, err := ImportStations(ctx, s, impFixture("stations.csv"), StationsOptions{}); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, impFixture("readings_good.csv"), ReadingsOptions{Variable: "stage"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 6, stored: 6})
	if res.StationsCreated != 0 {
		t.Errorf("created %d stations, want 0", res.StationsCreated)
	}
	if n := impCount(t, s, `SELECT count(*) FROM readings_view WHERE station_name = 'Mill Weir gauge'`); n != 3 {
		t.Errorf("%d readings joined to G1's name, want 3", n)
	}
}

func TestImportReadingsRejects(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	res, err := ImportReadings(ctx, s, impFixture("readings_rejects.csv"), ReadingsOptions{Variable: "level", Unit: "m", TZ: "Europe/Berlin"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 22, stored: 4, rejected: 18})
	impCheckRejects(t, s, res.BatchID, map[int]string{
		3:  "empty value",
		4:  `value "NA" is a missing-value marker`,
		5:  `value "NaN" is not a number (NaN)`,
		6:  `value "abc" is not a number`,
		7:  `value "inf" is infinite`,
		8:  `value "-Infinity" is infinite`,
		9:  `value "1e999" is out of range`,
		10: `value "0x1p3" is not a number`,
		11: `value "12,5" is not a number (a decimal comma?`,
		12: "daylight-saving gap",
		13: "daylight-saving overlap",
		14: "bad time",
		15: "missing time",
		16: "missing station",
		17: "record has 3 fields, the header has 4",
		18: "record has 5 fields, the header has 4",
		19: "malformed record: text after a closing quote",
		22: `value "1_000" is not a number`,
	})
	rj := impRejectsOf(t, s, res.BatchID)
	for line, raw := range map[int]string{3: "R1,2021-03-28 01:15,,", 19: `R1,2021-03-28 05:30,"2.0,"q`, 22: "R1,2021-03-28 06:15,1_000,"} {
		if rj[line][1] != raw {
			t.Errorf("raw of line %d = %q, want %q", line, rj[line][1], raw)
		}
	}
	if !strings.Contains(rj[13][0], "2021-10-31T02:30:00+02:00") || !strings.Contains(rj[13][0], "2021-10-31T02:30:00+01:00") {
		t.Errorf("ambiguous-time reason should name both instants: %q", rj[13][0])
	}
	// Local times: 01:00 CET, 06:00 CEST (a quoted two-line qualifier with an
	// escaped quote), an explicit offset, and a padded value.
	impCheckReadings(t, s, []impReading{
		{"R1", "level", 1616889600, 1, "<nil>"},
		{"R1", "level", 1616904000, 3.5, "multi\nline \"flag\""},
		{"R1", "level", 1616905800, 4.25, "<nil>"},
		{"R1", "level", 1616907600, 5, "<nil>"},
	})

	// A unit differing from the stored unit rejects that series' rows; a new
	// station in the same file is created.
	res, err = ImportReadings(ctx, s, impFixture("unit_conflict.csv"), ReadingsOptions{Variable: "level", Unit: "cm"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 3, stored: 1, rejected: 2})
	impCheckRejects(t, s, res.BatchID, map[int]string{
		2: `unit conflict: station "R1" variable "level" is stored in "m", this import gives "cm"`,
		4: "unit conflict",
	})
	if res.StationsCreated != 1 || res.SeriesCreated != 1 {
		t.Errorf("created %d stations %d series, want 1 1", res.StationsCreated, res.SeriesCreated)
	}
	if n := impCount(t, s, `SELECT count(*) FROM series WHERE station_id = 'R1' AND unit = 'm'`); n != 1 {
		t.Errorf("R1's unit changed")
	}
}

func TestImportDuplicatesWithinFile(t *testing.T) {
	ctx := context.Background()
	file := impFixture("dup_within.csv")

	t.Run("error", func(t *testing.T) {
		s := storetest.Open(t)
		if _, err := ImportStations(ctx, s, impFixture("stations.csv"), StationsOptions{}); err != nil {
			t.Fatal(err)
		}
		before := impSnapshot(t, s)
		_, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage"})
		if !errors.Is(err, ErrDuplicate) {
			t.Fatalf("err = %v, want a duplicate error", err)
		}
		var ie *InputError
		if !errors.As(err, &ie) || ie.Line != 6 {
			t.Errorf("error %v: want line 6", err)
		}
		for _, sub := range []string{"dup_within.csv line 6", `station "D1"`, `variable "stage"`, "2021-01-01T01:00:00Z", "also appears on line 3", "nothing was imported"} {
			if !strings.Contains(err.Error(), sub) {
				t.Errorf("error %q does not contain %q", err, sub)
			}
		}
		if after := impSnapshot(t, s); after != before {
			t.Errorf("store changed by a failed import:\nbefore\n%s\nafter\n%s", before, after)
		}
		storetest.Integrity(t, s)
	})

	t.Run("keep-first", func(t *testing.T) {
		s := storetest.Open(t)
		res, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage", OnDuplicate: DupKeepFirst})
		if err != nil {
			t.Fatal(err)
		}
		// Lines 6, 9 and 10 repeat earlier times (9 and 10 after the
		// series went out of order on line 8); line 11 is NA.
		impCheckCounts(t, s, res, impCounts{read: 10, stored: 6, rejected: 1, dup: 3})
		impCheckReadings(t, s, []impReading{
			{"D1", "stage", 1609459200, 1, "<nil>"},
			{"D1", "stage", 1609461000, 7, "<nil>"},
			{"D1", "stage", 1609462800, 2, "<nil>"},
			{"D1", "stage", 1609466400, 3, "<nil>"},
			{"D1", "stage", 1609470000, 4, "<nil>"},
			{"D2", "stage", 1609459200, 5, "<nil>"},
		})
		if n := impCount(t, s, `SELECT rows FROM series_batches JOIN series ON series.id = series_id WHERE station_id = 'D1'`); n != 5 {
			t.Errorf("series_batches rows for D1 = %d, want 5", n)
		}
	})

	t.Run("replace", func(t *testing.T) {
		s := storetest.Open(t)
		res, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage", OnDuplicate: DupReplace})
		if err != nil {
			t.Fatal(err)
		}
		impCheckCounts(t, s, res, impCounts{read: 10, stored: 6, rejected: 1, dup: 3, replaced: 3})
		impCheckReadings(t, s, []impReading{
			{"D1", "stage", 1609459200, 1, "<nil>"},
			{"D1", "stage", 1609461000, 7, "<nil>"},
			{"D1", "stage", 1609462800, 9, "E"},
			{"D1", "stage", 1609466400, 3, "<nil>"},
			{"D1", "stage", 1609470000, 8.5, "<nil>"},
			{"D2", "stage", 1609459200, 5, "<nil>"},
		})
		if n := impCount(t, s, `SELECT rows FROM series_batches JOIN series ON series.id = series_id WHERE station_id = 'D1'`); n != 8 {
			t.Errorf("series_batches rows for D1 = %d, want 8", n)
		}
	})
}

func TestImportDuplicatesAgainstStored(t *testing.T) {
	ctx := context.Background()
	setup := func(t *testing.T) *store.Store {
		s := storetest.Open(t)
		if _, err := ImportReadings(ctx, s, impFixture("readings_good.csv"), ReadingsOptions{Variable: "stage"}); err != nil {
			t.Fatal(err)
		}
		return s
	}
	more := impFixture("readings_more.csv")
	t.Run("error", func(t *testing.T) {
		s := setup(t)
		before := impSnapshot(t, s)
		_, err := ImportReadings(ctx, s, more, ReadingsOptions{Variable: "stage"})
		if !errors.Is(err, ErrDuplicate) {
			t.Fatalf("err = %v, want a duplicate error", err)
		}
		for _, sub := range []string{"readings_more.csv line 2", `station "G1"`, "2021-01-01T01:00:00Z", "already stored (with the same value: 1.5)"} {
			if !strings.Contains(err.Error(), sub) {
				t.Errorf("error %q does not contain %q", err, sub)
			}
		}
		if after := impSnapshot(t, s); after != before {
			t.Errorf("store changed by a failed import")
		}
		if n := impCount(t, s, `SELECT count(*) FROM import_batches`); n != 1 {
			t.Errorf("%d batches recorded, want 1", n)
		}
	})
	t.Run("keep-first", func(t *testing.T) {
		s := setup(t)
		res, err := ImportReadings(ctx, s, more, ReadingsOptions{Variable: "stage", OnDuplicate: DupKeepFirst})
		if err != nil {
			t.Fatal(err)
		}
		impCheckCounts(t, s, res, impCounts{read: 4, stored: 2, dup: 2})
		want := append([]impReading(nil), impGoodReadings[:3]...)
		want = append(want, impReading{"G1", "stage", 1609473600, 2, "<nil>"})
		want = append(want, impGoodReadings[3:]...)
		want = append(want, impReading{"G3", "stage", 1609459200, 7, "<nil>"})
		impCheckReadings(t, s, want)
	})
	t.Run("replace", func(t *testing.T) {
		s := setup(t)
		res, err := ImportReadings(ctx, s, more, ReadingsOptions{Variable: "stage", OnDuplicate: DupReplace})
		if err != nil {
			t.Fatal(err)
		}
		// Line 2 equals the stored reading (duplicate only), line 3 differs
		// (duplicate and replaced).
		impCheckCounts(t, s, res, impCounts{read: 4, stored: 2, dup: 2, replaced: 1})
		want := append([]impReading(nil), impGoodReadings[:2]...)
		want = append(want, impReading{"G1", "stage", 1609466400, 1.8, "<nil>"}, impReading{"G1", "stage", 1609473600, 2, "<nil>"})
		want = append(want, impGoodReadings[3:]...)
		want = append(want, impReading{"G3", "stage", 1609459200, 7, "<nil>"})
		impCheckReadings(t, s, want)
		// G1 got 1 new and 1 replaced row in this batch, G3 one new row.
		if n := impCount(t, s, `SELECT sum(rows) FROM series_batches WHERE batch_id = ?`, res.BatchID); n != 3 {
			t.Errorf("series_batches rows = %d, want 3", n)
		}
	})
}

func TestImportSameFileAgain(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	file := impFixture("readings_good.csv")
	opt := ReadingsOptions{Variable: "stage", Unit: "m"}
	first, err := ImportReadings(ctx, s, file, opt)
	if err != nil {
		t.Fatal(err)
	}
	before := impSnapshot(t, s)
	if _, err := ImportReadings(ctx, s, file, opt); !errors.Is(err, ErrDuplicate) {
		t.Fatalf("second import: err = %v, want a duplicate error", err)
	}
	if impSnapshot(t, s) != before {
		t.Fatal("failed re-import changed the store")
	}
	opt.OnDuplicate = DupKeepFirst
	res, err := ImportReadings(ctx, s, file, opt)
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 6, dup: 6})
	if res.SHA256 != first.SHA256 || res.SeriesWritten != 0 {
		t.Errorf("sha %s vs %s, series written %d", res.SHA256, first.SHA256, res.SeriesWritten)
	}
	opt.OnDuplicate = DupReplace
	res, err = ImportReadings(ctx, s, file, opt)
	if err != nil {
		t.Fatal(err)
	}
	// Replacing readings by identical ones changes nothing and marks no
	// series as changed.
	impCheckCounts(t, s, res, impCounts{read: 6, dup: 6, replaced: 0})
	if res.SeriesWritten != 0 {
		t.Errorf("series written %d, want 0", res.SeriesWritten)
	}
	impCheckReadings(t, s, impGoodReadings)
	if n := impCount(t, s, `SELECT count(*) FROM import_batches`); n != 3 {
		t.Errorf("%d batches, want 3", n)
	}
}

func TestImportDecimalComma(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	file := impFixture("decimal_comma.csv")
	res, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "temp", Unit: "degC", Delimiter: ';', DecimalComma: true, TZ: "America/New_York"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 4, stored: 3, rejected: 1})
	impCheckRejects(t, s, res.BatchID, map[int]string{4: `value "1.234,5" has a point, but decimal comma is set`})
	impCheckReadings(t, s, []impReading{
		{"C1", "temp", 1619884800, 12.5, "<nil>"},
		{"C1", "temp", 1619888400, -0.25, "geschätzt"},
		{"C1", "temp", 1619895600, 1500, "<nil>"},
	})

	// Without the option the same values are rejected, never misread;
	// as every row is rejected the import fails, naming the reasons by
	// frequency, and stores nothing (not even the batch).
	s2 := storetest.Open(t)
	_, err = ImportReadings(ctx, s2, file, ReadingsOptions{Variable: "temp", Delimiter: ';'})
	var re *RejectError
	if !errors.As(err, &re) || !errors.Is(err, ErrNothingStored) {
		t.Fatalf("error %v, want a RejectError matching ErrNothingStored", err)
	}
	if re.Read != 4 || re.Rejected != 4 || len(re.Reasons) != 2 {
		t.Fatalf("reject error %+v, want 4 read, 4 rejected, two kinds of reason", re)
	}
	if r := re.Reasons[0]; r.Count != 3 || r.FirstLine != 2 || !strings.Contains(r.Reason, "decimal comma?") || !strings.Contains(r.Example, `"12,5"`) {
		t.Errorf("first reason %+v, want 3 × decimal comma? from line 2", r)
	}
	if r := re.Reasons[1]; r.Count != 1 || r.FirstLine != 4 || !strings.Contains(r.Reason, "not a number") {
		t.Errorf("second reason %+v, want 1 × not a number at line 4", r)
	}
	if n := impCount(t, s2, `SELECT count(*) FROM import_batches`); n != 0 {
		t.Errorf("%d batches recorded by an import that stored nothing", n)
	}
}

func TestImportCustomColumnsAndTZ(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	res, err := ImportReadings(ctx, s, impFixture("custom_columns.csv"), ReadingsOptions{
		StationCol: "site", TimeCol: "when", ValueCol: "reading", QualifierCol: "flag", VariableCol: "param",
		Unit: "m", TZ: "America/New_York"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 7, stored: 5, rejected: 2})
	impCheckRejects(t, s, res.BatchID, map[int]string{3: "daylight-saving overlap", 8: "missing variable"})
	impCheckReadings(t, s, []impReading{
		{"NY1", "discharge", 1636259400, 0.1, "<nil>"},
		{"NY1", "stage", 1636259400, 1, "<nil>"},
		{"NY1", "stage", 1636263000, 2.1, "<nil>"},
		{"NY1", "stage", 1636266600, 2.2, "<nil>"},
		{"NY1", "stage", 1636270200, 3, "<nil>"},
	})
	if res.SeriesCreated != 2 {
		t.Errorf("series created %d, want 2", res.SeriesCreated)
	}
}

func TestImportInputErrorsChangeNothing(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	dir := t.TempDir()
	write := func(name, text string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	before := impSnapshot(t, s)
	cases := []struct {
		file string
		opt  ReadingsOptions
		want []string
	}{
		{write("nostation.csv", "site,time,value\nA,2021-01-01,1\n"), ReadingsOptions{Variable: "x"},
			[]string{"nostation.csv line 1", `no column "station"`, `"site"`}},
		{write("semicolon.csv", "station;time;value\nA;2021-01-01;1\n"), ReadingsOptions{Variable: "x"},
			[]string{"semicolon.csv line 1", `separated by ";"?`}},
		{write("blankfirst.csv", "\n\nsite,time,value\n"), ReadingsOptions{Variable: "x"},
			[]string{"blankfirst.csv line 3", `no column "station"`}},
		{write("badcol.csv", "station,time,value\nA,2021-01-01,1\n"), ReadingsOptions{Variable: "x", ValueCol: "reading"},
			[]string{"badcol.csv line 1", `no column "reading"`}},
		{write("novar.csv", "station,time,value\nA,2021-01-01,1\n"), ReadingsOptions{},
			[]string{"novar.csv line 1", "no variable"}},
		{write("twice.csv", "station,time,value,Value\nA,2021-01-01,1,2\n"), ReadingsOptions{Variable: "x"},
			[]string{"twice.csv line 1", `column "value" appears more than once`}},
		{write("empty.csv", ""), ReadingsOptions{Variable: "x"}, []string{"empty.csv", "file is empty"}},
		{write("ok.csv", "station,time,value\n"), ReadingsOptions{Variable: "x", VariableCol: "v"}, []string{"not both"}},
		{write("ok2.csv", "station,time,value\n"), ReadingsOptions{Variable: "x", TZ: "Mars/Olympus"}, []string{`time zone "Mars/Olympus"`}},
		{write("ok3.csv", "station,time,value\n"), ReadingsOptions{Variable: "x", OnDuplicate: "skip"}, []string{"keep-first"}},
		{filepath.Join(dir, "missing.csv"), ReadingsOptions{Variable: "x"}, []string{"missing.csv"}},
		{dir, ReadingsOptions{Variable: "x"}, []string{"is a directory"}},
	}
	// The typed errors the command line words (it adds the flag names,
	// checked in cmd/trendsql/import_test.go).
	typed := map[string]struct {
		is   error
		miss string // InputError.MissingColumn, looked up by its default name
		sep  string // InputError.Separator
	}{
		"nostation.csv": {ErrMissingColumn, "station", ""},
		"semicolon.csv": {ErrMissingColumn, "station", ";"},
		"novar.csv":     {ErrNoVariable, "", ""},
		"ok3.csv":       {ErrOnDuplicate, "", ""},
	}
	for _, c := range cases {
		_, err := ImportReadings(ctx, s, c.file, c.opt)
		if err == nil {
			t.Errorf("%s: no error", c.file)
			continue
		}
		if strings.Contains(err.Error(), "\n") {
			t.Errorf("%s: error spans lines: %q", c.file, err)
		}
		for _, sub := range c.want {
			if !strings.Contains(err.Error(), sub) {
				t.Errorf("%s: error %q does not contain %q", filepath.Base(c.file), err, sub)
			}
		}
		ty, ok := typed[filepath.Base(c.file)]
		if !ok {
			continue
		}
		if !errors.Is(err, ty.is) {
			t.Errorf("%s: error %q does not match %v", filepath.Base(c.file), err, ty.is)
		}
		if ty.miss != "" {
			var ie *InputError
			if !errors.As(err, &ie) || ie.MissingColumn != ty.miss || !ie.DefaultName || ie.Separator != ty.sep {
				t.Errorf("%s: error %#v, want missing column %q by its default name, separator %q", filepath.Base(c.file), ie, ty.miss, ty.sep)
			}
		}
	}
	if _, err := ImportStations(ctx, s, write("st.csv", "code,name\nA,B\n"), StationsOptions{}); err == nil || !strings.Contains(err.Error(), `needs "id"`) {
		t.Errorf("stations without id column: %v", err)
	}
	if impSnapshot(t, s) != before {
		t.Error("a failed import changed the store")
	}
}

// bigReadings writes a generated readings file of n rows over 10 stations.
func impBigReadings(t testing.TB, n int) string {
	p := filepath.Join(t.TempDir(), "big.csv")
	f, err := os.Create(p)
	if err != nil {
		t.Fatal(err)
	}
	w := bufio.NewWriter(f)
	fmt.Fprintln(w, "station,time,value,qualifier")
	t0 := time.Date(2010, 1, 1, 0, 0, 0, 0, time.UTC).Unix()
	per := n / 10
	buf := make([]byte, 0, 64)
	for st := 0; st < 10; st++ {
		for i := 0; i < per; i++ {
			buf = buf[:0]
			buf = fmt.Appendf(buf, "S%02d,%s,%.3f,", st, time.Unix(t0+int64(i)*3600, 0).UTC().Format("2006-01-02T15:04:05Z"), float64((i*7919+st)%10000)/100)
			if i%97 == 0 {
				buf = append(buf, 'E')
			}
			buf = append(buf, '\n')
			w.Write(buf)
		}
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestImportCancelRollsBack(t *testing.T) {
	s := storetest.Open(t)
	if _, err := ImportReadings(context.Background(), s, impFixture("readings_good.csv"), ReadingsOptions{Variable: "stage"}); err != nil {
		t.Fatal(err)
	}
	file := impBigReadings(t, 20000)
	before := impSnapshot(t, s)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	_, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage", Progress: func(p Progress) {
		if p.Rows >= 2*progressEvery {
			cancel()
		}
	}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("err = %v, want context.Canceled", err)
	}
	if impSnapshot(t, s) != before {
		t.Error("a cancelled import changed the store")
	}
	storetest.Integrity(t, s)
}

// impFailingReader returns its bytes, then an I/O error.
type impFailingReader struct {
	r io.Reader
}

func (f *impFailingReader) Read(p []byte) (int, error) {
	n, err := f.r.Read(p)
	if err == io.EOF {
		return n, errors.New("simulated device error")
	}
	return n, err
}
func (f *impFailingReader) Close() error { return nil }

func TestImportIOErrorRollsBack(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	if _, err := ImportStations(ctx, s, impFixture("stations.csv"), StationsOptions{}); err != nil {
		t.Fatal(err)
	}
	before := impSnapshot(t, s)
	data, err := os.ReadFile(impBigReadings(t, 10000))
	if err != nil {
		t.Fatal(err)
	}
	// The reader fails after 60% of the file, well after the first writes.
	in := &importInput{f: &impFailingReader{strings.NewReader(string(data[:len(data)*6/10]))}, name: "big.csv", abs: "/x/big.csv", size: int64(len(data)), h: sha256.New()}
	_, err = importReadings(ctx, s, in, ReadingsOptions{Variable: "stage"}, time.UTC)
	if err == nil || !strings.Contains(err.Error(), "simulated device error") || !strings.Contains(err.Error(), "big.csv") {
		t.Fatalf("err = %v", err)
	}
	if impSnapshot(t, s) != before {
		t.Error("an import that hit an I/O error changed the store")
	}
	in = &importInput{f: &impFailingReader{strings.NewReader("id,name\nA,B\nC,D\n")}, name: "st.csv", abs: "/x/st.csv", size: -1, h: sha256.New()}
	if _, err := importStations(ctx, s, in, StationsOptions{}); err == nil {
		t.Fatal("stations import ignored an I/O error")
	}
	if impSnapshot(t, s) != before {
		t.Error("a stations import that hit an I/O error changed the store")
	}
}

func TestImportBigFileOutOfOrder(t *testing.T) {
	// The generated file lists station by station; importing it, then the
	// same file again with keep-first, exercises the batched stored-reading
	// lookup across chunk boundaries.
	ctx := context.Background()
	s := storetest.Open(t)
	file := impBigReadings(t, 12000)
	res, err := ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 12000, stored: 12000})
	res, err = ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage", OnDuplicate: DupKeepFirst})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 12000, dup: 12000})
	if n := impCount(t, s, `SELECT count(*) FROM readings WHERE qualifier = 'E'`); n != 10*((1200+96)/97) {
		t.Errorf("%d flagged readings", n)
	}
}

func TestCSVReader(t *testing.T) {
	text := "\xef\xbb\xbfa,b,c\r\n\r\n1,\"x,y\",3\n\"multi\nline\",\"q\"\"q\",\n  \nlast,,\"open"
	cr := newCSVReader(strings.NewReader(text), ',')
	type rec struct {
		line   int
		fields string
		raw    string
		bad    bool
	}
	want := []rec{
		{1, `[a b c]`, "a,b,c", false},
		{3, `[1 x,y 3]`, `1,"x,y",3`, false},
		{4, "[multi\nline q\"q ]", "\"multi\nline\",\"q\"\"q\",", false},
	}
	for i, w := range want {
		r, err := cr.next()
		if err != nil || r == nil {
			t.Fatalf("record %d: %v, %v", i, r, err)
		}
		got := rec{r.line, "", r.raw, r.bad != ""}
		if !got.bad {
			got.fields = fmt.Sprint(r.fields)
		}
		if got != w {
			t.Errorf("record %d = %+v, want %+v", i, got, w)
		}
	}
	// The quote opened on line 7 is still open at the end of the input.
	r, err := cr.next()
	var re *ReadError
	if r != nil || !errors.As(err, &re) || re.Line != 7 {
		t.Errorf("unterminated quote at the end: %v, %v; want a ReadError at line 7", r, err)
	}
}

func TestParseValue(t *testing.T) {
	for in, want := range map[string]float64{"1": 1, "-2.5": -2.5, "+.5": 0.5, "3.": 3, "1e3": 1000, "1E-2": 0.01, " 7 ": 7, "0e-400": 0, "0.000e5": 0, "5e-324": 5e-324} {
		if v, r := parseValue(in, false); r != "" || v != want {
			t.Errorf("parseValue(%q) = %v, %q; want %v", in, v, r, want)
		}
	}
	for in, want := range map[string]float64{"12,5": 12.5, "-0,25": -0.25, "7": 7, ",5": 0.5} {
		if v, r := parseValue(in, true); r != "" || v != want {
			t.Errorf("parseValue(%q, comma) = %v, %q; want %v", in, v, r, want)
		}
	}
	for _, in := range []string{"", "NA", "n/a", "NaN", "nan", "inf", "-Inf", "Infinity", "1e999", "-1e999", "1e-400", "-2.5e-330", "0,0001e-400", "0x10", "1_000", "1.2.3", "e5", ".", "-", "1e", "1e+", "12,5", "1 2", "TRUE", "１"} {
		if v, r := parseValue(in, false); r == "" {
			t.Errorf("parseValue(%q) = %v, want a reject", in, v)
		}
	}
	for _, in := range []string{"1.5", "1,2,3", "1.234,5"} {
		if v, r := parseValue(in, true); r == "" {
			t.Errorf("parseValue(%q, comma) = %v, want a reject", in, v)
		}
	}
}

// BenchmarkImportReadings imports a generated 200 000-row file into a fresh
// store per iteration and reports rows per second.
func BenchmarkImportReadings(b *testing.B) {
	const rows = 200000
	file := impBigReadings(b, rows)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		b.StopTimer()
		s, err := store.Open(context.Background(), filepath.Join(b.TempDir(), fmt.Sprintf("bench%d.db", i)), store.Options{})
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		res, err := ImportReadings(context.Background(), s, file, ReadingsOptions{Variable: "stage", Unit: "m"})
		b.StopTimer()
		if err != nil {
			b.Fatal(err)
		}
		if res.RowsStored != rows {
			b.Fatalf("stored %d rows, want %d", res.RowsStored, rows)
		}
		s.Close()
		b.StartTimer()
	}
	b.ReportMetric(float64(rows*b.N)/b.Elapsed().Seconds(), "rows/s")
}

func TestImportSparseOverlap(t *testing.T) {
	// A few rows inside a long stored range: the range read would fetch far
	// more stored readings than the file has rows, so the lookup goes by
	// exact times instead; both duplicates and the new in-between time must
	// be classified right.
	ctx := context.Background()
	s := storetest.Open(t)
	if _, err := ImportReadings(ctx, s, impBigReadings(t, 12000), ReadingsOptions{Variable: "stage"}); err != nil {
		t.Fatal(err)
	}
	p := filepath.Join(t.TempDir(), "sparse.csv")
	// bigReadings starts at 2010-01-01T00:00:00Z, hourly, 1200 rows per station.
	text := "station,time,value\nS00,2010-01-01T00:00:00Z,-1\nS00,2010-01-21T00:30:00Z,-2\nS00,2010-02-19T23:00:00Z,-3\n"
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage", OnDuplicate: DupKeepFirst})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 3, stored: 1, dup: 2})
	if n := impCount(t, s, `SELECT count(*) FROM readings_view WHERE value < 0`); n != 1 {
		t.Errorf("%d negative values stored, want 1 (the new half-hour reading)", n)
	}
	// The same file again: refused before reading, naming the batch.
	_, err = ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage"})
	if !errors.Is(err, ErrAlreadyImported) || !strings.Contains(err.Error(), fmt.Sprintf("already imported as batch %d", res.BatchID)) {
		t.Errorf("err = %v, want the same file as batch %d", err, res.BatchID)
	}
	// The same rows in a different file (a trailing blank line): the
	// duplicate reading on line 2 is found.
	if err := os.WriteFile(p, []byte(text+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage"})
	if !errors.Is(err, ErrDuplicate) || !strings.Contains(err.Error(), "sparse.csv line 2") {
		t.Errorf("err = %v, want a duplicate on line 2", err)
	}
}

func TestImportReplaceCountsOnlyChanges(t *testing.T) {
	// Repeats within one file, near (same chunk) and far (earlier chunks,
	// still queued in the writer): identical repeats are duplicates only,
	// differing ones are replaced, and the last differing one wins.
	ctx := context.Background()
	s := storetest.Open(t)
	big, err := os.ReadFile(impBigReadings(t, 6000)) // S00..S09, 600 hourly rows each from 2010-01-01
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(big), "\n"), "\n")
	var b strings.Builder
	b.WriteString(string(big))
	b.WriteString(lines[1] + "\n")                            // S00 first row again, identical
	b.WriteString(lines[2] + "\n")                            // S00 second row again, identical
	b.WriteString("S00,2010-01-01T02:00:00Z,-5,X\n")          // S00 third row, changed
	b.WriteString("S00,2010-01-01T02:00:00Z,-6,X\n")          // and changed again
	b.WriteString("S00,2010-01-01T02:00:00Z,-6,X\n")          // identical to the line before
	b.WriteString(lines[len(lines)-1] + "\n")                 // last row again, identical (same chunk)
	b.WriteString("S09,2010-01-01T03:00:00Z," + "-7" + ",\n") // changed
	p := filepath.Join(t.TempDir(), "repeats.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	res, err := ImportReadings(ctx, s, p, ReadingsOptions{Variable: "stage", OnDuplicate: DupReplace})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 6007, stored: 6000, dup: 7, replaced: 3})
	var v float64
	var q string
	if err := s.DB.QueryRow(`SELECT value, qualifier FROM readings_view WHERE station_id = 'S00' AND t = 1262311200`).Scan(&v, &q); err != nil {
		t.Fatal(err)
	}
	if v != -6 || q != "X" {
		t.Errorf("S00 02:00 = %v %q, want -6 X", v, q)
	}
	if n := impCount(t, s, `SELECT count(*) FROM readings_view WHERE value < 0`); n != 2 {
		t.Errorf("%d negative readings, want 2", n)
	}
	// 600 new rows per station; S00 got 2 replacements, S09 one.
	if n := impCount(t, s, `SELECT sum(rows) FROM series_batches WHERE batch_id = ?`, res.BatchID); n != 6003 {
		t.Errorf("series_batches rows = %d, want 6003", n)
	}
}

func TestImportCancelWhileInputIsSilent(t *testing.T) {
	// The file is a pipe that delivers a header and one row and then stays
	// open without data: a cancel must still end the import, changing nothing
	// (with \n and with bare \r line ends, whose detection must not wait for
	// more input either).
	for _, eol := range []string{"\n", "\r"} {
		s := storetest.Open(t)
		before := impSnapshot(t, s)
		pr, pw := io.Pipe()
		ctx, cancel := context.WithCancel(context.Background())
		go func() {
			io.WriteString(pw, "station,time,value"+eol+"A,2021-01-01T00:00:00Z,1"+eol)
			cancel() // the reader has taken the bytes; it now waits for more
		}()
		in := &importInput{f: pr, name: "pipe.csv", abs: "/x/pipe.csv", size: -1, h: sha256.New()}
		_, err := importReadings(ctx, s, in, ReadingsOptions{Variable: "x"}, time.UTC)
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("line end %q: err = %v, want context.Canceled", eol, err)
		}
		pw.Close()
		if impSnapshot(t, s) != before {
			t.Errorf("line end %q: a cancelled import changed the store", eol)
		}
	}
}

func TestImportStationsDecimalComma(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	res, err := ImportStations(ctx, s, impFixture("stations_semicolon.csv"), StationsOptions{Delimiter: ';', DecimalComma: true})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 2, stored: 1, rejected: 1})
	impCheckRejects(t, s, res.BatchID, map[int]string{3: `latitude: value "52.25" has a point, but decimal comma is set`})
	var name, meta string
	var lat, lon, elev float64
	if err := s.DB.QueryRow(`SELECT name, latitude, longitude, elevation_m, metadata FROM stations WHERE id = 'K1'`).Scan(&name, &lat, &lon, &elev, &meta); err != nil {
		t.Fatal(err)
	}
	if name != "Kanal Nord" || lat != 52.5 || lon != 13.25 || elev != 34.5 || meta != `{"aquifer":"Sand"}` {
		t.Errorf("K1 = %q %v %v %v %s", name, lat, lon, elev, meta)
	}
}

// TestCSVReaderBareCR: a file whose line ends are bare carriage returns
// (classic Mac OS line ends, which some spreadsheet programs still write)
// reads as the same records, raw texts and line numbers as the file with \n
// line ends (the line-end conventions are common practice); a CRLF file keeps its
// carriage returns out of the fields (a lone \r inside a file whose first
// line ends in \n is TestCSVReaderMixedLineEnds).
func TestCSVReaderBareCR(t *testing.T) {
	read := func(in string) []string {
		cr := newCSVReader(strings.NewReader(in), ',')
		var out []string
		for {
			r, err := cr.next()
			if err != nil {
				t.Fatal(err)
			}
			if r == nil {
				return out
			}
			out = append(out, fmt.Sprintf("%d %q %q %q", r.line, r.fields, r.raw, r.bad))
		}
	}
	for _, lf := range []string{
		"a,b,c\n1,2,3\n",
		"a,b,c\n1,2,3",
		"\xef\xbb\xbfa,b\n\n1,\"x,y\"\n\"multi\nline\",z\n  \nlast,\"closed\"",
		"only\n",
	} {
		want := read(lf)
		if got := read(strings.ReplaceAll(lf, "\n", "\r")); fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("bare CR of %q:\n got %v\nwant %v", lf, got, want)
		}
		if got := read(strings.ReplaceAll(lf, "\n", "\r\n")); fmt.Sprint(got) != fmt.Sprint(want) {
			t.Errorf("CRLF of %q:\n got %v\nwant %v", lf, got, want)
		}
	}
}

// TestImportBareCRFiles: the station and readings fixtures with bare
// carriage-return line ends import exactly the rows the originals do (an
// import that read such a file as one line stored nothing and said so only
// as "0 rows read").
func TestImportBareCRFiles(t *testing.T) {
	ctx := context.Background()
	s := storetest.Open(t)
	dir := t.TempDir()
	toCR := func(name string) string {
		b, err := os.ReadFile(impFixture(name))
		if err != nil {
			t.Fatal(err)
		}
		text := strings.ReplaceAll(strings.ReplaceAll(string(b), "\r\n", "\n"), "\n", "\r")
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	res, err := ImportStations(ctx, s, toCR("stations.csv"), StationsOptions{})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 3, stored: 3})
	res, err = ImportReadings(ctx, s, toCR("readings_good.csv"), ReadingsOptions{Variable: "stage", Unit: "m"})
	if err != nil {
		t.Fatal(err)
	}
	impCheckCounts(t, s, res, impCounts{read: 6, stored: 6})
	impCheckReadings(t, s, impGoodReadings)
}
