package report

import (
	"context"
	"database/sql"
	"fmt"

	"trendsql/sqlfuncs/stats"
	"trendsql/store/summaries"
)

// computeNow computes the figures of the given series as a summarize run
// with the model m (and the time window since/until) would
// (summaries.Compute: the same analysis, censored series through the
// censoring-aware methods) and fills their Sum and Lags. Nothing is
// written. With keepFDR false the Benjamini–Hochberg q and the trend flag
// derived from it are left out: across only these series they would not
// be the run's.
func computeNow(ctx context.Context, db *sql.DB, m stats.SummaryOptions, since, until *int64, series []*Series, keepFDR bool) (int, error) {
	ids := make([]int64, len(series))
	byID := map[int64]*Series{}
	for i, s := range series {
		ids[i] = s.ID
		byID[s.ID] = s
	}
	got, err := summaries.Compute(ctx, db, ids, summaries.Options{Model: m, Since: since, Until: until, Analyze: stats.SummarizeSeries})
	if err != nil {
		return 0, fmt.Errorf("report: computing the figures: %w", err)
	}
	n := 0
	for _, c := range got {
		s := byID[c.SeriesID]
		if s == nil {
			continue
		}
		s.Sum = row(c.Columns)
		if !keepFDR {
			delete(s.Sum, "trend_p_fdr")
			delete(s.Sum, "trend_detected")
		}
		s.Lags = s.Lags[:0]
		for _, l := range c.Correlogram {
			s.Lags = append(s.Lags, Lag{Lag: l.Lag, ACF: l.ACF, Band: l.Band, LBP: l.LBP})
		}
		n++
	}
	return n, nil
}

// computeAllNow computes every selected series with summarize's model m,
// the FDR adjustment across them, for a store that holds no run of the
// selection.
func computeAllNow(ctx context.Context, db *sql.DB, m stats.SummaryOptions, series []*Series) (*Run, error) {
	n, err := computeNow(ctx, db, m, nil, nil, series, true)
	if err != nil {
		return nil, err
	}
	r := &Run{Unstored: true, PeriodS: m.PeriodS, Harmonics: m.Harmonics, Seasons: m.Seasons, MaxLag: m.MaxLag,
		LBLags: m.LBLags, MinN: m.MinN, Alpha: m.Alpha, Confidence: m.Confidence, CensoredFits: m.CensoredFits, SeriesInRun: n}
	if r.PeriodS <= 0 {
		r.Harmonics, r.Seasons = 0, 0
	}
	return r, nil
}

// model is the run's summarize model.
func (r *Run) model() stats.SummaryOptions {
	m := stats.SummaryOptions{PeriodS: r.PeriodS, Harmonics: r.Harmonics, Seasons: r.Seasons, MaxLag: r.MaxLag,
		LBLags: r.LBLags, Alpha: r.Alpha, Confidence: r.Confidence, MinN: max(r.MinN, 3), CensoredFits: r.CensoredFits}
	if m.PeriodS > 0 {
		// summarize accepts 2 to 366 seasons and 1 to 6 harmonics.
		m.Seasons, m.Harmonics = min(max(m.Seasons, 2), 366), min(max(m.Harmonics, 1), 6)
	}
	return m
}
