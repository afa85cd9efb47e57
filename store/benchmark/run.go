package benchmark

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"trendsql/sqlfuncs"
	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/summaries"
)

type benchTask struct {
	item *Item
	run  func(ctx context.Context, rep int) error
	// per-rep measurements
	allocs, bytes []float64
}

// Run generates the data set in o.Dir, loads it into o.Dir/bench.db and
// measures every item o.Reps times, interleaving the repetitions (rep 1 of
// every item, then rep 2 of every item, ...), so slow drifts of the machine
// hit all items alike. Medians are reported.
func Run(ctx context.Context, o Options) (*Report, error) {
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
	if !o.Force {
		for _, name := range WorkFiles() {
			p := filepath.Join(o.Dir, name)
			if _, err := os.Lstat(p); err == nil {
				return nil, fmt.Errorf("bench: %s: %w", p, ErrFileExists)
			}
		}
	}
	start := time.Now()
	rep := &Report{
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
		ImportMethod: ImportMethod,
		PeakReset:    resetPeakRSS(),
	}

	logf("bench: writing %d × %d readings to %s", o.Data.Series, o.Data.PerSeries, rep.CSV)
	t0 := time.Now()
	if _, err := WriteCSV(rep.CSV, o.Data); err != nil {
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
	var main *store.Store
	defer func() {
		if main != nil {
			main.Close()
		}
	}()

	// The import: rep 1 builds bench.db (used by every later item); later
	// reps import into a scratch file that is removed afterwards.
	importItem := &Item{Name: "CSV import", Status: "ok", Note: ImportMethod + "; includes creating the store and the final WAL checkpoint"}
	tasks := []*benchTask{{item: importItem, run: func(ctx context.Context, r int) error {
		path := rep.Store
		if r > 0 {
			path = filepath.Join(o.Dir, "import-scratch.db")
			removeStoreFiles(path)
			defer removeStoreFiles(path)
		}
		st, err := store.Open(ctx, path, store.Options{})
		if err != nil {
			return err
		}
		n, err := ImportCSV(ctx, st, rep.CSV, o.OnInsertPath)
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
		it := &Item{Name: "direct load", Status: "ok", Note: DirectMethod + "; includes creating the store and the final WAL checkpoint"}
		tasks = append(tasks, &benchTask{item: it, run: func(ctx context.Context, r int) error {
			path := filepath.Join(o.Dir, "direct-scratch.db")
			removeStoreFiles(path)
			defer removeStoreFiles(path)
			st, err := store.Open(ctx, path, store.Options{})
			if err != nil {
				return err
			}
			n, err := LoadCSV(ctx, st, rep.CSV)
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
	for _, q := range Queries {
		q := q
		it := &Item{Name: q.Name, SQL: q.SQL, Status: "ok"}
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
			return drainQuery(ctx, main, q.SQL)
		}})
	}
	for _, sm := range []struct {
		name, note string
		model      stats.SummaryOptions
		needsYears bool
	}{
		{"summarize", "full summaries.Run run, results written: no seasonal model, every figure on the raw readings (trend fit with HAC errors, Mann–Kendall + Hamed–Rao, exact Sen slope and interval, Pettitt, correlogram to lag 48 with PACF, Ljung–Box at 24), all CPUs",
			SummaryModel(), false},
		{"summarize seasonal", "full summaries.Run run, results written: annual cycle with 2 harmonics, seasonal Kendall, Sen slope and Pettitt on 12 season blocks per year, correlogram to lag 48, Ljung–Box at 24, all CPUs",
			SeasonalSummaryModel(), true},
	} {
		item := &Item{Name: sm.name, Status: "ok", Note: sm.note}
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
			res, err := summaries.Run(ctx, main, summaries.Options{Model: model, Analyze: o.Summarize, ToolVersion: "bench"})
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
		if it.Name == ScanName && it.Status == "ok" {
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
