package report

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/store/summaries"
)

// computeMissing fills the figures of a series that the run lacks, with the
// run's parameters and the store's SQL functions: the least-squares trend
// (trend_fit), the Sen slope (sen_slope), the rank trend test
// (seasonal_kendall with a period, else mann_kendall with the Hamed–Rao
// correction) and the residual correlogram (correlogram, on the time grid,
// or in reading order when the times fit no grid). No FDR adjustment is
// made: that needs the whole run.
func computeMissing(ctx context.Context, db *sql.DB, run *Run, s *Series) error {
	r := row{"series_id": s.ID, "unit": s.Unit, "insufficient_data": int64(0)}
	s.Sum, s.OnTheFly = r, true
	var n, t0, t1 sql.NullInt64
	var mean sql.NullFloat64
	if err := db.QueryRowContext(ctx, `SELECT count(*), min(t), max(t), avg(value) FROM readings WHERE series_id = ?`, s.ID).
		Scan(&n, &t0, &t1, &mean); err != nil {
		return fmt.Errorf("report: series %d: %w", s.ID, err)
	}
	r["n"], r["t_first"], r["t_last"] = n.Int64, t0.Int64, t1.Int64
	r["mean"] = nullF(mean)
	minN := int64(max(run.MinN, 3))
	if n.Int64 < minN {
		r["insufficient_data"] = int64(1)
		r["notes"] = fmt.Sprintf("%d readings, fewer than the run's minimum of %d", n.Int64, minN)
		return nil
	}
	r["years"] = float64(t1.Int64-t0.Int64) / secondsPerYear
	spec := "degree=1"
	if run.PeriodS > 0 && run.Harmonics > 0 {
		spec += fmt.Sprintf(", period=%s, harmonics=%d", seconds(run.PeriodS), run.Harmonics)
	}
	var notes []string
	var model sql.NullString
	err := db.QueryRowContext(ctx, `SELECT trend_fit(t, value, ?) FROM readings WHERE series_id = ?`, spec, s.ID).Scan(&model)
	if err != nil {
		notes = append(notes, "least-squares trend not computed: "+err.Error())
	} else if model.Valid {
		r["trend_model"] = model.String
		var m map[string]any
		if json.Unmarshal([]byte(model.String), &m) == nil {
			for _, k := range []string{"slope_per_year", "slope_se", "slope_p", "hac_slope_se", "hac_p", "r2", "n_eff", "n_eff_p"} {
				if v, ok := m[k].(float64); ok {
					r[k] = v
				}
			}
			if v, ok := m["hac_lags"].(float64); ok {
				r["hac_lags"] = int64(v)
			}
		}
		if sl, mu := r.f("slope_per_year"), r.f("mean"); mu != 0 && !math.IsNaN(sl) {
			r["pct_per_decade"] = 10 * sl / math.Abs(mu) * 100
		}
	}
	var sen sql.NullString
	if err := db.QueryRowContext(ctx, `SELECT sen_slope(t, value, ?) FROM readings WHERE series_id = ?`, run.Confidence, s.ID).Scan(&sen); err == nil && sen.Valid {
		var m struct {
			Slope, Lower, Upper, Confidence *float64
		}
		var raw map[string]*float64
		if json.Unmarshal([]byte(sen.String), &raw) == nil {
			m.Slope, m.Lower, m.Upper, m.Confidence = raw["slope_per_year"], raw["lower"], raw["upper"], raw["confidence"]
			for k, v := range map[string]*float64{"sen_slope_per_year": m.Slope, "sen_lower": m.Lower, "sen_upper": m.Upper, "sen_confidence": m.Confidence} {
				if v != nil {
					r[k] = *v
				}
			}
		}
	}
	var mk sql.NullString
	if run.PeriodS > 0 {
		err = db.QueryRowContext(ctx, `SELECT seasonal_kendall(t, value, ?, ?) FROM readings WHERE series_id = ?`,
			seconds(run.PeriodS), max(run.Seasons, 2), s.ID).Scan(&mk)
		r["mk_method"] = "seasonal-kendall"
	} else {
		err = db.QueryRowContext(ctx, `SELECT mann_kendall(t, value, 'correct=hamed-rao') FROM readings WHERE series_id = ?`, s.ID).Scan(&mk)
		r["mk_method"] = "mann-kendall/hamed-rao"
	}
	if err != nil {
		notes = append(notes, "rank trend test not computed: "+err.Error())
		delete(r, "mk_method")
	} else if mk.Valid {
		var raw map[string]any
		if json.Unmarshal([]byte(mk.String), &raw) == nil {
			p, ok := raw["p_corrected"].(float64)
			if !ok {
				p, ok = raw["p_dependent"].(float64)
			}
			if !ok {
				p, ok = raw["p"].(float64)
			}
			if ok {
				r["mk_p"] = p
			}
		}
	}
	if model.Valid {
		if err := flyCorrelogram(ctx, db, run, s, model.String); err != nil {
			notes = append(notes, "residual correlogram not computed: "+err.Error())
		}
	}
	if len(notes) > 0 {
		r["notes"] = strings.Join(notes, "; ")
	}
	return nil
}

