package summaries

import (
	"context"
	"database/sql"
	"math"
	"testing"

	"trendsql/sqlfuncs/stats"
	"trendsql/store/demodata"
	"trendsql/store/storetest"
)

// On the demo store, with and without a seasonal model, every stored rank
// test and the Sen interval beside it agree — "mk_p ≤ 1 − confidence"
// exactly when "the interval excludes 0" — except within the discreteness
// documented in sqlfuncs/stats/kendall.go: the count of negative (for a
// downward trend, positive) slopes plus half the zero slopes within half a
// rank, plus half a rank per zero slope, of (N − C)/2, C = z·√sen_var_s.
// The slope counts are recomputed here from the readings. (Censored series
// get no interval: see SummarizeCensoredSeries.)
func TestDemoIntervalsPairWithTests(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and summarizes the whole demo store")
	}
	ctx := context.Background()
	s := storetest.Open(t)
	if _, err := demodata.Build(ctx, s, demodata.Options{}); err != nil {
		t.Fatal(err)
	}
	for _, period := range []float64{0, fixtureYear} {
		model := stats.SummaryOptions{MaxLag: 12, Alpha: 0.05, Confidence: 0.95, MinN: 10, PeriodS: period}
		if period > 0 {
			model.Harmonics, model.Seasons = 2, 12
		}
		res, err := Run(ctx, s, Options{Model: model, ToolVersion: "test", Analyze: stats.SummarizeSeries})
		if err != nil {
			t.Fatal(err)
		}
		rows, err := s.DB.QueryContext(ctx, `SELECT series_id, mk_p, sen_lower, sen_upper, sen_var_s, sen_interval_basis
			FROM series_summaries WHERE run_id = ? AND mk_p IS NOT NULL AND mk_method NOT LIKE 'censored%'`, res.RunID)
		if err != nil {
			t.Fatal(err)
		}
		type row struct {
			id              int64
			p, lo, hi, varS float64
			basis           string
		}
		var list []row
		for rows.Next() {
			var r row
			var lo, hi, v sql.NullFloat64
			var basis sql.NullString
			if err := rows.Scan(&r.id, &r.p, &lo, &hi, &v, &basis); err != nil {
				t.Fatal(err)
			}
			if !lo.Valid || !v.Valid || !basis.Valid {
				t.Errorf("period %v, series %d: a test without its interval (%v, %v, %v)", period, r.id, lo, v, basis)
				continue
			}
			r.lo, r.hi, r.varS, r.basis = lo.Float64, hi.Float64, v.Float64, basis.String
			list = append(list, r)
		}
		rows.Close()
		if len(list) < 40 {
			t.Fatalf("period %v: %d uncensored series with a test, want at least 40", period, len(list))
		}
		disagree := 0
		for _, r := range list {
			var tt, y []float64
			q, err := s.DB.QueryContext(ctx, `SELECT t, value FROM readings WHERE series_id = ? ORDER BY t`, r.id)
			if err != nil {
				t.Fatal(err)
			}
			for q.Next() {
				var ti int64
				var v float64
				if err := q.Scan(&ti, &v); err != nil {
					t.Fatal(err)
				}
				tt, y = append(tt, float64(ti)), append(y, v)
			}
			q.Close()
			groups := [][]float64{y}
			if period > 0 {
				_, by, season := stats.SeasonBlocks(tt, y, period, 12)
				groups = make([][]float64, 12)
				for i, g := range season {
					groups[g] = append(groups[g], by[i])
				}
			}
			var P, Q, T, N int64
			for _, g := range groups {
				if len(g) < 2 {
					continue
				}
				mk, _ := stats.MannKendall(g)
				P, Q, T, N = P+mk.Concor, Q+mk.Discor, T+mk.TiedY, N+mk.Pairs
			}
			sig, excl := r.p <= 0.05, r.lo > 0 || r.hi < 0
			if sig == excl {
				continue
			}
			disagree++
			mid := (float64(N) - 1.959963984540054*math.Sqrt(r.varS)) / 2
			half := float64(T) / 2
			if d := math.Min(math.Abs(float64(Q)+half-mid), math.Abs(float64(P)+half-mid)); d > 0.5+half+1e-9 {
				t.Errorf("period %v, series %d (%s): mk_p = %v but the interval is %v..%v; P %d Q %d T %d N %d, %v ranks from the band",
					period, r.id, r.basis, r.p, r.lo, r.hi, P, Q, T, N, d-0.5-half)
			}
		}
		t.Logf("period %v: %d of %d series disagree within the documented discreteness", period, disagree, len(list))
	}
}
