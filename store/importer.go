package store

// Import of stations and readings from delimited text files.
//
// Both imports read the whole file inside ONE transaction: either the batch
// is recorded in import_batches together with its counts and every rejected
// row in import_rejects, or (on an I/O error, a cancelled context, a
// duplicate under OnDuplicate "error" or a database error) nothing changes.
//
// Accounting, the same for both kinds: every data record (non-blank line or
// multi-line quoted record after the header) is read, and ends up in exactly
// one of stored, rejected or duplicate, so
//
//	rows_read = rows_stored + rows_rejected + rows_duplicate
//
// rows_replaced counts the duplicates that overwrote what was there before
// (so rows_replaced <= rows_duplicate).
//
// Readings (ImportReadings):
//   - Columns are found by header name (case-insensitive, surrounding blanks
//     ignored): station (StationCol, default "station"), time (TimeCol,
//     default "time"), value (ValueCol, default "value"), qualifier
//     (QualifierCol; default "qualifier" when the header has it), and the
//     variable either from a column (VariableCol; default "variable" when the
//     header has it and no fixed Variable is given) or fixed for the whole
//     file (Variable). Other columns are ignored.
//   - Station id, variable and time are trimmed of surrounding blanks; the
//     qualifier text is stored exactly as in the file, an empty cell as NULL.
//   - A station that is not in the stations table is created with its id
//     only (its other fields can be filled later by a stations import, which
//     merges) and counted in ImportResult.StationsCreated.
//   - A series (station, variable) is created as needed with Unit. If the
//     stored series has no unit, Unit fills it; if it has a different unit,
//     every row of that series is rejected with the reason "unit conflict".
//   - Times are parsed by timefmt.ParseTime; zone-less local times are
//     resolved in the TZ location (default UTC), and a local time that does
//     not exist or exists twice in that zone is rejected.
//   - Values: a decimal number (optional sign, digits, point, exponent), or
//     with DecimalComma a comma instead of the point (then a point is not
//     accepted: no thousands separators). Empty, NA, NaN, infinite, hex or
//     other non-numeric text is rejected with the reason; nothing is ever
//     turned into a number by guessing.
//   - Duplicates: a (series, time) that is already stored, or that appears
//     earlier in the same file, is a duplicate. OnDuplicate "error" (the
//     default) fails the whole import naming both places; "keep-first" keeps
//     the reading that was there first and counts the row as duplicate;
//     "replace" counts the row as duplicate and, when its value or qualifier
//     differs from the reading there, overwrites that reading and counts
//     the row as replaced too (re-importing an unchanged file with replace
//     therefore replaces nothing and marks no series as changed).
//   - series_batches gets one row per series whose readings this batch
//     changed (stored or replaced), with that number of rows.
//
// Stations (ImportStations): see ImportStations.
//
// Rejected rows go to import_rejects with the source line number (of the
// record's first line), the raw record text (cut at 64 KiB) and the reason.
// Blank lines are skipped: they offer no row.

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"database/sql/driver"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"trendsql/sqlfuncs/timefmt"
)

// OnDuplicate says what a readings import does with a (series, time) that is
// already stored or appeared earlier in the same file.
type OnDuplicate string

const (
	DupError     OnDuplicate = "error"      // fail the whole import, change nothing
	DupKeepFirst OnDuplicate = "keep-first" // keep the earlier reading, count the row as duplicate
	DupReplace   OnDuplicate = "replace"    // overwrite a differing reading; count duplicate (and replaced if it differed)
)

// ParseOnDuplicate checks an OnDuplicate name; "" means DupError.
func ParseOnDuplicate(s string) (OnDuplicate, error) {
	switch OnDuplicate(s) {
	case "", DupError:
		return DupError, nil
	case DupKeepFirst, DupReplace:
		return OnDuplicate(s), nil
	}
	return "", fmt.Errorf("on-duplicate must be error, keep-first or replace, got %q", s)
}

// Progress is reported while a file is read.
type Progress struct {
	Rows       int64 // data records read so far
	Bytes      int64 // bytes of the file read so far
	TotalBytes int64 // size of the file, or -1 if unknown
}

// ReadingsOptions controls ImportReadings.
type ReadingsOptions struct {
	StationCol   string // default "station"
	TimeCol      string // default "time"
	ValueCol     string // default "value"
	QualifierCol string // default: "qualifier" if the header has it, else none
	VariableCol  string // column holding the variable name; excludes Variable
	Variable     string // fixed variable name for every row; excludes VariableCol
	Unit         string // unit of the series; "" leaves it unstated
	TZ           string // IANA zone for zone-less times; "" means UTC
	DecimalComma bool   // values use a comma as decimal separator
	Delimiter    byte   // field separator; 0 means ','
	OnDuplicate  OnDuplicate
	// Progress, if set, is called now and then while the file is read, and
	// once at its end, from the importing goroutine.
	Progress func(Progress)
	// Stdin is read when the path is StdinPath (nil: os.Stdin).
	Stdin io.Reader
}

// StationsOptions controls ImportStations.
type StationsOptions struct {
	DecimalComma bool // latitude, longitude and elevation use a decimal comma
	Delimiter    byte // field separator; 0 means ','
	Progress     func(Progress)
	Stdin        io.Reader // read when the path is StdinPath (nil: os.Stdin)
}

