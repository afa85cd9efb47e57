package summaries

// Checks of `trendsql summarize` at the store level: every stored figure
// equals what the corresponding SQL function returns on the same series
// (the SQL functions themselves are checked against scipy, statsmodels and R
// in sqlfuncs/ and sqlfuncs/stats/), the Benjamini–Hochberg adjustment
// against R's p.adjust, and the run bookkeeping (all-or-nothing write,
// stale 'running' rows, --changed-only, the lock).
//
// Equality: figures computed by the same kernel on the same values are
// compared to 1e-12 relative (they are bitwise equal in practice); figures
// that go through a mean computed differently on the two sides (SQL avg()
// versus the analyzer's running mean: mean, pct_per_decade, the seasonal
// block means) to 1e-9 relative, p-values to 1e-7 relative.

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/csvimport"
	"trendsql/store/storetest"
)

const fixtureYear = 31557600 // 1y = 365.25 d, the project's year

// sumFixture is a small store with series of different shapes.
type sumFixture struct {
	s   *store.Store
	ids map[string]int64
}

// The fixture's series (generated; the checks compare the stored summary
// with the SQL functions on the same rows, so any data will do):
//
//	daily      4.3 years of daily readings at 06:00 UTC with a 20-day gap and
//	           ~4 % missing days, linear trend + annual cycle + AR(1) noise +
//	           a level shift, some readings qualified
//	hourly     150 days of hourly readings (under a 1y period: too short)
//	irregular  8 years of one manual reading per month on a random day and
//	           hour: off any regular grid (residual ACF in reading order)
//	weekly     40 weekly readings: the default Ljung–Box lag is n/5 = 8
//	           (under a 1y period: too short)
//	short      6 daily readings: fewer than the minimum record
func buildSummaryFixture(t *testing.T) sumFixture {
	t.Helper()
	ctx := context.Background()
	s := storetest.Open(t)
	tx, err := s.DB.BeginTx(ctx, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback()
	ids := map[string]int64{}
	for _, name := range []string{"daily", "hourly", "irregular", "weekly", "short"} {
		st := "T-" + strings.ToUpper(name)
		if _, err := tx.Exec(`INSERT INTO stations(id, name, metadata) VALUES (?, ?, '{"aquifer":"test"}')`, st, name); err != nil {
			t.Fatal(err)
		}
		var id int64
		if err := tx.QueryRow(`INSERT INTO series(station_id, variable, unit) VALUES (?, 'level', 'm') RETURNING id`, st).Scan(&id); err != nil {
			t.Fatal(err)
		}
		ids[name] = id
	}
	w, err := csvimport.NewReadingWriter(ctx, tx, csvimport.ConflictError)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(20261202, 5))
	add := func(id, tt int64, v float64, q string) {
		r := csvimport.Reading{SeriesID: id, T: tt, Value: math.Round(v*1000) / 1000}
		if q != "" {
			r.Qualifier = &q
		}
		if err := w.Add(ctx, r); err != nil {
			t.Fatal(err)
		}
	}
	t0 := time.Date(2019, 1, 1, 6, 0, 0, 0, time.UTC).Unix()
	ar := 0.0
	for k := int64(0); k < 1570; k++ {
		ar = 0.7*ar + 0.2*rng.NormFloat64()
		if (k >= 400 && k < 420) || rng.Float64() < 0.04 {
			continue
		}
		tk := t0 + k*86400
		v := 10 + 0.3*float64(k)/365.25 + 0.5*math.Sin(2*math.Pi*float64(tk%fixtureYear)/fixtureYear) + ar
		if k > 900 {
			v += 0.4
		}
		q := ""
		switch {
		case k%97 == 0:
			q = "estimated"
		case k%331 == 5:
			q = "suspect"
		}
		add(ids["daily"], tk, v, q)
	}
	ar = 0
	h0 := time.Date(2024, 3, 1, 0, 0, 0, 0, time.UTC).Unix()
	for k := int64(0); k < 150*24; k++ {
		ar = 0.95*ar + 0.01*rng.NormFloat64()
		add(ids["hourly"], h0+k*3600, 2-0.0001*float64(k)+0.05*math.Sin(2*math.Pi*float64(k)/24)+ar, "")
	}
	m0 := time.Date(2016, 1, 1, 0, 0, 0, 0, time.UTC)
	for m := 0; m < 96; m++ {
		tm := m0.AddDate(0, m, 0).Unix() + rng.Int64N(20)*86400 + rng.Int64N(86400)
		add(ids["irregular"], tm, 5-0.05*float64(m)/12+0.3*math.Cos(2*math.Pi*float64(m)/12)+0.1*rng.NormFloat64(), "")
	}
	ar = 0
	for k := int64(0); k < 40; k++ {
		ar = 0.5*ar + 0.3*rng.NormFloat64()
		add(ids["weekly"], t0+k*7*86400, 3+0.01*float64(k)+ar, "")
	}
	for k := int64(0); k < 6; k++ {
		add(ids["short"], t0+k*86400, 1+0.1*float64(k), "")
	}
	if _, err := w.Flush(ctx); err != nil {
		t.Fatal(err)
	}
	if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
	return sumFixture{s: s, ids: ids}
}

// fixtureOptions are the run options used by the figure checks.
func fixtureOptions(period float64) Options {
	m := stats.SummaryOptions{MaxLag: 15, Alpha: 0.05, Confidence: 0.95, MinN: 10}
	if period > 0 {
		m.PeriodS, m.Harmonics, m.Seasons = period, 2, 12
	}
	return Options{Model: m, Workers: 2, ToolVersion: "test", Analyze: stats.SummarizeSeries}
}

// storedRow returns the series_summaries row of (run, series) by column name.
func storedRow(t *testing.T, db *sql.DB, run, series int64) map[string]any {
	t.Helper()
	rows, err := db.Query(`SELECT * FROM series_summaries WHERE run_id = ? AND series_id = ?`, run, series)
	if err != nil {
		t.Fatal(err)
	}
	cols, _ := rows.Columns()
	all := storetest.ScanAll(t, rows)
	if len(all) == 0 {
		t.Fatalf("no series_summaries row for run %d, series %d", run, series)
	}
	out := map[string]any{}
	for i, c := range cols {
		out[c] = all[0][i]
	}
	return out
}

// sqlJSON runs a query returning one JSON text and decodes it.
func sqlJSON(t *testing.T, db *sql.DB, q string, args ...any) map[string]any {
	t.Helper()
	var text sql.NullString
	if err := db.QueryRow(q, args...).Scan(&text); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	if !text.Valid {
		t.Fatalf("%s: NULL", q)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(text.String), &m); err != nil {
		t.Fatalf("%s: %v in %s", q, err, text.String)
	}
	return m
}

// asFloat converts a SQL or JSON value to float64; nil → NaN.
func asFloat(v any) float64 {
	switch x := v.(type) {
	case nil:
		return math.NaN()
	case int64:
		return float64(x)
	case float64:
		return x
	case int:
		return float64(x)
	}
	panic(fmt.Sprintf("not a number: %T %v", v, v))
}

// sameNum compares two figures: both NULL, or equal to rel relative.
func sameNum(got, want any, rel float64) bool {
	g, w := asFloat(got), asFloat(want)
	if math.IsNaN(g) || math.IsNaN(w) {
		return math.IsNaN(g) && math.IsNaN(w)
	}
	if g == w {
		return true
	}
	return math.Abs(g-w) <= rel*math.Max(math.Abs(g), math.Abs(w))
}

