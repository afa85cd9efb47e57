package sqlfuncs_test

// Tests of the C-level regr_slope adapter (fastpath.go). If TestFastPathActive
// fails after a driver or libc upgrade, regr_slope still works (public-API
// fallback) but is slower and allocates per row: re-verify package
// rawsqlite against the new versions (see its package documentation).

import (
	"context"
	"database/sql"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"

	"trendsql/sqlfuncs"
	"trendsql/store"
	"trendsql/store/benchmark"
	"trendsql/store/storetest"
)

func fastpathStore(t *testing.T) *store.Store {
	t.Helper()
	ctx := context.Background()
	dir := t.TempDir()
	s := storetest.Open(t)
	csv := filepath.Join(dir, "r.csv")
	if _, err := benchmark.WriteCSV(csv, benchmark.Data{Series: 3, PerSeries: 700, Seed: 7}); err != nil {
		t.Fatal(err)
	}
	if _, err := benchmark.LoadCSV(ctx, s, csv); err != nil {
		t.Fatal(err)
	}
	return s
}

func TestFastPathActive(t *testing.T) {
	if strings.EqualFold(os.Getenv(sqlfuncs.FastPathEnv), "off") {
		t.Skip(sqlfuncs.FastPathEnv + "=off: the adapter is disabled on purpose")
	}
	s := fastpathStore(t)
	var v float64
	if err := s.DB.QueryRow(`SELECT regr_slope(column1, column2) FROM (VALUES (1.0, 0), (3.0, 1))`).Scan(&v); err != nil {
		t.Fatal(err)
	}
	active, why := sqlfuncs.FastPathStatus()
	if !active {
		t.Fatalf("THE ZERO-ALLOCATION regr_slope ADAPTER IS OFF (%s). A driver or libc upgrade probably changed what sqlfuncs/rawsqlite relies on; re-verify it (see its package documentation).", why)
	}
	if v != 2 {
		t.Fatalf("regr_slope through the adapter = %v, want 2", v)
	}
}

// regr_slope is defined as regr_sxy / regr_sxx (SQL:2003), and all three
// share one co-moment state: grouped and windowed, the quotient must be the
// slope bit for bit. (The comparison with the public-API implementation
// itself is TestFastRegrMatchesPublic, an internal test.)
func TestFastPathMatchesPublic(t *testing.T) {
	s := fastpathStore(t)
	queries := []struct{ fast, public string }{
		{`SELECT series_id, regr_slope(value, t) FROM readings GROUP BY series_id ORDER BY series_id`,
			`SELECT series_id, regr_sxy(value, t) / regr_sxx(value, t) FROM readings GROUP BY series_id ORDER BY series_id`},
		{`SELECT series_id, t, regr_slope(value, t) OVER w FROM readings
		  WINDOW w AS (PARTITION BY series_id ORDER BY t ROWS BETWEEN 24 PRECEDING AND CURRENT ROW) ORDER BY series_id, t`,
			`SELECT series_id, t, regr_sxy(value, t) OVER w / regr_sxx(value, t) OVER w FROM readings
		  WINDOW w AS (PARTITION BY series_id ORDER BY t ROWS BETWEEN 24 PRECEDING AND CURRENT ROW) ORDER BY series_id, t`},
	}
	for _, q := range queries {
		a := allRows(t, s.DB, q.fast)
		b := allRows(t, s.DB, q.public)
		if len(a) != len(b) || len(a) == 0 {
			t.Fatalf("row counts %d vs %d", len(a), len(b))
		}
		for i := range a {
			if a[i] != b[i] {
				t.Fatalf("row %d: adapter %q, public path %q\n%s", i, a[i], b[i], q.fast)
			}
		}
	}
}

