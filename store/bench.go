package store

// Synthetic data and measurements for `trendsql bench`.
//
// The generated data set is invented (no real station): S series of N hourly
// readings each, value = level + annual cycle (two harmonics) + linear drift
// + AR(1) noise, rounded to 3 decimals, with three gaps of 6–72 hours per
// series and about 1 % of readings carrying the qualifier "E". The generator
// is deterministic for a given seed, so two runs with the same flags measure
// the same rows.
//
// The CSV file has the header "station,time,value,qualifier": the station
// code is the decimal series number (1..S), time is unix seconds UTC, and an
// empty qualifier means none. Integer station codes let the sqlite3 shell
// import the same file into a table of the store's own readings layout
// (series_id INTEGER, t INTEGER, value REAL, qualifier TEXT) for the
// comparison runs in testdata/bench/compare.sh.

import (
	"bufio"
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
)

// BenchStart is the time of the first generated reading: 2015-01-01T00:00:00Z.
const BenchStart = 1420070400

// BenchVariable is the variable name of every generated series.
const BenchVariable = "level"

// BenchData describes a generated data set.
type BenchData struct {
	Series    int    // number of series (one station each)
	PerSeries int    // readings per series
	Seed      uint64 // generator seed
}

// Rows is the total number of readings.
func (d BenchData) Rows() int64 { return int64(d.Series) * int64(d.PerSeries) }

// each calls fn for every reading, series by series in time order.
func (d BenchData) each(fn func(series int, t int64, v float64, qual bool) error) error {
	const hour = 3600
	const year = 365.25 * 86400
	for s := 1; s <= d.Series; s++ {
		r := rand.New(rand.NewPCG(d.Seed, uint64(s)))
		level := 20 + 80*r.Float64()
		amp := 0.5 + 2*r.Float64()
		phase := 2 * math.Pi * r.Float64()
		drift := 0.05 * r.NormFloat64() // units per year
		if s%4 == 0 {
			drift = 0 // a quarter of the series have no drift
		}
		phi := 0.3 + 0.6*r.Float64()
		sigma := 0.05 + 0.2*r.Float64()
		// Three gaps at random positions.
		var gapAt [3]int
		var gapLen [3]int64
		for g := range gapAt {
			if d.PerSeries > 2 {
				gapAt[g] = 1 + r.IntN(d.PerSeries-1)
			}
			gapLen[g] = int64(6 + r.IntN(67))
		}
		t := int64(BenchStart)
		e := 0.0
		for i := 0; i < d.PerSeries; i++ {
			if i > 0 {
				t += hour
				for g := range gapAt {
					if gapAt[g] == i {
						t += gapLen[g] * hour
					}
				}
			}
			e = phi*e + sigma*r.NormFloat64()
			yrs := float64(t-BenchStart) / year
			u := 2 * math.Pi * yrs
			v := level + amp*math.Sin(u+phase) + 0.3*amp*math.Cos(2*u+phase) + drift*yrs + e
			v = math.Round(v*1000) / 1000
			qual := r.IntN(100) == 0
			if err := fn(s, t, v, qual); err != nil {
				return err
			}
		}
	}
	return nil
}

// BenchCSVHeader is the header line of the generated CSV file.
const BenchCSVHeader = "station,time,value,qualifier"

// WriteBenchCSV writes the data set as CSV to path.
func WriteBenchCSV(path string, d BenchData) (int64, error) {
	f, err := os.Create(path)
	if err != nil {
		return 0, fmt.Errorf("bench: %w", err)
	}
	w := bufio.NewWriterSize(f, 1<<20)
	w.WriteString(BenchCSVHeader + "\n")
	var n int64
	buf := make([]byte, 0, 64)
	err = d.each(func(s int, t int64, v float64, q bool) error {
		buf = strconv.AppendInt(buf[:0], int64(s), 10)
		buf = append(buf, ',')
		buf = strconv.AppendInt(buf, t, 10)
		buf = append(buf, ',')
		buf = strconv.AppendFloat(buf, v, 'f', 3, 64)
		buf = append(buf, ',')
		if q {
			buf = append(buf, 'E')
		}
		buf = append(buf, '\n')
		n++
		_, err := w.Write(buf)
		return err
	})
	if err == nil {
		err = w.Flush()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return n, fmt.Errorf("bench: write %s: %w", path, err)
	}
	return n, nil
}

