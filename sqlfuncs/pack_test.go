package sqlfuncs_test

import (
	"fmt"
	"testing"

	"trendsql/sqlfuncs"
	"trendsql/store/storetest"
)

// The internal series reader returns the rows sorted by t with NULL values
// skipped, round-trips exactly through UnpackSeries (also for values near
// 1.7e9 and with many digits), rejects tied times like every series
// aggregate, and is not listed for users.
func TestPackSeries(t *testing.T) {
	s := openACFStore(t)
	if _, err := s.DB.Exec(`INSERT INTO lagobs VALUES
		(1, 1700000300, 0.1), (1, 1700000100, 1.7e9), (1, 1700000200, NULL), (1, 1700000000, -2.718281828459045),
		(2, 5, 1), (2, 5, 2)`); err != nil {
		t.Fatal(err)
	}
	var b []byte
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 1`).Scan(&b); err != nil {
		t.Fatal(err)
	}
	tt, yy, err := sqlfuncs.UnpackSeries(b, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	wantT := []float64{1700000000, 1700000100, 1700000300}
	wantY := []float64{-2.718281828459045, 1.7e9, 0.1}
	if len(tt) != 3 || len(yy) != 3 {
		t.Fatalf("got %v %v", tt, yy)
	}
	for i := range wantT {
		if tt[i] != wantT[i] || yy[i] != wantY[i] {
			t.Errorf("row %d: (%v, %v), want (%v, %v)", i, tt[i], yy[i], wantT[i], wantY[i])
		}
	}
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 2`).Scan(&b); err == nil {
		t.Error("tied times: no error")
	}
	var null []byte
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.PackSeriesFunction + `(t, y) FROM lagobs WHERE g = 3`).Scan(&null); err != nil || null != nil {
		t.Errorf("no rows: %v, %v; want NULL", null, err)
	}
	if _, _, err := sqlfuncs.UnpackSeries(make([]byte, 17), nil, nil); err == nil {
		t.Error("UnpackSeries accepted 17 bytes")
	}
	for _, d := range sqlfuncs.List() {
		if d.Name == sqlfuncs.PackSeriesFunction {
			t.Error("the internal reader is listed for users")
		}
	}
}

// The internal qualifier counter agrees with SQLite's own GROUP BY count
// of the non-empty qualifiers (NULL and ” not counted, a number counted
// under its text), as a plain aggregate and over a sliding window frame
// (which exercises row removal); a group without qualifiers gives NULL.
func TestQualifierCounts(t *testing.T) {
	s := storetest.OpenScratch(t, `CREATE TABLE q (g INTEGER, i INTEGER, qual)`)
	quals := []any{nil, "E", "", "P", "E", nil, "E", 7, "P", "E", nil, ""}
	for i, q := range quals {
		if _, err := s.DB.Exec(`INSERT INTO q VALUES (1, ?, ?)`, i, q); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := s.DB.Exec(`INSERT INTO q VALUES (2, 0, NULL), (2, 1, '')`); err != nil {
		t.Fatal(err)
	}
	want := func(where string) map[string]int {
		rows, err := s.DB.Query(`SELECT CAST(qual AS TEXT), count(*) FROM q WHERE ` + where + ` AND qual IS NOT NULL AND qual <> '' GROUP BY 1`)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		m := map[string]int{}
		for rows.Next() {
			var k string
			var n int
			if err := rows.Scan(&k, &n); err != nil {
				t.Fatal(err)
			}
			m[k] = n
		}
		return m
	}
	check := func(label string, got []byte, w map[string]int) {
		t.Helper()
		m, total, err := sqlfuncs.UnpackQualifierCounts(got)
		if err != nil {
			t.Fatalf("%s: %v", label, err)
		}
		wantTotal := 0
		for k, n := range w {
			wantTotal += n
			if m[k] != n {
				t.Errorf("%s: %q counted %d, want %d (got %s)", label, k, m[k], n, got)
			}
		}
		if len(m) != len(w) || total != wantTotal {
			t.Errorf("%s: got %s (total %d), want %v", label, got, total, w)
		}
	}
	var got []byte
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.QualifierCountsFunction + `(qual) FROM q WHERE g = 1`).Scan(&got); err != nil {
		t.Fatal(err)
	}
	check("whole group", got, want("g = 1"))
	if string(got) != `{"7":1,"E":4,"P":2}` {
		t.Errorf("whole group: %s", got)
	}
	if err := s.DB.QueryRow(`SELECT ` + sqlfuncs.QualifierCountsFunction + `(qual) FROM q WHERE g = 2`).Scan(&got); err != nil || got != nil {
		t.Errorf("no qualifiers: %s, %v; want NULL", got, err)
	}
	rows, err := s.DB.Query(`SELECT i, ` + sqlfuncs.QualifierCountsFunction + `(qual) OVER (ORDER BY i ROWS BETWEEN 3 PRECEDING AND CURRENT ROW) FROM q WHERE g = 1 ORDER BY i`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	for rows.Next() {
		var i int
		var w []byte
		if err := rows.Scan(&i, &w); err != nil {
			t.Fatal(err)
		}
		check(fmt.Sprintf("frame ending at %d", i), w, want(fmt.Sprintf("g = 1 AND i BETWEEN %d AND %d", i-3, i)))
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
}
