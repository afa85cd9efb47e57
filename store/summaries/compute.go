package summaries

import (
	"context"
	"database/sql"
	"fmt"
	"math"
	"runtime"
	"sync"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
)

type seriesResult struct {
	ref           seriesRef
	sum           stats.SeriesSummary
	pFDR          *float64
	trendDetected *bool
}

// computeAll reads and analyses the series with o.Workers goroutines.
func computeAll(ctx context.Context, db *sql.DB, todo []seriesRef, o Options) ([]*seriesResult, error) {
	workers := o.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	if workers > len(todo) {
		workers = len(todo)
	}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan int)
	results := make([]*seriesResult, len(todo))
	var (
		wg       sync.WaitGroup
		errOnce  sync.Once
		firstErr error
		mu       sync.Mutex
		done     int
	)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var buf seriesBuffer
			for i := range jobs {
				ref := todo[i]
				if err := loadSeries(ctx, db, ref.id, o.Since, o.Until, &buf); err != nil {
					errOnce.Do(func() { firstErr = err; cancel() })
					return
				}
				var sum stats.SeriesSummary
				if len(buf.marks) > 0 {
					sum = analyzeCensoredSafely(buf.t, buf.y, buf.marks, o.Model)
				} else {
					sum = analyzeSafely(o.Analyze, buf.t, buf.y, o.Model)
				}
				sum.NQualified = buf.nQualified
				sum.QualifierCount = buf.quals
				results[i] = &seriesResult{ref: ref, sum: sum}
				mu.Lock()
				done++
				if o.Progress != nil {
					o.Progress(done, len(todo))
				}
				mu.Unlock()
			}
		}()
	}
feed:
	for i := range todo {
		select {
		case jobs <- i:
		case <-ctx.Done():
			break feed
		}
	}
	close(jobs)
	wg.Wait()
	if firstErr != nil {
		return nil, firstErr
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return results, nil
}

// analyzeSafely turns a panic in the numerical core into a per-series problem.
func analyzeSafely(f func(t, y []float64, o stats.SummaryOptions) stats.SeriesSummary, t, y []float64, o stats.SummaryOptions) (sum stats.SeriesSummary) {
	defer func() {
		if r := recover(); r != nil {
			sum = stats.SeriesSummary{N: len(t), InsufficientData: true, Problem: fmt.Sprintf("internal error: %v", r)}
		}
	}()
	return f(t, y, o)
}

// analyzeCensoredSafely is analyzeSafely for a series with censored readings.
func analyzeCensoredSafely(t, y []float64, c []stats.Censoring, o stats.SummaryOptions) (sum stats.SeriesSummary) {
	defer func() {
		if r := recover(); r != nil {
			sum = stats.SeriesSummary{N: len(t), InsufficientData: true, Problem: fmt.Sprintf("internal error: %v", r)}
		}
	}()
	return stats.SummarizeCensoredSeries(t, y, c, o)
}

type seriesBuffer struct {
	t, y       []float64
	marks      []stats.Censoring // nil unless the series has censored readings in the window
	nQualified int
	quals      map[string]int
}

// loadSeries reads one series (sorted by t) and its qualifier counts in one
// scan of the series' rows. The values come through the internal series
// aggregate sqlfuncs.PackSeriesFunction and the counts through
// sqlfuncs.QualifierCountsFunction, both of which reach Go without a boxed
// value per row. The time bounds are in the statement only when set, so an
// unbounded read compares only the series key per row.
func loadSeries(ctx context.Context, db *sql.DB, id int64, since, until *int64, b *seriesBuffer) error {
	where := ` FROM readings WHERE series_id = ?`
	args := []any{id}
	if since != nil {
		where += ` AND t >= ?`
		args = append(args, *since)
	}
	if until != nil {
		where += ` AND t <= ?`
		args = append(args, *until)
	}
	q := `SELECT ` + sqlfuncs.PackSeriesFunction + `(t, value), ` + sqlfuncs.QualifierCountsFunction + `(qualifier), count(censored)` + where
	var packed, quals []byte
	var censored int64
	if err := db.QueryRowContext(ctx, q, args...).Scan(&packed, &quals, &censored); err != nil {
		return fmt.Errorf("summarize: read series %d: %w", id, err)
	}
	var err error
	if b.t, b.y, err = sqlfuncs.UnpackSeries(packed, b.t, b.y); err != nil {
		return fmt.Errorf("summarize: read series %d: %w", id, err)
	}
	if b.quals, b.nQualified, err = sqlfuncs.UnpackQualifierCounts(quals); err != nil {
		return fmt.Errorf("summarize: read qualifiers of series %d: %w", id, err)
	}
	b.marks = b.marks[:0]
	if censored == 0 {
		return nil
	}
	// The marks, in time order like the packed series.
	rows, err := db.QueryContext(ctx, `SELECT censored`+where+` ORDER BY t`, args...)
	if err != nil {
		return fmt.Errorf("summarize: read censoring of series %d: %w", id, err)
	}
	defer rows.Close()
	for rows.Next() {
		var m *string
		if err := rows.Scan(&m); err != nil {
			return fmt.Errorf("summarize: read censoring of series %d: %w", id, err)
		}
		c := stats.Uncensored
		if m != nil && *m == "<" {
			c = stats.BelowLimit
		} else if m != nil && *m == ">" {
			c = stats.AboveLimit
		}
		b.marks = append(b.marks, c)
	}
	if err := rows.Err(); err != nil {
		return fmt.Errorf("summarize: read censoring of series %d: %w", id, err)
	}
	if len(b.marks) != len(b.t) {
		return fmt.Errorf("summarize: series %d: %d censoring marks for %d readings", id, len(b.marks), len(b.t))
	}
	return nil
}

// adjustFDR sets the Benjamini–Hochberg adjusted p-value of the rank trend
// test across the run's series (stats.AdjustBH) and the trend_detected flag
// from it (adjusted p ≤ alpha).
func adjustFDR(results []*seriesResult, alpha float64) { adjustFDRWith(results, nil, alpha) }

// adjustFDRWith adjusts the results' p-values within the family made of
// them and the other p-values (series of the selection that ChangedOnly
// did not recompute, with their stored p), and sets only the results'. A
// changed-only run thus adjusts its few new p-values across the whole
// selection, as a full run would, instead of across the changed series
// alone. Results without a p-value are not part of the family.
func adjustFDRWith(results []*seriesResult, others []float64, alpha float64) {
	var fam []float64
	var at []int // index into results of fam[k]; fam beyond len(at) are others
	for i, r := range results {
		if r.sum.MKP != nil && !math.IsNaN(*r.sum.MKP) {
			fam = append(fam, *r.sum.MKP)
			at = append(at, i)
		}
	}
	if len(fam) == 0 {
		return
	}
	fam = append(fam, others...)
	adj := stats.AdjustBH(fam)
	for k, i := range at {
		p := adj[k]
		results[i].pFDR = &p
		if results[i].sum.NoTrendFlag {
			continue // mostly censored: the test is stored, no flag is set
		}
		det := p <= alpha
		results[i].trendDetected = &det
	}
}
