// Package summaries runs the scheduled per-series summaries of
// `trendsql summarize` and stores them.
//
// A run: take the summarize lock (a file lock next to the store, released by
// the OS even if the process is killed), mark runs left 'running' by a dead
// process as 'interrupted', record the run as 'running', compute every
// selected series in parallel goroutines (each reads its own series on its
// own read connection, so peak memory is bounded by the largest series times
// the worker count, not by the archive), then write all results and flip the
// run to 'ok' in ONE transaction. Readers in other processes therefore see
// either the previous results or the complete new run, never a mix. On any
// error the transaction is rolled back and the run row is marked 'failed'
// with the error; earlier runs are untouched.
package summaries

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
)

// Options selects series and models for a run.
type Options struct {
	Stations    []string // station ids; empty = all
	Variables   []string // variables; empty = all
	Where       string   // extra SQL condition on stations (alias st) / series (alias s)
	Since       *int64   // unix seconds, inclusive
	Until       *int64   // unix seconds, inclusive
	Model       stats.SummaryOptions
	ChangedOnly bool
	// Wait is how long the run waits for another run's summarize lock
	// (0: not at all), and OnWait, if set, is called once when it has
	// waited store.WaitNotice. The store's own Wait bounds the wait for
	// another writer's write lock when the run starts.
	Wait   time.Duration
	OnWait func()
	// WriteWait is how long the final write keeps retrying while another
	// connection (an import, say) holds the store's write lock; 0 means
	// DefaultWriteWait. The figures are computed before the write, so a
	// busy store delays the run instead of discarding its work.
	WriteWait   time.Duration
	Workers     int // 0 = runtime.NumCPU()
	ToolVersion string
	// Progress, if set, is called after each series is computed.
	Progress func(done, total int)
	// Analyze computes one series' figures: stats.SummarizeSeries, or a
	// stand-in in tests. Required.
	Analyze func(t, y []float64, opts stats.SummaryOptions) stats.SeriesSummary
}

// Result reports a finished run.
type Result struct {
	RunID    int64
	Selected int
	Computed int
	Skipped  int
	Noted    int // series with notes (irregular times, short record...)
	// Insufficient counts series whose record was too short for the model
	// (insufficient_data: only counts and coverage are stored for them).
	Insufficient int
	Trending     int
	Elapsed      time.Duration
	// PreviousRun is the latest earlier successful run on the same
	// selection (0: none), and Changes the model parameters in which this
	// run differs from it: latest_series_summaries then shows this run's
	// parameter set (migration 0005).
	PreviousRun int64
	Changes     []ParameterChange
}

// runParameters is what makes two runs comparable for ChangedOnly; it is
// stored as the run's parameters JSON.
type runParameters struct {
	Stations   []string `json:"stations,omitempty"`
	Variables  []string `json:"variables,omitempty"`
	Where      string   `json:"where,omitempty"`
	Since      *int64   `json:"since,omitempty"`
	Until      *int64   `json:"until,omitempty"`
	PeriodS    float64  `json:"period_s"`
	Harmonics  int      `json:"harmonics"`
	Seasons    int      `json:"seasons"`
	MaxLag     int      `json:"max_lag"`
	LBLags     int      `json:"ljung_box_lags"`
	Alpha      float64  `json:"alpha"`
	Confidence float64  `json:"confidence"`
	MinN       int      `json:"min_n"`
	// CensoredFits is omitted when false, so runs stored before it existed
	// compare equal.
	CensoredFits bool `json:"censored_fits,omitempty"`
}

func (o Options) parameters() runParameters {
	return runParameters{
		Stations: o.Stations, Variables: o.Variables, Where: o.Where, Since: o.Since, Until: o.Until,
		PeriodS: o.Model.PeriodS, Harmonics: o.Model.Harmonics, Seasons: o.Model.Seasons,
		MaxLag: o.Model.MaxLag, LBLags: o.Model.LBLags, Alpha: o.Model.Alpha,
		Confidence: o.Model.Confidence, MinN: o.Model.MinN, CensoredFits: o.Model.CensoredFits,
	}
}

