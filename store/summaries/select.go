package summaries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"strings"

	"trendsql/store"
)

// selectSeries returns the series matching the run's selection, by id.
func selectSeries(ctx context.Context, s *store.Store, o Options) ([]seriesRef, error) {
	q := `SELECT s.id, coalesce(s.unit, '') FROM series s JOIN stations st ON st.id = s.station_id WHERE 1=1`
	var args []any
	if len(o.Stations) > 0 {
		q += ` AND s.station_id IN (` + store.Placeholders(len(o.Stations)) + `)`
		for _, x := range o.Stations {
			args = append(args, x)
		}
	}
	if len(o.Variables) > 0 {
		q += ` AND s.variable IN (` + store.Placeholders(len(o.Variables)) + `)`
		for _, x := range o.Variables {
			args = append(args, x)
		}
	}
	if strings.TrimSpace(o.Where) != "" {
		q += ` AND (` + o.Where + `)`
	}
	q += ` ORDER BY s.id`
	// The Where text is the user's SQL and is pasted into the query. The
	// driver runs every statement of a multi-statement text, so a condition
	// such as "1=1) ORDER BY s.id; DELETE FROM ..." could write: run the
	// selection on a connection that refuses writes (PRAGMA query_only).
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		return nil, fmt.Errorf("summarize: select series: %w", err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(ctx, `PRAGMA query_only = 1`); err != nil {
		return nil, fmt.Errorf("summarize: select series: %w", err)
	}
	defer conn.ExecContext(context.Background(), `PRAGMA query_only = 0`)
	rows, err := conn.QueryContext(ctx, q, args...)
	if err != nil {
		return nil, &SelectError{Err: err}
	}
	defer rows.Close()
	var out []seriesRef
	for rows.Next() {
		var r seriesRef
		if err := rows.Scan(&r.id, &r.unit); err != nil {
			return nil, err
		}
		out = append(out, r)
	}
	return out, rows.Err()
}

// changedSince keeps the series that have no successful summary with the
// same parameters, or that an import batch touched after that summary's run
// started (import batches newer than the run's high-water mark). For the
// series it skips it also returns the rank-test p-value of that summary
// (where there is one), so the false-discovery-rate adjustment still spans
// every selected series.
func changedSince(ctx context.Context, s *store.Store, in []seriesRef, params string) ([]seriesRef, []float64, error) {
	rows, err := s.DB.QueryContext(ctx, `
		SELECT ss.series_id, r.batch_high_water, ss.mk_p
		FROM series_summaries ss JOIN summary_runs r ON r.id = ss.run_id
		WHERE r.status = 'ok' AND r.parameters = ?
		ORDER BY ss.run_id`, params)
	if err != nil {
		return nil, nil, fmt.Errorf("summarize: previous runs: %w", err)
	}
	type prev struct {
		hw int64
		p  sql.NullFloat64
	}
	last := map[int64]prev{} // the latest summary with these parameters
	for rows.Next() {
		var id int64
		var pr prev
		if err := rows.Scan(&id, &pr.hw, &pr.p); err != nil {
			rows.Close()
			return nil, nil, err
		}
		last[id] = pr
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, nil, err
	}
	newest := map[int64]int64{}
	rows, err = s.DB.QueryContext(ctx, `SELECT series_id, max(batch_id) FROM series_batches GROUP BY series_id`)
	if err != nil {
		return nil, nil, fmt.Errorf("summarize: import batches: %w", err)
	}
	for rows.Next() {
		var id, b int64
		if err := rows.Scan(&id, &b); err != nil {
			rows.Close()
			return nil, nil, err
		}
		newest[id] = b
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, nil, err
	}
	var out []seriesRef
	var kept []float64
	for _, r := range in {
		pr, done := last[r.id]
		if !done || newest[r.id] > pr.hw {
			out = append(out, r)
		} else if pr.p.Valid && !math.IsNaN(pr.p.Float64) {
			kept = append(kept, pr.p.Float64)
		}
	}
	return out, kept, nil
}
