package report

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// The queries a report issues. All are reads; the store may be opened
// read-only.

var (
	// ErrNoSeries: the selection matches no series.
	ErrNoSeries = errors.New("no series match the selection")
	// ErrNoRun: no successful summarize run holds a summary of any selected
	// series (or the requested run does not exist or did not succeed).
	ErrNoRun = errors.New("no successful summarize run for the selection")
)

// Selection chooses the series of a report; empty fields select all.
type Selection struct {
	Stations  []string
	Variables []string
	SeriesIDs []int64
	Where     string // SQL condition on stations (alias st) and series (alias s)
}

// Run is a summarize run and the parameters it was computed with.
type Run struct {
	ID                     int64
	StartedAt, FinishedAt  string
	ToolVersion            string
	ParamsJSON             string
	PeriodS                float64
	Harmonics, Seasons     int
	MaxLag, LBLags, MinN   int
	Alpha, Confidence      float64
	CensoredFits           bool
	Since, Until           *int64 // the run's time window (nil: unbounded)
	SeriesInRun            int
	SeriesComputedOnTheFly int
	// Unstored: no run holds the selection; every figure was computed now
	// with summarize's default model (ID is 0).
	Unstored bool
}

// Station is a station row with its metadata as sorted key/value text.
type Station struct {
	ID, Name       string
	Lat, Lon, Elev float64 // NaN when unknown
	Meta           []KV
	MetaJSON       string
	metaByKey      map[string]string
}

// KV is one metadata entry shown as text.
type KV struct{ Key, Value string }

// Series is one report page: the series, its station and its figures.
type Series struct {
	ID       int64
	Station  *Station
	Variable string
	Unit     string
	Page     string // file name of its page
	Sum      row    // the stored summary (or the figures computed now)
	OnTheFly bool   // Sum was computed now because the run lacks this series
	Lags     []Lag
}

// Lag is one stored correlogram row.
type Lag struct {
	Lag            int
	ACF, Band, LBP float64 // NaN when NULL
}

// row is one summary row by column name (values as the driver returns them).
type row map[string]any

// number is column k as a float64, NaN when it is NULL or not a number.
func (r row) number(k string) float64 {
	switch v := r[k].(type) {
	case float64:
		return v
	case int64:
		return float64(v)
	}
	return math.NaN()
}

// integer is column k as an int64; ok is false when it is NULL or not a
// number.
func (r row) integer(k string) (int64, bool) {
	switch v := r[k].(type) {
	case int64:
		return v, true
	case float64:
		return int64(v), true
	}
	return 0, false
}

// text is column k as a string, "" when it is NULL or not text.
func (r row) text(k string) string {
	switch v := r[k].(type) {
	case string:
		return v
	case []byte:
		return string(v)
	}
	return ""
}

func (r row) flag(k string) (on, known bool) {
	v, ok := r.integer(k)
	return v == 1, ok
}

func nullF(v sql.NullFloat64) float64 {
	if v.Valid {
		return v.Float64
	}
	return math.NaN()
}

func idList(ids []int64) string {
	parts := make([]string, len(ids))
	for i, id := range ids {
		parts[i] = strconv.FormatInt(id, 10)
	}
	return strings.Join(parts, ",")
}

func placeholders(n int) string {
	return strings.TrimSuffix(strings.Repeat("?,", n), ",")
}