func allRows(t *testing.T, db *sql.DB, q string) []string {
	t.Helper()
	rows, err := db.Query(q)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	cols, _ := rows.Columns()
	vals := make([]any, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	var out []string
	for rows.Next() {
		if err := rows.Scan(ptrs...); err != nil {
			t.Fatal(err)
		}
		var b strings.Builder
		for _, v := range vals {
			switch x := v.(type) {
			case float64:
				b.WriteString(strconv.FormatUint(math.Float64bits(x), 16))
			case nil:
				b.WriteString("NULL")
			default:
				b.WriteString(toString(x))
			}
			b.WriteByte('|')
		}
		out = append(out, b.String())
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

func toString(v any) string {
	switch x := v.(type) {
	case int64:
		return strconv.FormatInt(x, 10)
	case string:
		return x
	case []byte:
		return string(x)
	}
	return "?"
}

func TestFastPathNullsTextAndErrors(t *testing.T) {
	s := fastpathStore(t)
	cases := []struct {
		q    string
		want any // float64, nil
	}{
		// SQL:2003 10.9: pairs with a NULL are ignored (common practice).
		{`SELECT regr_slope(column1, column2) FROM (VALUES (1.0, 1), (NULL, 2), (3.0, 3), (5.0, NULL))`, 1.0},
		{`SELECT regr_slope(column1, column2) FROM (VALUES (NULL, 1), (NULL, 2))`, nil},
		{`SELECT regr_slope(column1, column2) FROM (VALUES (1.0, 1)) WHERE 0`, nil},
		{`SELECT regr_slope(column1, column2) FROM (VALUES (1.0, 5), (2.0, 5))`, nil}, // Sxx = 0
		{`SELECT regr_slope(column1, column2) FROM (VALUES ('2.5', 1), (' 4.5 ', '2'))`, 2.0},
		// An exact line y = 3 − 0.5 x (common practice: least squares
		// reproduces an exact line).
		{`WITH RECURSIVE s(v) AS (SELECT 1 UNION ALL SELECT v + 1 FROM s WHERE v < 10) SELECT regr_slope(3 - 0.5 * v, v) FROM s`, -0.5},
	}
	for _, c := range cases {
		var got any
		err := s.DB.QueryRow(c.q).Scan(&got)
		if err != nil {
			t.Fatalf("%s: %v", c.q, err)
		}
		switch w := c.want.(type) {
		case nil:
			if got != nil {
				t.Errorf("%s = %v, want NULL", c.q, got)
			}
		case float64:
			g, ok := got.(float64)
			if !ok || math.Abs(g-w) > 1e-12*math.Abs(w) {
				t.Errorf("%s = %v, want %v", c.q, got, w)
			}
		}
	}
	for _, q := range []string{
		`SELECT regr_slope(column1, column2) FROM (VALUES ('abc', 1), (2.0, 2))`,
		`SELECT regr_slope(column1, column2) FROM (VALUES (1.0, x'00'), (2.0, 2))`,
		`SELECT regr_slope(1e308 * 10, 1)`,
	} {
		var got any
		err := s.DB.QueryRow(q).Scan(&got)
		if err == nil || !strings.Contains(err.Error(), "regr_slope: argument") {
			t.Errorf("%s: error %v, want one naming regr_slope and the argument", q, err)
		}
	}
}

// The adapter's Step path must not allocate on the Go heap: the whole
// GROUP BY query over 2100 rows may allocate only what database/sql needs
// per statement and result row, the same as for the built-in avg().
func TestFastPathNoAllocationsPerRow(t *testing.T) {
	if active, why := sqlfuncs.FastPathStatus(); !active && why != "no connection opened yet" {
		t.Skip("adapter inactive: " + why)
	}
	s := fastpathStore(t)
	count := func(q string) uint64 {
		allRows(t, s.DB, q) // warm up
		runtime.GC()
		var m0, m1 runtime.MemStats
		runtime.ReadMemStats(&m0)
		rows, err := s.DB.Query(q)
		if err != nil {
			t.Fatal(err)
		}
		for rows.Next() {
		}
		rows.Close()
		runtime.ReadMemStats(&m1)
		return m1.Mallocs - m0.Mallocs
	}
	base := count(`SELECT series_id, avg(value) FROM readings GROUP BY series_id`)
	fast := count(`SELECT series_id, regr_slope(value, t) FROM readings GROUP BY series_id`)
	if active, why := sqlfuncs.FastPathStatus(); !active {
		t.Skip("adapter inactive: " + why)
	}
	// 2100 input rows; the public path makes 2 allocations per row (4200).
	if fast > base+50 {
		t.Fatalf("regr_slope query made %d Go allocations, avg() %d: the adapter allocates per row", fast, base)
	}
}

// Live cross-check of the adapter's slope against numpy.polyfit (Debian
// python3-numpy 1.24.2: numpy.polyfit(t, value, 1)[0]) on generated series.
func TestFastPathAgainstNumpy(t *testing.T) {
	const py = "/usr/bin/python3"
	if _, err := exec.Command(py, "-c", "import numpy").CombinedOutput(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI: %s with numpy is required: %v", py, err)
		}
		t.Skipf("%s with numpy not available: %v", py, err)
	}
	s := fastpathStore(t)
	rows, err := s.DB.Query(`SELECT t, value FROM readings WHERE series_id = 2 ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	var tb, yb strings.Builder
	for rows.Next() {
		var tt int64
		var v float64
		if err := rows.Scan(&tt, &v); err != nil {
			t.Fatal(err)
		}
		tb.WriteString(strconv.FormatInt(tt, 10) + " ")
		yb.WriteString(strconv.FormatFloat(v, 'g', -1, 64) + " ")
	}
	rows.Close()
	script := "import numpy,sys\nt=numpy.array(sys.argv[1].split(),float)\ny=numpy.array(sys.argv[2].split(),float)\nprint(repr(numpy.polyfit(t,y,1)[0]))"
	out, err := exec.Command(py, "-c", script, tb.String(), yb.String()).Output()
	if err != nil {
		t.Fatal(err)
	}
	want, err := strconv.ParseFloat(strings.TrimSpace(string(out)), 64)
	if err != nil {
		t.Fatal(err)
	}
	var got float64
	if err := s.DB.QueryRow(`SELECT regr_slope(value, t) FROM readings WHERE series_id = 2`).Scan(&got); err != nil {
		t.Fatal(err)
	}
	if math.Abs(got-want) > 1e-9*math.Abs(want) {
		t.Fatalf("regr_slope = %.17g, numpy.polyfit = %.17g", got, want)
	}
}