// StdinPath as an import path reads standard input (or the options' Stdin)
// instead of a file. The batch records its source as StdinName; the file is
// read once, as any other, so nothing is stored unless all of it was read.
const (
	StdinPath = "-"
	StdinName = "stdin"
)

// ImportResult is the accounting of one import batch.
type ImportResult struct {
	BatchID       int64
	Kind          string // "stations" or "readings"
	File          string // the path as given
	Source        string // the absolute path recorded in import_batches
	SHA256        string
	RowsRead      int64
	RowsStored    int64
	RowsRejected  int64
	RowsDuplicate int64
	RowsReplaced  int64
	// Readings only.
	StationsCreated int64 // stations created with their id only
	SeriesCreated   int64
	SeriesWritten   int64 // series with rows in series_batches for this batch
}

// InputError is a problem with the input file that stops the import; the
// message names the file and, where there is one, the line.
type InputError struct {
	File string
	Line int // 0 when the problem is not tied to a line
	Msg  string
}

func (e *InputError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s line %d: %s", e.File, e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", e.File, e.Msg)
}

// ErrDuplicate is wrapped by the error of an import that found a duplicate
// under OnDuplicate "error".
var ErrDuplicate = errors.New("duplicate reading")

// dupError is an InputError that also matches ErrDuplicate.
type dupError struct{ InputError }

func (e *dupError) Unwrap() error { return ErrDuplicate }

// progressEvery is how many records pass between progress reports and
// context checks.
const progressEvery = 4096

// input is an opened import file with hashing and byte counting.
type importInput struct {
	f     io.ReadCloser
	name  string
	abs   string
	size  int64
	h     hash.Hash
	bytes atomic.Int64 // written by the reading goroutine, read for progress
}

func (in *importInput) Read(p []byte) (int, error) {
	n, err := in.f.Read(p)
	if n > 0 {
		in.h.Write(p[:n])
		in.bytes.Add(int64(n))
	}
	return n, err
}

