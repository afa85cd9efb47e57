package summaries

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
	"trendsql/store"
)

type seriesResult struct {
	ref           seriesRef
	sum           stats.SeriesSummary
	pFDR          *float64
	trendDetected *bool
}

// computeAll reads and analyses the series with o.Workers goroutines.
func computeAll(ctx context.Context, s *store.Store, todo []seriesRef, o Options) ([]*seriesResult, error) {
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
				if err := loadSeries(ctx, s, ref.id, o.Since, o.Until, &buf); err != nil {
					errOnce.Do(func() { firstErr = err; cancel() })
					return
				}
				sum := analyzeSafely(o.Analyze, buf.t, buf.y, o.Model)
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

type seriesBuffer struct {
	t, y       []float64
	nQualified int
	quals      map[string]int
}

// loadSeries reads one series (sorted by t) and its qualifier counts in one
// scan of the series' rows. The values come through the internal series
// aggregate sqlfuncs.PackSeriesFunction and the counts through
// sqlfuncs.QualifierCountsFunction, both of which reach Go without a boxed
// value per row. The time bounds are in the statement only when set, so an
// unbounded read compares only the series key per row.
func loadSeries(ctx context.Context, s *store.Store, id int64, since, until *int64, b *seriesBuffer) error {
	q := `SELECT ` + sqlfuncs.PackSeriesFunction + `(t, value), ` + sqlfuncs.QualifierCountsFunction + `(qualifier)
		FROM readings WHERE series_id = ?`
	args := []any{id}
	if since != nil {
		q += ` AND t >= ?`
		args = append(args, *since)
	}
	if until != nil {
		q += ` AND t <= ?`
		args = append(args, *until)
	}
	var packed, quals []byte
	if err := s.DB.QueryRowContext(ctx, q, args...).Scan(&packed, &quals); err != nil {
		return fmt.Errorf("summarize: read series %d: %w", id, err)
	}
	var err error
	if b.t, b.y, err = sqlfuncs.UnpackSeries(packed, b.t, b.y); err != nil {
		return fmt.Errorf("summarize: read series %d: %w", id, err)
	}
	if b.quals, b.nQualified, err = sqlfuncs.UnpackQualifierCounts(quals); err != nil {
		return fmt.Errorf("summarize: read qualifiers of series %d: %w", id, err)
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
		det := p <= alpha
		results[i].pFDR = &p
		results[i].trendDetected = &det
	}
}
