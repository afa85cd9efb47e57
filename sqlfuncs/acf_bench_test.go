package sqlfuncs_test

// Benchmarks of the lag functions through SQL, each reporting its cost
// relative to avg(value) over the same rows in the same process (metric
// "x_avg"). Size: TRENDSQL_BENCH_STATIONS stations (default 20) ×
// TRENDSQL_BENCH_READINGS hourly readings (default 10000), AR(1) noise with
// 2% missing hours. No timing is asserted.

import (
	"math/rand/v2"
	"os"
	"strconv"
	"testing"
	"time"
)

func acfBenchEnv(name string, def int) int {
	if v, err := strconv.Atoi(os.Getenv(name)); err == nil && v > 0 {
		return v
	}
	return def
}

func BenchmarkLagFunctionsSQL(b *testing.B) {
	stations := acfBenchEnv("TRENDSQL_BENCH_STATIONS", 20)
	readings := acfBenchEnv("TRENDSQL_BENCH_READINGS", 10000)
	s := openACFStore(b)
	rng := rand.New(rand.NewPCG(1, 2))
	for g := 0; g < stations; g++ {
		var tv, yv []any
		v := 0.0
		for k := 0; k < readings; k++ {
			v = 0.7*v + rng.NormFloat64()
			if k > 0 && rng.Float64() < 0.02 {
				continue
			}
			tv = append(tv, int64(1_700_000_000+3600*k))
			yv = append(yv, 10+v)
		}
		insertLagObs(b, s.DB, g, tv, yv)
	}
	if _, err := s.DB.Exec(`CREATE INDEX lagobs_g ON lagobs (g, t)`); err != nil {
		b.Fatal(err)
	}
	run := func(q string) time.Duration {
		start := time.Now()
		rows, err := s.DB.Query(q)
		if err != nil {
			b.Fatal(err)
		}
		n := 0
		for rows.Next() {
			n++
		}
		if err := rows.Err(); err != nil {
			b.Fatal(err)
		}
		rows.Close()
		if n == 0 {
			b.Fatalf("%s: no rows", q)
		}
		return time.Since(start)
	}
	const avgQ = `SELECT g, avg(y) FROM lagobs GROUP BY g`
	for _, c := range []struct{ name, q string }{
		{"sample_acvf", `SELECT g, sample_acvf(t, y, 24) FROM lagobs GROUP BY g`},
		{"sample_acf", `SELECT g, sample_acf(t, y, 24) FROM lagobs GROUP BY g`},
		{"correlogram48", `SELECT g, correlogram(t, y, 48) FROM lagobs GROUP BY g`},
		{"correlogram500", `SELECT g, correlogram(t, y, 500) FROM lagobs GROUP BY g`},
		{"correlogram_rows", `WITH c AS (SELECT g, correlogram(t, y, 48) AS c FROM lagobs GROUP BY g) SELECT c.g, r.* FROM c, correlogram_rows(c.c) r`},
		{"ljung_box", `SELECT g, ljung_box(t, y, 24) FROM lagobs GROUP BY g`},
		{"box_pierce_p", `SELECT g, box_pierce_p(t, y, 24) FROM lagobs GROUP BY g`},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var fn, avg time.Duration
			for i := 0; i < b.N; i++ {
				b.StopTimer()
				avg += run(avgQ)
				b.StartTimer()
				fn += run(c.q)
			}
			b.ReportMetric(float64(fn)/float64(avg), "x_avg")
			b.ReportMetric(float64(fn.Nanoseconds())/float64(b.N*stations*readings), "ns/row")
		})
	}
}