// BenchImportMethod names how `trendsql bench` imports the CSV file.
const BenchImportMethod = "store.ImportReadings (the `trendsql import` path: header lookup, time and value validation, duplicate checks, reject accounting, batch record, one transaction)"

// BenchDirectMethod names the optional direct load measured for comparison.
const BenchDirectMethod = "the bench's own minimal CSV reader + ReadingWriter (500-row multi-VALUES inserts, one transaction; no validation or reject accounting)"

// ImportBenchCSV imports the CSV file written by WriteBenchCSV the way
// `trendsql import` does, then checkpoints the WAL so the rows are in the
// main database file. It returns the rows stored.
func (s *Store) ImportBenchCSV(ctx context.Context, csvPath string) (int64, error) {
	res, err := s.ImportReadings(ctx, csvPath, ReadingsOptions{Variable: BenchVariable, Unit: "m"})
	if err != nil {
		return 0, err
	}
	if res.RowsRejected != 0 || res.RowsDuplicate != 0 {
		return res.RowsStored, fmt.Errorf("bench: import of %s rejected %d and found %d duplicate rows; the generator is broken", csvPath, res.RowsRejected, res.RowsDuplicate)
	}
	if err := s.Checkpoint(ctx); err != nil {
		return res.RowsStored, err
	}
	return res.RowsStored, nil
}

