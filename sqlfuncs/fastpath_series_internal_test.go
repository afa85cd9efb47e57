package sqlfuncs

// The trend_slope adapter (fastpath_series.go) against the public-API
// implementation it replaces on each connection: the public aggregate is
// driven directly here (MakeAggregate, Step with the driver's boxed values,
// WindowValue), the adapter through SQL. Results and error texts must be
// identical.

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"modernc.org/sqlite"
)

func fastSeriesDB(t *testing.T) *sql.DB {
	t.Helper()
	if err := Register(); err != nil {
		t.Fatal(err)
	}
	db, err := sql.Open("sqlite", "file:"+filepath.Join(t.TempDir(), "fs.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	if _, err := db.Exec(`CREATE TABLE r (g INTEGER, t, y)`); err != nil {
		t.Fatal(err)
	}
	return db
}

// public runs the public trend_slope over rows (each a (t, y) pair).
func public(t *testing.T, rows [][2]driver.Value) (driver.Value, error) {
	t.Helper()
	mu.Lock()
	d := definitions["trend_slope"]
	mu.Unlock()
	agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rows {
		if err := agg.Step(nil, []driver.Value{r[0], r[1]}); err != nil {
			return nil, err
		}
	}
	return agg.WindowValue(nil)
}

func TestFastSeriesActive(t *testing.T) {
	if strings.EqualFold(os.Getenv(FastPathEnv), "off") {
		t.Skip(FastPathEnv + "=off")
	}
	db := fastSeriesDB(t)
	var n int
	if err := db.QueryRow(`SELECT count(*) FROM r`).Scan(&n); err != nil {
		t.Fatal(err)
	}
	if active, why := FastPathStatus(); !active {
		t.Fatalf("THE C-LEVEL ADAPTER IS OFF: %s", why)
	}
	fastSeriesFactories.Lock()
	defer fastSeriesFactories.Unlock()
	if _, ok := fastSeriesFactories.byName["trend_slope"]; !ok {
		t.Fatal("trend_slope is not a series aggregate without options any more: fastpath_series.go no longer applies to it")
	}
}

func TestFastSeriesMatchesPublic(t *testing.T) {
	db := fastSeriesDB(t)
	// Three groups: in order with NULL values; shuffled (the sort path) with
	// integer and text times and numeric-text values; two rows only (NULL).
	groups := map[int64][][2]driver.Value{}
	for i := 0; i < 500; i++ {
		tt := int64(1420070400 + 3600*i)
		var y driver.Value = 10 + 0.01*float64(i) + math.Sin(float64(i)/7)
		if i%37 == 0 {
			y = nil
		}
		groups[1] = append(groups[1], [2]driver.Value{tt, y})
	}
	for _, i := range []int{5, 3, 9, 1, 7, 2, 8, 0, 6, 4} {
		var tv driver.Value = float64(1600000000 + 86400*i)
		if i%3 == 0 {
			tv = fmt.Sprintf("2020-09-%02dT12:26:40Z", 13+i)
		}
		var y driver.Value = float64(i*i) / 3
		if i == 4 {
			y = " 5.25 "
		}
		groups[2] = append(groups[2], [2]driver.Value{tv, y})
	}
	groups[3] = [][2]driver.Value{{int64(10), 1.0}, {int64(20), 2.0}}
	tx, _ := db.Begin()
	for g, rows := range groups {
		for _, r := range rows {
			if _, err := tx.Exec(`INSERT INTO r VALUES (?, ?, ?)`, g, r[0], r[1]); err != nil {
				t.Fatal(err)
			}
		}
	}
	tx.Commit()
	for g := int64(1); g <= 3; g++ {
		want, werr := public(t, groups[g])
		var got any
		err := db.QueryRow(`SELECT trend_slope(t, y) FROM r WHERE g = ? ORDER BY rowid`, g).Scan(&got)
		if werr != nil || err != nil {
			t.Fatalf("group %d: errors %v / %v", g, werr, err)
		}
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Errorf("group %d: adapter %#v, public %#v", g, got, want)
		}
	}
	// GROUP BY over all groups at once.
	rows, err := db.Query(`SELECT g, trend_slope(t, y) FROM r GROUP BY g ORDER BY g`)
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var g int64
		var got any
		rows.Scan(&g, &got)
		want, _ := public(t, groups[g])
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Errorf("GROUP BY group %d: adapter %#v, public %#v", g, got, want)
		}
	}
	rows.Close()
	// A sliding window frame: inverse steps go through the public
	// WindowInverse.
	wrows, err := db.Query(`SELECT trend_slope(t, y) OVER (ORDER BY t ROWS BETWEEN 20 PRECEDING AND CURRENT ROW) FROM r WHERE g = 1 ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	i := 0
	for wrows.Next() {
		var got any
		wrows.Scan(&got)
		lo := max(0, i-20)
		want, _ := public(t, groups[1][lo:i+1])
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Errorf("window row %d: adapter %#v, public %#v", i, got, want)
		}
		i++
	}
	wrows.Close()
	if i != 500 {
		t.Fatalf("%d window rows", i)
	}
	// Empty input.
	var got any
	if err := db.QueryRow(`SELECT trend_slope(t, y) FROM r WHERE 0`).Scan(&got); err != nil || got != nil {
		t.Errorf("empty: %v %v", got, err)
	}
}

func TestFastSeriesErrorsMatchPublic(t *testing.T) {
	db := fastSeriesDB(t)
	cases := [][][2]driver.Value{
		{{int64(5), 1.0}, {int64(5), 2.0}, {int64(6), 3.0}},       // tied times
		{{int64(5), 1.0}, {nil, 2.0}},                             // NULL time
		{{int64(5), 1.0}, {int64(6), "abc"}},                      // non-numeric value
		{{"not a time", 1.0}, {int64(6), 2.0}},                    // bad time text
		{{int64(5), 1.0}, {int64(6), []byte{1}}, {int64(7), 1.0}}, // blob value
	}
	for k, c := range cases {
		db.Exec(`DELETE FROM r`)
		for _, r := range c {
			if _, err := db.Exec(`INSERT INTO r VALUES (1, ?, ?)`, r[0], r[1]); err != nil {
				t.Fatal(err)
			}
		}
		_, werr := public(t, c)
		var got any
		err := db.QueryRow(`SELECT trend_slope(t, y) FROM r`).Scan(&got)
		if werr == nil || err == nil {
			t.Fatalf("case %d: errors %v / %v", k, werr, err)
		}
		if !strings.Contains(err.Error(), werr.Error()) {
			t.Errorf("case %d: adapter error %q, public %q", k, err, werr)
		}
	}
}

// The adapter's Step makes no per-row allocation: over 20,000 rows in one
// group only the buffer growth allocates (about 2·log2(20000) slices).
func TestFastSeriesNoAllocationsPerRow(t *testing.T) {
	db := fastSeriesDB(t)
	if _, err := db.Exec(`WITH RECURSIVE s(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM s WHERE i < 20000)
		INSERT INTO r SELECT 1, i * 3600, (i * 7919) % 1000 / 10.0 FROM s`); err != nil {
		t.Fatal(err)
	}
	count := func(q string) uint64 {
		var v any
		db.QueryRow(q).Scan(&v)
		runtime.GC()
		var m0, m1 runtime.MemStats
		runtime.ReadMemStats(&m0)
		if err := db.QueryRowContext(context.Background(), q).Scan(&v); err != nil {
			t.Fatal(err)
		}
		runtime.ReadMemStats(&m1)
		return m1.Mallocs - m0.Mallocs
	}
	base := count(`SELECT avg(y) FROM r`)
	fast := count(`SELECT trend_slope(t, y) FROM r`)
	if active, why := FastPathStatus(); !active {
		t.Skip("adapter inactive: " + why)
	}
	if fast > base+200 {
		t.Fatalf("trend_slope made %d Go allocations over 20000 rows (avg() %d): the Step path allocates per row", fast, base)
	}
}