func openInput(path string, stdin io.Reader) (*importInput, error) {
	if path == StdinPath {
		if stdin == nil {
			stdin = os.Stdin
		}
		return &importInput{f: io.NopCloser(stdin), name: StdinName, abs: StdinName, size: -1, h: sha256.New()}, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	in := &importInput{f: f, name: path, abs: path, size: -1, h: sha256.New()}
	if st, err := f.Stat(); err == nil {
		if st.IsDir() {
			f.Close()
			return nil, &InputError{File: path, Msg: "is a directory, not a file"}
		}
		in.size = st.Size()
	}
	if abs, err := filepath.Abs(path); err == nil {
		in.abs = abs
	}
	return in, nil
}

// batch holds what every import kind shares: the transaction, the batch row,
// the reject writer and the counts.
type importBatch struct {
	tx      *sql.Tx
	in      *importInput
	res     ImportResult
	rejects []any
	nrej    int
	prog    func(Progress)
}

const rejectsPerInsert = 200

func (s *Store) beginBatch(ctx context.Context, kind string, in *importInput, options any, prog func(Progress)) (*importBatch, error) {
	return s.beginBatchOn(ctx, nil, kind, in, options, prog)
}

// beginBatchOn is beginBatch with the transaction on conn (nil: any
// connection of the pool).
func (s *Store) beginBatchOn(ctx context.Context, conn *sql.Conn, kind string, in *importInput, options any, prog func(Progress)) (*importBatch, error) {
	opts, err := json.Marshal(options)
	if err != nil {
		return nil, err
	}
	var tx *sql.Tx
	if conn != nil {
		tx, err = conn.BeginTx(ctx, nil)
	} else {
		tx, err = s.DB.BeginTx(ctx, nil)
	}
	if err != nil {
		return nil, fmt.Errorf("import %s: begin: %w", in.name, err)
	}
	b := &importBatch{tx: tx, in: in, prog: prog}
	b.res.Kind, b.res.File, b.res.Source = kind, in.name, in.abs
	r, err := tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES (?, ?, ?, ?)`,
		kind, in.abs, nowISO(), string(opts))
	if err == nil {
		b.res.BatchID, err = r.LastInsertId()
	}
	if err != nil {
		tx.Rollback()
		return nil, fmt.Errorf("import %s: record batch: %w", in.name, err)
	}
	return b, nil
}

// reject records one rejected record.
func (b *importBatch) reject(ctx context.Context, line int, raw string, reason string) error {
	b.res.RowsRejected++
	b.rejects = append(b.rejects, b.res.BatchID, line, capRaw(raw), reason)
	b.nrej++
	if b.nrej == rejectsPerInsert {
		return b.flushRejects(ctx)
	}
	return nil
}

func (b *importBatch) flushRejects(ctx context.Context) error {
	if b.nrej == 0 {
		return nil
	}
	q := "INSERT INTO import_rejects(batch_id, line, raw, reason) VALUES " +
		strings.TrimSuffix(strings.Repeat("(?,?,?,?),", b.nrej), ",")
	if _, err := b.tx.ExecContext(ctx, q, b.rejects...); err != nil {
		return fmt.Errorf("import %s: record rejects: %w", b.in.name, err)
	}
	b.rejects = b.rejects[:0]
	b.nrej = 0
	return nil
}

func (b *importBatch) progress(ctx context.Context) error {
	if b.prog != nil {
		b.prog(Progress{Rows: b.res.RowsRead, Bytes: b.in.bytes.Load(), TotalBytes: b.in.size})
	}
	if err := ctx.Err(); err != nil {
		return fmt.Errorf("import %s: stopped after %d rows, nothing was imported: %w", b.in.name, b.res.RowsRead, err)
	}
	return nil
}

// finish writes the counts and commits.
func (b *importBatch) finish(ctx context.Context) error {
	if err := b.flushRejects(ctx); err != nil {
		return err
	}
	if err := b.progress(ctx); err != nil {
		return err
	}
	b.res.SHA256 = hex.EncodeToString(b.in.h.Sum(nil))
	r := &b.res
	if _, err := b.tx.ExecContext(ctx, `UPDATE import_batches SET source_sha256 = ?, finished_at = ?,
		rows_read = ?, rows_stored = ?, rows_rejected = ?, rows_duplicate = ?, rows_replaced = ? WHERE id = ?`,
		r.SHA256, nowISO(), r.RowsRead, r.RowsStored, r.RowsRejected, r.RowsDuplicate, r.RowsReplaced, r.BatchID); err != nil {
		return fmt.Errorf("import %s: record counts: %w", b.in.name, err)
	}
	if err := b.tx.Commit(); err != nil {
		return fmt.Errorf("import %s: commit: %w", b.in.name, err)
	}
	return nil
}

// header maps column names (case-insensitive, trimmed) to indexes.
type csvHeader struct {
	line  int // line number of the header
	names []string
	idx   map[string]int
	dup   map[string]bool
}

func newHeader(fields []string) *csvHeader {
	h := &csvHeader{idx: map[string]int{}, dup: map[string]bool{}}
	for i, f := range fields {
		n := strings.TrimSpace(f)
		h.names = append(h.names, n)
		k := strings.ToLower(n)
		if n == "" {
			continue
		}
		if _, ok := h.idx[k]; ok {
			h.dup[k] = true
		}
		h.idx[k] = i
	}
	return h
}

// find returns the index of column name, -1 if absent, or an error if the
// header has it twice.
func (h *csvHeader) find(name string) (int, error) {
	k := strings.ToLower(strings.TrimSpace(name))
	i, ok := h.idx[k]
	if !ok {
		return -1, nil
	}
	if h.dup[k] {
		return -1, fmt.Errorf("column %q appears more than once in the header", name)
	}
	return i, nil
}

func (h *csvHeader) list() string {
	q := make([]string, len(h.names))
	for i, n := range h.names {
		q[i] = strconv.Quote(n)
	}
	s := strings.Join(q, ", ")
	if len(h.names) == 1 {
		for _, d := range []string{";", "\t", ",", "|"} {
			if strings.Contains(h.names[0], d) {
				s += fmt.Sprintf(" — one column only: are the fields separated by %q? (--delimiter)", d)
				break
			}
		}
	}
	return s
}

// readHeader reads the header record.
func readHeader(cr *csvReader, name string) (*csvHeader, error) {
	rec, err := cr.next()
	if err != nil {
		return nil, &InputError{File: name, Msg: "read: " + err.Error()}
	}
	if rec == nil {
		return nil, &InputError{File: name, Msg: "file is empty: a header line with column names is needed"}
	}
	if rec.bad != "" {
		return nil, &InputError{File: name, Line: rec.line, Msg: "header: " + rec.bad}
	}
	h := newHeader(rec.fields)
	h.line = rec.line
	return h, nil
}

// checkWidth returns a reject reason when a record is malformed or its field
// count differs from the header's, or when a column without a header name
// holds text.
func checkWidth(rec *csvRecord, h *csvHeader) string {
	if rec.bad != "" {
		return "malformed record: " + rec.bad
	}
	if len(rec.fields) != len(h.names) {
		return fmt.Sprintf("record has %d fields, the header has %d", len(rec.fields), len(h.names))
	}
	for i, n := range h.names {
		if n == "" && strings.TrimSpace(rec.fields[i]) != "" {
			return fmt.Sprintf("field %d has text %q but its column has no name in the header", i+1, rec.fields[i])
		}
	}
	return ""
}

func delimOf(d byte) byte {
	if d == 0 {
		return ','
	}
	return d
}

// parseValue parses a reading value. It returns a reject reason when the
// text is not a finite decimal number.
func parseValue(raw string, decimalComma bool) (float64, string) {
	s := strings.TrimSpace(raw)
	if s == "" {
		return 0, "empty value"
	}
	switch strings.ToLower(s) {
	case "na", "n/a":
		return 0, fmt.Sprintf("value %q is a missing-value marker", s)
	case "nan", "+nan", "-nan":
		return 0, fmt.Sprintf("value %q is not a number (NaN)", s)
	case "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity":
		return 0, fmt.Sprintf("value %q is infinite", s)
	}
	num := s
	if decimalComma {
		if strings.IndexByte(s, '.') >= 0 {
			return 0, fmt.Sprintf("value %q has a point, but decimal comma is set (thousands separators are not accepted)", s)
		}
		num = strings.Replace(s, ",", ".", 1)
	}
	if !isDecimal(num) {
		if !decimalComma && strings.Count(s, ",") == 1 && isDecimal(strings.Replace(s, ",", ".", 1)) {
			return 0, fmt.Sprintf("value %q is not a number (a decimal comma? use the decimal comma option)", s)
		}
		return 0, fmt.Sprintf("value %q is not a number", s)
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsInf(v, 0) {
		return 0, fmt.Sprintf("value %q is out of range (would be infinite)", s)
	}
	return v, ""
}

// isDecimal accepts [+-]digits[.digits][(e|E)[+-]digits] with at least one
// mantissa digit, and nothing else.
func isDecimal(s string) bool {
	i, n := 0, len(s)
	if i < n && (s[i] == '+' || s[i] == '-') {
		i++
	}
	digits := 0
	for i < n && s[i] >= '0' && s[i] <= '9' {
		i++
		digits++
	}
	if i < n && s[i] == '.' {
		i++
		for i < n && s[i] >= '0' && s[i] <= '9' {
			i++
			digits++
		}
	}
	if digits == 0 {
		return false
	}
	if i < n && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < n && (s[i] == '+' || s[i] == '-') {
			i++
		}
		ed := 0
		for i < n && s[i] >= '0' && s[i] <= '9' {
			i++
			ed++
		}
		if ed == 0 {
			return false
		}
	}
	return i == n
}

// ---------------------------------------------------------------------------
// Readings

type seriesKey struct{ station, variable string }

// seriesState is what a readings import knows about one series.
type seriesState struct {
	id       int64
	station  string
	variable string
	reject   string // non-empty: every row of this series is rejected with this reason

	hasStored  bool  // the series had readings before this import
	smin, smax int64 // their time range

	seen timeSet // times of this file's rows, for duplicates within the file

	written int64 // rows this batch wrote to the series
}

// pendingRow is a valid row waiting for the stored-duplicate check.
type pendingRow struct {
	ser     *seriesState
	t       int64
	v       float64
	q       *string
	line    int
	dupLine int  // earlier line of this file with the same series and time
	probe   bool // may collide with a stored reading
}

type storedKey struct {
	sid int64
	t   int64
}

type storedVal struct {
	v float64
	q sql.NullString
}

// pendingRows is how many rows are checked against stored readings at once.
const pendingRows = 2048

type readingsImporter struct {
	*importBatch
	opt     ReadingsOptions
	loc     *time.Location
	w       *ReadingWriter
	byKey   map[seriesKey]*seriesState
	last    *seriesState
	order   []*seriesState
	pending []pendingRow
	probes  map[*seriesState][]int64
	found   map[storedKey]storedVal
	free    chan *parsedChunk

	stFindSeries, stFindStation, stAddStation, stAddSeries, stRange, stSetUnit, stProbeRange *sql.Stmt
}

// readingsOptionsRecord is the options JSON of a readings batch.
type readingsOptionsRecord struct {
	StationCol   string `json:"station_col"`
	TimeCol      string `json:"time_col"`
	ValueCol     string `json:"value_col"`
	QualifierCol string `json:"qualifier_col"`
	VariableCol  string `json:"variable_col,omitempty"`
	Variable     string `json:"variable,omitempty"`
	Unit         string `json:"unit,omitempty"`
	TZ           string `json:"tz"`
	DecimalComma bool   `json:"decimal_comma"`
	Delimiter    string `json:"delimiter"`
	OnDuplicate  string `json:"on_duplicate"`
}

// ImportReadings imports a readings file (see the top of this file for the
// rules) and returns its accounting. On error nothing is changed.
func (s *Store) ImportReadings(ctx context.Context, path string, opt ReadingsOptions) (*ImportResult, error) {
	var err error
	if opt.OnDuplicate, err = ParseOnDuplicate(string(opt.OnDuplicate)); err != nil {
		return nil, err
	}
	if opt.Variable != "" && opt.VariableCol != "" {
		return nil, fmt.Errorf("import %s: give a fixed variable or a variable column, not both", path)
	}
	loc := time.UTC
	if opt.TZ != "" {
		if loc, err = time.LoadLocation(opt.TZ); err != nil {
			return nil, fmt.Errorf("import %s: time zone %q: %w", path, opt.TZ, err)
		}
	}
	in, err := openInput(path, opt.Stdin)
	if err != nil {
		return nil, fmt.Errorf("import: %w", err)
	}
	defer in.f.Close()
	return s.importReadings(ctx, in, opt, loc)
}

func (s *Store) importReadings(ctx context.Context, in *importInput, opt ReadingsOptions, loc *time.Location) (*ImportResult, error) {
	cr := newCSVReader(in, delimOf(opt.Delimiter))
	h, err := readHeader(cr, in.name)
	if err != nil {
		return nil, err
	}
	col := func(flag, name, def string, required bool) (int, string, error) {
		given := name != ""
		if !given {
			name = def
		}
		i, err := h.find(name)
		if err != nil {
			return -1, name, &InputError{File: in.name, Line: h.line, Msg: err.Error()}
		}
		if i < 0 && (required || given) {
			hint := ""
			if !given {
				hint = fmt.Sprintf("; name the column with %s", flag)
			}
			return -1, name, &InputError{File: in.name, Line: h.line, Msg: fmt.Sprintf("no column %q in the header (columns: %s)%s", name, h.list(), hint)}
		}
		return i, name, nil
	}
	iStation, stationCol, err := col("--station-col", opt.StationCol, "station", true)
	if err != nil {
		return nil, err
	}
	iTime, timeCol, err := col("--time-col", opt.TimeCol, "time", true)
	if err != nil {
		return nil, err
	}
	iValue, valueCol, err := col("--value-col", opt.ValueCol, "value", true)
	if err != nil {
		return nil, err
	}
	iQual, qualCol, err := col("--qualifier-col", opt.QualifierCol, "qualifier", false)
	if err != nil {
		return nil, err
	}
	if iQual < 0 {
		qualCol = ""
	}
	iVar, varCol := -1, ""
	if opt.Variable == "" {
		iVar, varCol, err = col("--variable-col", opt.VariableCol, "variable", false)
		if err != nil {
			return nil, err
		}
		if iVar < 0 {
			return nil, &InputError{File: in.name, Line: h.line, Msg: fmt.Sprintf("no variable: the header has no \"variable\" column (columns: %s); give a fixed variable name (--variable) or the column that holds it (--variable-col)", h.list())}
		}
	}

	rec := readingsOptionsRecord{StationCol: stationCol, TimeCol: timeCol, ValueCol: valueCol, QualifierCol: qualCol,
		VariableCol: varCol, Variable: opt.Variable, Unit: opt.Unit, TZ: loc.String(), DecimalComma: opt.DecimalComma,
		Delimiter: string(rune(delimOf(opt.Delimiter))), OnDuplicate: string(opt.OnDuplicate)}
	// The whole import runs on one connection of the pool, so that the bulk
	// insert can use SQLite's C API on the connection that owns the
	// transaction (rawbulk.go). Deferred calls run in reverse: statements
	// are released, then the transaction ends, then the connection returns
	// to the pool.
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		return nil, fmt.Errorf("import %s: %w", in.name, err)
	}
	defer conn.Close()
	// SQLite's per-row foreign-key check of readings.series_id costs about
	// a quarter of the import time and is redundant here: every series id
	// this importer writes was read or created in the same transaction
	// (series()), and checkBatchSeries verifies each of them, with its
	// station, once before the commit. The check is switched off on this
	// connection for the import (outside the transaction, where the
	// setting takes effect) and switched back on before the connection
	// returns to the pool; a connection where that fails is discarded.
	if _, err := conn.ExecContext(ctx, `PRAGMA foreign_keys = OFF`); err != nil {
		return nil, fmt.Errorf("import %s: %w", in.name, err)
	}
	defer restorePragma(conn, "foreign_keys", 1)
	b, err := s.beginBatchOn(ctx, conn, "readings", in, rec, opt.Progress)
	if err != nil {
		return nil, err
	}
	defer b.tx.Rollback()

	im := &readingsImporter{importBatch: b, opt: opt, loc: loc, byKey: map[seriesKey]*seriesState{},
		probes: map[*seriesState][]int64{}, found: map[storedKey]storedVal{}}
	defer im.closeStmts()
	if err := im.prepare(ctx, conn); err != nil {
		return nil, err
	}
	if im.w.raw == nil {
		// The database/sql insert path boxes the values of every row;
		// collecting that short-lived garbage less often is worth about a
		// tenth of the import time (measured on 2M rows). The C-level path
		// makes no such garbage, and there the setting only raised the
		// peak memory (35 against 23 MB). The process setting is restored.
		defer debug.SetGCPercent(debug.SetGCPercent(400))
	}

	// One goroutine reads and parses the file while this one does the
	// database work; parsed rows pass in chunks, in file order.
	cols := rowCols{station: iStation, variable: iVar, time: iTime, value: iValue, qualifier: iQual}
	chunks, stop := im.parseAsync(cr, h, cols)
	defer stop()
	for {
		var c *parsedChunk
		select {
		case c = <-chunks:
		case <-ctx.Done():
			// The reader may be waiting on a pipe that stays silent.
			return nil, b.progress(ctx)
		}
		if c == nil {
			break
		}
		for i := range c.rows {
			p := &c.rows[i]
			b.res.RowsRead++
			if b.res.RowsRead%progressEvery == 0 {
				if err := b.progress(ctx); err != nil {
					return nil, err
				}
			}
			if p.reason == "" {
				if err := im.accept(ctx, p); err != nil {
					return nil, err
				}
			}
			if p.reason != "" {
				if err := b.reject(ctx, p.line, p.raw, p.reason); err != nil {
					return nil, err
				}
			}
		}
		if c.err != nil {
			return nil, fmt.Errorf("import %s: read after line %d: %w", in.name, c.errLine, c.err)
		}
		im.recycle(c)
	}
	if err := im.resolve(ctx); err != nil {
		return nil, err
	}
	affected, err := im.w.Flush(ctx)
	if err != nil {
		return nil, fmt.Errorf("import %s: %w", in.name, err)
	}
	if opt.OnDuplicate != DupReplace && affected != b.res.RowsStored {
		return nil, fmt.Errorf("import %s: internal error: %d readings inserted, %d expected", in.name, affected, b.res.RowsStored)
	}
	if err := im.checkBatchSeries(ctx); err != nil {
		return nil, err
	}
	for _, ss := range im.order {
		if ss.written == 0 {
			continue
		}
		if _, err := b.tx.ExecContext(ctx, `INSERT INTO series_batches(series_id, batch_id, rows) VALUES (?, ?, ?)`,
			ss.id, b.res.BatchID, ss.written); err != nil {
			return nil, fmt.Errorf("import %s: record series_batches: %w", in.name, err)
		}
		b.res.SeriesWritten++
	}
	if err := b.finish(ctx); err != nil {
		return nil, err
	}
	res := b.res
	return &res, nil
}

func (im *readingsImporter) prepare(ctx context.Context, conn *sql.Conn) error {
	conflict := ConflictError
	if im.opt.OnDuplicate == DupReplace {
		conflict = ConflictReplace
	}
	var err error
	if im.w, err = newReadingWriterOn(ctx, conn, im.tx, conflict); err != nil {
		return err
	}
	for _, p := range []struct {
		st **sql.Stmt
		q  string
	}{
		{&im.stFindSeries, `SELECT id, unit FROM series WHERE station_id = ? AND variable = ?`},
		{&im.stFindStation, `SELECT count(*) FROM stations WHERE id = ?`},
		{&im.stAddStation, `INSERT INTO stations(id) VALUES (?)`},
		{&im.stAddSeries, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, ?)`},
		// Two sub-queries, so each is a single index probe.
		{&im.stRange, `SELECT (SELECT min(t) FROM readings WHERE series_id = ?1), (SELECT max(t) FROM readings WHERE series_id = ?1)`},
		{&im.stSetUnit, `UPDATE series SET unit = ? WHERE id = ?`},
		{&im.stProbeRange, `SELECT t, value, qualifier FROM readings WHERE series_id = ? AND t BETWEEN ? AND ? ORDER BY t LIMIT ?`},
	} {
		st, err := im.tx.PrepareContext(ctx, p.q)
		if err != nil {
			return fmt.Errorf("import %s: prepare: %w", im.in.name, err)
		}
		*p.st = st
	}
	return nil
}

