package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime/pprof"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"trendsql/sqlfuncs/stats"
	"trendsql/store/benchmark"
)

type benchOptions struct {
	stations, readings, reps int
	dir                      string
	keep, quiet, direct      bool
	force                    bool
	format, jsonFile         string
	cpuProfile               string
	seed                     uint64
	timeout                  time.Duration
}

func init() { register(newBenchCmd) }

func newBenchCmd(e *env) *cobra.Command {
	o := benchOptions{}
	c := &cobra.Command{
		Use:   "bench",
		Short: "Measure import, scans, every core aggregate and summarize on a generated store",
		Long: `Generate an invented data set (per series: level + annual cycle + linear drift
+ AR(1) noise, hourly readings with three gaps; deterministic for a seed) as a
CSV file, load it into a new store, and measure in this one process, with the
repetitions interleaved: the CSV load, the plain scan

  SELECT series_id, avg(value), count(*) FROM readings GROUP BY series_id

every core aggregate over all series, one query computing trend slope and
the correlogram(48) and Ljung–Box(24) of the straight-line residuals
together (the figures of the Python scripts in testdata/bench), and a full
summarize run (no
seasonal model: every figure on the raw readings, including the exact Sen
slope; plus a seasonal run when the records span two years). Each
figure is the median over --reps runs, shown as a ratio to the avg() scan of
the same run and as rows per second, with Go heap allocations per row and the
process's peak resident memory.

The configuration the performance targets refer to is
  trendsql bench --stations 1000 --readings 10000
(10 million rows; needs about 1 GB of disk in --dir). The defaults are
smaller so the command finishes in about a minute. Functions missing from
this build are reported as "not available". Files are removed at the end
unless --keep is given; testdata/bench/compare.sh runs the outside
comparisons on a kept directory. --db is ignored.`,
		Args: exactArgs(0),
		RunE: func(cmd *cobra.Command, args []string) error { return runBench(cmd.Context(), e, o) },
	}
	fl := c.Flags()
	fl.IntVar(&o.stations, "stations", 100, "number of generated series (one station each)")
	fl.IntVar(&o.readings, "readings", 5000, "hourly readings per series")
	fl.IntVar(&o.reps, "reps", 3, "repetitions of every measurement (medians are reported)")
	fl.StringVar(&o.dir, "dir", "", "working directory for the CSV file and stores (default: a new temporary directory)")
	fl.BoolVar(&o.keep, "keep", false, "keep readings.csv and bench.db in the working directory")
	fl.StringVar(&o.format, "format", FormatTable, "output format: table or json")
	fl.StringVar(&o.jsonFile, "json", "", "also write the JSON report to this file")
	fl.StringVar(&o.cpuProfile, "cpuprofile", "", "write a CPU profile of the whole run to this file (go tool pprof)")
	fl.Uint64Var(&o.seed, "seed", 1, "generator seed")
	fl.DurationVar(&o.timeout, "item-timeout", 10*time.Minute, "cancel a repetition that runs longer than this and mark the item timed out")
	fl.BoolVar(&o.quiet, "quiet", false, "no progress lines on stderr")
	fl.BoolVar(&o.force, "force", false, "overwrite existing files: readings.csv, bench.db… in --dir, the --json and --cpuprofile files")
	fl.BoolVar(&o.direct, "direct", false, "also measure a direct load without validation (ReadingWriter only), to show what the importer's checks cost")
	return c
}

// benchAnalyzer is the per-series analyzer of the measured summarize run,
// the one `trendsql summarize` uses; nil would report "not available".
var benchAnalyzer func(t, y []float64, o stats.SummaryOptions) stats.SeriesSummary = stats.SummarizeSeries