const (
	relExact = 1e-12
	relMean  = 1e-9
	relP     = 1e-7
)

type figure struct {
	column string
	want   any
	rel    float64
}

func checkFigures(t *testing.T, stored map[string]any, src string, figs []figure) {
	t.Helper()
	for _, f := range figs {
		got, ok := stored[f.column]
		if !ok {
			t.Errorf("series_summaries has no column %s", f.column)
			continue
		}
		if !sameNum(got, f.want, f.rel) {
			t.Errorf("%s = %v, %s gives %v", f.column, got, src, f.want)
		}
	}
}

func mustRun(t *testing.T, s *store.Store, o Options) *Result {
	t.Helper()
	res, err := Run(context.Background(), s, o)
	if err != nil {
		t.Fatalf("Summarize: %v", err)
	}
	return res
}

// TestSummaryFiguresEqualSQLFunctions checks each stored figure against the
// SQL function that computes it on the same series, for a run without and a
// run with a seasonal period.
func TestSummaryFiguresEqualSQLFunctions(t *testing.T) {
	fx := buildSummaryFixture(t)
	db := fx.s.DB
	plain := mustRun(t, fx.s, fixtureOptions(0))
	seasonal := mustRun(t, fx.s, fixtureOptions(fixtureYear))
	if plain.Computed != 5 || seasonal.Computed != 5 {
		t.Fatalf("computed %d and %d series, want 5 and 5", plain.Computed, seasonal.Computed)
	}

	type runCase struct {
		name   string
		run    int64
		period bool
		spec   string
		series []string // series with a full summary in this run
	}
	runs := []runCase{
		{"no-period", plain.RunID, false, "degree=1", []string{"daily", "hourly", "irregular", "weekly"}},
		{"period-1y", seasonal.RunID, true, "period=1y, harmonics=2", []string{"daily", "irregular"}},
	}
	for _, rc := range runs {
		for _, name := range rc.series {
			id := fx.ids[name]
			row := storedRow(t, db, rc.run, id)
			label := rc.name + "/" + name
			if row["insufficient_data"] != int64(0) {
				t.Fatalf("%s: insufficient_data = %v (notes %v)", label, row["insufficient_data"], row["notes"])
			}
			irregular := name == "irregular"

			t.Run(label+"/coverage", func(t *testing.T) {
				var n, tFirst, tLast, nQual int64
				var timeFirst, timeLast string
				var mean float64
				if err := db.QueryRow(`SELECT count(*), min(t), max(t),
					strftime('%Y-%m-%dT%H:%M:%SZ', min(t), 'unixepoch'), strftime('%Y-%m-%dT%H:%M:%SZ', max(t), 'unixepoch'),
					avg(value), count(nullif(qualifier, ''))
					FROM readings WHERE series_id = ?`, id).Scan(&n, &tFirst, &tLast, &timeFirst, &timeLast, &mean, &nQual); err != nil {
					t.Fatal(err)
				}
				src := "count/min/max/avg over readings"
				checkFigures(t, row, src, []figure{
					{"n", n, 0}, {"t_first", tFirst, 0}, {"t_last", tLast, 0},
					{"years", float64(tLast-tFirst) / fixtureYear, relExact},
					{"mean", mean, relMean}, {"n_qualified", nQual, 0},
				})
				if row["time_first"] != timeFirst || row["time_last"] != timeLast {
					t.Errorf("time_first/last = %v/%v, strftime gives %s/%s", row["time_first"], row["time_last"], timeFirst, timeLast)
				}
				if row["unit"] != "m" {
					t.Errorf("unit = %v, want the series unit m", row["unit"])
				}
				var quals sql.NullString
				if err := db.QueryRow(`SELECT json_group_object(qualifier, c) FROM (
					SELECT qualifier, count(*) AS c FROM readings WHERE series_id = ? AND qualifier <> '' GROUP BY qualifier)`, id).Scan(&quals); err != nil {
					t.Fatal(err)
				}
				var wantQ, gotQ map[string]int
				_ = json.Unmarshal([]byte(quals.String), &wantQ)
				if s, ok := row["qualifier_counts"].(string); ok {
					_ = json.Unmarshal([]byte(s), &gotQ)
				}
				if fmt.Sprint(gotQ) != fmt.Sprint(wantQ) {
					t.Errorf("qualifier_counts = %v, GROUP BY qualifier gives %v", gotQ, wantQ)
				}
				if name == "daily" && len(wantQ) != 2 {
					t.Errorf("fixture: daily series should carry two qualifier texts, has %v", wantQ)
				}
				if irregular {
					// The SQL lag functions refuse these times; the summary
					// keeps the inferred step but no grid figures.
					var c sql.NullString
					err := db.QueryRow(`SELECT correlogram(t, value, 1) FROM readings WHERE series_id = ?`, id).Scan(&c)
					if err == nil || !strings.Contains(err.Error(), "correlogram") {
						t.Errorf("correlogram on the irregular series: err = %v, want the off-grid error", err)
					}
					if row["grid_slots"] != nil || row["missing_share"] != nil {
						t.Errorf("irregular series: grid_slots = %v, missing_share = %v, want NULL", row["grid_slots"], row["missing_share"])
					}
					if asFloat(row["step_s"]) != stats.MonthStep {
						t.Errorf("irregular monthly series: step_s = %v, want the month step %v", row["step_s"], stats.MonthStep)
					}
					return
				}
				c := sqlJSON(t, db, `SELECT correlogram(t, value, 1) FROM readings WHERE series_id = ?`, id)
				checkFigures(t, row, "correlogram(t, value, 1)", []figure{
					{"step_s", c["step_s"], relExact},
					{"grid_slots", c["n_slots"], 0},
					{"missing_share", asFloat(c["missing_slots"]) / asFloat(c["n_slots"]), relExact},
				})
				if name == "daily" && asFloat(c["missing_slots"]) < 20 {
					t.Errorf("fixture: daily series should have missing days, has %v", c["missing_slots"])
				}
			})

			t.Run(label+"/trend_fit", func(t *testing.T) {
				var model string
				if err := db.QueryRow(`SELECT trend_fit(t, value, ?) FROM readings WHERE series_id = ?`, rc.spec, id).Scan(&model); err != nil {
					t.Fatal(err)
				}
				if row["trend_model"] != model {
					t.Errorf("trend_model differs from trend_fit(t, value, %q):\n stored %v\n sql    %s", rc.spec, row["trend_model"], model)
				}
				var m map[string]any
				if err := json.Unmarshal([]byte(model), &m); err != nil {
					t.Fatal(err)
				}
				src := fmt.Sprintf("trend_fit(t, value, '%s')", rc.spec)
				checkFigures(t, row, src, []figure{
					{"slope_per_year", m["slope_per_year"], relExact}, {"slope_se", m["slope_se"], relExact},
					{"slope_p", m["slope_p"], relP}, {"hac_slope_se", m["hac_slope_se"], relExact},
					{"hac_lags", m["hac_lags"], 0}, {"hac_p", m["hac_p"], relP},
					{"n_eff", m["n_eff"], relExact}, {"n_eff_p", m["n_eff_p"], relP},
					{"r2", m["r2"], relExact}, {"resid_acf1", m["resid_acf1"], relExact},
				})
				var mean float64
				if err := db.QueryRow(`SELECT avg(value) FROM readings WHERE series_id = ?`, id).Scan(&mean); err != nil {
					t.Fatal(err)
				}
				checkFigures(t, row, "10·slope_per_year/|avg(value)|·100", []figure{
					{"pct_per_decade", 10 * asFloat(m["slope_per_year"]) / math.Abs(mean) * 100, relMean},
				})
				if rc.period && (asFloat(m["harmonics"]) != 2 || asFloat(m["period_s"]) != fixtureYear) {
					t.Errorf("seasonal run: model harmonics/period_s = %v/%v", m["harmonics"], m["period_s"])
				}
			})

			t.Run(label+"/trend_model_with_trend_value", func(t *testing.T) {
				// The stored model evaluates like the SQL model at every reading.
				var nRows, nVals int64
				var maxDiff sql.NullFloat64
				if err := db.QueryRow(`WITH m AS (SELECT trend_fit(t, value, ?) AS m FROM readings WHERE series_id = ?)
					SELECT count(*), count(trend_value(ss.trend_model, r.t)),
					       max(abs(trend_value(ss.trend_model, r.t) - trend_value(m.m, r.t)))
					FROM readings r, m, series_summaries ss
					WHERE r.series_id = ? AND ss.run_id = ? AND ss.series_id = r.series_id`,
					rc.spec, id, id, rc.run).Scan(&nRows, &nVals, &maxDiff); err != nil {
					t.Fatal(err)
				}
				if nVals != nRows || !maxDiff.Valid || maxDiff.Float64 != 0 {
					t.Errorf("trend_value(stored model, t): %d of %d values, max |difference| from the SQL model %v", nVals, nRows, maxDiff)
				}
			})

			if !rc.period {
				t.Run(label+"/mann_kendall_hamed_rao", func(t *testing.T) {
					mk := sqlJSON(t, db, `SELECT mann_kendall(t, value, 'correct=hamed-rao') FROM readings WHERE series_id = ?`, id)
					if row["mk_method"] != "mann-kendall/hamed-rao" {
						t.Errorf("mk_method = %v", row["mk_method"])
					}
					// The corrected figures are stored when the factor is ≥ 1,
					// the uncorrected ones otherwise (see SummarizeSeries).
					varKey, zKey, pKey := "var_s_corrected", "z_corrected", "p_corrected"
					if f, ok := mk["correction_factor"].(float64); ok && f < 1 {
						varKey, zKey, pKey = "var_s", "z", "p"
					}
					checkFigures(t, row, "mann_kendall(t, value, 'correct=hamed-rao')", []figure{
						{"mk_s", mk["s"], 0}, {"mk_tau", mk["tau"], relExact},
						{"mk_var_s", mk[varKey], relExact}, {"mk_z", mk[zKey], relExact},
						{"mk_p", mk[pKey], relP}, {"mk_correction_factor", mk["correction_factor"], relExact},
					})
				})
				t.Run(label+"/sen_slope", func(t *testing.T) {
					// The interval comes from the variance of the stored
					// test: the corrected one when the factor is ≥ 1.
					mk := sqlJSON(t, db, `SELECT mann_kendall(t, value, 'correct=hamed-rao') FROM readings WHERE series_id = ?`, id)
					call, basis := "sen_slope(t, value, 0.95)", "mann-kendall"
					if f, ok := mk["correction_factor"].(float64); ok && f >= 1 {
						call, basis = "sen_slope(t, value, 0.95, 'variance=hamed-rao')", "hamed-rao"
					}
					sen := sqlJSON(t, db, `SELECT `+call+` FROM readings WHERE series_id = ?`, id)
					checkFigures(t, row, call, []figure{
						{"sen_slope_per_year", sen["slope_per_year"], relExact}, {"sen_lower", sen["lower"], relExact},
						{"sen_upper", sen["upper"], relExact}, {"sen_confidence", sen["confidence"], 0},
						{"sen_var_s", sen["var_s"], relExact}, {"sen_var_s", mk[map[string]string{"hamed-rao": "var_s_corrected", "mann-kendall": "var_s"}[basis]], relExact},
					})
					if row["sen_interval_basis"] != basis {
						t.Errorf("sen_interval_basis = %v, want %s", row["sen_interval_basis"], basis)
					}
				})
				t.Run(label+"/pettitt", func(t *testing.T) {
					p := sqlJSON(t, db, `SELECT pettitt(t, value) FROM readings WHERE series_id = ?`, id)
					checkFigures(t, row, "pettitt(t, value)", []figure{
						{"pettitt_k", p["k"], 0}, {"pettitt_u", p["u"], 0}, {"pettitt_p", p["p"], relP},
					})
					if row["pettitt_time_change"] != p["t_change"] {
						t.Errorf("pettitt_time_change = %v, pettitt gives %v", row["pettitt_time_change"], p["t_change"])
					}
					var tk int64
					if err := db.QueryRow(`SELECT t FROM readings WHERE series_id = ? ORDER BY t LIMIT 1 OFFSET ?`, id, int64(asFloat(p["k"]))-1).Scan(&tk); err != nil {
						t.Fatal(err)
					}
					if row["pettitt_t_change"] != tk {
						t.Errorf("pettitt_t_change = %v, the k-th reading's time is %d", row["pettitt_t_change"], tk)
					}
				})
			} else {
				// The season blocks in SQL (SeasonBlocks doc): one mean time
				// and mean value per (cycle, season).
				blocks := fmt.Sprintf(`SELECT avg(t) AS tb, avg(value) AS yb, ((t %% %d) * 12) / %d AS g
					FROM readings WHERE series_id = %d GROUP BY t / %d, g`, fixtureYear, fixtureYear, id, fixtureYear)
				t.Run(label+"/seasonal_kendall_block_means", func(t *testing.T) {
					sk := sqlJSON(t, db, `SELECT seasonal_kendall(tb, yb, ?, 12) FROM (`+blocks+`)`, fixtureYear)
					// Blocks hold one value per (cycle, season), so the
					// between-season covariance correction applies and is
					// what the summary stores.
					if row["mk_method"] != "seasonal-kendall/block-means/hirsch-slack" || sk["p_dependent"] == nil {
						t.Errorf("mk_method = %v, seasonal_kendall p_dependent = %v (note %v); want the Hirsch–Slack variant", row["mk_method"], sk["p_dependent"], sk["dependent_note"])
					}
					checkFigures(t, row, "seasonal_kendall(tb, yb, 31557600, 12) over season blocks", []figure{
						{"mk_s", sk["s"], 0}, {"mk_var_s", sk["var_s_dependent"], relExact},
						{"mk_z", sk["z_dependent"], relExact}, {"mk_p", sk["p_dependent"], relP},
						{"mk_tau", nil, 0}, {"mk_correction_factor", nil, 0},
						{"sen_slope_per_year", sk["slope_per_year"], relMean},
						{"sen_lower", sk["lower_dependent"], relMean}, {"sen_upper", sk["upper_dependent"], relMean},
						{"sen_confidence", sk["confidence"], 0}, {"sen_var_s", sk["var_s_dependent"], relExact},
					})
					if row["sen_interval_basis"] != "hirsch-slack" {
						t.Errorf("sen_interval_basis = %v, want hirsch-slack (the interval of the stored Hirsch–Slack test)", row["sen_interval_basis"])
					}
					if asFloat(sk["seasons_used"]) < 12 {
						t.Errorf("fixture: %v seasons used, want 12", sk["seasons_used"])
					}
				})
				t.Run(label+"/pettitt_season_anomalies", func(t *testing.T) {
					anom := `WITH b AS (` + blocks + `), a AS (SELECT tb, yb - avg(yb) OVER (PARTITION BY g) AS anom FROM b) `
					p := sqlJSON(t, db, anom+`SELECT pettitt(tb, anom) FROM a`)
					checkFigures(t, row, "pettitt(tb, season anomaly) over season blocks", []figure{
						{"pettitt_k", p["k"], 0}, {"pettitt_u", p["u"], 0}, {"pettitt_p", p["p"], relP},
					})
					var tb float64
					if err := db.QueryRow(anom+`SELECT tb FROM a ORDER BY tb LIMIT 1 OFFSET ?`, int64(asFloat(p["k"]))-1).Scan(&tb); err != nil {
						t.Fatal(err)
					}
					if asFloat(row["pettitt_t_change"]) != math.Floor(tb) {
						t.Errorf("pettitt_t_change = %v, the k-th block's mean time is %.6f", row["pettitt_t_change"], tb)
					}
				})
			}

			// Residuals y − trend_value(model, t), on the time grid, or in
			// reading order (t replaced by the reading's rank) for irregular
			// times.
			tExpr := "r.t"
			if irregular {
				tExpr = "row_number() OVER (ORDER BY r.t)"
			}
			resid := fmt.Sprintf(`SELECT %s AS t, r.value - trend_value(ss.trend_model, r.t) AS res
				FROM readings r JOIN series_summaries ss ON ss.series_id = r.series_id AND ss.run_id = %d
				WHERE r.series_id = %d`, tExpr, rc.run, id)

			t.Run(label+"/residual_ljung_box", func(t *testing.T) {
				wantBasis := "time-grid"
				if irregular {
					wantBasis = "reading-order"
				}
				if row["acf_basis"] != wantBasis {
					t.Errorf("acf_basis = %v, want %s", row["acf_basis"], wantBasis)
				}
				n := row["n"].(int64)
				lags := min(int64(10), n/5) // the documented default lag (common practice)
				if row["lb_lags"] != lags {
					t.Errorf("lb_lags = %v, want min(10, n/5) = %d", row["lb_lags"], lags)
				}
				lb := sqlJSON(t, db, `SELECT ljung_box(t, res, ?) FROM (`+resid+`)`, lags)
				checkFigures(t, row, "ljung_box(t, y − trend_value(model, t), lags)", []figure{
					{"lb_df", lb["df"], 0}, {"lb_q", lb["q"], relExact}, {"lb_p", lb["p"], relP},
				})
				if asFloat(lb["df"]) != float64(lags) {
					t.Errorf("Ljung–Box df = %v, want lags = %d (no estimated ARMA coefficients)", lb["df"], lags)
				}
			})

			t.Run(label+"/residual_correlogram", func(t *testing.T) {
				rows, err := db.Query(`WITH c AS (SELECT correlogram(t, res, 15) AS c FROM (` + resid + `))
					SELECT x.lag, x.acvf, x.acf, x.pacf, x.band_upper, x.ljung_box_q, x.ljung_box_p
					FROM c, correlogram_rows(c.c) x ORDER BY x.lag`)
				if err != nil {
					t.Fatal(err)
				}
				want := storetest.ScanAll(t, rows)
				rows, err = db.Query(`SELECT lag, acvf, acf, pacf, band, ljung_box_q, ljung_box_p
					FROM series_correlograms WHERE run_id = ? AND series_id = ? ORDER BY lag`, rc.run, id)
				if err != nil {
					t.Fatal(err)
				}
				got := storetest.ScanAll(t, rows)
				if len(got) != 15 || len(want) != 15 {
					t.Fatalf("correlogram rows: stored %d, SQL %d, want 15", len(got), len(want))
				}
				names := []string{"lag", "acvf", "acf", "pacf", "band", "ljung_box_q", "ljung_box_p"}
				for i := range got {
					for j := range names {
						rel := relExact
						if names[j] == "ljung_box_p" {
							rel = relP
						}
						if !sameNum(got[i][j], want[i][j], rel) {
							t.Errorf("lag %v %s: stored %v, correlogram_rows(correlogram(t, y − trend_value(model, t), 15)) %v", got[i][0], names[j], got[i][j], want[i][j])
						}
					}
				}
			})

			t.Run(label+"/flags", func(t *testing.T) {
				alpha := 0.05
				flag := func(col string, cond bool, p any) {
					if math.IsNaN(asFloat(p)) {
						if row[col] != nil {
							t.Errorf("%s = %v with an undefined p", col, row[col])
						}
						return
					}
					want := int64(0)
					if cond {
						want = 1
					}
					if row[col] != want {
						t.Errorf("%s = %v, want %d (p = %v, alpha = %v)", col, row[col], want, p, alpha)
					}
				}
				flag("residual_dependence", asFloat(row["lb_p"]) < alpha, row["lb_p"])
				flag("step_change_suspected", asFloat(row["pettitt_p"]) < alpha, row["pettitt_p"])
				flag("trend_detected", asFloat(row["trend_p_fdr"]) <= alpha, row["trend_p_fdr"])
			})
		}

		t.Run(rc.name+"/bh_fdr_across_run", func(t *testing.T) {
			rows, err := db.Query(`SELECT series_id, mk_p, trend_p_fdr FROM series_summaries WHERE run_id = ? ORDER BY series_id`, rc.run)
			if err != nil {
				t.Fatal(err)
			}
			all := storetest.ScanAll(t, rows)
			var p, adj []float64
			for _, r := range all {
				if r[1] == nil {
					if r[2] != nil {
						t.Errorf("series %v: trend_p_fdr %v without mk_p", r[0], r[2])
					}
					continue
				}
				p = append(p, asFloat(r[1]))
				adj = append(adj, asFloat(r[2]))
			}
			if len(p) != len(rc.series) {
				t.Fatalf("%d series with mk_p, want %d", len(p), len(rc.series))
			}
			want, ok := rBHAdjust(t, p)
			if !ok {
				return
			}
			for i := range p {
				if !sameNum(adj[i], want[i], relExact) {
					t.Errorf("trend_p_fdr[%d] = %v, R p.adjust(p, \"BH\") gives %v (p = %v)", i, adj[i], want[i], p)
				}
			}
		})
	}

	t.Run("insufficient_data", func(t *testing.T) {
		cases := []struct {
			run    int64
			series string
			note   string
		}{
			{plain.RunID, "short", "6 readings, fewer than the minimum record of 10"},
			{seasonal.RunID, "short", "6 readings, fewer than the minimum record of 10"},
			{seasonal.RunID, "hourly", "record spans 0.41 periods; a seasonal summary needs at least 2"},
			{seasonal.RunID, "weekly", "record spans 0.75 periods; a seasonal summary needs at least 2"},
		}
		for _, c := range cases {
			row := storedRow(t, db, c.run, fx.ids[c.series])
			if row["insufficient_data"] != int64(1) || row["notes"] != c.note {
				t.Errorf("run %d %s: insufficient_data = %v, notes = %q; want 1, %q", c.run, c.series, row["insufficient_data"], row["notes"], c.note)
			}
			var n, t0, t1 int64
			if err := db.QueryRow(`SELECT count(*), min(t), max(t) FROM readings WHERE series_id = ?`, fx.ids[c.series]).Scan(&n, &t0, &t1); err != nil {
				t.Fatal(err)
			}
			if row["n"] != n || row["t_first"] != t0 || row["t_last"] != t1 {
				t.Errorf("%s: coverage n/t_first/t_last = %v/%v/%v, want %d/%d/%d", c.series, row["n"], row["t_first"], row["t_last"], n, t0, t1)
			}
			for _, col := range []string{"trend_model", "slope_per_year", "mk_p", "trend_p_fdr", "trend_detected", "lb_p", "residual_dependence", "pettitt_p"} {
				if row[col] != nil {
					t.Errorf("%s with insufficient data: %s = %v, want NULL", c.series, col, row[col])
				}
			}
			var nc int64
			if err := db.QueryRow(`SELECT count(*) FROM series_correlograms WHERE run_id = ? AND series_id = ?`, c.run, fx.ids[c.series]).Scan(&nc); err != nil {
				t.Fatal(err)
			}
			if nc != 0 {
				t.Errorf("%s with insufficient data has %d correlogram rows", c.series, nc)
			}
		}
	})
}