type seriesRef struct {
	id   int64
	unit string
}

// Run runs one summary run. It returns ErrBusy, ErrNothingToDo, or the
// run's error (the run row then records it).
func Run(ctx context.Context, s *store.Store, o Options) (*Result, error) {
	if s.ReadOnly {
		return nil, errors.New("summarize: store is open read-only")
	}
	if o.Analyze == nil {
		return nil, errors.New("summarize: no analyzer")
	}
	start := time.Now()
	release, err := lockSummarize(ctx, s.Path, o.Wait, o.OnWait)
	if err != nil {
		return nil, err
	}
	defer release()
	if err := s.AwaitWriter(ctx); err != nil {
		return nil, fmt.Errorf("summarize: %w", err)
	}

	// We hold the lock, so any run still 'running' belongs to a dead process.
	if _, err := s.DB.ExecContext(ctx, `UPDATE summary_runs SET status = 'interrupted',
		error = coalesce(error, 'process ended before the run finished'), finished_at = coalesce(finished_at, ?)
		WHERE status = 'running'`, store.NowISO()); err != nil {
		return nil, fmt.Errorf("summarize: %w", err)
	}

	selected, err := selectSeries(ctx, s, o)
	if err != nil {
		return nil, err
	}
	params := o.parameters()
	pjson, _ := json.Marshal(params)
	var highWater int64
	if err := s.DB.QueryRowContext(ctx, `SELECT coalesce(max(id), 0) FROM import_batches`).Scan(&highWater); err != nil {
		return nil, fmt.Errorf("summarize: %w", err)
	}
	todo := selected
	var keptP []float64 // stored mk_p of the series ChangedOnly skips
	if o.ChangedOnly {
		todo, keptP, err = changedSince(ctx, s, selected, string(pjson))
		if err != nil {
			return nil, err
		}
	}
	res := &Result{Selected: len(selected), Skipped: len(selected) - len(todo)}
	if res.PreviousRun, res.Changes, err = compareWithPrevious(ctx, s.DB, params); err != nil {
		return nil, err
	}
	if len(todo) == 0 {
		res.Elapsed = time.Since(start)
		return res, ErrNothingToDo
	}

	r, err := s.DB.ExecContext(ctx, `INSERT INTO summary_runs(started_at, status, parameters, tool_version, batch_high_water, series_selected)
		VALUES (?, 'running', ?, ?, ?, ?)`, store.NowISO(), string(pjson), o.ToolVersion, highWater, len(selected))
	if err != nil {
		return nil, fmt.Errorf("summarize: record run: %w", err)
	}
	res.RunID, _ = r.LastInsertId()

	fail := func(runErr error) (*Result, error) {
		status := "failed"
		if errors.Is(runErr, context.Canceled) {
			status = "interrupted"
		}
		// Record the failure even if ctx was cancelled.
		recordRunEnd(s, res.RunID, status, runErr.Error())
		res.Elapsed = time.Since(start)
		return res, runErr
	}

	results, err := computeAll(ctx, s.DB, todo, o)
	if err != nil {
		return fail(err)
	}
	adjustFDRWith(results, keptP, o.Model.Alpha)
	for _, sr := range results {
		if sr.sum.Problem != "" {
			res.Noted++
		}
		if sr.sum.InsufficientData {
			res.Insufficient++
		}
		if sr.trendDetected != nil && *sr.trendDetected {
			res.Trending++
		}
	}
	res.Computed = len(results)
	wait := o.WriteWait
	if wait <= 0 {
		wait = DefaultWriteWait
	}
	if err := writeRunWaiting(ctx, s, res, results, wait); err != nil {
		return fail(err)
	}
	res.Elapsed = time.Since(start)
	return res, nil
}
