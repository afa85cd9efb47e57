package sqlfuncs_test

import (
	"os"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"testing"
)

// BenchmarkSeriesMemory measures the memory one long series costs each
// aggregate through SQL: ONE series of TRENDSQL_MEM_POINTS readings
// (default 20000; the figures in BENCHMARKS.md use 5000000), the hourly
// generated series of `trendsql bench`. Reported per point of the series:
//
//	peak_rss_B/point   growth of the process's peak resident set (VmHWM,
//	                   reset before the query through /proc/self/clear_refs)
//	                   over its resident set before the query, after
//	                   debug.FreeOSMemory: Go heap, SQLite's page cache and
//	                   everything else
//	alloc_B/point      bytes the Go heap allocated during the query
//	                   (runtime.MemStats.TotalAlloc)
//
// Linux only for the RSS figure (0 elsewhere). No limit is asserted.
func BenchmarkSeriesMemory(b *testing.B) {
	n := 20000
	if v := os.Getenv("TRENDSQL_MEM_POINTS"); v != "" {
		var err error
		if n, err = strconv.Atoi(v); err != nil || n < 100 {
			b.Fatalf("TRENDSQL_MEM_POINTS=%q: want an integer ≥ 100", v)
		}
	}
	queries := []struct{ name, sql string }{
		{"trend_slope", `SELECT trend_slope(t, value) FROM readings`},
		{"trend_fit", `SELECT trend_fit(t, value) FROM readings`},
		{"trend_fit_season", `SELECT trend_fit(t, value, 'period=1y, harmonics=2') FROM readings`},
		{"mann_kendall_hamed_rao", `SELECT mann_kendall(t, value, 'correct=hamed-rao') FROM readings`},
		{"seasonal_kendall", `SELECT seasonal_kendall(t, value, '1y', 12) FROM readings`},
		{"correlogram_48", `SELECT correlogram(t, value, 48) FROM readings`},
		{"ljung_box_24", `SELECT ljung_box(t, value, 24) FROM readings`},
		{"sen_slope", `SELECT sen_slope(t, value) FROM readings`},
	}
	for _, q := range queries {
		b.Run(q.name, func(b *testing.B) {
			s := benchStore(b, 1, n)
			drain(b, s.DB, `SELECT avg(value) FROM readings`) // page cache warm
			var peak, alloc float64
			for i := 0; i < b.N; i++ {
				debug.FreeOSMemory() // earlier queries' freed heap leaves the resident set
				var m0, m1 runtime.MemStats
				runtime.ReadMemStats(&m0)
				before := statusBytes("VmRSS:")
				os.WriteFile("/proc/self/clear_refs", []byte("5"), 0)
				drain(b, s.DB, q.sql)
				after := statusBytes("VmHWM:")
				runtime.ReadMemStats(&m1)
				peak = max(peak, float64(after-before))
				alloc = max(alloc, float64(m1.TotalAlloc-m0.TotalAlloc))
			}
			b.ReportMetric(peak/float64(n), "peak_rss_B/point")
			b.ReportMetric(alloc/float64(n), "alloc_B/point")
		})
	}
}

// statusBytes reads a kB field of /proc/self/status in bytes (0 if absent).
func statusBytes(key string) int64 {
	data, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(data), "\n") {
		if rest, ok := strings.CutPrefix(line, key); ok {
			f := strings.Fields(rest)
			if len(f) > 0 {
				v, _ := strconv.ParseInt(f[0], 10, 64)
				return v * 1024
			}
		}
	}
	return 0
}
