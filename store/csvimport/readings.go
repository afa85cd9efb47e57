package csvimport

import (
	"context"
	"database/sql"
	"encoding/hex"
	"fmt"
	"time"

	"trendsql/sqlfuncs/timefmt"
	"trendsql/store"
)

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
	c       int8 // censoring mark
	line    int
	dupLine int  // earlier line of this file with the same series and time
	probe   bool // may collide with a stored reading
	written bool // resolve queued this row for writing
}

type storedKey struct {
	sid int64
	t   int64
}

type storedVal struct {
	v float64
	q sql.NullString
	c sql.NullString // censoring mark
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
	missing map[string]struct{} // declared missing-value markers
	marks   map[storedKey]int8  // censoring of readings this batch writes
	dups    []any               // queued import_duplicates arguments
	ndups   int

	stFindSeries, stFindStation, stAddStation, stAddSeries, stRange, stSetUnit, stProbeRange *sql.Stmt
}

// readingsOptionsRecord is the options JSON of a readings batch.
type readingsOptionsRecord struct {
	StationCol    string   `json:"station_col"`
	TimeCol       string   `json:"time_col"`
	ValueCol      string   `json:"value_col"`
	QualifierCol  string   `json:"qualifier_col"`
	VariableCol   string   `json:"variable_col,omitempty"`
	Variable      string   `json:"variable,omitempty"`
	Unit          string   `json:"unit,omitempty"`
	TZ            string   `json:"tz"`
	DecimalComma  bool     `json:"decimal_comma"`
	Delimiter     string   `json:"delimiter"`
	OnDuplicate   string   `json:"on_duplicate"`
	CensorCol     string   `json:"censor_col,omitempty"`
	Censored      bool     `json:"censored"`
	MissingValues []string `json:"missing_values,omitempty"`
}

// ImportReadings imports a readings file (see the package documentation for
// the rules) and returns its accounting. On error nothing is changed.
func ImportReadings(ctx context.Context, s *store.Store, path string, opt ReadingsOptions) (*ImportResult, error) {
	var err error
	if opt.OnDuplicate, err = ParseOnDuplicate(string(opt.OnDuplicate)); err != nil {
		return nil, err
	}
	if reason := idProblem("variable", opt.Variable); opt.Variable != "" && reason != "" {
		return nil, fmt.Errorf("import %s: %s", path, reason)
	}
	if opt.Variable != "" && opt.VariableCol != "" {
		return nil, fmt.Errorf("import %s: give a fixed variable or a variable column, not both", path)
	}
	loc := time.UTC
	if opt.TZ != "" {
		if loc, err = timefmt.ParseZone(opt.TZ); err != nil {
			return nil, fmt.Errorf("import %s: %w", path, err)
		}
	}
	// The same file imported before: found before anything is read or
	// written when the file can be hashed first (stdin is checked at its
	// end, before the commit). A store without finished readings batches
	// has nothing to match, and the file is not read twice.
	sameFile, sum, err := sameFileBefore(ctx, s, "readings", path)
	if err != nil {
		return nil, fmt.Errorf("import %s: look up earlier batches: %w", path, err)
	}
	if sameFile != 0 && opt.OnDuplicate == DupError {
		return nil, &AlreadyImportedError{File: path, SHA256: sum, Batch: sameFile}
	}
	in, err := openInput(path, opt.Stdin)
	if err != nil {
		return nil, fmt.Errorf("import: %w", err)
	}
	defer in.f.Close()
	res, err := importReadings(ctx, s, in, opt, loc)
	if res != nil && res.SameFileBatch == 0 {
		res.SameFileBatch = sameFile
	}
	return res, err
}

