package benchmark

import (
	"context"
	"database/sql"

	"trendsql/store"
)

// Query is one measured statement.
type Query struct {
	Name  string   // short label
	SQL   string   // the statement
	Needs []string // SQL functions it calls that trendsql defines
}

// ScanName is the label of the reference scan every ratio divides by.
const ScanName = "scan avg()"

// OnePassSQL computes the OLS slope per year, the residual correlogram
// to lag 48 and the residual Ljung–Box test at lag 24 of every series with a
// single correlogram(…, 'detrend=linear') per series.
const OnePassSQL = `SELECT series_id, c ->> 'detrend_slope_per_year' AS slope_per_year, c ->> '$.lags[23].q_lb' AS lb_q, c ->> '$.lags[23].p_lb' AS lb_p, c AS correlogram FROM (SELECT series_id, correlogram(t, value, 48, 'detrend=linear') AS c FROM readings GROUP BY series_id)`

// Queries are the statements `trendsql bench` measures, in order. The
// first is the reference scan.
var Queries = []Query{
	{ScanName, `SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id`, nil},
	{"regr_slope", `SELECT series_id, regr_slope(value, t) FROM readings GROUP BY series_id`, []string{"regr_slope"}},
	{"trend_slope", `SELECT series_id, trend_slope(t, value) FROM readings GROUP BY series_id`, []string{"trend_slope"}},
	{"trend_fit season", `SELECT series_id, trend_fit(t, value, 'period=1y,harmonics=2') FROM readings GROUP BY series_id`, []string{"trend_fit"}},
	{"sample_acf lag 1", `SELECT series_id, sample_acf(t, value, 1) FROM readings GROUP BY series_id`, []string{"sample_acf"}},
	{"correlogram 48", `SELECT series_id, correlogram(t, value, 48) FROM readings GROUP BY series_id`, []string{"correlogram"}},
	{"ljung_box 24", `SELECT series_id, ljung_box(t, value, 24) FROM readings GROUP BY series_id`, []string{"ljung_box"}},
	// The three figures of the Python scripts (testdata/bench): the OLS
	// slope, and the correlogram and Ljung–Box test of the residuals of the
	// straight-line fit.
	{"trend+correlogram+LB", `SELECT series_id, trend_slope(t, value), correlogram(t, value, 48, 'detrend=linear'), ljung_box(t, value, 24, 0, 'detrend=linear') FROM readings GROUP BY series_id`, []string{"trend_slope", "correlogram", "ljung_box"}},
	// The same three figures from one aggregate: the correlogram of the
	// residuals carries the removed line's slope and the cumulative
	// Ljung–Box test at every lag.
	{"one-pass trend+corr+LB", OnePassSQL, []string{"correlogram"}},
	{"mann_kendall", `SELECT series_id, mann_kendall(t, value) FROM readings GROUP BY series_id`, []string{"mann_kendall"}},
	{"sen_slope", `SELECT series_id, sen_slope(t, value) FROM readings GROUP BY series_id`, []string{"sen_slope"}},
}

// drainQuery runs a statement and reads every result row.
func drainQuery(ctx context.Context, s *store.Store, q string) error {
	rows, err := s.DB.QueryContext(ctx, q)
	if err != nil {
		return err
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		return err
	}
	vals := make([]sql.RawBytes, len(cols))
	ptrs := make([]any, len(cols))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	for rows.Next() {
		if err := rows.Scan(ptrs...); err != nil {
			return err
		}
	}
	return rows.Err()
}
