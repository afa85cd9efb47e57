package store_test

import (
	"context"
	"database/sql"
	"errors"
	"path/filepath"
	"strings"
	"testing"

	"trendsql/store"
	"trendsql/store/storetest"
)

// censorStore builds a store with an uncensored series (id 1) and, when
// censored is set, a second series (id 2) with two readings marked '<'.
func censorStore(t *testing.T, censored bool) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "cens.db")
	s, err := store.Open(context.Background(), path, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	ts := make([]int64, 12)
	ys := make([]float64, 12)
	for i := range ts {
		ts[i] = 1_600_000_000 + int64(i)*86400
		ys[i] = float64(i%5) + 0.1*float64(i)
	}
	storetest.InsertSeries(t, s.DB, "S1", "level", ts, ys)
	storetest.InsertSeries(t, s.DB, "S2", "tp", ts, ys)
	if censored {
		if _, err := s.DB.Exec(`UPDATE readings SET censored = '<', value = 5 WHERE series_id = 2 AND t IN (?, ?)`, ts[1], ts[4]); err != nil {
			t.Fatal(err)
		}
	}
	s.Close()
	return path
}

// runUser prepares text through PrepareUser on one connection and returns
// the first column of the first row.
func runUser(t *testing.T, s *store.Store, text string) (any, error) {
	t.Helper()
	ctx := context.Background()
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	st, err := s.PrepareUser(ctx, conn, text)
	if err != nil {
		return nil, err
	}
	defer st.Close()
	var v any
	err = st.QueryRowContext(ctx).Scan(&v)
	if errors.Is(err, sql.ErrNoRows) {
		err = nil
	}
	return v, err
}

// TestCensoredReadRefused: on a store holding censored readings, a
// statement that hands readings.value to a function that does not handle
// censoring, without reading readings.censored, is refused before it runs
// with the count and the alternatives; read-only and writable user stores
// alike.
func TestCensoredReadRefused(t *testing.T) {
	path := censorStore(t, true)
	refused := []struct{ sql, fn string }{
		{`SELECT trend_fit(t, value) FROM readings WHERE series_id = 2`, "trend_fit"},
		{`SELECT trend_fit(t, value) FROM readings WHERE series_id = 1`, "trend_fit"}, // the test is per statement, not per series
		{`SELECT series_id, sample_acf(t, value, 1) FROM readings GROUP BY series_id`, "sample_acf"},
		{`SELECT ljung_box(t, value, 3) FROM readings`, "ljung_box"},
		{`SELECT correlogram(t, value, 3) FROM readings`, "correlogram"},
		{`SELECT mann_kendall(t, value) FROM readings`, "mann_kendall"},
		{`SELECT regr_slope(value, t) FROM readings`, "regr_slope"},
		{`WITH x AS (SELECT t, value FROM readings) SELECT TREND_SLOPE(t, value) FROM x`, "trend_slope"},
		{`SELECT trend_fit(t, value_number) FROM readings_view WHERE series_id = 2`, "trend_fit"},
		{`INSERT INTO stations(id, name) SELECT 'X', trend_slope(t, value) FROM readings`, "trend_slope"},
	}
	for _, opt := range []store.Options{{ReadOnly: true}, {UserSQL: true}, {UserSQL: true, AllowUnsafePragmas: true}} {
		s, err := store.Open(context.Background(), path, opt)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range refused {
			if opt.ReadOnly && strings.HasPrefix(c.sql, "INSERT") {
				continue
			}
			_, err := runUser(t, s, c.sql)
			var ce *store.CensoredReadError
			if !errors.As(err, &ce) || !errors.Is(err, store.ErrCensoredRead) {
				t.Errorf("%+v: %s: got %v, want a CensoredReadError", opt, c.sql, err)
				continue
			}
			if ce.Function != c.fn || ce.Censored != 2 {
				t.Errorf("%s: refusal names %s and %d censored readings, want %s and 2", c.sql, ce.Function, ce.Censored, c.fn)
			}
			msg := err.Error()
			for _, want := range []string{c.fn, "2 censored readings", "readings_view", "censored IS NULL", "censored_mann_kendall", "censored_seasonal_kendall", "censored_sen_slope"} {
				if !strings.Contains(msg, want) {
					t.Errorf("%s: message lacks %q: %s", c.sql, want, msg)
				}
			}
			if store.IsNotAuthorized(err) {
				t.Errorf("%s: refusal reads as SQLite's bare not authorized: %v", c.sql, err)
			}
		}
		if !opt.ReadOnly {
			if v, err := runUser(t, s, `SELECT count(*) FROM stations WHERE id = 'X'`); err != nil || v.(int64) != 0 {
				t.Errorf("refused INSERT ... SELECT stored a row (count %v, %v)", v, err)
			}
		}
		s.Close()
	}
}