// selectSeries lists the selected series with their stations, ordered by
// station id and variable.
func selectSeries(ctx context.Context, db *sql.DB, sel Selection) ([]*Series, error) {
	q := `SELECT s.id, s.station_id, s.variable, coalesce(s.unit, ''), coalesce(st.name, ''),
	             st.latitude, st.longitude, st.elevation_m, st.metadata
	      FROM series s JOIN stations st ON st.id = s.station_id WHERE 1`
	var args []any
	if len(sel.Stations) > 0 {
		q += " AND s.station_id IN (" + placeholders(len(sel.Stations)) + ")"
		for _, v := range sel.Stations {
			args = append(args, v)
		}
	}
	if len(sel.Variables) > 0 {
		q += " AND s.variable IN (" + placeholders(len(sel.Variables)) + ")"
		for _, v := range sel.Variables {
			args = append(args, v)
		}
	}
	if len(sel.SeriesIDs) > 0 {
		q += " AND s.id IN (" + idList(sel.SeriesIDs) + ")"
	}
	if strings.TrimSpace(sel.Where) != "" {
		q += " AND (" + sel.Where + ")"
	}
	q += " ORDER BY s.station_id, s.variable"
	rows, err := db.QueryContext(ctx, q, args...)
	if err != nil {
		return nil, fmt.Errorf("report: selecting series: %w", err)
	}
	defer rows.Close()
	stations := map[string]*Station{}
	var out []*Series
	for rows.Next() {
		var (
			s              Series
			stID, stName   string
			lat, lon, elev sql.NullFloat64
			meta           string
		)
		if err := rows.Scan(&s.ID, &stID, &s.Variable, &s.Unit, &stName, &lat, &lon, &elev, &meta); err != nil {
			return nil, err
		}
		st := stations[stID]
		if st == nil {
			st = &Station{ID: stID, Name: stName, Lat: nullF(lat), Lon: nullF(lon), Elev: nullF(elev), MetaJSON: meta}
			st.Meta, st.metaByKey = parseMeta(meta)
			stations[stID] = st
		}
		s.Station = st
		out = append(out, &s)
	}
	if err := rows.Err(); err != nil {
		return nil, err
	}
	if len(out) == 0 {
		return nil, ErrNoSeries
	}
	return out, nil
}

// parseMeta turns a JSON object into sorted key/value text; values that are
// not strings are shown as their JSON text.
func parseMeta(text string) ([]KV, map[string]string) {
	var m map[string]json.RawMessage
	by := map[string]string{}
	if json.Unmarshal([]byte(text), &m) != nil {
		return nil, by
	}
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	kv := make([]KV, 0, len(keys))
	for _, k := range keys {
		var s string
		v := string(m[k])
		if json.Unmarshal(m[k], &s) == nil {
			v = s
		}
		kv = append(kv, KV{k, v})
		by[k] = v
	}
	return kv, by
}

// findRun returns the requested run, or the latest successful run holding
// a summary of any selected series.
func findRun(ctx context.Context, db *sql.DB, id int64, series []*Series) (*Run, error) {
	if id == 0 {
		ids := make([]int64, len(series))
		for i, s := range series {
			ids[i] = s.ID
		}
		var latest sql.NullInt64
		err := db.QueryRowContext(ctx, `SELECT max(ss.run_id) FROM series_summaries ss
			JOIN summary_runs r ON r.id = ss.run_id AND r.status = 'ok'
			WHERE ss.series_id IN (`+idList(ids)+`)`).Scan(&latest)
		if err != nil {
			return nil, fmt.Errorf("report: finding the latest run: %w", err)
		}
		if !latest.Valid {
			return nil, ErrNoRun
		}
		id = latest.Int64
	}
	r := &Run{ID: id}
	var status string
	var finished sql.NullString
	err := db.QueryRowContext(ctx, `SELECT started_at, finished_at, status, tool_version, parameters
		FROM summary_runs WHERE id = ?`, id).Scan(&r.StartedAt, &finished, &status, &r.ToolVersion, &r.ParamsJSON)
	if errors.Is(err, sql.ErrNoRows) {
		return nil, fmt.Errorf("%w: run %d does not exist", ErrNoRun, id)
	}
	if err != nil {
		return nil, fmt.Errorf("report: reading run %d: %w", id, err)
	}
	if status != "ok" {
		return nil, fmt.Errorf("%w: run %d has status %q", ErrNoRun, id, status)
	}
	r.FinishedAt = finished.String
	var p struct {
		PeriodS    float64 `json:"period_s"`
		Harmonics  int     `json:"harmonics"`
		Seasons    int     `json:"seasons"`
		MaxLag     int     `json:"max_lag"`
		LBLags     int     `json:"ljung_box_lags"`
		Alpha      float64 `json:"alpha"`
		Confidence float64 `json:"confidence"`
		MinN       int     `json:"min_n"`
		Censored   bool    `json:"censored_fits"`
		Since      *int64  `json:"since"`
		Until      *int64  `json:"until"`
	}
	if err := json.Unmarshal([]byte(r.ParamsJSON), &p); err != nil {
		return nil, fmt.Errorf("report: run %d: parameters: %w", id, err)
	}
	r.PeriodS, r.Harmonics, r.Seasons = p.PeriodS, p.Harmonics, p.Seasons
	r.MaxLag, r.LBLags, r.MinN = p.MaxLag, p.LBLags, p.MinN
	r.Alpha, r.Confidence = p.Alpha, p.Confidence
	r.CensoredFits, r.Since, r.Until = p.Censored, p.Since, p.Until
	if r.Alpha <= 0 || r.Alpha >= 1 {
		r.Alpha = 0.05
	}
	if r.Confidence <= 0 || r.Confidence >= 1 {
		r.Confidence = 0.95
	}
	if r.PeriodS <= 0 {
		r.Harmonics = 0
	}
	if r.MaxLag <= 0 {
		r.MaxLag = 24
	}
	return r, nil
}

