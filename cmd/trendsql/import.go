package main

import (
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"runtime/debug"
	"strconv"
	"strings"
	_ "time/tzdata" // --tz works without a system zoneinfo

	"github.com/spf13/cobra"

	"trendsql/sqlfuncs/timefmt"
	"trendsql/store"
	"trendsql/store/csvimport"
)

func init() { register(newImportCmd) }

// importOptions are the flags and the file of `import stations` and
// `import readings`.
type importOptions struct {
	file         string
	delimiter    string
	decimalComma bool
	// readings only
	stationCol, timeCol, valueCol, qualifierCol string
	variable, variableCol, unit                 string
	tz, onDuplicate                             string
	censorCol                                   string
	rejectCensored                              bool
	missingValues                               []string
	maxRejectShare                              string
	// stations only
	again bool
}

func newImportCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "import",
		Short: "Load stations or readings from CSV files into the store",
		Long: `Load a CSV file of stations or of readings into the store. Each file is read
in one transaction: it is recorded as a batch in import_batches with its
counts, every rejected row goes to import_rejects with its line number, text
and reason, and on a failure nothing changes.

Files are UTF-8 text (a leading byte order mark is ignored) with \n, \r\n
or bare \r line ends (the classic Mac OS convention, which some spreadsheet
programs still write), fields quoted as in RFC 4180. The first line decides
the line ends: a line end of another kind outside quotes stops the import
with its line number. A quoted field may span at most 100 lines and 64 KiB;
a quote left open longer, or to the end of the file, stops the import with
the line where it opened. So every line of a file is stored, rejected with
its reason, or the import fails: no line is absorbed unseen.

A one-line account goes to stderr. Exit status: 0 when the batch was stored
(also when some rows were rejected: they are counted and listed in
import_rejects), 1 when the import failed and nothing changed, 2 for bad
flags or arguments. An import that would store nothing because every row was
rejected fails (exit 1) and prints the most frequent reasons with their
counts; --max-reject-share fails it also when a larger share of rows is
rejected (for scheduled imports).`,
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 0 {
				return missingSubcommand(cmd, "name what to import, `trendsql import stations FILE.csv` or `trendsql import readings FILE.csv`")
			}
			return usageErr("import: unknown kind %q: use `trendsql import stations FILE.csv` or `trendsql import readings FILE.csv`", args[0])
		},
	}
	c.AddCommand(newImportStationsCmd(e), newImportReadingsCmd(e))
	return c
}

func newImportStationsCmd(e *env) *cobra.Command {
	o := &importOptions{}
	c := &cobra.Command{
		Use:   "stations FILE.csv",
		Short: "Add or update stations from a CSV file",
		Long: `Add or update stations. The header names the columns: id (or station_id or
station), name, latitude, longitude, elevation_m, and optionally metadata
(a JSON object). Every other column becomes a key of the station's metadata
JSON with the cell text as its value, kept as text exactly as written.

A station already stored is merged: given cells overwrite, empty cells keep
the stored value, metadata keys are merged key by key. Rows with a bad
latitude (outside -90..90), longitude (outside -180..180) or elevation are
rejected with the reason.

A file whose SHA-256 equals that of an earlier stations batch is refused,
naming that batch, and nothing is recorded; --again merges it anyway, with a
warning.

FILE "-" reads standard input; the batch records its source as "stdin".`,
		Example: `  trendsql import stations sites.csv
  trendsql import stations --delimiter ';' --decimal-comma sites.csv`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.file = args[0]
			return runImportStations(cmd.Context(), e, *o)
		},
	}
	addImportCSVFlags(c, o)
	e.addWaitFlag(c)
	c.Flags().BoolVar(&o.again, "again", false, "merge a file already imported (same SHA-256) again instead of refusing it")
	return c
}

