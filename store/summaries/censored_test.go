package summaries

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"trendsql/store/storetest"
)

// TestSummarizeCensoredSeries: a series with censored readings is
// summarised with the censored rank methods (the same figures as the SQL
// functions on its rows), its censoring is stored, least-squares and
// correlogram figures are skipped unless asked, and a mostly censored
// series gets a note and no trend flag.
func TestSummarizeCensoredSeries(t *testing.T) {
	s := storetest.Open(t)
	rng := rand.New(rand.NewPCG(13, 13))
	const n = 60
	tt := make([]int64, n)
	y := make([]float64, n)
	for i := range tt {
		tt[i] = 1.5e9 + int64(i)*30*86400
		y[i] = math.Round((3+0.05*float64(i)+rng.NormFloat64())*10) / 10
	}
	some := storetest.InsertSeries(t, s.DB, "W1", "tp", tt, y)
	most := storetest.InsertSeries(t, s.DB, "W2", "tp", tt, y)
	// W1: values below 2 (limit 2 until the 30th sample) or 4 (after) are
	// censored at their limit; W2: everything below 4.5.
	if _, err := s.DB.Exec(`UPDATE readings SET censored = '<', value = CASE WHEN t < ? THEN 2 ELSE 4 END
		WHERE series_id = ? AND value < CASE WHEN t < ? THEN 2 ELSE 4 END`, tt[30], some, tt[30]); err != nil {
		t.Fatal(err)
	}
	if _, err := s.DB.Exec(`UPDATE readings SET censored = '<', value = 4.5 WHERE series_id = ? AND value < 4.5`, most); err != nil {
		t.Fatal(err)
	}
	o := fixtureOptions(0)
	res := mustRun(t, s, o)
	for _, c := range []struct {
		id       int64
		mostly   bool
		censored int64
	}{{some, false, queryInt64(t, s.DB, `SELECT count(censored) FROM readings WHERE series_id = ?`, some)},
		{most, true, queryInt64(t, s.DB, `SELECT count(censored) FROM readings WHERE series_id = ?`, most)}} {
		row := storedRow(t, s.DB, res.RunID, c.id)
		if c.censored == 0 || (2*c.censored > n) != c.mostly {
			t.Fatalf("fixture: series %d has %d censored of %d", c.id, c.censored, n)
		}
		mk := sqlJSON(t, s.DB, `SELECT censored_mann_kendall(t, value, censored) FROM readings WHERE series_id = ?`, c.id)
		sen := sqlJSON(t, s.DB, `SELECT censored_sen_slope(t, value, censored) FROM readings WHERE series_id = ?`, c.id)
		if row["mk_method"] != "censored-mann-kendall" {
			t.Errorf("series %d: mk_method %v", c.id, row["mk_method"])
		}
		checkFigures(t, row, "censored_mann_kendall / censored_sen_slope", []figure{
			{"mk_s", mk["s"], relExact}, {"mk_var_s", mk["var_s"], relExact}, {"mk_z", mk["z"], relExact},
			{"mk_p", mk["p"], relExact}, {"mk_tau", mk["tau"], relExact},
			{"sen_slope_per_year", sen["slope_per_year"], relExact},
			{"censored_share", mk["censored_share"], relExact}, {"censoring_limits", mk["limits"], relExact},
			{"highest_limit", mk["highest_limit"], relExact},
			{"slope_per_year", nil, 0}, {"lb_p", nil, 0}, {"mean", nil, 0}, {"pettitt_p", nil, 0},
			{"mk_correction_factor", nil, 0}, {"sen_lower", nil, 0},
		})
		if k := queryInt64(t, s.DB, `SELECT count(*) FROM series_correlograms WHERE run_id = ? AND series_id = ?`, res.RunID, c.id); k != 0 {
			t.Errorf("series %d: %d correlogram rows", c.id, k)
		}
		notes, _ := row["notes"].(string)
		if !strings.Contains(notes, "least-squares trend, correlogram and Pettitt skipped") {
			t.Errorf("series %d notes %q", c.id, notes)
		}
		if c.mostly {
			if row["trend_detected"] != nil || !strings.Contains(notes, "more than half the readings are censored: no trend is flagged from the test (common practice)") {
				t.Errorf("mostly censored: trend_detected %v, notes %q", row["trend_detected"], notes)
			}
		} else if row["trend_detected"] == nil {
			t.Errorf("series %d: no trend flag", c.id)
		}
	}
	if asFloat(storedRow(t, s.DB, res.RunID, some)["censoring_limits"]) != 2 {
		t.Error("W1 should have two reporting limits")
	}
	// Asked for: the least-squares figures on the stored numbers, with a note.
	o.Model.CensoredFits = true
	res = mustRun(t, s, o)
	row := storedRow(t, s.DB, res.RunID, some)
	fit := sqlJSON(t, s.DB, `SELECT trend_fit(t, value_number) FROM readings_view WHERE series_id = ?`, some)
	checkFigures(t, row, "trend_fit on value_number", []figure{{"slope_per_year", fit["slope_per_year"], relMean}})
	if notes, _ := row["notes"].(string); !strings.Contains(notes, "use the stored numbers (censored values at their limits)") || row["mk_method"] != "censored-mann-kendall" {
		t.Errorf("with fits: notes %q, method %v", notes, row["mk_method"])
	}
	// Seasonal: the censored seasonal Kendall test on the readings.
	o = fixtureOptions(31557600)
	o.Model.Seasons = 4
	res = mustRun(t, s, o)
	row = storedRow(t, s.DB, res.RunID, some)
	sk := sqlJSON(t, s.DB, `SELECT censored_seasonal_kendall(t, value, censored, '1y', 4) FROM readings WHERE series_id = ?`, some)
	if row["mk_method"] != "censored-seasonal-kendall" {
		t.Errorf("seasonal mk_method %v", row["mk_method"])
	}
	checkFigures(t, row, "censored_seasonal_kendall", []figure{{"mk_s", sk["s"], relExact}, {"mk_p", sk["p"], relExact}})
}