// loadSummaries fills Sum and Lags of the series the run holds.
func loadSummaries(ctx context.Context, db *sql.DB, run *Run, series []*Series) error {
	byID := map[int64]*Series{}
	ids := make([]int64, len(series))
	for i, s := range series {
		byID[s.ID] = s
		ids[i] = s.ID
	}
	rows, err := db.QueryContext(ctx, `SELECT * FROM series_summaries WHERE run_id = ? AND series_id IN (`+idList(ids)+`)`, run.ID)
	if err != nil {
		return fmt.Errorf("report: reading summaries of run %d: %w", run.ID, err)
	}
	defer rows.Close()
	cols, err := rows.Columns()
	if err != nil {
		return err
	}
	for rows.Next() {
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			return err
		}
		r := row{}
		for i, c := range cols {
			r[c] = vals[i]
		}
		id, _ := r.integer("series_id")
		if s := byID[id]; s != nil {
			s.Sum = r
			run.SeriesInRun++
		}
	}
	if err := rows.Err(); err != nil {
		return err
	}
	lr, err := db.QueryContext(ctx, `SELECT series_id, lag, acf, band, ljung_box_p FROM series_correlograms
		WHERE run_id = ? AND series_id IN (`+idList(ids)+`) ORDER BY series_id, lag`, run.ID)
	if err != nil {
		return fmt.Errorf("report: reading correlograms of run %d: %w", run.ID, err)
	}
	defer lr.Close()
	for lr.Next() {
		var id int64
		var l Lag
		var acf, band, p sql.NullFloat64
		if err := lr.Scan(&id, &l.Lag, &acf, &band, &p); err != nil {
			return err
		}
		l.ACF, l.Band, l.LBP = nullF(acf), nullF(band), nullF(p)
		if s := byID[id]; s != nil {
			s.Lags = append(s.Lags, l)
		}
	}
	return lr.Err()
}

// censorColumn names the readings column that marks censored values, if
// the store has one ("" otherwise).
func censorColumn(ctx context.Context, db *sql.DB) (string, error) {
	rows, err := db.QueryContext(ctx, `SELECT name FROM pragma_table_info('readings')`)
	if err != nil {
		return "", err
	}
	defer rows.Close()
	found := ""
	for rows.Next() {
		var n string
		if err := rows.Scan(&n); err != nil {
			return "", err
		}
		if found == "" && strings.HasPrefix(strings.ToLower(n), "censor") {
			found = n
		}
	}
	return found, rows.Err()
}

// Readings holds one series' readings in time order with their residuals
// from the run's trend model (NaN where there is no model).
type Readings struct {
	T        []int64
	V        []float64
	Resid    []float64
	Qual     []string // qualifier text, "" when none
	Censored []string // "<", ">" or "censored"; "" when not censored
}