func (im *readingsImporter) closeStmts() {
	if im.w != nil {
		im.w.Close()
	}
	for _, st := range []*sql.Stmt{im.stFindSeries, im.stFindStation, im.stAddStation, im.stAddSeries, im.stRange, im.stSetUnit, im.stProbeRange} {
		if st != nil {
			st.Close()
		}
	}
}

// rowCols are the header indexes of the columns a readings import uses
// (-1: absent).
type rowCols struct{ station, variable, time, value, qualifier int }

// parsedRow is one record after parsing: either a reject reason or the
// row's station, variable, time, value and qualifier.
type parsedRow struct {
	line              int
	raw               string
	reason            string
	station, variable string
	t                 int64
	v                 float64
	q                 *string
}

type parsedChunk struct {
	rows    []parsedRow
	err     error // a read error after rows
	errLine int
}

const chunkRows = 1024

// parseAsync starts the goroutine that reads and parses records. The
// returned stop function ends it and waits for it; call it before the file
// is closed.
func (im *readingsImporter) parseAsync(cr *csvReader, h *csvHeader, cols rowCols) (<-chan *parsedChunk, func()) {
	chunks := make(chan *parsedChunk, 4)
	im.free = make(chan *parsedChunk, 8)
	quit := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		defer close(chunks)
		for {
			var c *parsedChunk
			select {
			case c = <-im.free:
				c.rows = c.rows[:0]
			default:
				c = &parsedChunk{rows: make([]parsedRow, 0, chunkRows)}
			}
			end := false
			for len(c.rows) < chunkRows {
				r, err := cr.next()
				if err != nil {
					c.err, c.errLine, end = err, cr.nextLine-1, true
					break
				}
				if r == nil {
					end = true
					break
				}
				c.rows = append(c.rows, im.parse(r, h, cols))
			}
			select {
			case chunks <- c:
			case <-quit:
				return
			}
			if end {
				return
			}
		}
	}()
	var once sync.Once
	return chunks, func() {
		once.Do(func() {
			close(quit)
			im.in.f.Close() // unblocks a read waiting on a pipe or terminal
			wg.Wait()
		})
	}
}

