package demodata

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

// smallDemo is a shortened demo build for tests: every station, the last
// MaxYears years of each record.
func buildDemo(t *testing.T, opt Options) (*store.Store, Summary) {
	t.Helper()
	s := storetest.Open(t)
	sum, err := Build(context.Background(), s, opt)
	if err != nil {
		t.Fatalf("Build(%+v): %v", opt, err)
	}
	return s, sum
}

// fingerprint summarises the content of a store: per series its station,
// variable, unit, count, time sum, value sum and flagged count; per station
// its metadata.
func fingerprint(t *testing.T, s *store.Store) []string {
	t.Helper()
	rows, err := s.DB.Query(`
SELECT s.station_id || '/' || s.variable || '/' || coalesce(s.unit, '') || ': ' ||
       count(*) || ' ' || sum(r.t) || ' ' || printf('%.17g', sum(r.value)) || ' ' ||
       count(r.qualifier) || ' ' || st.metadata || ' ' || st.latitude || ' ' || st.longitude
FROM readings r JOIN series s ON s.id = r.series_id JOIN stations st ON st.id = s.station_id
GROUP BY s.id ORDER BY s.station_id, s.variable`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var line string
		if err := rows.Scan(&line); err != nil {
			t.Fatal(err)
		}
		out = append(out, line)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

func TestDemoIsDeterministic(t *testing.T) {
	opt := Options{MaxYears: 0.25}
	a, _ := buildDemo(t, opt)
	b, _ := buildDemo(t, opt)
	fa, fb := fingerprint(t, a), fingerprint(t, b)
	if len(fa) == 0 {
		t.Fatal("demo build stored no series")
	}
	if strings.Join(fa, "\n") != strings.Join(fb, "\n") {
		for i := range fa {
			if i < len(fb) && fa[i] != fb[i] {
				t.Fatalf("two builds with the same seed differ at series %d:\n%s\n%s", i, fa[i], fb[i])
			}
		}
		t.Fatalf("two builds with the same seed differ (%d vs %d series)", len(fa), len(fb))
	}
	// A different seed gives different readings (the check above is not vacuous).
	c, _ := buildDemo(t, Options{MaxYears: 0.25, Seed: Seed + 1})
	if strings.Join(fingerprint(t, c), "\n") == strings.Join(fa, "\n") {
		t.Error("a different seed gave the same store")
	}
	// Keeping fewer stations leaves the kept ones unchanged.
	d, _ := buildDemo(t, Options{MaxYears: 0.25, Stations: 3})
	fd := fingerprint(t, d)
	if len(fd) != 3 {
		t.Fatalf("Stations: 3 gave %d series, want 3", len(fd))
	}
	for i := range fd {
		if fd[i] != fa[i] {
			t.Errorf("station subset differs from the full build:\n%s\n%s", fd[i], fa[i])
		}
	}
}

func TestDemoScenario(t *testing.T) {
	s, sum := buildDemo(t, Options{MaxYears: 3})
	ctx := context.Background()
	want := map[string]int{"river_gauge": 11, "lake_level": 1, "groundwater_well": 21, "groundwater_well_manual": 7, "water_quality_site": 4}
	for k, n := range want {
		if sum.StationsByType[k] != n {
			t.Errorf("%s stations: %d, want %d", k, sum.StationsByType[k], n)
		}
	}
	if sum.Stations != 44 {
		t.Errorf("stations: %d, want 44", sum.Stations)
	}
	q := func(query string, args ...any) string {
		t.Helper()
		var v any
		if err := s.DB.QueryRowContext(ctx, query, args...).Scan(&v); err != nil {
			t.Fatalf("%s: %v", query, err)
		}
		return fmt.Sprint(v)
	}
	// Accounting: the readings batch says what was stored, series_batches per series.
	if got, want := q(`SELECT count(*) FROM readings`), fmt.Sprint(sum.Readings); got != want {
		t.Errorf("readings stored %s, summary says %s", got, want)
	}
	if got, want := q(`SELECT rows_stored FROM import_batches WHERE kind = 'readings' AND source = ?`, Source), fmt.Sprint(sum.Readings); got != want {
		t.Errorf("import_batches rows_stored %s, want %s", got, want)
	}
	if got := q(`SELECT count(*) FROM import_batches WHERE finished_at IS NULL`); got != "0" {
		t.Errorf("%s unfinished batches", got)
	}
	if got, want := q(`SELECT sum(rows) FROM series_batches WHERE batch_id = ?`, sum.BatchID), fmt.Sprint(sum.Readings); got != want {
		t.Errorf("series_batches rows sum %s, want %s", got, want)
	}
	if got, want := q(`SELECT count(*) FROM series_batches`), q(`SELECT count(*) FROM series`); got != want {
		t.Errorf("series_batches has %s rows for %s series", got, want)
	}
	// Every series has exactly the rows series_batches says.
	if got := q(`SELECT count(*) FROM series_batches sb WHERE rows <> (SELECT count(*) FROM readings r WHERE r.series_id = sb.series_id)`); got != "0" {
		t.Errorf("%s series with a wrong series_batches row count", got)
	}
	// Metadata: every well names its aquifer, the replaced sensor is recorded.
	if got := q(`SELECT count(*) FROM stations WHERE json_extract(metadata, '$.station_type') LIKE 'groundwater_well%' AND json_extract(metadata, '$.aquifer') IN ('karst', 'alluvial', 'sandstone')`); got != "28" {
		t.Errorf("%s wells with an aquifer, want 28", got)
	}
	if got := q(`SELECT json_extract(metadata, '$.sensor_replaced') FROM stations WHERE id = 'VOR-W09'`); got != "2019-05-21" {
		t.Errorf("VOR-W09 sensor_replaced = %s", got)
	}
	for _, k := range []string{"land_use", "sensor_model", "install_date", "basin"} {
		if got := q(`SELECT count(*) FROM stations WHERE json_extract(metadata, '$.` + k + `') IS NULL`); got != "0" {
			t.Errorf("%s stations without %s", got, k)
		}
	}
	// Qualifier flags are present.
	for _, flag := range []string{qEstimated, qProvisional, qSuspect} {
		if got := q(`SELECT count(*) FROM readings WHERE qualifier = ?`, flag); got == "0" {
			t.Errorf("no reading flagged %q", flag)
		}
	}
	// Phosphorus: censored results at the reporting limit in force (10 µg/L
	// before 2020, 5 from 2020), counted in the readings batch; Q02 is
	// mostly censored, Q01 and Q04 only partly.
	if got := q(`SELECT count(*) FROM readings r JOIN series s ON s.id = r.series_id WHERE r.censored IS NOT NULL AND (s.variable <> 'total_phosphorus' OR r.censored <> '<' OR r.value <> CASE WHEN r.t < 1577836800 THEN 10 ELSE 5 END)`); got != "0" {
		t.Errorf("%s censored readings off their reporting limit", got)
	}
	if got, want := q(`SELECT rows_censored FROM import_batches WHERE id = ?`, sum.BatchID), q(`SELECT count(censored) FROM readings`); got != want || got == "0" {
		t.Errorf("batch rows_censored %s, readings %s", got, want)
	}
	for st, wantMostly := range map[string]bool{"VOR-Q01": false, "VOR-Q02": true, "VOR-Q04": false} {
		if got := q(`SELECT 2 * count(censored) > count(*) AND count(censored) > 0 FROM readings_view WHERE station_id = ?`, st); (got == "1") != wantMostly {
			t.Errorf("%s mostly censored = %s, want %v", st, got, wantMostly)
		}
	}
	// Cadence: gauges hourly on the hour, logged wells daily at 06:00 UTC,
	// manual wells at irregular times.
	if got := q(`SELECT count(*) FROM readings_view v JOIN stations st ON st.id = v.station_id WHERE json_extract(st.metadata, '$.station_type') = 'river_gauge' AND t % 3600 <> 0`); got != "0" {
		t.Errorf("%s gauge readings off the hour", got)
	}
	if got := q(`SELECT count(*) FROM readings_view v JOIN stations st ON st.id = v.station_id WHERE json_extract(st.metadata, '$.station_type') = 'groundwater_well' AND t % 86400 <> 21600`); got != "0" {
		t.Errorf("%s logged well readings not at 06:00", got)
	}
	if got := q(`SELECT count(DISTINCT t % 86400) FROM readings_view WHERE station_id = 'VOR-M03'`); got == "1" {
		t.Error("manual readings all at the same time of day")
	}
	// The pumping decline of VOR-W06 shows in a plain least-squares slope.
	slope := q(`SELECT regr_slope(value, t) * 31557600 < -0.2 FROM readings_view WHERE station_id = 'VOR-W06'`)
	if slope != "1" {
		t.Errorf("VOR-W06 does not decline faster than 0.2 m/yr over the last 3 years")
	}
}

func TestTourQueriesRunOnDemo(t *testing.T) {
	// Long enough to include the year before the VOR-W09 sensor replacement.
	s, _ := buildDemo(t, Options{MaxYears: 7.5})
	steps := TourFor(func(string) bool { return true })
	if len(steps) < 5 || len(steps) > 8 {
		t.Errorf("tour with every function has %d steps; keep it to 5–8", len(steps))
	}
	if plain := TourFor(func(string) bool { return false }); len(plain) < 5 || len(plain) > 8 {
		t.Errorf("tour without trendsql functions has %d steps; keep it to 5–8", len(plain))
	}
	have := map[string]bool{}
	rows, err := s.DB.Query(`SELECT name FROM pragma_function_list`)
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var n string
		rows.Scan(&n)
		have[n] = true
	}
	rows.Close()
	for i, st := range TourFor(func(n string) bool { return have[n] }) {
		if st.Explain == "" || strings.Contains(st.Explain, "\n") {
			t.Errorf("step %d: explanation must be one line: %q", i+1, st.Explain)
		}
		rows, err := s.DB.Query(st.SQL)
		if err != nil {
			t.Errorf("step %d: %v\n%s", i+1, err, st.SQL)
			continue
		}
		// A NULL outside the qualifier column means a renamed JSON key or a
		// function returning nothing: the step would show ∅ to the user.
		cols, _ := rows.Columns()
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for k := range vals {
			ptrs[k] = &vals[k]
		}
		n := 0
		for rows.Next() {
			if err := rows.Scan(ptrs...); err != nil {
				t.Fatal(err)
			}
			for k, v := range vals {
				if v == nil && cols[k] != "qualifier" {
					t.Errorf("step %d row %d: column %s is NULL", i+1, n+1, cols[k])
				}
			}
			n++
		}
		if err := rows.Err(); err != nil {
			t.Errorf("step %d: %v", i+1, err)
		}
		rows.Close()
		if n == 0 {
			t.Errorf("step %d returned no rows on the demo store:\n%s", i+1, st.SQL)
		}
	}
}

func TestCreateDemoNeverDestroysData(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	opt := Options{Stations: 2, MaxYears: 0.1}

	// A store holding user data is refused without force, and left intact.
	path := filepath.Join(dir, "user.db")
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := s.DB.Exec(`INSERT INTO stations(id, name) VALUES ('MINE', 'user station')`); err != nil {
		t.Fatal(err)
	}
	s.Close()
	if _, err := Create(ctx, path, opt, false); !errors.Is(err, ErrStoreNotEmpty) || !strings.Contains(err.Error(), path) {
		t.Fatalf("Create over a store with data: err = %v, want ErrStoreNotEmpty naming the path", err)
	}
	s, err = store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	var n int
	s.DB.QueryRow(`SELECT count(*) FROM stations WHERE id = 'MINE'`).Scan(&n)
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Error(err)
	}
	s.Close()
	if n != 1 {
		t.Fatal("the refused demo build changed the user's store")
	}

	// With force the store is replaced by the demo.
	if _, err := Create(ctx, path, opt, true); err != nil {
		t.Fatalf("Create with force: %v", err)
	}
	s, err = store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	var mine, all int
	s.DB.QueryRow(`SELECT count(*) FILTER (WHERE id = 'MINE'), count(*) FROM stations`).Scan(&mine, &all)
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Error(err)
	}
	s.Close()
	if mine != 0 || all != 2 {
		t.Errorf("after a forced demo build: %d user stations, %d stations; want 0 and 2", mine, all)
	}

	// A freshly initialised (empty) store is filled without force.
	empty := filepath.Join(dir, "empty.db")
	s, err = store.Open(ctx, empty, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	if _, err := Create(ctx, empty, opt, false); err != nil {
		t.Errorf("Create into an empty store: %v", err)
	}

	// A file that is not a store is never replaced, even with force.
	other := filepath.Join(dir, "notes.txt")
	if err := os.WriteFile(other, []byte("field notes, not a database\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, force := range []bool{false, true} {
		if _, err := Create(ctx, other, opt, force); !errors.Is(err, ErrNotAStore) || !strings.Contains(err.Error(), "not a trendsql store") {
			t.Errorf("Create over a text file (force=%v): err = %v", force, err)
		}
	}
	if b, _ := os.ReadFile(other); string(b) != "field notes, not a database\n" {
		t.Error("the text file was changed")
	}
	// No temporary files are left behind.
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".demo-") {
			t.Errorf("temporary file left behind: %s", e.Name())
		}
	}
}