func loadReadings(ctx context.Context, db *sql.DB, s *Series, censorCol string) (*Readings, error) {
	cens := "NULL"
	if censorCol != "" {
		cens = `"` + strings.ReplaceAll(censorCol, `"`, `""`) + `"`
	}
	model := s.Sum.text("trend_model")
	var m any
	if model != "" {
		m = model
	}
	rows, err := db.QueryContext(ctx, `SELECT t, value, coalesce(qualifier, ''), `+cens+`, trend_residual(?, t, value)
		FROM readings WHERE series_id = ? ORDER BY t`, m, s.ID)
	if err != nil {
		return nil, fmt.Errorf("report: readings of series %d: %w", s.ID, err)
	}
	defer rows.Close()
	r := &Readings{}
	for rows.Next() {
		var (
			t   int64
			v   float64
			q   string
			c   any
			res sql.NullFloat64
		)
		if err := rows.Scan(&t, &v, &q, &c, &res); err != nil {
			return nil, fmt.Errorf("report: readings of series %d: %w", s.ID, err)
		}
		r.T = append(r.T, t)
		r.V = append(r.V, v)
		r.Qual = append(r.Qual, q)
		r.Censored = append(r.Censored, censorMark(c))
		r.Resid = append(r.Resid, nullF(res))
	}
	return r, rows.Err()
}

// censorMark reads a censoring column value: '<' and '>' keep their
// direction; any other non-empty text or non-zero number means censored.
func censorMark(v any) string {
	switch x := v.(type) {
	case string:
		x = strings.TrimSpace(x)
		switch {
		case x == "" || x == "0":
			return ""
		case strings.HasPrefix(x, "<"):
			return "<"
		case strings.HasPrefix(x, ">"):
			return ">"
		}
		return "censored"
	case []byte:
		return censorMark(string(x))
	case int64:
		if x != 0 {
			return "censored"
		}
	case float64:
		if x != 0 {
			return "censored"
		}
	}
	return ""
}

// linearPart is the polynomial part of a trend_fit model (its seasonal
// terms removed), as trend_fit JSON that trend_value accepts.
func linearPart(model string) (string, bool) {
	var m struct {
		TCenter   float64   `json:"t_center"`
		Degree    int       `json:"degree"`
		Harmonics int       `json:"harmonics"`
		Coef      []float64 `json:"coef"`
	}
	if json.Unmarshal([]byte(model), &m) != nil || len(m.Coef) < m.Degree+1 {
		return "", false
	}
	b, _ := json.Marshal(map[string]any{"t_center": m.TCenter, "degree": m.Degree, "harmonics": 0, "coef": m.Coef[:m.Degree+1]})
	return string(b), m.Harmonics > 0
}

// fitted evaluates models at k+1 equally spaced times from t0 to t1 (both
// ends exact) with trend_value.
func fitted(ctx context.Context, db *sql.DB, t0, t1 int64, k int, models ...string) (ts []float64, ys [][]float64, err error) {
	if k < 1 || t1 <= t0 {
		k = 1
	}
	q := `WITH RECURSIVE g(i) AS (SELECT 0 UNION ALL SELECT i + 1 FROM g WHERE i < ?1),
	      tt(t) AS (SELECT CASE WHEN i = ?1 THEN ?3 ELSE ?2 + ((?3 - ?2) * i) / ?1 END FROM g)
	      SELECT t`
	args := []any{k, t0, t1}
	for i, m := range models {
		q += fmt.Sprintf(", trend_value(?%d, t)", 4+i)
		args = append(args, m)
	}
	rows, err := db.QueryContext(ctx, q+" FROM tt", args...)
	if err != nil {
		return nil, nil, fmt.Errorf("report: evaluating the trend model: %w", err)
	}
	defer rows.Close()
	ys = make([][]float64, len(models))
	for rows.Next() {
		var t int64
		vals := make([]sql.NullFloat64, len(models))
		dst := []any{&t}
		for i := range vals {
			dst = append(dst, &vals[i])
		}
		if err := rows.Scan(dst...); err != nil {
			return nil, nil, err
		}
		ts = append(ts, float64(t))
		for i, v := range vals {
			ys[i] = append(ys[i], nullF(v))
		}
	}
	return ts, ys, rows.Err()
}