func mustQuery(t *testing.T, db *sql.DB, q string, args ...any) *sql.Rows {
	t.Helper()
	rows, err := db.Query(q, args...)
	if err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return rows
}

func queryInt64(t *testing.T, db *sql.DB, q string, args ...any) int64 {
	t.Helper()
	var n int64
	if err := db.QueryRow(q, args...).Scan(&n); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return n
}

// rBHAdjust runs R's p.adjust(p, method = "BH") live (R's stats package at
// /usr/bin/Rscript). It skips when R is missing locally and fails under CI.
func rBHAdjust(t *testing.T, p []float64) ([]float64, bool) {
	t.Helper()
	const rscript = "/usr/bin/Rscript"
	if _, err := os.Stat(rscript); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("%s is required under CI for the live p.adjust check: %v", rscript, err)
		}
		t.Skipf("%s not found: live p.adjust check skipped", rscript)
		return nil, false
	}
	var in []string
	for _, v := range p {
		in = append(in, fmt.Sprintf("%.17g", v))
	}
	expr := fmt.Sprintf(`cat(sprintf("%%.17g", p.adjust(c(%s), method = "BH")), sep = "\n")`, strings.Join(in, ","))
	out, err := exec.Command(rscript, "-e", expr).Output()
	if err != nil {
		t.Fatalf("Rscript: %v", err)
	}
	var res []float64
	for _, f := range strings.Fields(string(out)) {
		var v float64
		if _, err := fmt.Sscan(f, &v); err != nil {
			t.Fatalf("Rscript output %q: %v", f, err)
		}
		res = append(res, v)
	}
	if len(res) != len(p) {
		t.Fatalf("Rscript returned %d values for %d p-values", len(res), len(p))
	}
	return res, true
}