func newImportReadingsCmd(e *env) *cobra.Command {
	o := &importOptions{}
	c := &cobra.Command{
		Use:   "readings FILE.csv",
		Short: "Add readings from a CSV file",
		Long: `Add readings. Columns are found by header name (case-insensitive): station,
time, value, optional qualifier, and the variable either from a column or fixed
with --variable. Stations not yet stored are created with their id only;
series (station, variable) are created with --unit. A unit different from a
series' stored unit rejects that series' rows.

Times: ISO 8601 with or without an offset, YYYY-MM-DD, YYYY-MM-DD HH:MM[:SS]
or unix seconds. Zone-less times are local times in --tz: an IANA zone such
as Europe/Berlin (default UTC), where a local time skipped or repeated by a
daylight-saving change is rejected (give an offset to say which is meant), or
a fixed offset (+01:00, -05:00, UTC+1 = one hour ahead of UTC) for loggers
that keep standard time all year.

Values must be decimal numbers; empty, NaN, infinite and other text are
rejected row by row with the reason. A value written <5, < 5 or <0.05 (0,05
with --decimal-comma) is below the reporting limit 5 and is stored as 5 with
the censoring mark '<'; >2000 is stored with the mark '>'. --censor-col names
a column of remarks ('<', '>' or empty) that mark the value beside them.
--reject-censored rejects censored values instead. --missing-values lists
cell texts that mean "no reading" (exact match, e.g. -999,NA): such rows are
rejected with the reason "declared missing-value marker" and counted apart.

A (station, variable, time) already stored or repeated in the file is a
duplicate: --on-duplicate error (default) stops the import and changes
nothing; keep-first keeps the earlier reading; replace overwrites it where
the value, mark or qualifier differs (an identical row changes nothing and is
counted as duplicate only). Every dropped or overwritten reading is recorded
in import_duplicates with both values. A file whose SHA-256 equals that of an
earlier batch is refused under --on-duplicate error, naming that batch, and
imported with a warning otherwise.

FILE "-" reads standard input; the batch records its source as "stdin".`,
		Example: `  trendsql import readings --variable stage --unit m gauges.csv
  trendsql import readings --variable-col param --tz Europe/Berlin --delimiter ';' --decimal-comma export.csv
  trendsql import readings --variable level --on-duplicate keep-first logger-2024.csv
  trendsql import readings --variable level --tz +01:00 --missing-values -999,-9999 logger-2024.csv
  trendsql import readings --variable total_phosphorus --unit ug/L --censor-col remark lab-export.csv
  gunzip -c archive-2019.csv.gz | trendsql import readings --variable stage -`,
		Args: exactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.file = args[0]
			return runImportReadings(cmd.Context(), e, *o)
		},
	}
	addImportCSVFlags(c, o)
	e.addWaitFlag(c)
	fl := c.Flags()
	fl.StringVar(&o.stationCol, "station-col", "", `column with the station id (default "station")`)
	fl.StringVar(&o.timeCol, "time-col", "", `column with the time (default "time")`)
	fl.StringVar(&o.valueCol, "value-col", "", `column with the value (default "value")`)
	fl.StringVar(&o.qualifierCol, "qualifier-col", "", `column with the qualifier flag, kept verbatim (default "qualifier" if present)`)
	fl.StringVar(&o.variable, "variable", "", "variable name for every row of the file, e.g. stage")
	fl.StringVar(&o.variableCol, "variable-col", "", `column with the variable name (default "variable" if present and --variable is not given)`)
	fl.StringVar(&o.unit, "unit", "", "unit of the readings, e.g. m or mg/L")
	fl.StringVar(&o.tz, "tz", "UTC", "zone of zone-less times: an IANA name (Europe/Berlin) or a fixed offset (+01:00, -05:00, UTC+1)")
	fl.StringVar(&o.censorCol, "censor-col", "", `column with censoring remarks: '<', '>' or empty`)
	fl.BoolVar(&o.rejectCensored, "reject-censored", false, "reject censored values (<5, >2000) instead of storing them with their mark")
	fl.StringSliceVar(&o.missingValues, "missing-values", nil, "comma-separated cell texts meaning no reading, matched exactly (e.g. -999,NA)")
	fl.StringVar(&o.onDuplicate, "on-duplicate", string(csvimport.DupError), "what a repeated (station, variable, time) does: error, keep-first or replace")
	return c
}

func addImportCSVFlags(c *cobra.Command, o *importOptions) {
	c.Flags().StringVar(&o.delimiter, "delimiter", ",", `field separator: one character, or "tab"`)
	c.Flags().BoolVar(&o.decimalComma, "decimal-comma", false, "numbers use a decimal comma (12,5); a point is then refused")
	c.Flags().StringVar(&o.maxRejectShare, "max-reject-share", "", "fail, storing nothing, when more than this share of rows is rejected: a fraction (0.05) or a percentage (5%)")
}