func (im *readingsImporter) recycle(c *parsedChunk) {
	clear(c.rows) // drop the strings
	select {
	case im.free <- c:
	default:
	}
}

// parse checks one record and parses its fields. It touches no database
// and no importer state, so it runs on the reading goroutine.
func (im *readingsImporter) parse(r *csvRecord, h *csvHeader, c rowCols) parsedRow {
	p := parsedRow{line: r.line, raw: r.raw}
	if p.reason = checkWidth(r, h); p.reason != "" {
		return p
	}
	f := r.fields
	if p.station = strings.TrimSpace(f[c.station]); p.station == "" {
		p.reason = "missing station"
		return p
	}
	p.variable = im.opt.Variable
	if c.variable >= 0 {
		if p.variable = strings.TrimSpace(f[c.variable]); p.variable == "" {
			p.reason = "missing variable"
			return p
		}
	}
	if strings.TrimSpace(f[c.time]) == "" {
		p.reason = "missing time"
		return p
	}
	var err error
	if p.t, err = timefmt.ParseTime(f[c.time], im.loc); err != nil {
		p.reason = "bad time: " + err.Error()
		return p
	}
	if p.v, p.reason = parseValue(f[c.value], im.opt.DecimalComma); p.reason != "" {
		return p
	}
	if c.qualifier >= 0 && f[c.qualifier] != "" {
		q := f[c.qualifier]
		p.q = &q
	}
	return p
}