// TestCensoredReadAllowed: the same functions run when the statement reads
// the censoring mark (an explicit filter or substitute), through
// readings_view (whose text '<5' the functions refuse row by row), on
// statements that call none of them, and on a store without censored
// readings.
func TestCensoredReadAllowed(t *testing.T) {
	s := storetest.OpenReadOnly(t, censorStore(t, true))
	slope := func(text string) float64 {
		t.Helper()
		v, err := runUser(t, s, text)
		if err != nil {
			t.Fatalf("%s: %v", text, err)
		}
		f, ok := v.(float64)
		if !ok {
			t.Fatalf("%s: got %v (%T), want a number", text, v, v)
		}
		return f
	}
	// Series 1 has no censored readings: the explicit filter does not change
	// its slope, and readings_view gives the same numbers.
	a := slope(`SELECT trend_slope(t, value) FROM readings WHERE series_id = 1 AND censored IS NULL`)
	b := slope(`SELECT trend_slope(t, value) FROM readings_view WHERE series_id = 1`)
	if a != b {
		t.Errorf("filtered table slope %v, view slope %v", a, b)
	}
	// Series 2 without its two censored readings: filter in WHERE, in a
	// HAVING clause's subquery or a substitute; and the censored family.
	filtered := slope(`SELECT trend_slope(t, value) FROM readings WHERE series_id = 2 AND censored IS NULL`)
	fromView := slope(`SELECT trend_slope(t, value_number) FROM readings_view WHERE series_id = 2 AND censored IS NULL`)
	if filtered != fromView {
		t.Errorf("filtered slope %v, filtered view slope %v", filtered, fromView)
	}
	half := slope(`SELECT trend_slope(t, CASE WHEN censored = '<' THEN value / 2 ELSE value END) FROM readings WHERE series_id = 2`)
	if half == filtered {
		t.Errorf("substitute and filter give the same slope %v", half)
	}
	for _, text := range []string{
		`SELECT censored_mann_kendall(t, value, censored) FROM readings WHERE series_id = 2`,
		`SELECT censored_sen_slope(t, value, censored) FROM readings WHERE series_id = 1`,
		`SELECT avg(value) FROM readings`,
		`SELECT trend_slope(t, value) FROM readings_view WHERE series_id = 1`,
	} {
		if _, err := runUser(t, s, text); err != nil {
			t.Errorf("%s: %v", text, err)
		}
	}
	// Through readings_view the function itself refuses the text values.
	_, err := runUser(t, s, `SELECT trend_fit(t, value) FROM readings_view WHERE series_id = 2`)
	if err == nil || errors.Is(err, store.ErrCensoredRead) || !strings.Contains(err.Error(), "2 of 12 values are censored") {
		t.Errorf("trend_fit on readings_view: got %v, want the function's own refusal naming 2 of 12", err)
	}

	clean := storetest.OpenReadOnly(t, censorStore(t, false))
	for _, text := range []string{
		`SELECT trend_fit(t, value) FROM readings WHERE series_id = 2`,
		`SELECT trend_slope(t, value) FROM readings WHERE series_id = 1`,
	} {
		if v, err := runUser(t, clean, text); err != nil || v == nil {
			t.Errorf("store without censored readings: %s: %v, %v", text, v, err)
		}
	}
}

// TestCensoredCountUsesIndex: the count behind the refusal reads the partial
// index of censored readings, not the whole table.
func TestCensoredCountUsesIndex(t *testing.T) {
	s := storetest.OpenReadOnly(t, censorStore(t, true))
	rows, err := s.DB.Query(`EXPLAIN QUERY PLAN SELECT count(*) FROM readings WHERE censored IS NOT NULL`)
	if err != nil {
		t.Fatal(err)
	}
	var plan []string
	for _, r := range storetest.ScanAll(t, rows) {
		plan = append(plan, r[len(r)-1].(string))
	}
	if !strings.Contains(strings.Join(plan, "\n"), "readings_censored") {
		t.Errorf("plan does not use readings_censored: %v", plan)
	}
	if n, err := store.CensoredReadings(context.Background(), s.DB); err != nil || n != 2 {
		t.Errorf("CensoredReadings = %d, %v; want 2", n, err)
	}
}
