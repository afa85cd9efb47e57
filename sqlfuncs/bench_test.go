package sqlfuncs_test

// SQL-level benchmarks: the cost of each aggregate through the driver, per
// input row, relative to SQLite's built-in avg() over the same rows in the
// same process. They use the generator of `trendsql bench` (store/benchmark)
// on a store in a temporary directory.
//
// Sizes (environment):
//
//	TRENDSQL_BENCH_ROWS    total rows of the shared store (default 100000)
//	TRENDSQL_BENCH_SERIES  series in it (default 10)
//	TRENDSQL_BENCH_N       comma-separated series lengths for
//	                       BenchmarkSQLSeriesLength (default "1000,10000")
//
// The full-size configuration, 1000 series × 10000 rows, is
// TRENDSQL_BENCH_ROWS=10000000 TRENDSQL_BENCH_SERIES=1000 (too big for CI;
// CI runs these with -benchtime=1x only to prove they still run).
//
// Reported metrics: ns/row (wall time of the whole GROUP BY query divided by
// the rows it reads), x_avg (that time over the avg() scan's, measured in
// the same benchmark right after), extra_ns/row (the difference: what the
// aggregate's Step and final value cost per row), cpu_x_avg (the same ratio
// of the process's user + system CPU time, which other work on a shared
// machine disturbs less than wall time; the garbage collector's work on
// other threads is included) and allocs/row (Go heap allocations per row,
// runtime.MemStats; SQLite's own heap is not counted).
// Functions not defined in this build are skipped.

import (
	"context"
	"database/sql"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/store"
	"trendsql/store/benchmark"
)

func benchEnvInt(b *testing.B, key string, def int) int {
	v := os.Getenv(key)
	if v == "" {
		return def
	}
	n, err := strconv.Atoi(v)
	if err != nil || n < 1 {
		b.Fatalf("%s=%q: want a positive integer", key, v)
	}
	return n
}

var benchStores struct {
	sync.Mutex
	dir string
	m   map[string]*store.Store
}

// benchStore returns a store with the generated data set (series × per),
// built once per process.
func benchStore(b *testing.B, series, per int) *store.Store {
	b.Helper()
	benchStores.Lock()
	defer benchStores.Unlock()
	key := fmt.Sprintf("%dx%d", series, per)
	if s, ok := benchStores.m[key]; ok {
		return s
	}
	if benchStores.dir == "" {
		d, err := os.MkdirTemp("", "trendsql-sqlbench-")
		if err != nil {
			b.Fatal(err)
		}
		benchStores.dir = d
		benchStores.m = map[string]*store.Store{}
	}
	ctx := context.Background()
	csv := filepath.Join(benchStores.dir, key+".csv")
	data := benchmark.Data{Series: series, PerSeries: per, Seed: 1}
	if _, err := benchmark.WriteCSV(csv, data); err != nil {
		b.Fatal(err)
	}
	s, err := store.Open(ctx, filepath.Join(benchStores.dir, key+".db"), store.Options{})
	if err != nil {
		b.Fatal(err)
	}
	if n, err := benchmark.LoadCSV(ctx, s, csv); err != nil || n != data.Rows() {
		b.Fatalf("load bench store: %d rows, %v", n, err)
	}
	os.Remove(csv)
	if err := s.IntegrityCheck(ctx); err != nil {
		b.Fatal(err)
	}
	benchStores.m[key] = s
	return s
}

func TestMain(m *testing.M) {
	code := m.Run()
	benchStores.Lock()
	for _, s := range benchStores.m {
		s.Close()
	}
	if benchStores.dir != "" {
		os.RemoveAll(benchStores.dir)
	}
	benchStores.Unlock()
	os.Exit(code)
}