// accept takes a parsed row into its series; it sets p.reason when the
// row is rejected there (unit conflict), else queues the row.
func (im *readingsImporter) accept(ctx context.Context, p *parsedRow) error {
	ss, err := im.series(ctx, p.station, p.variable)
	if err != nil {
		return err
	}
	if ss.reject != "" {
		p.reason = ss.reject
		return nil
	}
	pr := pendingRow{ser: ss, t: p.t, v: p.v, q: p.q, line: p.line}
	pr.dupLine = ss.seen.add(p.t, p.line)
	if pr.dupLine == 0 && ss.hasStored && p.t >= ss.smin && p.t <= ss.smax {
		pr.probe = true
		im.probes[ss] = append(im.probes[ss], p.t)
	}
	im.pending = append(im.pending, pr)
	if len(im.pending) >= pendingRows {
		return im.resolve(ctx)
	}
	return nil
}

// series finds or creates the series of (station, variable).
func (im *readingsImporter) series(ctx context.Context, station, variable string) (*seriesState, error) {
	if l := im.last; l != nil && l.station == station && l.variable == variable {
		return l, nil
	}
	if ss, ok := im.byKey[seriesKey{station, variable}]; ok {
		im.last = ss
		return ss, nil
	}
	ss := &seriesState{station: strings.Clone(station), variable: strings.Clone(variable)}
	fail := func(err error) (*seriesState, error) {
		return nil, fmt.Errorf("import %s: series %q/%q: %w", im.in.name, station, variable, err)
	}
	var unit sql.NullString
	err := im.stFindSeries.QueryRowContext(ctx, station, variable).Scan(&ss.id, &unit)
	switch {
	case err == nil:
		if im.opt.Unit != "" {
			if !unit.Valid || unit.String == "" {
				if _, err := im.stSetUnit.ExecContext(ctx, im.opt.Unit, ss.id); err != nil {
					return fail(err)
				}
			} else if unit.String != im.opt.Unit {
				ss.reject = fmt.Sprintf("unit conflict: station %q variable %q is stored in %q, this import gives %q", station, variable, unit.String, im.opt.Unit)
			}
		}
		var lo, hi sql.NullInt64
		if err := im.stRange.QueryRowContext(ctx, ss.id).Scan(&lo, &hi); err != nil {
			return fail(err)
		}
		if lo.Valid {
			ss.hasStored, ss.smin, ss.smax = true, lo.Int64, hi.Int64
		}
	case errors.Is(err, sql.ErrNoRows):
		var n int
		if err := im.stFindStation.QueryRowContext(ctx, station).Scan(&n); err != nil {
			return fail(err)
		}
		if n == 0 {
			if _, err := im.stAddStation.ExecContext(ctx, station); err != nil {
				return fail(err)
			}
			im.res.StationsCreated++
		}
		var u any
		if im.opt.Unit != "" {
			u = im.opt.Unit
		}
		r, err := im.stAddSeries.ExecContext(ctx, station, variable, u)
		if err != nil {
			return fail(err)
		}
		if ss.id, err = r.LastInsertId(); err != nil {
			return fail(err)
		}
		im.res.SeriesCreated++
	default:
		return fail(err)
	}
	im.byKey[seriesKey{ss.station, ss.variable}] = ss
	im.order = append(im.order, ss)
	im.last = ss
	return ss, nil
}