// runBench generates the data, runs the measurements and prints the report.
func runBench(ctx context.Context, e *env, o benchOptions) error {
	if o.format != FormatTable && o.format != FormatJSON {
		return usageErr("bench: --format must be table or json, not %q", o.format)
	}
	if o.stations < 1 || o.readings < 1 || o.reps < 1 {
		return usageErr("bench: --stations, --readings and --reps must be at least 1")
	}
	dir, tmp := o.dir, false
	if dir == "" {
		d, err := os.MkdirTemp("", "trendsql-bench-")
		if err != nil {
			return err
		}
		dir, tmp = d, true
	}
	opts := benchmark.Options{
		Data:         benchmark.Data{Series: o.stations, PerSeries: o.readings, Seed: o.seed},
		Dir:          dir,
		Reps:         o.reps,
		ItemTimeout:  o.timeout,
		Direct:       o.direct,
		Summarize:    benchAnalyzer,
		OnInsertPath: importGC,
		Force:        o.force,
	}
	if !o.quiet {
		opts.Log = e.errw
	}
	if o.cpuProfile != "" {
		profile, err := createOutput(o.cpuProfile, o.force)
		if err != nil {
			return fmt.Errorf("bench: --cpuprofile: %w", err)
		}
		defer profile.Close()
		if err := pprof.StartCPUProfile(profile); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		defer pprof.StopCPUProfile()
	}
	var jsonOut *os.File
	if o.jsonFile != "" {
		f, err := createOutput(o.jsonFile, o.force)
		if err != nil {
			return fmt.Errorf("bench: --json: %w", err)
		}
		defer f.Close()
		jsonOut = f
	}
	rep, err := benchmark.Run(ctx, opts)
	if errors.Is(err, benchmark.ErrFileExists) {
		return fmt.Errorf("%w (use --force to overwrite, or another --dir)", err)
	}
	if !o.keep {
		if tmp {
			os.RemoveAll(dir)
		} else if rep != nil {
			for _, name := range benchmark.WorkFiles() {
				os.Remove(filepath.Join(dir, name))
			}
		}
	}
	if err != nil {
		return err
	}
	if o.jsonFile != "" {
		b, err := json.MarshalIndent(rep, "", "  ")
		if err != nil {
			return err
		}
		if _, err := jsonOut.Write(append(b, '\n')); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
		if err := jsonOut.Close(); err != nil {
			return fmt.Errorf("bench: %w", err)
		}
	}
	if o.format == FormatJSON {
		enc := json.NewEncoder(e.out)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	writeBenchTable(e.out, rep, o.keep)
	return nil
}

func writeBenchTable(w io.Writer, r *benchmark.Report, kept bool) {
	m := r.Machine
	fmt.Fprintf(w, "trendsql bench  %s\n", r.Started)
	fmt.Fprintf(w, "machine   %s, %d CPUs, %s RAM, %s, %s\n", m.CPU, m.CPUs, m.MemTotal, m.GoVersion, m.OS)
	fmt.Fprintf(w, "load avg  before %s, after %s\n", m.LoadBefore, m.LoadAfter)
	fmt.Fprintf(w, "data      %d series × %d hourly readings = %d rows (seed %d); CSV %.1f MiB written in %.2f s; store %.1f MiB\n",
		r.Series, r.PerSeries, r.Rows, r.Seed, mebibytes(r.CSVBytes), r.GenerateSec, mebibytes(r.StoreBytes))
	fmt.Fprintf(w, "method    median of %d interleaved repetitions; × scan = median / median of %q\n", r.Reps, benchmark.ScanName)
	if kept {
		fmt.Fprintf(w, "files     %s, %s\n", r.CSV, r.Store)
	}
	fmt.Fprintln(w)
	cols := []string{"measurement", "median s", "× scan", "rows/s", "Go allocs/row", "Go B/row", "peak RSS MiB", "status"}
	numeric := []bool{false, true, true, true, true, true, true, false}
	var table [][]string
	var notes []string
	for _, it := range r.Items {
		row := []string{it.Name, "", "", "", "", "", "", it.Status}
		if len(it.Seconds) > 0 {
			row[1] = fmt.Sprintf("%.3f", it.Median)
			if it.Ratio > 0 {
				row[2] = fmt.Sprintf("%.2f", it.Ratio)
			}
			row[3] = humanRate(it.RowsPerSec)
			row[4] = fmt.Sprintf("%.3f", it.AllocsPerRow)
			row[5] = fmt.Sprintf("%.1f", it.BytesPerRow)
			if it.PeakRSS > 0 {
				row[6] = fmt.Sprintf("%.0f", mebibytes(it.PeakRSS))
			}
		}
		if it.Note != "" && it.Status != "ok" {
			notes = append(notes, fmt.Sprintf("%s: %s", it.Name, it.Note))
		}
		table = append(table, row)
	}
	drawTable(w, cols, table, numeric)
	fmt.Fprintln(w)
	fmt.Fprintf(w, "import    %s\n", r.ImportMethod)
	fmt.Fprintf(w, "adapter   %s\n", r.FastPath)
	peakNote := "peak RSS = VmHWM, reset before each repetition"
	if !r.PeakReset {
		peakNote = "peak RSS = VmHWM of the whole process so far (this kernel does not allow resetting it)"
	}
	fmt.Fprintf(w, "memory    %s; whole-run process peak %.0f MiB; Go allocs exclude SQLite's own heap\n", peakNote, mebibytes(r.ProcessPeak))
	for _, n := range notes {
		fmt.Fprintf(w, "note      %s\n", n)
	}
	fmt.Fprintf(w, "elapsed   %.1f s\n", r.Elapsed)
	for _, it := range r.Items {
		if it.SQL != "" {
			fmt.Fprintf(w, "sql       %-22s %s\n", it.Name, strings.Join(strings.Fields(it.SQL), " "))
		}
	}
}

func mebibytes(b int64) float64 { return float64(b) / (1 << 20) }

func humanRate(r float64) string {
	switch {
	case r >= 1e6:
		return fmt.Sprintf("%.2fM", r/1e6)
	case r >= 1e3:
		return fmt.Sprintf("%.1fk", r/1e3)
	default:
		return fmt.Sprintf("%.0f", r)
	}
}

// createOutput creates a file the command writes. An existing file is kept
// (an error naming --force) unless force; then it is truncated.
func createOutput(path string, force bool) (*os.File, error) {
	flag := os.O_WRONLY | os.O_CREATE | os.O_EXCL
	if force {
		flag = os.O_WRONLY | os.O_CREATE | os.O_TRUNC
	}
	f, err := os.OpenFile(path, flag, 0o644)
	if errors.Is(err, os.ErrExist) {
		return nil, fmt.Errorf("%s exists; not overwritten without --force", path)
	}
	return f, err
}
