package store

// Scheduled per-series summaries (trendsql summarize).
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

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"syscall"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"

	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// ErrBusy is returned when another summarize run holds the store's lock and
// the caller did not ask to wait.
var ErrBusy = errors.New("another summarize run is in progress on this store (use --wait to wait for it)")

// ErrNothingToDo is returned when the selection (after --changed-only) is empty.
var ErrNothingToDo = errors.New("nothing to summarize")

// SummarizeOptions selects series and models for a run.
type SummarizeOptions struct {
	Stations    []string // station ids; empty = all
	Variables   []string // variables; empty = all
	Where       string   // extra SQL condition on stations (alias st) / series (alias s)
	Since       *int64   // unix seconds, inclusive
	Until       *int64   // unix seconds, inclusive
	Model       stats.SummaryOptions
	ChangedOnly bool
	Wait        bool
	// WriteWait is how long the final write keeps retrying while another
	// connection (an import, say) holds the store's write lock; 0 means
	// DefaultWriteWait. The figures are computed before the write, so a
	// busy store delays the run instead of discarding its work.
	WriteWait   time.Duration
	Workers     int // 0 = runtime.NumCPU()
	ToolVersion string
	// Progress, if set, is called after each series is computed.
	Progress func(done, total int)
	// Analyze computes one series' figures (injected so the numerical core
	// stays free of SQL). Required.
	Analyze func(t, y []float64, opts stats.SummaryOptions) stats.SeriesSummary
}

// SummarizeResult reports a finished run.
type SummarizeResult struct {
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
}

// runParameters is what makes two runs comparable for --changed-only; it is
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
}

func (o SummarizeOptions) parameters() runParameters {
	return runParameters{
		Stations: o.Stations, Variables: o.Variables, Where: o.Where, Since: o.Since, Until: o.Until,
		PeriodS: o.Model.PeriodS, Harmonics: o.Model.Harmonics, Seasons: o.Model.Seasons,
		MaxLag: o.Model.MaxLag, LBLags: o.Model.LBLags, Alpha: o.Model.Alpha,
		Confidence: o.Model.Confidence, MinN: o.Model.MinN,
	}
}

// lockPoll is how often a waiting run retries the summarize lock.
const lockPoll = 200 * time.Millisecond

// lockSummarize takes the store's summarize lock. With wait it retries
// until the lock is free or ctx ends (a blocking flock could not be
// interrupted: Ctrl-C would be ignored while waiting).
func lockSummarize(ctx context.Context, path string, wait bool) (release func(), err error) {
	// One lock file per store file, however the store was named: resolve
	// symbolic links so two paths to one file share the lock.
	if p, err := filepath.EvalSymlinks(path); err == nil {
		path = p
	}
	f, err := os.OpenFile(path+".summarize-lock", os.O_CREATE|os.O_RDWR, 0o644)
	if err != nil {
		return nil, fmt.Errorf("summarize lock: %w", err)
	}
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			return func() { syscall.Flock(int(f.Fd()), syscall.LOCK_UN); f.Close() }, nil
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) && !errors.Is(err, syscall.EINTR) {
			f.Close()
			return nil, fmt.Errorf("summarize lock: %w", err)
		}
		if !wait {
			f.Close()
			return nil, ErrBusy
		}
		select {
		case <-ctx.Done():
			f.Close()
			return nil, fmt.Errorf("summarize: stopped while waiting for another run to finish: %w", ctx.Err())
		case <-time.After(lockPoll):
		}
	}
}

type seriesRef struct {
	id   int64
	unit string
}

