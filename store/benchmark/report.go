package benchmark

import (
	"io"
	"time"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

// Options configures Run.
type Options struct {
	Data        Data
	Dir         string        // working directory (created if missing); files stay there
	Reps        int           // repetitions of every measurement
	ItemTimeout time.Duration // a repetition running longer is cancelled and the item marked "timed out"
	// Direct, when set, also measures DirectMethod.
	Direct bool
	// Summarize, when set, measures a full summary run with this analyzer.
	Summarize func(t, y []float64, o stats.SummaryOptions) stats.SeriesSummary
	// OnInsertPath is passed to the measured import (see
	// csvimport.ReadingsOptions), so the command can tune the process as
	// `trendsql import` does.
	OnInsertPath func(cLevel bool) (restore func())
	// Log receives progress lines (nil: none).
	Log io.Writer
	// Force lets the run overwrite (and, with the caller's clean-up,
	// delete) files of its names that are already in Dir; without it such
	// a file stops the run before anything is written (ErrFileExists).
	Force bool
}

// Item is one measured operation.
type Item struct {
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

// Machine describes where the run happened.
type Machine struct {
	CPU        string `json:"cpu"`
	CPUs       int    `json:"cpus"`
	MemTotal   string `json:"mem_total"`
	GoVersion  string `json:"go_version"`
	OS         string `json:"os"`
	LoadBefore string `json:"loadavg_before"`
	LoadAfter  string `json:"loadavg_after"`
}

// Report is the result of Run.
type Report struct {
	Started      string  `json:"started_utc"`
	Machine      Machine `json:"machine"`
	Series       int     `json:"series"`
	PerSeries    int     `json:"readings_per_series"`
	Rows         int64   `json:"rows"`
	Seed         uint64  `json:"seed"`
	Reps         int     `json:"reps"`
	Dir          string  `json:"dir"`
	CSV          string  `json:"csv"`
	CSVBytes     int64   `json:"csv_bytes"`
	Store        string  `json:"store"`
	StoreBytes   int64   `json:"store_bytes"`
	GenerateSec  float64 `json:"generate_csv_s"`
	ImportMethod string  `json:"import_method"`
	PeakReset    bool    `json:"peak_rss_reset_per_item"`
	FastPath     string  `json:"adapter"`
	Items        []Item  `json:"items"`
	ProcessPeak  int64   `json:"process_peak_rss_bytes"`
	Elapsed      float64 `json:"elapsed_s"`
}

// SummaryModel returns the model of the measured "summarize" run: the
// non-seasonal summary, every figure computed on the raw readings (trend
// fit with HAC errors, Mann–Kendall with the Hamed–Rao correction, exact
// Sen slope and interval, Pettitt, residual correlogram to lag 48 with
// PACF, Ljung–Box at lag 24), the same for every data size so that costs
// compare across sizes. A seasonal summary needs records of at least two
// periods, which the 10,000 hourly readings of the target configuration
// (1.14 years) are not; SeasonalSummaryModel is measured as a second
// item when the records span two years.
func SummaryModel() stats.SummaryOptions {
	return stats.SummaryOptions{MaxLag: 48, LBLags: 24, Alpha: 0.05, Confidence: 0.95, MinN: 10}
}

// SeasonalSummaryModel is the summary with an annual cycle (two
// harmonics; seasonal Kendall, Sen slope and Pettitt on 12 season blocks
// per year), correlogram to lag 48 and Ljung–Box at 24.
func SeasonalSummaryModel() stats.SummaryOptions {
	m := SummaryModel()
	m.PeriodS, m.Harmonics, m.Seasons = timefmt.SecondsPerYear, 2, 12
	return m
}