// runImportStations imports one stations file.
func runImportStations(ctx context.Context, e *env, o importOptions) error {
	delim, err := importDelimiter(o.delimiter)
	if err != nil {
		return err
	}
	limit, err := parseRejectShare(o.maxRejectShare)
	if err != nil {
		return err
	}
	return runImport(ctx, e, o.file, func(s *store.Store, progress func(csvimport.Progress)) (string, error) {
		res, err := csvimport.ImportStations(ctx, s, o.file, csvimport.StationsOptions{
			Delimiter: delim, DecimalComma: o.decimalComma, Progress: progress, Stdin: e.in, RejectLimit: limit, Again: o.again})
		if errors.Is(err, csvimport.ErrAlreadyImported) {
			return "", fmt.Errorf("%w (--again merges it anyway)", err)
		}
		if err != nil {
			return "", wordImportError(err)
		}
		return importStationsSummary(res), nil
	})
}

// runImportReadings imports one readings file.
func runImportReadings(ctx context.Context, e *env, o importOptions) error {
	opt, err := o.readingsOptions()
	if err != nil {
		return err
	}
	return runImport(ctx, e, o.file, func(s *store.Store, progress func(csvimport.Progress)) (string, error) {
		opt.Progress = progress
		opt.Stdin = e.in
		opt.OnInsertPath = importGC
		res, err := csvimport.ImportReadings(ctx, s, o.file, opt)
		if errors.Is(err, csvimport.ErrAlreadyImported) {
			return "", fmt.Errorf("%w (--on-duplicate keep-first or replace imports it anyway)", err)
		}
		if err != nil {
			return "", wordImportError(err)
		}
		return importReadingsSummary(res), nil
	})
}

// parseRejectShare reads --max-reject-share: "" for no limit, a fraction
// from 0 to 1, or a percentage from 0% to 100%.
func parseRejectShare(s string) (csvimport.RejectLimit, error) {
	if s == "" {
		return csvimport.RejectLimit{}, nil
	}
	t, scale := strings.TrimSpace(s), 1.0
	if strings.HasSuffix(t, "%") {
		t, scale = strings.TrimSpace(strings.TrimSuffix(t, "%")), 100
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || math.IsNaN(v) || v < 0 || v > scale {
		return csvimport.RejectLimit{}, usageErr("import: --max-reject-share must be a fraction from 0 to 1 (0.05) or a percentage from 0%% to 100%% (5%%), got %q", s)
	}
	return csvimport.RejectLimit{Set: true, MaxShare: v / scale}, nil
}

// readingsOptions checks the flags and turns them into store options.
func (o importOptions) readingsOptions() (csvimport.ReadingsOptions, error) {
	var opt csvimport.ReadingsOptions
	delim, err := importDelimiter(o.delimiter)
	if err != nil {
		return opt, err
	}
	dup, err := csvimport.ParseOnDuplicate(o.onDuplicate)
	if err != nil {
		return opt, usageErr("import readings: --on-duplicate must be error, keep-first or replace, got %q", o.onDuplicate)
	}
	if o.variable != "" && o.variableCol != "" {
		return opt, usageErr("import readings: give --variable or --variable-col, not both")
	}
	limit, err := parseRejectShare(o.maxRejectShare)
	if err != nil {
		return opt, err
	}
	if _, err := timefmt.ParseZone(o.tz); err != nil {
		return opt, usageErr("import readings: --tz %q is neither an IANA time zone name (such as UTC, Europe/Berlin, America/New_York) nor a fixed offset (such as +01:00, -05:00, UTC+1)", o.tz)
	}
	return csvimport.ReadingsOptions{
		StationCol: o.stationCol, TimeCol: o.timeCol, ValueCol: o.valueCol, QualifierCol: o.qualifierCol,
		Variable: o.variable, VariableCol: o.variableCol, Unit: o.unit, TZ: o.tz,
		DecimalComma: o.decimalComma, Delimiter: delim, OnDuplicate: dup,
		CensorCol: o.censorCol, NoCensored: o.rejectCensored, MissingValues: o.missingValues,
		RejectLimit: limit,
	}, nil
}

// importDelimiter accepts one ASCII character or "tab" / `\t`.
func importDelimiter(s string) (byte, error) {
	switch s {
	case "tab", `\t`, "\t":
		return '\t', nil
	}
	if len(s) != 1 || s[0] == '"' || s[0] == '\n' || s[0] == '\r' || s[0] >= 0x80 {
		return 0, usageErr("import: --delimiter must be one ASCII character other than a quote or line end, or \"tab\"; got %q", s)
	}
	return s[0], nil
}

// checkImportFile fails early, before the store is opened, when the file
// cannot be read.
func checkImportFile(path string) error {
	if path == csvimport.StdinPath {
		return nil
	}
	st, err := os.Stat(path)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return fmt.Errorf("import: %s: no such file", path)
		}
		return fmt.Errorf("import: %w", err)
	}
	if st.IsDir() {
		return fmt.Errorf("import: %s is a directory, not a file", path)
	}
	return nil
}