// seconds writes a duration in seconds as the SQL functions read it.
func seconds(s float64) string { return strconv.FormatFloat(s, 'f', -1, 64) + "s" }

func flyCorrelogram(ctx context.Context, db *sql.DB, run *Run, s *Series, model string) error {
	maxLag := run.MaxLag
	var c sql.NullString
	err := db.QueryRowContext(ctx, `SELECT correlogram(t, trend_residual(?, t, value), ?) FROM readings WHERE series_id = ?`,
		model, maxLag, s.ID).Scan(&c)
	basis := "time-grid"
	if err != nil {
		// Times that fit no grid: lags count readings (one second apart by construction).
		err = db.QueryRowContext(ctx, `SELECT correlogram(k, e, ?, 'step=1s') FROM
			(SELECT row_number() OVER (ORDER BY t) AS k, trend_residual(?, t, value) AS e FROM readings WHERE series_id = ?)`,
			maxLag, model, s.ID).Scan(&c)
		basis = "reading-order"
	}
	if err != nil {
		return err
	}
	var cg struct {
		StepS float64 `json:"step_s"`
		Lags  []struct {
			Lag  int      `json:"lag"`
			ACF  *float64 `json:"acf"`
			Band *float64 `json:"band"`
			P    *float64 `json:"p_lb"`
		} `json:"lags"`
	}
	if err := json.Unmarshal([]byte(c.String), &cg); err != nil {
		return err
	}
	s.Sum["acf_basis"] = basis
	if basis == "time-grid" {
		s.Sum["step_s"] = cg.StepS
	}
	for _, l := range cg.Lags {
		x := Lag{Lag: l.Lag, ACF: math.NaN(), Band: math.NaN(), LBP: math.NaN()}
		if l.ACF != nil {
			x.ACF = *l.ACF
		}
		if l.Band != nil {
			x.Band = *l.Band
		}
		if l.P != nil {
			x.LBP = *l.P
		}
		s.Lags = append(s.Lags, x)
	}
	if len(s.Lags) > 0 {
		s.Sum["resid_acf1"] = s.Lags[0].ACF
	}
	return nil
}

// computeAllNow computes the figures of every selected series as a
// summarize run with the model m would (summaries.Compute: the same
// analysis, censored series through the censoring-aware methods, the
// Benjamini–Hochberg adjustment across the selection), for a store that
// holds no run of the selection. Nothing is written.
func computeAllNow(ctx context.Context, db *sql.DB, m stats.SummaryOptions, series []*Series) (*Run, error) {
	ids := make([]int64, len(series))
	byID := map[int64]*Series{}
	for i, s := range series {
		ids[i] = s.ID
		byID[s.ID] = s
	}
	got, err := summaries.Compute(ctx, db, ids, summaries.Options{Model: m, Analyze: stats.SummarizeSeries})
	if err != nil {
		return nil, fmt.Errorf("report: computing the figures: %w", err)
	}
	for _, c := range got {
		s := byID[c.SeriesID]
		if s == nil {
			continue
		}
		s.Sum = row(c.Columns)
		for _, l := range c.Correlogram {
			s.Lags = append(s.Lags, Lag{Lag: l.Lag, ACF: l.ACF, Band: l.Band, LBP: l.LBP})
		}
	}
	r := &Run{Unstored: true, PeriodS: m.PeriodS, Harmonics: m.Harmonics, Seasons: m.Seasons, MaxLag: m.MaxLag,
		LBLags: m.LBLags, MinN: m.MinN, Alpha: m.Alpha, Confidence: m.Confidence, SeriesInRun: len(got)}
	if r.PeriodS <= 0 {
		r.Harmonics, r.Seasons = 0, 0
	}
	return r, nil
}