func importReadings(ctx context.Context, s *store.Store, in *importInput, opt ReadingsOptions, loc *time.Location) (*ImportResult, error) {
	cr := newCSVReader(in, delimOf(opt.Delimiter))
	h, err := readHeader(cr, in.name)
	if err != nil {
		return nil, err
	}
	col := func(name, def string, required bool) (int, string, error) {
		given := name != ""
		if !given {
			name = def
		}
		i, err := h.find(name)
		if err != nil {
			return -1, name, &InputError{File: in.name, Line: h.line, Column: name, Msg: err.Error()}
		}
		if i < 0 && (required || given) {
			return -1, name, &InputError{File: in.name, Line: h.line, Column: name,
				Msg: fmt.Sprintf("no column %q in the header (columns: %s)", name, h.list()),
				Err: ErrMissingColumn, MissingColumn: def, DefaultName: !given, Separator: h.separator()}
		}
		return i, name, nil
	}
	iStation, stationCol, err := col(opt.StationCol, "station", true)
	if err != nil {
		return nil, err
	}
	iTime, timeCol, err := col(opt.TimeCol, "time", true)
	if err != nil {
		return nil, err
	}
	iValue, valueCol, err := col(opt.ValueCol, "value", true)
	if err != nil {
		return nil, err
	}
	iQual, qualCol, err := col(opt.QualifierCol, "qualifier", false)
	if err != nil {
		return nil, err
	}
	if iQual < 0 {
		qualCol = ""
	}
	iCensor := -1
	if opt.CensorCol != "" {
		if iCensor, _, err = col(opt.CensorCol, "censor", true); err != nil {
			return nil, err
		}
	}
	iVar, varCol := -1, ""
	if opt.Variable == "" {
		iVar, varCol, err = col(opt.VariableCol, "variable", false)
		if err != nil {
			return nil, err
		}
		if iVar < 0 {
			return nil, &InputError{File: in.name, Line: h.line, Column: "variable", Err: ErrNoVariable, Separator: h.separator(),
				Msg: fmt.Sprintf("no variable: the header has no \"variable\" column (columns: %s)", h.list())}
		}
	}

	rec := readingsOptionsRecord{StationCol: stationCol, TimeCol: timeCol, ValueCol: valueCol, QualifierCol: qualCol,
		VariableCol: varCol, Variable: opt.Variable, Unit: opt.Unit, TZ: loc.String(), DecimalComma: opt.DecimalComma,
		Delimiter: string(rune(delimOf(opt.Delimiter))), OnDuplicate: string(opt.OnDuplicate),
		CensorCol: opt.CensorCol, Censored: !opt.NoCensored, MissingValues: opt.MissingValues}
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
	// SQLite's per-row foreign-key check of readings.series_id is a large
	// share of the import's work and redundant here: every series id
	// this importer writes was read or created in the same transaction
	// (series()), and checkBatchSeries verifies each of them, with its
	// station, once before the commit. The check is switched off on this
	// connection for the import (outside the transaction, where the
	// setting takes effect) and switched back on before the connection
	// returns to the pool; a connection where that fails is discarded.
	if _, err := conn.ExecContext(ctx, `PRAGMA foreign_keys = OFF`); err != nil {
		return nil, fmt.Errorf("import %s: %w", in.name, err)
	}
	defer store.RestorePragma(conn, "foreign_keys", 1)
	b, err := beginBatchOn(ctx, s, conn, "readings", in, rec, opt.Progress)
	if err != nil {
		return nil, err
	}
	b.limit = opt.RejectLimit
	defer b.tx.Rollback()

	im := &readingsImporter{importBatch: b, opt: opt, loc: loc, byKey: map[seriesKey]*seriesState{},
		probes: map[*seriesState][]int64{}, found: map[storedKey]storedVal{},
		missing: missingSet(opt.MissingValues), marks: map[storedKey]int8{}}
	defer im.closeStmts()
	if err := im.prepare(ctx, conn); err != nil {
		return nil, err
	}
	if opt.OnInsertPath != nil {
		if restore := opt.OnInsertPath(im.w.raw != nil); restore != nil {
			defer restore()
		}
	}

	// One goroutine reads and parses the file while this one does the
	// database work; parsed rows pass in chunks, in file order.
	cols := rowCols{station: iStation, variable: iVar, time: iTime, value: iValue, qualifier: iQual, censor: iCensor}
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
				if p.missing {
					b.res.RowsMissing++
				}
				if err := b.reject(ctx, p.line, p.raw, p.reason); err != nil {
					return nil, err
				}
			}
		}
		if c.err != nil {
			return nil, readFailure(in.name, c.errLine, c.err)
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
	if err := im.applyMarks(ctx); err != nil {
		return nil, err
	}
	if err := im.flushDuplicates(ctx); err != nil {
		return nil, err
	}
	if in.name == StdinName {
		sum := hex.EncodeToString(in.h.Sum(nil))
		id, err := earlierBatch(ctx, b.tx, "readings", sum)
		if err != nil {
			return nil, fmt.Errorf("import %s: look up earlier batches: %w", in.name, err)
		}
		if id != 0 && opt.OnDuplicate == DupError {
			return nil, &AlreadyImportedError{File: in.name, SHA256: sum, Batch: id}
		}
		b.res.SameFileBatch = id
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
		{&im.stProbeRange, `SELECT t, value, qualifier, censored FROM readings WHERE series_id = ? AND t BETWEEN ? AND ? ORDER BY t LIMIT ?`},
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