// drain runs q and reads every row.
func drain(b *testing.B, db *sql.DB, q string) {
	rows, err := db.QueryContext(context.Background(), q)
	if err != nil {
		b.Fatalf("%s: %v", q, err)
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		b.Fatalf("%s: %v", q, err)
	}
	vals := make([]sql.RawBytes, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	for rows.Next() {
		if err := rows.Scan(ptrs...); err != nil {
			b.Fatal(err)
		}
	}
	if err := rows.Err(); err != nil {
		b.Fatalf("%s: %v", q, err)
	}
}

func available(q benchmark.Query) (string, bool) {
	have := map[string]sqlfuncs.Kind{}
	for _, d := range sqlfuncs.List() {
		have[d.Name] = d.Kind
	}
	for _, fn := range q.Needs {
		k, ok := have[fn]
		if !ok {
			return fn + " is not defined in this build", false
		}
		if k != sqlfuncs.Aggregate {
			return fn + " is not an aggregate", false
		}
	}
	return "", true
}

// benchQuery times q b.N times, then the avg() scan min(b.N, 10) times, and
// reports the per-row metrics.
func benchQuery(b *testing.B, s *store.Store, q string, rows int64) {
	drain(b, s.DB, q) // warm the page cache and the statement
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	b.ReportAllocs()
	b.ResetTimer()
	c0 := processCPU()
	t0 := time.Now()
	for i := 0; i < b.N; i++ {
		drain(b, s.DB, q)
	}
	el := time.Since(t0)
	cpu := processCPU() - c0
	b.StopTimer()
	runtime.ReadMemStats(&m1)
	k := min(b.N, 10)
	c1 := processCPU()
	t1 := time.Now()
	for i := 0; i < k; i++ {
		drain(b, s.DB, benchmark.Queries[0].SQL)
	}
	base := time.Since(t1)
	baseCPU := processCPU() - c1
	if cpu > 0 && baseCPU > 0 {
		b.ReportMetric(float64(cpu)/float64(b.N)/(float64(baseCPU)/float64(k)), "cpu_x_avg")
	}
	perRow := float64(el.Nanoseconds()) / float64(b.N) / float64(rows)
	basePerRow := float64(base.Nanoseconds()) / float64(k) / float64(rows)
	b.ReportMetric(perRow, "ns/row")
	b.ReportMetric(perRow/basePerRow, "x_avg")
	b.ReportMetric(perRow-basePerRow, "extra_ns/row")
	b.ReportMetric(float64(m1.Mallocs-m0.Mallocs)/float64(b.N)/float64(rows), "allocs/row")
}

// BenchmarkSQLAggregates runs every statement of `trendsql bench` over all
// series of the shared store.
func BenchmarkSQLAggregates(b *testing.B) {
	for _, q := range benchmark.Queries {
		b.Run(strings.ReplaceAll(q.Name, " ", "_"), func(b *testing.B) {
			if why, ok := available(q); !ok {
				b.Skip(why)
			}
			total := benchEnvInt(b, "TRENDSQL_BENCH_ROWS", 100000)
			series := benchEnvInt(b, "TRENDSQL_BENCH_SERIES", 10)
			per := max(total/series, 1)
			s := benchStore(b, series, per)
			benchQuery(b, s, q.SQL, int64(series)*int64(per))
		})
	}
}

// BenchmarkSQLSeriesLength runs every aggregate on ONE series of each length
// in TRENDSQL_BENCH_N (comma-separated lengths; 1000,10000 by default).
func BenchmarkSQLSeriesLength(b *testing.B) {
	spec := os.Getenv("TRENDSQL_BENCH_N")
	if spec == "" {
		spec = "1000,10000"
	}
	for _, f := range strings.Split(spec, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 {
			b.Fatalf("TRENDSQL_BENCH_N=%q: want comma-separated positive integers", spec)
		}
		for _, q := range benchmark.Queries[1:] {
			b.Run(fmt.Sprintf("%s/n=%d", strings.ReplaceAll(q.Name, " ", "_"), n), func(b *testing.B) {
				if why, ok := available(q); !ok {
					b.Skip(why)
				}
				s := benchStore(b, 1, n)
				benchQuery(b, s, q.SQL, int64(n))
			})
		}
	}
}