// fdrReference is testdata/reference/fdr_bh.json.
type fdrReference struct {
	Source string `json:"source"`
	Cases  []struct {
		Name     string     `json:"name"`
		P        []*float64 `json:"p"` // null = a series without a p-value
		Adjusted []*float64 `json:"adjusted"`
		Alpha    float64    `json:"alpha"`
	} `json:"cases"`
}

// TestAdjustFDRAgainstR checks the Benjamini–Hochberg adjustment against
// committed values from R 4.2.2 stats::p.adjust(p, method = "BH")
// (testdata/reference/fdr_bh.R). Missing p-values (series with too few
// readings) are left out of m, as p.adjust does with NA by default
// (n = length(p[!is.na(p)])).
func TestAdjustFDRAgainstR(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", "fdr_bh.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref fdrReference
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(ref.Source, "p.adjust") || len(ref.Cases) < 3 {
		t.Fatalf("reference file: source %q, %d cases", ref.Source, len(ref.Cases))
	}
	for _, c := range ref.Cases {
		t.Run(c.Name, func(t *testing.T) {
			results := make([]*seriesResult, len(c.P))
			for i, p := range c.P {
				results[i] = &seriesResult{ref: seriesRef{id: int64(i + 1)}}
				if p != nil {
					v := *p
					results[i].sum.MKP = &v
				}
			}
			adjustFDR(results, c.Alpha)
			for i, r := range results {
				want := c.Adjusted[i]
				if want == nil {
					if r.pFDR != nil || r.trendDetected != nil {
						t.Errorf("p[%d] = NA: adjusted %v, detected %v; want NULL", i, r.pFDR, r.trendDetected)
					}
					continue
				}
				if r.pFDR == nil {
					t.Errorf("p[%d] = %v: no adjusted value, R gives %v", i, *c.P[i], *want)
					continue
				}
				if !sameNum(*r.pFDR, *want, 1e-9) {
					t.Errorf("p[%d] = %v: adjusted %v, R p.adjust gives %v", i, *c.P[i], *r.pFDR, *want)
				}
				if det := *want <= c.Alpha; r.trendDetected == nil || *r.trendDetected != det {
					t.Errorf("p[%d]: trend_detected %v, want %v (adjusted %v ≤ %v)", i, r.trendDetected, det, *want, c.Alpha)
				}
			}
			// --changed-only: only some series are recomputed, the others
			// enter the family with their stored p. The recomputed ones get
			// the values p.adjust gives over the whole vector.
			var part []*seriesResult
			var wantPart []*float64
			var others []float64
			for i, p := range c.P {
				switch {
				case p == nil:
				case i%2 == 0:
					v := *p
					r := &seriesResult{}
					r.sum.MKP = &v
					part = append(part, r)
					wantPart = append(wantPart, c.Adjusted[i])
				default:
					others = append(others, *p)
				}
			}
			adjustFDRWith(part, others, c.Alpha)
			for i, r := range part {
				if r.pFDR == nil || !sameNum(*r.pFDR, *wantPart[i], 1e-9) {
					t.Errorf("family with %d stored p-values: recomputed series %d adjusted %v, R p.adjust over all gives %v", len(others), i, r.pFDR, *wantPart[i])
				}
			}
		})
	}
}