// An untouched demo store is rebuilt without force; once it holds anything
// else (an import of the user's, a summary run) it is refused.
func TestCreateDemoRebuildsOnlyUntouchedDemo(t *testing.T) {
	ctx := context.Background()
	path := filepath.Join(t.TempDir(), "demo.db")
	opt := Options{Stations: 2, MaxYears: 0.1}
	if _, err := Create(ctx, path, opt, false); err != nil {
		t.Fatal(err)
	}
	sum, err := Create(ctx, path, opt, false)
	if err != nil || !sum.ReplacedDemo {
		t.Fatalf("second build over an untouched demo: %+v, %v; want it rebuilt", sum, err)
	}
	s, err := store.Open(ctx, path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := s.DB.Exec(`INSERT INTO import_batches(kind, source, started_at) VALUES ('readings', '/home/me/gauges.csv', '2026-01-01T00:00:00Z')`); err != nil {
		t.Fatal(err)
	}
	s.Close()
	if _, err := Create(ctx, path, opt, false); !errors.Is(err, ErrStoreNotEmpty) {
		t.Fatalf("build over a demo store with a user's import: err = %v, want ErrStoreNotEmpty", err)
	}
	s, err = store.Open(ctx, path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var n int
	s.DB.QueryRow(`SELECT count(*) FROM import_batches WHERE source = '/home/me/gauges.csv'`).Scan(&n)
	if n != 1 {
		t.Fatal("the refused build changed the store")
	}
	if err := s.IntegrityCheck(ctx); err != nil {
		t.Fatal(err)
	}
}