func importCount(n int64, one, many string) string {
	if n == 1 {
		return fmt.Sprintf("%d %s", n, one)
	}
	return fmt.Sprintf("%d %s", n, many)
}

func importRejectNote(r *csvimport.ImportResult) string {
	if r.RowsRejected == 0 {
		return "0 rejected"
	}
	return fmt.Sprintf("%d rejected (reasons in import_rejects, batch_id %d)", r.RowsRejected, r.BatchID)
}

// importReadingsRejectNote splits the rejected rows of a readings batch
// into declared missing values and other rejects.
func importReadingsRejectNote(r *csvimport.ImportResult) string {
	if r.RowsMissing == 0 {
		return importRejectNote(r)
	}
	other := r.RowsRejected - r.RowsMissing
	s := fmt.Sprintf("%d declared missing, %d rejected", r.RowsMissing, other)
	return s + fmt.Sprintf(" (listed in import_rejects, batch_id %d)", r.BatchID)
}

// importReadingsSummary is the one-line account of a readings import.
func importReadingsSummary(r *csvimport.ImportResult) string {
	stored := fmt.Sprintf("%d stored", r.RowsStored)
	if r.RowsCensored > 0 {
		stored = fmt.Sprintf("%d stored (%d of them censored)", r.RowsStored, r.RowsCensored)
	}
	s := fmt.Sprintf("%s → batch %d: %s read, %s, %s, %s",
		r.File, r.BatchID, importCount(r.RowsRead, "row", "rows"), stored, importReadingsRejectNote(r), importCount(r.RowsDuplicate, "duplicate", "duplicates"))
	if r.RowsReplaced > 0 {
		s += fmt.Sprintf(" (%d replaced)", r.RowsReplaced)
	}
	if r.DuplicatesRecorded > 0 {
		s += fmt.Sprintf(" (%d recorded with both values in import_duplicates)", r.DuplicatesRecorded)
	}
	var created []string
	if r.StationsCreated > 0 {
		created = append(created, importCount(r.StationsCreated, "station", "stations")+" (id only)")
	}
	if r.SeriesCreated > 0 {
		created = append(created, importCount(r.SeriesCreated, "series", "series"))
	}
	if len(created) > 0 {
		s += "; created " + strings.Join(created, " and ")
	}
	if r.SameFileBatch != 0 {
		s += fmt.Sprintf("\nwarning: the same file (SHA-256 %s) was already imported as batch %d", r.SHA256, r.SameFileBatch)
	}
	return s
}

// importStationsSummary is the one-line account of a stations import.
func importStationsSummary(r *csvimport.ImportResult) string {
	s := fmt.Sprintf("%s → batch %d: %s read, %d new, %d already stored (%d of them updated), %s",
		r.File, r.BatchID, importCount(r.RowsRead, "row", "rows"), r.RowsStored, r.RowsDuplicate, r.RowsReplaced, importRejectNote(r))
	if r.SameFileBatch != 0 {
		s += fmt.Sprintf("\nwarning: the same file (SHA-256 %s) was already imported as batch %d", r.SHA256, r.SameFileBatch)
	}
	return s
}

// runImport checks the file, opens the store writable, runs one import with
// a progress bar on a terminal, and prints its one-line summary.
func runImport(ctx context.Context, e *env, path string, load func(*store.Store, func(csvimport.Progress)) (string, error)) error {
	if err := checkImportFile(path); err != nil {
		return err
	}
	if err := e.checkWait("import"); err != nil {
		return err
	}
	s, err := e.open(ctx, false)
	if err != nil {
		return err
	}
	defer s.Close()
	if err := s.AwaitWriter(ctx); err != nil {
		return fmt.Errorf("import: %w", err)
	}
	e.warnIfDemo(ctx, s)
	bar := newImportProgress(e.errw, path)
	summary, err := load(s, bar.update)
	bar.done()
	if err != nil {
		return err
	}
	fmt.Fprintln(e.errw, summary)
	return nil
}

// importGC raises the garbage collector's target while a readings import
// writes through database/sql, whose insert path boxes the values of every
// row: collecting that short-lived garbage less often shortens the import.
// The C-level insert makes no such garbage, and there the setting would
// only raise the peak memory, so it is left alone. The returned function
// restores the setting.
func importGC(cLevel bool) (restore func()) {
	if cLevel {
		return nil
	}
	old := debug.SetGCPercent(400)
	return func() { debug.SetGCPercent(old) }
}
