package summaries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Computed is one series' figures as Compute returns them.
type Computed struct {
	SeriesID int64
	// Columns holds the series_summaries row a run would store, by column
	// name, with the values a read of the stored row gives: int64,
	// float64, string, or nil for NULL. run_id is 0.
	Columns map[string]any
	// Correlogram holds the rows a run would store in series_correlograms.
	Correlogram []CorrelogramRow
}

// CorrelogramRow is one lag of a residual correlogram; NaN where a run
// stores NULL.
type CorrelogramRow struct {
	Lag            int
	ACF, Band, LBP float64
}

// Compute computes the figures of the given series as a run with the
// model and worker options of o would: the same reading of each series,
// the same analysis (censored series through the censoring-aware methods)
// and the Benjamini–Hochberg adjustment across these series. It writes
// nothing and takes no lock, so it serves readers of a store opened
// read-only that holds no run for these series. o.Analyze is required;
// the selection fields of o are ignored, and Since/Until apply as in Run.
func Compute(ctx context.Context, db *sql.DB, ids []int64, o Options) ([]Computed, error) {
	if o.Analyze == nil {
		return nil, fmt.Errorf("summarize: no analyzer")
	}
	if len(ids) == 0 {
		return nil, nil
	}
	parts := make([]string, len(ids))
	for i, id := range ids {
		parts[i] = strconv.FormatInt(id, 10)
	}
	rows, err := db.QueryContext(ctx, `SELECT id, coalesce(unit, '') FROM series WHERE id IN (`+strings.Join(parts, ",")+`) ORDER BY id`)
	if err != nil {
		return nil, fmt.Errorf("summarize: select series: %w", err)
	}
	var todo []seriesRef
	for rows.Next() {
		var r seriesRef
		if err := rows.Scan(&r.id, &r.unit); err != nil {
			rows.Close()
			return nil, fmt.Errorf("summarize: select series: %w", err)
		}
		todo = append(todo, r)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return nil, fmt.Errorf("summarize: select series: %w", err)
	}
	results, err := computeAll(ctx, db, todo, o)
	if err != nil {
		return nil, err
	}
	adjustFDR(results, o.Model.Alpha)
	out := make([]Computed, len(results))
	for i, r := range results {
		c := Computed{SeriesID: r.ref.id, Columns: make(map[string]any, len(summaryColumns))}
		for k, v := range summaryValues(0, r) {
			c.Columns[summaryColumns[k]] = readBack(v)
		}
		for _, l := range r.sum.Correlogram {
			row := CorrelogramRow{Lag: l.Lag, ACF: finiteOrNaN(l.ACF), Band: finiteOrNaN(l.Band), LBP: math.NaN()}
			if l.HasLjungBx {
				row.LBP = finiteOrNaN(l.LBP)
			}
			c.Correlogram = append(c.Correlogram, row)
		}
		out[i] = c
	}
	return out, nil
}

// readBack turns a value bound for the store into what reading the stored
// column gives back (integers as int64).
func readBack(v any) any {
	switch x := v.(type) {
	case int:
		return int64(x)
	case int32:
		return int64(x)
	}
	return v
}

func finiteOrNaN(v float64) float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return math.NaN()
	}
	return v
}