// LoadBenchCSV loads the CSV file written by WriteBenchCSV into the store:
// one station and one series per station code, readings through the
// batched ReadingWriter, all in one transaction, then a WAL checkpoint so the
// rows are in the main database file. It returns the rows stored.
func (s *Store) LoadBenchCSV(ctx context.Context, csvPath string) (int64, error) {
	f, err := os.Open(csvPath)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer f.Close()
	rt, err := s.beginReadingsTx(ctx, ConflictError)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer rt.end()
	tx, w := rt.tx, rt.w
	insSt, err := tx.PrepareContext(ctx, `INSERT INTO stations(id, name) VALUES (?, ?)`)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer insSt.Close()
	insSe, err := tx.PrepareContext(ctx, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, 'm')`)
	if err != nil {
		return 0, fmt.Errorf("bench load: %w", err)
	}
	defer insSe.Close()
	ids := map[string]int64{}
	cr := newCSVReader(f, ',')
	header := true
	qual := "E"
	for {
		rec, err := cr.next()
		if err != nil {
			return 0, fmt.Errorf("bench load %s: %w", csvPath, err)
		}
		if rec == nil {
			break
		}
		if header {
			header = false
			if strings.Join(rec.fields, ",") != BenchCSVHeader {
				return 0, fmt.Errorf("bench load %s: header %q is not %q", csvPath, rec.raw, BenchCSVHeader)
			}
			continue
		}
		if len(rec.fields) != 4 {
			return 0, fmt.Errorf("bench load %s line %d: %d fields, want 4", csvPath, rec.line, len(rec.fields))
		}
		code := rec.fields[0]
		id, ok := ids[code]
		if !ok {
			code = strings.Clone(code)
			if _, err := insSt.ExecContext(ctx, code, "bench station "+code); err != nil {
				return 0, fmt.Errorf("bench load: station %s: %w", code, err)
			}
			res, err := insSe.ExecContext(ctx, code, BenchVariable)
			if err != nil {
				return 0, fmt.Errorf("bench load: series %s: %w", code, err)
			}
			id, _ = res.LastInsertId()
			ids[code] = id
		}
		t, err := strconv.ParseInt(rec.fields[1], 10, 64)
		if err != nil {
			return 0, fmt.Errorf("bench load %s line %d: time %q: %w", csvPath, rec.line, rec.fields[1], err)
		}
		v, err := strconv.ParseFloat(rec.fields[2], 64)
		if err != nil {
			return 0, fmt.Errorf("bench load %s line %d: value %q: %w", csvPath, rec.line, rec.fields[2], err)
		}
		r := Reading{SeriesID: id, T: t, Value: v}
		if rec.fields[3] != "" {
			r.Qualifier = &qual
		}
		if err := w.Add(ctx, r); err != nil {
			return 0, err
		}
	}
	n, err := w.Flush(ctx)
	if err != nil {
		return n, err
	}
	if err := tx.Commit(); err != nil {
		return n, fmt.Errorf("bench load: commit: %w", err)
	}
	if err := s.Checkpoint(ctx); err != nil {
		return n, err
	}
	return n, nil
}

// Checkpoint copies the write-ahead log into the main database file and
// truncates the log (PRAGMA wal_checkpoint(TRUNCATE)).
func (s *Store) Checkpoint(ctx context.Context) error {
	if _, err := s.DB.ExecContext(ctx, `PRAGMA wal_checkpoint(TRUNCATE)`); err != nil {
		return fmt.Errorf("checkpoint: %w", err)
	}
	return nil
}

// BenchQuery is one measured statement.
type BenchQuery struct {
	Name  string   // short label
	SQL   string   // the statement
	Needs []string // SQL functions it calls that trendsql defines
}

// BenchScanName is the label of the reference scan every ratio divides by.
const BenchScanName = "scan avg()"

// BenchOnePassSQL computes the OLS slope per year, the residual correlogram
// to lag 48 and the residual Ljung–Box test at lag 24 of every series with a
// single correlogram(…, 'detrend=linear') per series.
const BenchOnePassSQL = `SELECT series_id, c ->> 'detrend_slope_per_year' AS slope_per_year, c ->> '$.lags[23].q_lb' AS lb_q, c ->> '$.lags[23].p_lb' AS lb_p, c AS correlogram FROM (SELECT series_id, correlogram(t, value, 48, 'detrend=linear') AS c FROM readings GROUP BY series_id)`

// BenchQueries are the statements `trendsql bench` measures, in order. The
// first is the reference scan.
var BenchQueries = []BenchQuery{
	{BenchScanName, `SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id`, nil},
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
	{"one-pass trend+corr+LB", BenchOnePassSQL, []string{"correlogram"}},
	{"mann_kendall", `SELECT series_id, mann_kendall(t, value) FROM readings GROUP BY series_id`, []string{"mann_kendall"}},
	{"sen_slope", `SELECT series_id, sen_slope(t, value) FROM readings GROUP BY series_id`, []string{"sen_slope"}},
}

// BenchOptions configures RunBench.
type BenchOptions struct {
	Data        BenchData
	Dir         string        // working directory (created if missing); files stay there
	Reps        int           // repetitions of every measurement
	ItemTimeout time.Duration // a repetition running longer is cancelled and the item marked "timed out"
	// Direct, when set, also measures BenchDirectMethod.
	Direct bool
	// Summarize, when set, measures a full summary run with this analyzer.
	Summarize func(t, y []float64, o stats.SummaryOptions) stats.SeriesSummary
	// Log receives progress lines (nil: none).
	Log io.Writer
}

// BenchItem is one measured operation.
type BenchItem struct {
	Name   string `json:"name"`
	SQL    string `json:"sql,omitempty"`
	Status string `json:"status"` // ok, not available, error, timed out
	Note   string `json:"note,omitempty"`
	// Per-repetition wall times in seconds, in run order.
	Seconds []float64 `json:"seconds,omitempty"`
	Median  float64   `json:"median_s,omitempty"`
	Min     float64   `json:"min_s,omitempty"`
	Max     float64   `json:"max_s,omitempty"`
	// Ratio is Median divided by the median of the reference scan.
	Ratio      float64 `json:"ratio_to_scan,omitempty"`
	RowsPerSec float64 `json:"rows_per_s,omitempty"`
	// Go heap allocations (count and bytes) per input row, median over
	// repetitions (runtime.MemStats deltas; SQLite's own C-heap memory is
	// not included).
	AllocsPerRow float64 `json:"go_allocs_per_row"`
	BytesPerRow  float64 `json:"go_bytes_per_row"`
	// PeakRSS is the largest process resident set (VmHWM, bytes) seen
	// during the item's repetitions; the peak is reset before each one when
	// the kernel allows it (PeakReset).
	PeakRSS int64 `json:"peak_rss_bytes,omitempty"`
}

// BenchMachine describes where the run happened.
type BenchMachine struct {
	CPU        string `json:"cpu"`
	CPUs       int    `json:"cpus"`
	MemTotal   string `json:"mem_total"`
	GoVersion  string `json:"go_version"`
	OS         string `json:"os"`
	LoadBefore string `json:"loadavg_before"`
	LoadAfter  string `json:"loadavg_after"`
}

// BenchReport is the result of RunBench.
type BenchReport struct {
	Started      string       `json:"started_utc"`
	Machine      BenchMachine `json:"machine"`
	Series       int          `json:"series"`
	PerSeries    int          `json:"readings_per_series"`
	Rows         int64        `json:"rows"`
	Seed         uint64       `json:"seed"`
	Reps         int          `json:"reps"`
	Dir          string       `json:"dir"`
	CSV          string       `json:"csv"`
	CSVBytes     int64        `json:"csv_bytes"`
	Store        string       `json:"store"`
	StoreBytes   int64        `json:"store_bytes"`
	GenerateSec  float64      `json:"generate_csv_s"`
	ImportMethod string       `json:"import_method"`
	PeakReset    bool         `json:"peak_rss_reset_per_item"`
	FastPath     string       `json:"adapter"`
	Items        []BenchItem  `json:"items"`
	ProcessPeak  int64        `json:"process_peak_rss_bytes"`
	Elapsed      float64      `json:"elapsed_s"`
}

// BenchSummaryModel returns the model of the measured "summarize" run: the
// non-seasonal summary, every figure computed on the raw readings (trend
// fit with HAC errors, Mann–Kendall with the Hamed–Rao correction, exact
// Sen slope and interval, Pettitt, residual correlogram to lag 48 with
// PACF, Ljung–Box at lag 24), the same for every data size so that costs
// compare across sizes. A seasonal summary needs records of at least two
// periods, which the 10,000 hourly readings of the target configuration
// (1.14 years) are not; BenchSeasonalSummaryModel is measured as a second
// item when the records span two years.
func BenchSummaryModel() stats.SummaryOptions {
	return stats.SummaryOptions{MaxLag: 48, LBLags: 24, Alpha: 0.05, Confidence: 0.95, MinN: 10}
}

// BenchSeasonalSummaryModel is the summary with an annual cycle (two
// harmonics; seasonal Kendall, Sen slope and Pettitt on 12 season blocks
// per year), correlogram to lag 48 and Ljung–Box at 24.
func BenchSeasonalSummaryModel() stats.SummaryOptions {
	m := BenchSummaryModel()
	m.PeriodS, m.Harmonics, m.Seasons = 365.25*86400, 2, 12
	return m
}

// spansTwoYears says whether every generated record spans two years (the
// generator's gaps take up to three days).
func (d BenchData) spansTwoYears() bool {
	return float64(d.PerSeries)*3600 >= 2*365.25*86400+4*86400
}

type benchTask struct {
	item *BenchItem
	run  func(ctx context.Context, rep int) error
	// per-rep measurements
	allocs, bytes []float64
}

// RunBench generates the data set in o.Dir, loads it into o.Dir/bench.db and
// measures every item o.Reps times, interleaving the repetitions (rep 1 of
// every item, then rep 2 of every item, ...), so slow drifts of the machine
// hit all items alike. Medians are reported.
func RunBench(ctx context.Context, o BenchOptions) (*BenchReport, error) {
	if o.Data.Series < 1 || o.Data.PerSeries < 1 {
		return nil, errors.New("bench: need at least one series and one reading")
	}
	if o.Reps < 1 {
		o.Reps = 1
	}
	logf := func(format string, a ...any) {
		if o.Log != nil {
			fmt.Fprintf(o.Log, format+"\n", a...)
		}
	}
	if err := os.MkdirAll(o.Dir, 0o755); err != nil {
		return nil, fmt.Errorf("bench: %w", err)
	}
	start := time.Now()
	rep := &BenchReport{
		Started:      start.UTC().Format(time.RFC3339),
		Machine:      machineInfo(),
		Series:       o.Data.Series,
		PerSeries:    o.Data.PerSeries,
		Rows:         o.Data.Rows(),
		Seed:         o.Data.Seed,
		Reps:         o.Reps,
		Dir:          o.Dir,
		CSV:          filepath.Join(o.Dir, "readings.csv"),
		Store:        filepath.Join(o.Dir, "bench.db"),
		ImportMethod: BenchImportMethod,
		PeakReset:    resetPeakRSS(),
	}

	logf("bench: writing %d × %d readings to %s", o.Data.Series, o.Data.PerSeries, rep.CSV)
	t0 := time.Now()
	if _, err := WriteBenchCSV(rep.CSV, o.Data); err != nil {
		return nil, err
	}
	rep.GenerateSec = time.Since(t0).Seconds()
	if fi, err := os.Stat(rep.CSV); err == nil {
		rep.CSVBytes = fi.Size()
	}
	for _, p := range []string{rep.Store, rep.Store + "-wal", rep.Store + "-shm", rep.Store + ".summarize-lock"} {
		os.Remove(p)
	}

	rows := float64(rep.Rows)
	var main *Store
	defer func() {
		if main != nil {
			main.Close()
		}
	}()

	// The import: rep 1 builds bench.db (used by every later item); later
	// reps import into a scratch file that is removed afterwards.
	importItem := &BenchItem{Name: "CSV import", Status: "ok", Note: BenchImportMethod + "; includes creating the store and the final WAL checkpoint"}
	tasks := []*benchTask{{item: importItem, run: func(ctx context.Context, r int) error {
		path := rep.Store
		if r > 0 {
			path = filepath.Join(o.Dir, "import-scratch.db")
			removeStoreFiles(path)
			defer removeStoreFiles(path)
		}
		st, err := Open(ctx, path, Options{})
		if err != nil {
			return err
		}
		n, err := st.ImportBenchCSV(ctx, rep.CSV)
		if err == nil && n != rep.Rows {
			err = fmt.Errorf("bench: stored %d rows, generated %d", n, rep.Rows)
		}
		if r == 0 && err == nil {
			main = st
			return nil
		}
		if cerr := st.Close(); err == nil {
			err = cerr
		}
		return err
	}}}

	if o.Direct {
		it := &BenchItem{Name: "direct load", Status: "ok", Note: BenchDirectMethod + "; includes creating the store and the final WAL checkpoint"}
		tasks = append(tasks, &benchTask{item: it, run: func(ctx context.Context, r int) error {
			path := filepath.Join(o.Dir, "direct-scratch.db")
			removeStoreFiles(path)
			defer removeStoreFiles(path)
			st, err := Open(ctx, path, Options{})
			if err != nil {
				return err
			}
			n, err := st.LoadBenchCSV(ctx, rep.CSV)
			if err == nil && n != rep.Rows {
				err = fmt.Errorf("bench: direct load stored %d rows, generated %d", n, rep.Rows)
			}
			if cerr := st.Close(); err == nil {
				err = cerr
			}
			return err
		}})
	}

	have := map[string]sqlfuncs.Kind{}
	for _, d := range sqlfuncs.List() {
		have[d.Name] = d.Kind
	}
	for _, q := range BenchQueries {
		q := q
		it := &BenchItem{Name: q.Name, SQL: q.SQL, Status: "ok"}
		for _, fn := range q.Needs {
			k, ok := have[fn]
			if !ok {
				it.Status = "not available"
				it.Note = fn + " is not defined in this build"
				break
			}
			if k != sqlfuncs.Aggregate {
				it.Status = "not available"
				it.Note = fn + " is " + string(k) + ", not an aggregate"
				break
			}
		}
		tasks = append(tasks, &benchTask{item: it, run: func(ctx context.Context, r int) error {
			return main.drainQuery(ctx, q.SQL)
		}})
	}
	for _, sm := range []struct {
		name, note string
		model      stats.SummaryOptions
		needsYears bool
	}{
		{"summarize", "full store.Summarize run, results written: no seasonal model, every figure on the raw readings (trend fit with HAC errors, Mann–Kendall + Hamed–Rao, exact Sen slope and interval, Pettitt, correlogram to lag 48 with PACF, Ljung–Box at 24), all CPUs",
			BenchSummaryModel(), false},
		{"summarize seasonal", "full store.Summarize run, results written: annual cycle with 2 harmonics, seasonal Kendall, Sen slope and Pettitt on 12 season blocks per year, correlogram to lag 48, Ljung–Box at 24, all CPUs",
			BenchSeasonalSummaryModel(), true},
	} {
		item := &BenchItem{Name: sm.name, Status: "ok", Note: sm.note}
		switch {
		case o.Summarize == nil:
			item.Status = "not available"
			item.Note = "no summary analyzer in this build"
		case sm.needsYears && !o.Data.spansTwoYears():
			item.Status = "not available"
			item.Note = "records shorter than two years: a seasonal summary needs two periods"
		}
		model := sm.model
		tasks = append(tasks, &benchTask{item: item, run: func(ctx context.Context, r int) error {
			res, err := main.Summarize(ctx, SummarizeOptions{Model: model, Analyze: o.Summarize, ToolVersion: "bench"})
			if err == nil && res.Insufficient > 0 {
				// A summary that skipped series would be measured as fast.
				err = fmt.Errorf("%d of %d series had too short a record for the summary model", res.Insufficient, res.Computed)
			}
			return err
		}})
	}

	for r := 0; r < o.Reps; r++ {
		for _, tk := range tasks {
			it := tk.item
			if it.Status != "ok" {
				continue
			}
			if r > 0 && main == nil {
				break
			}
			logf("bench: rep %d/%d %s", r+1, o.Reps, it.Name)
			sec, allocs, bytes, peak, err := measure(ctx, o.ItemTimeout, func(ctx context.Context) error { return tk.run(ctx, r) })
			if err != nil {
				if ctx.Err() != nil {
					return nil, ctx.Err()
				}
				if errors.Is(err, context.DeadlineExceeded) || strings.Contains(err.Error(), "interrupted") {
					it.Status = "timed out"
					it.Note = fmt.Sprintf("a repetition ran longer than %s and was cancelled", o.ItemTimeout)
				} else {
					it.Status = "error"
					it.Note = err.Error()
				}
				if tk.item == importItem && main == nil {
					return nil, fmt.Errorf("bench: import failed: %w", err)
				}
				continue
			}
			it.Seconds = append(it.Seconds, sec)
			tk.allocs = append(tk.allocs, allocs/rows)
			tk.bytes = append(tk.bytes, bytes/rows)
			if peak > it.PeakRSS {
				it.PeakRSS = peak
			}
		}
	}

	var scan float64
	for _, tk := range tasks {
		it := tk.item
		if len(it.Seconds) == 0 {
			continue
		}
		it.Median = median(it.Seconds)
		it.Min, it.Max = minMax(it.Seconds)
		it.AllocsPerRow = median(tk.allocs)
		it.BytesPerRow = median(tk.bytes)
		it.RowsPerSec = rows / it.Median
		if it.Name == BenchScanName && it.Status == "ok" {
			scan = it.Median
		}
	}
	for _, tk := range tasks {
		if tk.item.Median > 0 && scan > 0 {
			tk.item.Ratio = tk.item.Median / scan
		}
		rep.Items = append(rep.Items, *tk.item)
	}
	if fi, err := os.Stat(rep.Store); err == nil {
		rep.StoreBytes = fi.Size()
	}
	_, rep.FastPath = sqlfuncs.FastPathStatus()
	rep.ProcessPeak = processPeakRSS()
	rep.Machine.LoadAfter = loadAvg()
	rep.Elapsed = time.Since(start).Seconds()
	return rep, nil
}

// drainQuery runs a statement and reads every result row.
func (s *Store) drainQuery(ctx context.Context, q string) error {
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

// measure runs fn once after a GC and returns its wall time, the Go heap
// allocations (count, bytes) it made and the process peak RSS.
func measure(ctx context.Context, timeout time.Duration, fn func(context.Context) error) (sec, allocs, bytes float64, peak int64, err error) {
	if timeout > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithTimeout(ctx, timeout)
		defer cancel()
	}
	runtime.GC()
	var m0, m1 runtime.MemStats
	runtime.ReadMemStats(&m0)
	resetPeakRSS()
	t0 := time.Now()
	err = fn(ctx)
	sec = time.Since(t0).Seconds()
	runtime.ReadMemStats(&m1)
	peak = processPeakRSS()
	if err == nil && ctx.Err() != nil {
		err = ctx.Err()
	}
	return sec, float64(m1.Mallocs - m0.Mallocs), float64(m1.TotalAlloc - m0.TotalAlloc), peak, err
}

func removeStoreFiles(path string) {
	for _, p := range []string{path, path + "-wal", path + "-shm", path + ".summarize-lock"} {
		os.Remove(p)
	}
}

func median(x []float64) float64 {
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := len(s)
	if n == 0 {
		return 0
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func minMax(x []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, v := range x {
		lo = math.Min(lo, v)
		hi = math.Max(hi, v)
	}
	return lo, hi
}

// resetPeakRSS asks Linux to reset the process's peak resident set size
// (writing 5 to /proc/self/clear_refs, Linux ≥ 4.0). It reports success.
func resetPeakRSS() bool {
	return os.WriteFile("/proc/self/clear_refs", []byte("5"), 0) == nil
}

// processPeakRSS returns VmHWM from /proc/self/status in bytes (0 if unknown).
func processPeakRSS() int64 {
	return procStatusKB("/proc/self/status", "VmHWM:") * 1024
}

func procStatusKB(file, key string) int64 {
	b, err := os.ReadFile(file)
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, key) {
			f := strings.Fields(line[len(key):])
			if len(f) >= 1 {
				v, _ := strconv.ParseInt(f[0], 10, 64)
				return v
			}
		}
	}
	return 0
}

func loadAvg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return ""
	}
	f := strings.Fields(string(b))
	if len(f) >= 3 {
		return strings.Join(f[:3], " ")
	}
	return ""
}

func machineInfo() BenchMachine {
	m := BenchMachine{CPUs: runtime.NumCPU(), GoVersion: runtime.Version(), OS: runtime.GOOS + "/" + runtime.GOARCH, LoadBefore: loadAvg()}
	if b, err := os.ReadFile("/proc/cpuinfo"); err == nil {
		for _, line := range strings.Split(string(b), "\n") {
			if strings.HasPrefix(line, "model name") {
				if i := strings.IndexByte(line, ':'); i >= 0 {
					m.CPU = strings.TrimSpace(line[i+1:])
				}
				break
			}
		}
	}
	if kb := procStatusKB("/proc/meminfo", "MemTotal:"); kb > 0 {
		m.MemTotal = fmt.Sprintf("%.1f GiB", float64(kb)/(1<<20))
	}
	return m
}