// TestSummarizeRunBookkeeping covers the run table: counts, parameters,
// the view, a stale 'running' row, --changed-only through series_batches,
// nothing to do, the lock, and a failed run that leaves earlier results.
func TestSummarizeRunBookkeeping(t *testing.T) {
	ctx := context.Background()
	fx := buildSummaryFixture(t)
	db := fx.s.DB
	o := fixtureOptions(0)

	first := mustRun(t, fx.s, o)
	var status, params string
	var sel, comp, skip, noted int
	if err := db.QueryRow(`SELECT status, parameters, series_selected, series_computed, series_skipped, series_with_notes FROM summary_runs WHERE id = ?`,
		first.RunID).Scan(&status, &params, &sel, &comp, &skip, &noted); err != nil {
		t.Fatal(err)
	}
	if status != "ok" || sel != 5 || comp != 5 || skip != 0 || noted != first.Noted {
		t.Errorf("run row: status %s, selected %d, computed %d, skipped %d, noted %d (result %+v)", status, sel, comp, skip, noted, first)
	}
	var pm map[string]any
	if err := json.Unmarshal([]byte(params), &pm); err != nil || pm["max_lag"] != 15.0 || pm["min_n"] != 10.0 {
		t.Errorf("parameters JSON %s (%v)", params, err)
	}

	// A 'running' row left by a dead process is marked interrupted by the
	// next run, which takes the lock first.
	if _, err := db.Exec(`INSERT INTO summary_runs(started_at, status, parameters, tool_version) VALUES ('2026-01-01T00:00:00.000Z', 'running', '{}', 'dead')`); err != nil {
		t.Fatal(err)
	}
	var dead int64
	_ = db.QueryRow(`SELECT max(id) FROM summary_runs`).Scan(&dead)

	// Nothing imported since: --changed-only has nothing to do, and records
	// no run.
	oc := o
	oc.ChangedOnly = true
	// (The fixture wrote its readings without import batches, so the first
	// run's high-water mark is 0 and no series has a newer batch.)
	res, err := Run(ctx, fx.s, oc)
	if !errors.Is(err, ErrNothingToDo) || res.Selected != 5 || res.Skipped != 5 {
		t.Fatalf("--changed-only after a full run: %v, %+v; want nothing to do", err, res)
	}
	if err := db.QueryRow(`SELECT status FROM summary_runs WHERE id = ?`, dead).Scan(&status); err != nil || status != "interrupted" {
		t.Errorf("stale running row: status %q (%v), want interrupted", status, err)
	}

	// An import batch touching one series makes --changed-only recompute
	// exactly that series.
	// 2023-05-20T06:00:00Z: on the daily series' grid, after its last reading.
	b, err := beginFixtureBatch(ctx, fx.s, fx.ids["daily"], 1684562400, 12.5)
	if err != nil {
		t.Fatal(err)
	}
	res, err = Run(ctx, fx.s, oc)
	if err != nil || res.Computed != 1 || res.Skipped != 4 {
		t.Fatalf("--changed-only after one batch: %v, %+v; want 1 computed, 4 skipped", err, res)
	}
	var ids []int64
	rows, _ := db.Query(`SELECT series_id FROM series_summaries WHERE run_id = ?`, res.RunID)
	for _, r := range storetest.ScanAll(t, rows) {
		ids = append(ids, r[0].(int64))
	}
	if len(ids) != 1 || ids[0] != fx.ids["daily"] {
		t.Errorf("changed-only run summarised %v, want [%d]", ids, fx.ids["daily"])
	}
	// Its FDR-adjusted p is adjusted across the whole selection: the new
	// p-value together with the stored ones of the skipped series.
	var pNew, pFDR float64
	if err := db.QueryRow(`SELECT mk_p, trend_p_fdr FROM series_summaries WHERE run_id = ?`, res.RunID).Scan(&pNew, &pFDR); err != nil {
		t.Fatal(err)
	}
	family := []float64{pNew}
	rows, _ = db.Query(`SELECT mk_p FROM series_summaries WHERE run_id = ? AND series_id <> ? AND mk_p IS NOT NULL`, first.RunID, fx.ids["daily"])
	for _, r := range storetest.ScanAll(t, rows) {
		family = append(family, asFloat(r[0]))
	}
	if len(family) != 4 {
		t.Fatalf("family of %d p-values, want 4 (the short series has none)", len(family))
	}
	t.Run("changed_only_fdr_family", func(t *testing.T) {
		if want, ok := rBHAdjust(t, family); ok && !sameNum(pFDR, want[0], relExact) {
			t.Errorf("changed-only trend_p_fdr = %v, R p.adjust(%v, \"BH\")[1] = %v", pFDR, family, want[0])
		}
	})
	var hw int64
	_ = db.QueryRow(`SELECT batch_high_water FROM summary_runs WHERE id = ?`, res.RunID).Scan(&hw)
	if hw != b {
		t.Errorf("batch_high_water = %d, want the batch %d", hw, b)
	}
	// The view: the new run for the daily series, the first for the rest.
	rows, _ = db.Query(`SELECT series_id, run_id FROM latest_series_summaries ORDER BY series_id`)
	for _, r := range storetest.ScanAll(t, rows) {
		want := first.RunID
		if r[0] == fx.ids["daily"] {
			want = res.RunID
		}
		if r[1] != want {
			t.Errorf("latest_series_summaries: series %v from run %v, want %d", r[0], r[1], want)
		}
	}
	if _, err := Run(ctx, fx.s, oc); !errors.Is(err, ErrNothingToDo) {
		t.Errorf("second --changed-only: %v, want nothing to do", err)
	}
	// Other parameters: nothing to compare with, so everything is computed.
	// A time window and another confidence level: the figures are those of
	// the SQL functions over the window's readings.
	oc2 := oc
	oc2.Model.MaxLag = 12
	oc2.Model.Confidence = 0.9
	since, until := int64(1577836800), int64(1640995199) // 2020-01-01T00:00:00Z .. 2021-12-31T23:59:59Z
	oc2.Since, oc2.Until = &since, &until
	res2, err := Run(ctx, fx.s, oc2)
	if err != nil || res2.Computed != 5 {
		t.Fatalf("--changed-only with other parameters: %v, %+v; want all 5 computed", err, res2)
	}
	row := storedRow(t, db, res2.RunID, fx.ids["daily"])
	window := `FROM readings WHERE series_id = ? AND t BETWEEN ? AND ?`
	var n, t0, t1 int64
	if err := db.QueryRow(`SELECT count(*), min(t), max(t) `+window, fx.ids["daily"], since, until).Scan(&n, &t0, &t1); err != nil {
		t.Fatal(err)
	}
	if n < 600 || n > 731 {
		t.Fatalf("fixture: the window should hold about two years of daily readings, has %d", n)
	}
	// The interval pairs with the stored test: the Hamed–Rao variance when
	// its factor is ≥ 1 (the daily fixture is serially correlated).
	mkw := sqlJSON(t, db, `SELECT mann_kendall(t, value, 'correct=hamed-rao') `+window, fx.ids["daily"], since, until)
	senCall := `SELECT sen_slope(t, value, 0.9) `
	if f, ok := mkw["correction_factor"].(float64); ok && f >= 1 {
		senCall = `SELECT sen_slope(t, value, 0.9, 'variance=hamed-rao') `
	}
	sen := sqlJSON(t, db, senCall+window, fx.ids["daily"], since, until)
	tf := sqlJSON(t, db, `SELECT trend_fit(t, value) `+window, fx.ids["daily"], since, until)
	checkFigures(t, row, "SQL functions over 2020–2021 at confidence 0.9", []figure{
		{"n", n, 0}, {"t_first", t0, 0}, {"t_last", t1, 0},
		{"sen_slope_per_year", sen["slope_per_year"], relExact}, {"sen_lower", sen["lower"], relExact},
		{"sen_upper", sen["upper"], relExact}, {"sen_confidence", 0.9, 0},
		{"slope_per_year", tf["slope_per_year"], relExact}, {"hac_p", tf["hac_p"], relP},
	})

	// The lock: while held, a run without Wait returns ErrBusy; with Wait
	// it runs once the lock is released.
	release, err := lockSummarize(ctx, fx.s.Path, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Run(ctx, fx.s, o); !errors.Is(err, ErrBusy) {
		t.Errorf("Summarize while locked: %v, want ErrBusy", err)
	}
	// The same store through a symbolic link shares the lock.
	link := filepath.Join(t.TempDir(), "link.db")
	if err := os.Symlink(fx.s.Path, link); err != nil {
		t.Fatal(err)
	}
	viaLink, err := store.Open(ctx, link, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Run(ctx, viaLink, o); !errors.Is(err, ErrBusy) {
		t.Errorf("Summarize through a symbolic link while locked: %v, want ErrBusy", err)
	}
	viaLink.Close()
	// A waiting run stops when its context ends (Ctrl-C), without a run row.
	runsBefore := 0
	_ = db.QueryRow(`SELECT count(*) FROM summary_runs`).Scan(&runsBefore)
	wctx, wcancel := context.WithCancel(ctx)
	stopped := make(chan error, 1)
	ow0 := o
	ow0.Wait = time.Hour
	go func() { _, err := Run(wctx, fx.s, ow0); stopped <- err }()
	wcancel()
	if err := <-stopped; !errors.Is(err, context.Canceled) || !strings.Contains(err.Error(), "waiting") {
		t.Errorf("cancelled while waiting for the lock: %v, want context.Canceled while waiting", err)
	}
	runsAfter := 0
	_ = db.QueryRow(`SELECT count(*) FROM summary_runs`).Scan(&runsAfter)
	if runsAfter != runsBefore {
		t.Errorf("a run cancelled while waiting recorded a run row (%d → %d)", runsBefore, runsAfter)
	}
	done := make(chan error, 1)
	ow := o
	ow.Wait = time.Hour
	go func() { _, err := Run(ctx, fx.s, ow); done <- err }()
	select {
	case err := <-done:
		t.Errorf("Summarize --wait returned while the lock was held: %v", err)
	case <-time.After(200 * time.Millisecond):
		// still waiting, as it should (not a timing assertion on speed:
		// it must not finish at all while the lock is held)
	}
	release()
	if err := <-done; err != nil {
		t.Errorf("Summarize --wait after release: %v", err)
	}

	// A failing run is recorded as failed and leaves earlier results.
	var before int64
	_ = db.QueryRow(`SELECT count(*) FROM latest_series_summaries`).Scan(&before)
	of := o
	of.Where = "no_such_column = 1"
	var selErr *SelectError
	if _, err := Run(ctx, fx.s, of); !errors.As(err, &selErr) || !strings.Contains(err.Error(), "no_such_column") {
		t.Errorf("bad Where: %v, want a SelectError naming the column", err)
	}
	// The condition cannot write, even smuggled in as a second statement.
	for _, where := range []string{
		"1=1) ORDER BY s.id; UPDATE stations SET name = 'changed'; SELECT 1 WHERE (1",
		"(SELECT count(*) FROM (SELECT 1)) > 0); UPDATE stations SET name = 'changed' --",
	} {
		ow := o
		ow.Where = where
		_, err := Run(ctx, fx.s, ow)
		var changed int64
		_ = db.QueryRow(`SELECT count(*) FROM stations WHERE name = 'changed'`).Scan(&changed)
		if err == nil || changed != 0 {
			t.Errorf("--where %q: err %v, %d stations renamed; want an error and no change", where, err, changed)
		}
	}
	// A run whose write fails half-way (here: the irregular series'
	// correlogram repeats a lag, a primary-key violation after the rows of
	// the series before it were inserted) is recorded as failed with its error, and none of
	// its rows is visible.
	viewBefore := fmt.Sprint(storetest.ScanAll(t, mustQuery(t, db, `SELECT series_id, run_id FROM latest_series_summaries ORDER BY series_id`)))
	obad := o
	obad.Analyze = func(tt, y []float64, opts stats.SummaryOptions) stats.SeriesSummary {
		sum := stats.SummarizeSeries(tt, y, opts)
		if len(tt) > 50 && len(tt) < 100 { // the irregular series, written after the daily and hourly ones
			sum.Correlogram = append(sum.Correlogram, sum.Correlogram[len(sum.Correlogram)-1])
		}
		return sum
	}
	obad.Workers = 1
	rbad, err := Run(ctx, fx.s, obad)
	if err == nil || rbad == nil || rbad.RunID == 0 || !strings.Contains(err.Error(), "correlogram") {
		t.Fatalf("run with a failing write: %v, %+v; want a correlogram write error", err, rbad)
	}
	var badErr sql.NullString
	if err := db.QueryRow(`SELECT status, error FROM summary_runs WHERE id = ?`, rbad.RunID).Scan(&status, &badErr); err != nil ||
		status != "failed" || !strings.Contains(badErr.String, "UNIQUE") {
		t.Errorf("failed run row: status %q, error %v (%v); want failed with the constraint error", status, badErr, err)
	}
	if ss, cg := queryInt64(t, db, `SELECT count(*) FROM series_summaries WHERE run_id = ?`, rbad.RunID),
		queryInt64(t, db, `SELECT count(*) FROM series_correlograms WHERE run_id = ?`, rbad.RunID); ss != 0 || cg != 0 {
		t.Errorf("failed run left %d summaries and %d correlogram rows", ss, cg)
	}
	if after := fmt.Sprint(storetest.ScanAll(t, mustQuery(t, db, `SELECT series_id, run_id FROM latest_series_summaries ORDER BY series_id`))); after != viewBefore {
		t.Errorf("latest_series_summaries changed after a failed run:\n before %s\n after  %s", viewBefore, after)
	}
	cctx, cancel := context.WithCancel(ctx)
	oc3 := o
	oc3.Progress = func(done, total int) { cancel() }
	oc3.Workers = 1
	r3, err := Run(cctx, fx.s, oc3)
	if !errors.Is(err, context.Canceled) || r3 == nil || r3.RunID == 0 {
		t.Fatalf("cancelled run: %v, %+v", err, r3)
	}
	var msg sql.NullString
	if err := db.QueryRow(`SELECT status, error FROM summary_runs WHERE id = ?`, r3.RunID).Scan(&status, &msg); err != nil || status != "interrupted" || !msg.Valid {
		t.Errorf("cancelled run row: %s %v (%v)", status, msg, err)
	}
	var after, partial int64
	_ = db.QueryRow(`SELECT count(*) FROM latest_series_summaries`).Scan(&after)
	_ = db.QueryRow(`SELECT count(*) FROM series_summaries WHERE run_id = ?`, r3.RunID).Scan(&partial)
	if after != before || partial != 0 {
		t.Errorf("after a cancelled run: view rows %d (before %d), rows of the cancelled run %d", after, before, partial)
	}
}

// beginFixtureBatch records an import batch that adds one reading to a
// series, the way the importer does (import_batches + series_batches +
// readings in one transaction), and returns the batch id.
func beginFixtureBatch(ctx context.Context, s *store.Store, series, t int64, v float64) (int64, error) {
	tx, err := s.DB.BeginTx(ctx, nil)
	if err != nil {
		return 0, err
	}
	defer tx.Rollback()
	var b int64
	if err := tx.QueryRow(`INSERT INTO import_batches(kind, source, started_at, finished_at, rows_read, rows_stored)
		VALUES ('readings', 'fixture', '2026-01-01T00:00:00Z', '2026-01-01T00:00:00Z', 1, 1) RETURNING id`).Scan(&b); err != nil {
		return 0, err
	}
	if _, err := tx.Exec(`INSERT INTO readings(series_id, t, value) VALUES (?, ?, ?)`, series, t, v); err != nil {
		return 0, err
	}
	if _, err := tx.Exec(`INSERT INTO series_batches(series_id, batch_id, rows) VALUES (?, ?, 1)`, series, b); err != nil {
		return 0, err
	}
	return b, tx.Commit()
}

// holdWriteLock takes the store's write lock on a connection of its own
// (BEGIN IMMEDIATE) and releases it after d, or when release is called.
func holdWriteLock(t *testing.T, s *store.Store, d time.Duration) (release func()) {
	t.Helper()
	ctx := context.Background()
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := conn.ExecContext(ctx, "BEGIN IMMEDIATE"); err != nil {
		t.Fatal(err)
	}
	var once sync.Once
	release = func() {
		once.Do(func() {
			conn.ExecContext(ctx, "ROLLBACK")
			conn.Close()
		})
	}
	time.AfterFunc(d, release)
	return release
}

// summarizeBehindLock runs a summary with o while another connection takes
// the write lock for hold as soon as the last series has been computed (so
// the lock is held while the run writes).
func summarizeBehindLock(t *testing.T, s *store.Store, o Options, hold time.Duration) (*Result, error) {
	var release func()
	var mu sync.Mutex
	o.Progress = func(done, total int) {
		mu.Lock()
		defer mu.Unlock()
		if done == total && release == nil {
			release = holdWriteLock(t, s, hold)
		}
	}
	res, err := Run(context.Background(), s, o)
	mu.Lock()
	if release != nil {
		release()
	}
	mu.Unlock()
	return res, err
}

// TestSummarizeWriteWaitsForOtherWriter: another connection holds the write
// lock (as a long import does) when the computed run is written. With
// attempts shortened to 100 ms, the write retries until the lock is
// released and the run is stored; with a write wait shorter than the hold
// the run fails, is recorded as failed, and stores no series rows.
func TestSummarizeWriteWaitsForOtherWriter(t *testing.T) {
	fx := buildSummaryFixture(t)
	saved := writeAttempt
	writeAttempt = 100 * time.Millisecond
	defer func() { writeAttempt = saved }()

	run := func(hold, wait time.Duration) (*Result, error) {
		o := fixtureOptions(0)
		o.WriteWait = wait
		return summarizeBehindLock(t, fx.s, o, hold)
	}

	retries := writeRetries.Load()
	res, err := run(700*time.Millisecond, time.Minute)
	if err != nil {
		t.Fatalf("write behind a 0.7 s lock: %v", err)
	}
	if writeRetries.Load() == retries {
		t.Errorf("no write attempt found the store busy: the lock was not held while the run wrote, the test proved nothing")
	}
	var n int
	var status string
	if err := fx.s.DB.QueryRow(`SELECT count(*) FROM series_summaries WHERE run_id = ?`, res.RunID).Scan(&n); err != nil || n != 5 {
		t.Errorf("stored rows %d (%v), want 5", n, err)
	}
	if err := fx.s.DB.QueryRow(`SELECT status FROM summary_runs WHERE id = ?`, res.RunID).Scan(&status); err != nil || status != "ok" {
		t.Errorf("run status %q (%v), want ok", status, err)
	}

	res, err = run(2*time.Second, 300*time.Millisecond)
	if err == nil || !isBusy(err) || !strings.Contains(err.Error(), "longer than the write wait (300ms)") {
		t.Fatalf("write behind a 2 s lock with a 0.3 s wait: %v; want a busy error naming the wait", err)
	}
	if err := fx.s.DB.QueryRow(`SELECT count(*) FROM series_summaries WHERE run_id = ?`, res.RunID).Scan(&n); err != nil || n != 0 {
		t.Errorf("failed run stored %d rows (%v)", n, err)
	}
	if err := fx.s.DB.QueryRow(`SELECT status FROM summary_runs WHERE id = ?`, res.RunID).Scan(&status); err != nil || status != "failed" {
		t.Errorf("failed run status %q (%v), want failed", status, err)
	}
}

// TestSummarizeFailureRecordWaitsForOtherWriter: when the final write gives
// up behind another writer, the run's 'failed' status is still recorded
// once that writer is done, by retrying past single busy timeouts (here
// 0.1 s each against a lock held 1.5 s) instead of trying once.
func TestSummarizeFailureRecordWaitsForOtherWriter(t *testing.T) {
	fx := buildSummaryFixture(t)
	savedAttempt, savedWait := writeAttempt, failRecordWait
	writeAttempt, failRecordWait = 100*time.Millisecond, 10*time.Second
	defer func() { writeAttempt, failRecordWait = savedAttempt, savedWait }()
	o := fixtureOptions(0)
	o.WriteWait = 300 * time.Millisecond
	retries := failRecordRetries.Load()
	res, err := summarizeBehindLock(t, fx.s, o, 1500*time.Millisecond)
	if err == nil || !isBusy(err) {
		t.Fatalf("write behind a 1.5 s lock with a 0.3 s wait: %v; want a busy error", err)
	}
	if failRecordRetries.Load() == retries {
		t.Errorf("recording the failure never found the store busy: the test proved nothing")
	}
	var status, msg string
	if err := fx.s.DB.QueryRow(`SELECT status, error FROM summary_runs WHERE id = ?`, res.RunID).Scan(&status, &msg); err != nil || status != "failed" || !strings.Contains(msg, "write wait") {
		t.Errorf("run status %q, error %q (%v); want failed with the write-wait error", status, msg, err)
	}
}

// TestCorrelogramBatchesMatchRows: the full-batch statements of
// series_correlograms store exactly the rows the one tail statement stores
// (a batch of 7 rows makes the fixture's 75 rows fill ten full statements
// and leave a tail of 5).
func TestCorrelogramBatchesMatchRows(t *testing.T) {
	fx := buildSummaryFixture(t)
	dump := func(run int64) [][]any {
		rows, err := fx.s.DB.Query(`SELECT series_id, lag, acvf, acf, pacf, band, ljung_box_q, ljung_box_p
			FROM series_correlograms WHERE run_id = ? ORDER BY series_id, lag`, run)
		if err != nil {
			t.Fatal(err)
		}
		return storetest.ScanAll(t, rows)
	}
	saved := correlogramBatch
	defer func() { correlogramBatch = saved }()
	correlogramBatch = 1000 // every row in the tail statement
	tail := mustRun(t, fx.s, fixtureOptions(0))
	correlogramBatch = 7
	batched := mustRun(t, fx.s, fixtureOptions(0))
	a, b := dump(tail.RunID), dump(batched.RunID)
	if len(a) < 2*7 || len(a) != len(b) {
		t.Fatalf("rows: %d in one tail statement, %d batched (want equal, and enough for full batches)", len(a), len(b))
	}
	for i := range a {
		if fmt.Sprint(a[i]) != fmt.Sprint(b[i]) {
			t.Fatalf("row %d: %v in the tail statement, %v batched", i, a[i], b[i])
		}
	}
}