// Summarize runs one summary run. It returns ErrBusy, ErrNothingToDo, or the
// run's error (the run row then records it).
func (s *Store) Summarize(ctx context.Context, o SummarizeOptions) (*SummarizeResult, error) {
	if s.ReadOnly {
		return nil, errors.New("summarize: store is open read-only")
	}
	if o.Analyze == nil {
		return nil, errors.New("summarize: no analyzer")
	}
	start := time.Now()
	release, err := lockSummarize(ctx, s.Path, o.Wait)
	if err != nil {
		return nil, err
	}
	defer release()

	// We hold the lock, so any run still 'running' belongs to a dead process.
	if _, err := s.DB.ExecContext(ctx, `UPDATE summary_runs SET status = 'interrupted',
		error = coalesce(error, 'process ended before the run finished'), finished_at = coalesce(finished_at, ?)
		WHERE status = 'running'`, nowISO()); err != nil {
		return nil, fmt.Errorf("summarize: %w", err)
	}

	selected, err := s.selectSeries(ctx, o)
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
	var keptP []float64 // stored mk_p of the series --changed-only skips
	if o.ChangedOnly {
		todo, keptP, err = s.changedSince(ctx, selected, string(pjson))
		if err != nil {
			return nil, err
		}
	}
	res := &SummarizeResult{Selected: len(selected), Skipped: len(selected) - len(todo)}
	if len(todo) == 0 {
		res.Elapsed = time.Since(start)
		return res, ErrNothingToDo
	}

	r, err := s.DB.ExecContext(ctx, `INSERT INTO summary_runs(started_at, status, parameters, tool_version, batch_high_water, series_selected)
		VALUES (?, 'running', ?, ?, ?, ?)`, nowISO(), string(pjson), o.ToolVersion, highWater, len(selected))
	if err != nil {
		return nil, fmt.Errorf("summarize: record run: %w", err)
	}
	res.RunID, _ = r.LastInsertId()

	fail := func(runErr error) (*SummarizeResult, error) {
		status := "failed"
		if errors.Is(runErr, context.Canceled) {
			status = "interrupted"
		}
		// Record the failure even if ctx was cancelled.
		s.recordRunEnd(res.RunID, status, runErr.Error())
		res.Elapsed = time.Since(start)
		return res, runErr
	}

	results, err := s.computeAll(ctx, todo, o)
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
	if err := s.writeRunWaiting(ctx, res, results, wait); err != nil {
		return fail(err)
	}
	res.Elapsed = time.Since(start)
	return res, nil
}

// correlogramWriter inserts series_correlograms rows in statements of
// correlogramBatch rows (one statement per stored lag cost about as much as
// the rest of a short series' summary); the last partial batch is one
// statement of its own length.
type correlogramWriter struct {
	tx   *sql.Tx
	full *sql.Stmt
	args []any
}

const (
	correlogramCols   = 9
	correlogramInsert = `INSERT INTO series_correlograms(run_id, series_id, lag, acvf, acf, pacf, band, ljung_box_q, ljung_box_p) VALUES `
)

// correlogramBatch is the rows per full statement (a variable so that tests
// can make the fixture's few rows fill batches).
var correlogramBatch = 100

func newCorrelogramWriter(ctx context.Context, tx *sql.Tx) (*correlogramWriter, error) {
	full, err := tx.PrepareContext(ctx, correlogramInsert+valuesList(correlogramBatch, correlogramCols))
	if err != nil {
		return nil, fmt.Errorf("summarize: prepare: %w", err)
	}
	return &correlogramWriter{tx: tx, full: full, args: make([]any, 0, correlogramCols*correlogramBatch)}, nil
}

// add queues one row (correlogramCols values), writing a full batch when
// one is ready.
func (w *correlogramWriter) add(ctx context.Context, vals ...any) error {
	w.args = append(w.args, vals...)
	if len(w.args) < correlogramCols*correlogramBatch {
		return nil
	}
	_, err := w.full.ExecContext(ctx, w.args...)
	w.args = w.args[:0]
	return err
}

// flush writes the queued rows.
func (w *correlogramWriter) flush(ctx context.Context) error {
	if len(w.args) == 0 {
		return nil
	}
	_, err := w.tx.ExecContext(ctx, correlogramInsert+valuesList(len(w.args)/correlogramCols, correlogramCols), w.args...)
	w.args = w.args[:0]
	return err
}

func (w *correlogramWriter) close() { w.full.Close() }

// nowISO is the time stamp the store records (batches, runs): ISO 8601 UTC
// with milliseconds.
func nowISO() string { return time.Now().UTC().Format("2006-01-02T15:04:05.000Z") }