// resolve checks the pending rows against stored readings and writes them.
func (im *readingsImporter) resolve(ctx context.Context) error {
	mode := im.opt.OnDuplicate
	if len(im.pending) == 0 {
		return nil
	}
	first := im.pending[0].line
	if mode == DupReplace {
		// A repeat of a row from an earlier chunk is compared with what the
		// store now holds for it, so the queued rows must be written first.
		needSync := false
		for i := range im.pending {
			if p := &im.pending[i]; p.dupLine != 0 && p.dupLine < first {
				im.probes[p.ser] = append(im.probes[p.ser], p.t)
				needSync = true
			}
		}
		if needSync {
			if err := im.w.Sync(ctx); err != nil {
				return fmt.Errorf("import %s: %w", im.in.name, err)
			}
		}
	}
	for ss, ts := range im.probes {
		if err := im.lookupStored(ctx, ss.id, ts); err != nil {
			return err
		}
	}
	clear(im.probes)
	for i := range im.pending {
		p := &im.pending[i]
		ss := p.ser
		dup, write := false, true
		if p.dupLine != 0 {
			if mode == DupError {
				return &dupError{InputError{File: im.in.name, Line: p.line, Msg: fmt.Sprintf(
					"duplicate reading: station %q variable %q at %s also appears on line %d; nothing was imported",
					ss.station, ss.variable, timefmt.FormatUTC(p.t), p.dupLine)}}
			}
			dup = true
		} else if p.probe {
			if sv, ok := im.found[storedKey{ss.id, p.t}]; ok {
				if mode == DupError {
					same := "a different value"
					if sv.v == p.v {
						same = "the same value"
					}
					return &dupError{InputError{File: im.in.name, Line: p.line, Msg: fmt.Sprintf(
						"duplicate reading: station %q variable %q at %s is already stored (with %s: %s); nothing was imported",
						ss.station, ss.variable, timefmt.FormatUTC(p.t), same, strconv.FormatFloat(sv.v, 'g', -1, 64))}}
				}
				dup = true
			}
		}
		if dup {
			im.res.RowsDuplicate++
			switch {
			case mode == DupKeepFirst:
				write = false
			case im.unchanged(i):
				write = false // replace with the very same reading: nothing to do
			default:
				im.res.RowsReplaced++
			}
		} else {
			im.res.RowsStored++
		}
		if write {
			ss.written++
			if err := im.w.Add(ctx, Reading{SeriesID: ss.id, T: p.t, Value: p.v, Qualifier: p.q}); err != nil {
				return fmt.Errorf("import %s near line %d: %w", im.in.name, p.line, err)
			}
		}
	}
	im.pending = im.pending[:0]
	clear(im.found)
	return nil
}

