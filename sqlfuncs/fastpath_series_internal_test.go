package sqlfuncs

// The series and regression adapters (fastpath_series.go, fastpath.go) against the public-API
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
	args := make([][]driver.Value, len(rows))
	for i, r := range rows {
		args[i] = []driver.Value{r[0], r[1]}
	}
	return publicAgg(t, "trend_slope", args)
}

// publicAgg runs the public-API aggregate name over the rows' arguments.
func publicAgg(t *testing.T, name string, rows [][]driver.Value) (driver.Value, error) {
	t.Helper()
	registryMu.Lock()
	d := definitions[name]
	registryMu.Unlock()
	agg, err := d.impl.MakeAggregate(sqlite.FunctionContext{})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rows {
		if err := agg.Step(nil, r); err != nil {
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
	served := strings.Join(functionNames(fastFunctions().series), " ")
	for _, name := range []string{"trend_slope", "trend_fit", "sample_acf", "correlogram", "ljung_box", "mann_kendall", "sen_slope"} {
		if !strings.Contains(" "+served+" ", " "+name+" ") {
			t.Errorf("%s is not served by the adapter (served: %s)", name, served)
		}
	}
}

// Functions with option arguments: the adapter compares options without
// boxing; results and the error for an option that changes within a group
// must be the public ones.
func TestFastSeriesOptionsMatchPublic(t *testing.T) {
	db := fastSeriesDB(t)
	var base [][]driver.Value
	for i := 0; i < 400; i++ {
		var y driver.Value = 5 + 0.002*float64(i) + math.Cos(float64(i)/5)
		if i%41 == 0 {
			y = nil
		}
		base = append(base, []driver.Value{int64(1420070400 + 3600*i), y})
	}
	tx, _ := db.Begin()
	for _, r := range base {
		if _, err := tx.Exec(`INSERT INTO r VALUES (1, ?, ?)`, r[0], r[1]); err != nil {
			t.Fatal(err)
		}
	}
	tx.Commit()
	cases := []struct {
		name string
		opts []driver.Value
		sql  string
	}{
		{"sample_acf", []driver.Value{int64(1)}, "sample_acf(t, y, 1)"},
		{"correlogram", []driver.Value{int64(5)}, "correlogram(t, y, 5)"},
		{"ljung_box", []driver.Value{int64(6)}, "ljung_box(t, y, 6)"},
		{"ljung_box", []driver.Value{int64(6), int64(1)}, "ljung_box(t, y, 6, 1)"},
		{"mann_kendall", nil, "mann_kendall(t, y)"},
		{"sen_slope", []driver.Value{0.9}, "sen_slope(t, y, 0.9)"},
		{"trend_fit", []driver.Value{"period=1y,harmonics=1"}, "trend_fit(t, y, 'period=1y,harmonics=1')"},
	}
	for _, c := range cases {
		rows := make([][]driver.Value, len(base))
		for i, r := range base {
			rows[i] = append(append([]driver.Value{}, r...), c.opts...)
		}
		want, werr := publicAgg(t, c.name, rows)
		var got any
		err := db.QueryRow(`SELECT ` + c.sql + ` FROM r`).Scan(&got)
		if werr != nil || err != nil {
			t.Fatalf("%s: errors %v / %v", c.sql, werr, err)
		}
		if fmt.Sprintf("%v", got) != fmt.Sprintf("%v", want) {
			t.Errorf("%s: adapter %v, public %v", c.sql, got, want)
		}
	}
	// An option that changes within the group.
	rows := make([][]driver.Value, len(base))
	for i, r := range base {
		lag := int64(1)
		if i >= 200 {
			lag = 2
		}
		rows[i] = append(append([]driver.Value{}, r...), lag)
	}
	_, werr := publicAgg(t, "sample_acf", rows)
	var got any
	err := db.QueryRow(`SELECT sample_acf(t, y, CASE WHEN t >= 1420070400 + 3600 * 200 THEN 2 ELSE 1 END) FROM r`).Scan(&got)
	if werr == nil || err == nil || !strings.Contains(err.Error(), werr.Error()) {
		t.Errorf("changing option: adapter %v, public %v", err, werr)
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

// liveAggregates counts the adapter's groups still holding a slot.
func liveAggregates() int { return seriesGroups.Live() }

func TestFastSeriesErrorsMatchPublic(t *testing.T) {
	db := fastSeriesDB(t)
	defer func() {
		// Every group's slot is released, also after errors: SQLite
		// finalizes aggregate contexts when a statement is reset.
		if n := liveAggregates(); n != 0 {
			t.Errorf("%d adapter slots still held after the statements ended", n)
		}
	}()
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
	// A statement abandoned half-way releases its groups' slots.
	ctx, cancel := context.WithCancel(context.Background())
	rows, err := db.QueryContext(ctx, `SELECT trend_slope(t, y) OVER (ORDER BY t ROWS 50 PRECEDING) FROM r`)
	if err != nil {
		t.Fatal(err)
	}
	rows.Next()
	cancel()
	rows.Close()
	if n := liveAggregates(); n != 0 {
		t.Errorf("%d adapter slots held after an abandoned statement", n)
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

// Every regression aggregate through the adapter against its public-API
// implementation driven directly: grouped, empty, with NULLs, numeric text,
// and over a sliding window frame (inverse steps).
func TestFastRegrMatchesPublic(t *testing.T) {
	db := fastSeriesDB(t)
	var rows [][]driver.Value // (y, x)
	for i := 0; i < 300; i++ {
		var y driver.Value = 3 + 0.5*float64(i) + 7*math.Sin(float64(i))
		var x driver.Value = int64(1700000000 + 60*i)
		switch {
		case i%29 == 0:
			y = nil
		case i%31 == 0:
			x = nil
		case i == 100:
			y = " 12.5"
		}
		rows = append(rows, []driver.Value{y, x})
	}
	tx, _ := db.Begin()
	for i, r := range rows {
		if _, err := tx.Exec(`INSERT INTO r VALUES (?, ?, ?)`, i, r[1], r[0]); err != nil {
			t.Fatal(err)
		}
	}
	tx.Commit()
	if strings.EqualFold(os.Getenv(FastPathEnv), "off") {
		t.Skip(FastPathEnv + "=off")
	}
	names := functionNames(fastFunctions().regr)
	if len(names) < 12 {
		t.Fatalf("adapter serves %d regression aggregates: %v", len(names), names)
	}
	for _, name := range names {
		want, werr := publicAgg(t, name, rows)
		var got any
		err := db.QueryRow(`SELECT ` + name + `(y, t) FROM r ORDER BY g`).Scan(&got)
		if werr != nil || err != nil {
			t.Fatalf("%s: errors %v / %v", name, werr, err)
		}
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Errorf("%s: adapter %#v, public %#v", name, got, want)
		}
		want, _ = publicAgg(t, name, nil)
		if err := db.QueryRow(`SELECT ` + name + `(y, t) FROM r WHERE 0`).Scan(&got); err != nil {
			t.Fatal(err)
		}
		if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
			t.Errorf("%s of the empty set: adapter %#v, public %#v", name, got, want)
		}
		w, err := db.Query(`SELECT ` + name + `(y, t) OVER (ORDER BY g ROWS BETWEEN 15 PRECEDING AND CURRENT ROW) FROM r ORDER BY g`)
		if err != nil {
			t.Fatal(err)
		}
		// The public aggregate driven the way SQLite drives a sliding
		// frame: for each row, xStep for the entering row, xInverse for the
		// leaving one, then xValue.
		registryMu.Lock()
		impl := definitions[name].impl
		registryMu.Unlock()
		pub, _ := impl.MakeAggregate(sqlite.FunctionContext{})
		i := 0
		for w.Next() {
			w.Scan(&got)
			if err := pub.Step(nil, rows[i]); err != nil {
				t.Fatal(err)
			}
			if i >= 16 {
				if err := pub.WindowInverse(nil, rows[i-16]); err != nil {
					t.Fatal(err)
				}
			}
			want, _ := pub.WindowValue(nil)
			if fmt.Sprintf("%#v", got) != fmt.Sprintf("%#v", want) {
				t.Errorf("%s window row %d: adapter %#v, public %#v", name, i, got, want)
				break
			}
			i++
		}
		w.Close()
		if i != len(rows) {
			t.Errorf("%s: %d window rows", name, i)
		}
	}
	var got any
	err := db.QueryRow(`SELECT corr(y, 'x') FROM r`).Scan(&got)
	_, werr := publicAgg(t, "corr", [][]driver.Value{{1.0, "x"}})
	if err == nil || werr == nil || !strings.Contains(err.Error(), werr.Error()) {
		t.Errorf("non-numeric x: adapter %v, public %v", err, werr)
	}
}