// selectSeries returns the series matching the run's selection, by id.
func (s *Store) selectSeries(ctx context.Context, o SummarizeOptions) ([]seriesRef, error) {
	q := `SELECT s.id, coalesce(s.unit, '') FROM series s JOIN stations st ON st.id = s.station_id WHERE 1=1`
	var args []any
	if len(o.Stations) > 0 {
		q += ` AND s.station_id IN (` + placeholders(len(o.Stations)) + `)`
		for _, x := range o.Stations {
			args = append(args, x)
		}
	}
	if len(o.Variables) > 0 {
		q += ` AND s.variable IN (` + placeholders(len(o.Variables)) + `)`
		for _, x := range o.Variables {
			args = append(args, x)
		}
	}
	if strings.TrimSpace(o.Where) != "" {
		q += ` AND (` + o.Where + `)`
	}
	q += ` ORDER BY s.id`
	// The --where text is the user's SQL and is pasted into the query. The
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
		return nil, fmt.Errorf("summarize: select series (check --where): %w", err)
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

func placeholders(n int) string { return strings.TrimSuffix(strings.Repeat("?,", n), ",") }

// changedSince keeps the series that have no successful summary with the
// same parameters, or that an import batch touched after that summary's run
// started (import batches newer than the run's high-water mark). For the
// series it skips it also returns the rank-test p-value of that summary
// (where there is one), so the false-discovery-rate adjustment still spans
// every selected series.
func (s *Store) changedSince(ctx context.Context, in []seriesRef, params string) ([]seriesRef, []float64, error) {
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

type seriesResult struct {
	ref           seriesRef
	sum           stats.SeriesSummary
	pFDR          *float64
	trendDetected *bool
}

// computeAll reads and analyses the series with o.Workers goroutines.
func (s *Store) computeAll(ctx context.Context, todo []seriesRef, o SummarizeOptions) ([]*seriesResult, error) {
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
				if err := s.loadSeries(ctx, ref.id, o.Since, o.Until, &buf); err != nil {
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
func (s *Store) loadSeries(ctx context.Context, id int64, since, until *int64, b *seriesBuffer) error {
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
// test across the run's series and the trend_detected flag from it
// (Benjamini & Hochberg 1995, J. R. Statist. Soc. B 57(1):289–300; for
// field significance in geoscience see Wilks 2016, BAMS 97(12):2263–2273):
// with the m available p-values sorted, p_(i) adjusted = min over j ≥ i of
// m·p_(j)/j, capped at 1.
func adjustFDR(results []*seriesResult, alpha float64) { adjustFDRWith(results, nil, alpha) }

// adjustFDRWith adjusts the results' p-values within the family made of
// them and the other p-values (series of the selection that --changed-only
// did not recompute, with their stored p), and sets only the results'. A
// nightly --changed-only run thus adjusts its few new p-values across the
// whole selection, as a full run would, instead of across the changed
// series alone.
func adjustFDRWith(results []*seriesResult, others []float64, alpha float64) {
	type entry struct {
		p   float64
		res int // index into results, or -1 for another series' p
	}
	var fam []entry
	for i, r := range results {
		if r.sum.MKP != nil && !math.IsNaN(*r.sum.MKP) {
			fam = append(fam, entry{*r.sum.MKP, i})
		}
	}
	if len(fam) == 0 {
		return
	}
	for _, p := range others {
		fam = append(fam, entry{p, -1})
	}
	sort.SliceStable(fam, func(a, b int) bool { return fam[a].p < fam[b].p })
	m := float64(len(fam))
	minSoFar := 1.0
	adj := make([]float64, len(fam))
	for k := len(fam) - 1; k >= 0; k-- {
		if v := fam[k].p * m / float64(k+1); v < minSoFar {
			minSoFar = v
		}
		adj[k] = minSoFar
	}
	for k, e := range fam {
		if e.res < 0 {
			continue
		}
		p := adj[k]
		det := p <= alpha
		results[e.res].pFDR = &p
		results[e.res].trendDetected = &det
	}
}

// DefaultWriteWait is how long a summary run's final write waits for
// another writer by default.
const DefaultWriteWait = 15 * time.Minute

// writeAttempt bounds one write attempt's wait for the lock (SQLite's busy
// timeout on the write connection); a variable so tests can shorten it.
var writeAttempt = BusyTimeout

// writeRetries counts write attempts that found the store busy (for tests
// and diagnostics).
var writeRetries atomic.Int64

// writeRunWaiting runs writeRun, and while it fails because another
// connection holds the write lock, tries again (with a growing pause, at
// most 5 s) until wait has passed or ctx ends. A failed attempt has rolled
// back, so nothing is stored twice.
func (s *Store) writeRunWaiting(ctx context.Context, res *SummarizeResult, results []*seriesResult, wait time.Duration) error {
	deadline := time.Now().Add(wait)
	pause := 100 * time.Millisecond
	for {
		attempt := min(writeAttempt, max(time.Until(deadline), time.Millisecond))
		err := s.writeRun(ctx, res, results, attempt)
		if err == nil || !isBusy(err) {
			return err
		}
		writeRetries.Add(1)
		if !time.Now().Before(deadline) {
			return fmt.Errorf("%w; another writer held the store for longer than the write wait (%s)", err, wait)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(min(pause, time.Until(deadline))):
		}
		pause = min(2*pause, 5*time.Second)
	}
}

// failRecordWait bounds how long a failed run keeps trying to record its
// status while another connection holds the write lock (a variable so tests
// can shorten it). An interrupted run (the user cancelled it) makes one
// attempt of at most the busy timeout.
var failRecordWait = time.Minute

// failRecordRetries counts attempts to record a run's end that found the
// store busy (for tests and diagnostics).
var failRecordRetries atomic.Int64

// recordRunEnd marks the run failed or interrupted with the error text,
// retrying while the store is busy (see failRecordWait). If it still cannot,
// the run stays 'running' until the next run marks it 'interrupted'.
func (s *Store) recordRunEnd(id int64, status, msg string) {
	ctx := context.Background()
	wait := failRecordWait
	if status == "interrupted" {
		wait = 0
	}
	deadline := time.Now().Add(wait)
	pause := 100 * time.Millisecond
	for {
		attempt := writeAttempt
		if wait > 0 {
			attempt = min(writeAttempt, max(time.Until(deadline), time.Millisecond))
		}
		err := s.execBusyWait(ctx, attempt, `UPDATE summary_runs SET status = ?, error = ?, finished_at = ? WHERE id = ?`,
			status, msg, nowISO(), id)
		if err == nil || !isBusy(err) || !time.Now().Before(deadline) {
			return
		}
		failRecordRetries.Add(1)
		time.Sleep(min(pause, time.Until(deadline)))
		pause = min(2*pause, 5*time.Second)
	}
}

// execBusyWait runs one statement on a connection of its own whose busy
// timeout is busyWait for the duration.
func (s *Store) execBusyWait(ctx context.Context, busyWait time.Duration, query string, args ...any) error {
	conn, done, err := s.connBusyWait(ctx, busyWait)
	if err != nil {
		return err
	}
	defer done()
	_, err = conn.ExecContext(ctx, query, args...)
	return err
}

// connBusyWait takes a connection of its own with busy timeout busyWait;
// done restores the timeout (or discards the connection) and returns it to
// the pool.
func (s *Store) connBusyWait(ctx context.Context, busyWait time.Duration) (conn *sql.Conn, done func(), err error) {
	conn, err = s.DB.Conn(ctx)
	if err != nil {
		return nil, nil, err
	}
	if busyWait == BusyTimeout {
		return conn, func() { conn.Close() }, nil
	}
	if _, err := conn.ExecContext(ctx, fmt.Sprintf("PRAGMA busy_timeout = %d", busyWait.Milliseconds())); err != nil {
		conn.Close()
		return nil, nil, err
	}
	return conn, func() {
		restorePragma(conn, "busy_timeout", BusyTimeout.Milliseconds())
		conn.Close()
	}, nil
}

// isBusy reports whether err is SQLite's "database is locked" (SQLITE_BUSY)
// or "table is locked" (SQLITE_LOCKED), extended codes included.
func isBusy(err error) bool {
	var se *sqlite.Error
	if errors.As(err, &se) {
		c := se.Code() & 0xff
		return c == sqlite3.SQLITE_BUSY || c == sqlite3.SQLITE_LOCKED
	}
	return false
}

// writeRun stores every result and marks the run ok, in one transaction on
// a connection of its own whose busy timeout is busyWait for the duration.
func (s *Store) writeRun(ctx context.Context, res *SummarizeResult, results []*seriesResult, busyWait time.Duration) error {
	conn, done, err := s.connBusyWait(ctx, busyWait)
	if err != nil {
		return fmt.Errorf("summarize: write: %w", err)
	}
	defer done()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		return fmt.Errorf("summarize: begin write: %w", err)
	}
	defer tx.Rollback()
	ins, err := tx.PrepareContext(ctx, `INSERT INTO series_summaries(
		run_id, series_id, notes, n, t_first, t_last, time_first, time_last, years, step_s, grid_slots, missing_share,
		n_qualified, qualifier_counts, mean, unit,
		trend_model, slope_per_year, slope_se, slope_p, hac_slope_se, hac_lags, hac_p, n_eff, n_eff_p, r2, pct_per_decade,
		mk_method, mk_s, mk_var_s, mk_z, mk_p, mk_tau, mk_correction_factor,
		sen_slope_per_year, sen_lower, sen_upper, sen_confidence, trend_p_fdr,
		resid_acf1, acf_basis, lb_lags, lb_df, lb_q, lb_p,
		pettitt_k, pettitt_t_change, pettitt_time_change, pettitt_u, pettitt_p,
		insufficient_data, trend_detected, residual_dependence, step_change_suspected)
		VALUES (?,?,?,?,?,?,?,?,?,?,?,?, ?,?,?,?, ?,?,?,?,?,?,?,?,?,?,?, ?,?,?,?,?,?,?, ?,?,?,?,?, ?,?,?,?,?,?, ?,?,?,?,?, ?,?,?,?)`)
	if err != nil {
		return fmt.Errorf("summarize: prepare: %w", err)
	}
	defer ins.Close()
	cg, err := newCorrelogramWriter(ctx, tx)
	if err != nil {
		return err
	}
	defer cg.close()
	for _, r := range results {
		m := r.sum
		var tFirst, tLast, timeFirst, timeLast any
		if m.N > 0 {
			tFirst, tLast = m.TFirst, m.TLast
			timeFirst, timeLast = timefmt.FormatUTC(m.TFirst), timefmt.FormatUTC(m.TLast)
		}
		var quals any
		if len(m.QualifierCount) > 0 {
			b, _ := json.Marshal(m.QualifierCount)
			quals = string(b)
		}
		var model any
		if m.TrendModelJSON != "" {
			model = m.TrendModelJSON
		}
		var pChange, pTime any
		if m.PettittTChange != nil {
			pChange = *m.PettittTChange
			pTime = timefmt.FormatUTC(*m.PettittTChange)
		}
		var unit any
		if r.ref.unit != "" {
			unit = r.ref.unit
		}
		var mkMethod any
		if m.MKMethod != "" {
			mkMethod = m.MKMethod
		}
		var senConf any
		if m.SenSlopePerYear != nil {
			senConf = m.SenConfidence
		}
		if _, err := ins.ExecContext(ctx,
			res.RunID, r.ref.id, nullStr(m.Problem), m.N, tFirst, tLast, timeFirst, timeLast, m.Years, f(m.StepS), i(m.GridSlots), f(m.MissingShare),
			m.NQualified, quals, f(m.Mean), unit,
			model, f(m.SlopePerYear), f(m.SlopeSE), f(m.SlopeP), f(m.HACSlopeSE), i(m.HACLags), f(m.HACP), f(m.NEff), f(m.NEffP), f(m.R2), f(m.PctPerDecade),
			mkMethod, f(m.MKS), f(m.MKVarS), f(m.MKZ), f(m.MKP), f(m.MKTau), f(m.MKCorrectionFactor),
			f(m.SenSlopePerYear), f(m.SenLower), f(m.SenUpper), senConf, f(r.pFDR),
			f(m.ResidACF1), nullStr(m.ACFBasis), i(m.LBLags), i(m.LBDF), f(m.LBQ), f(m.LBP),
			i(m.PettittK), pChange, pTime, f(m.PettittU), f(m.PettittP),
			b2i(m.InsufficientData), bp(r.trendDetected), bp(m.ResidualDependence), bp(m.StepChangeSuspected),
		); err != nil {
			return fmt.Errorf("summarize: write series %d: %w", r.ref.id, err)
		}
		for _, c := range m.Correlogram {
			var pacf, q, p any
			if c.HasPACF {
				pacf = fin(c.PACF)
			}
			if c.HasLjungBx {
				q, p = fin(c.LBQ), fin(c.LBP)
			}
			if err := cg.add(ctx, res.RunID, r.ref.id, c.Lag, fin(c.ACVF), fin(c.ACF), pacf, fin(c.Band), q, p); err != nil {
				return fmt.Errorf("summarize: write correlogram of series %d: %w", r.ref.id, err)
			}
		}
	}
	if err := cg.flush(ctx); err != nil {
		return fmt.Errorf("summarize: write correlograms: %w", err)
	}
	if _, err := tx.ExecContext(ctx, `UPDATE summary_runs SET status = 'ok', finished_at = ?, series_computed = ?, series_skipped = ?, series_with_notes = ? WHERE id = ?`,
		nowISO(), res.Computed, res.Skipped, res.Noted, res.RunID); err != nil {
		return fmt.Errorf("summarize: finish run: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return fmt.Errorf("summarize: commit: %w", err)
	}
	return nil
}

func nullStr(s string) any {
	if s == "" {
		return nil
	}
	return s
}

// f converts an optional float to a SQL value; NaN and infinities become NULL.
func f(p *float64) any {
	if p == nil {
		return nil
	}
	return fin(*p)
}

func fin(v float64) any {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return v
}

func i(p *int) any {
	if p == nil {
		return nil
	}
	return *p
}

func bp(p *bool) any {
	if p == nil {
		return nil
	}
	return b2i(*p)
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}