// unchanged reports whether duplicate row i carries the same value and
// qualifier as the reading it would replace: the latest earlier row of this
// chunk with the same series and time, else what the store holds.
func (im *readingsImporter) unchanged(i int) bool {
	p := &im.pending[i]
	if p.dupLine != 0 {
		for j := i - 1; j >= 0; j-- {
			if q := &im.pending[j]; q.ser == p.ser && q.t == p.t {
				return q.v == p.v && sameQualifier(q.q, p.q)
			}
		}
	}
	sv, ok := im.found[storedKey{p.ser.id, p.t}]
	if !ok {
		return false
	}
	var q *string
	if sv.q.Valid {
		q = &sv.q.String
	}
	return sv.v == p.v && sameQualifier(q, p.q)
}

func sameQualifier(a, b *string) bool {
	if a == nil || b == nil {
		return a == nil && b == nil
	}
	return *a == *b
}

// lookupStored puts the stored readings of series sid at the times ts into
// im.found. It first reads the stored readings in the range of ts, which is
// one index walk when the file overlaps stored data densely (a re-import);
// when that range holds many more stored readings than ts has times, it
// asks for the times one list at a time instead.
func (im *readingsImporter) lookupStored(ctx context.Context, sid int64, ts []int64) error {
	lo, hi := ts[0], ts[0]
	for _, t := range ts {
		lo, hi = min(lo, t), max(hi, t)
	}
	limit := 2*len(ts) + 64
	rows, err := im.stProbeRange.QueryContext(ctx, sid, lo, hi, limit)
	if err != nil {
		return fmt.Errorf("import %s: look up stored readings: %w", im.in.name, err)
	}
	n, err := im.scanStored(sid, rows)
	if err != nil || n < limit {
		return err
	}
	for len(ts) > 0 {
		k := min(len(ts), 500)
		args := make([]any, 0, k+1)
		args = append(args, sid)
		for _, t := range ts[:k] {
			args = append(args, t)
		}
		q := "SELECT t, value, qualifier FROM readings WHERE series_id = ? AND t IN (" +
			strings.TrimSuffix(strings.Repeat("?,", k), ",") + ")"
		rows, err := im.tx.QueryContext(ctx, q, args...)
		if err != nil {
			return fmt.Errorf("import %s: look up stored readings: %w", im.in.name, err)
		}
		if _, err := im.scanStored(sid, rows); err != nil {
			return err
		}
		ts = ts[k:]
	}
	return nil
}

func (im *readingsImporter) scanStored(sid int64, rows *sql.Rows) (int, error) {
	defer rows.Close()
	n := 0
	for rows.Next() {
		var t int64
		var sv storedVal
		if err := rows.Scan(&t, &sv.v, &sv.q); err != nil {
			return n, fmt.Errorf("import %s: look up stored readings: %w", im.in.name, err)
		}
		im.found[storedKey{sid, t}] = sv
		n++
	}
	return n, rows.Err()
}

// checkBatchSeries verifies, in place of SQLite's per-row foreign-key check
// (switched off during the import), that every series the batch wrote
// readings to exists with its station.
func (im *readingsImporter) checkBatchSeries(ctx context.Context) error {
	for _, ss := range im.order {
		if ss.written == 0 {
			continue
		}
		var n int
		if err := im.tx.QueryRowContext(ctx, `SELECT count(*) FROM series s JOIN stations st ON st.id = s.station_id WHERE s.id = ?`, ss.id).Scan(&n); err != nil {
			return fmt.Errorf("import %s: check series %d: %w", im.in.name, ss.id, err)
		}
		if n != 1 {
			return fmt.Errorf("import %s: internal error: series %d of this batch or its station is missing (foreign key)", im.in.name, ss.id)
		}
	}
	return nil
}

// restorePragma sets a per-connection PRAGMA back to want on a connection
// about to return to the pool (after an import or a summary write changed it
// for its own work), and discards the connection when the setting cannot be
// confirmed, so no pooled connection keeps a changed setting.
func restorePragma(conn *sql.Conn, name string, want int64) {
	ctx := context.Background()
	got := want + 1
	if _, err := conn.ExecContext(ctx, fmt.Sprintf("PRAGMA %s = %d", name, want)); err == nil {
		_ = conn.QueryRowContext(ctx, "PRAGMA "+name).Scan(&got)
	}
	if got != want {
		_ = conn.Raw(func(any) error { return driver.ErrBadConn })
	}
}
