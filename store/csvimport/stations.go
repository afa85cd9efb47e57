package csvimport

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"

	"trendsql/store"
)

// stationsOptionsRecord is the options JSON of a stations batch.
type stationsOptionsRecord struct {
	IDCol        string `json:"id_col"`
	DecimalComma bool   `json:"decimal_comma"`
	Delimiter    string `json:"delimiter"`
}

// stationColumns are the stations table columns a stations file may name.
var stationColumns = []string{"name", "latitude", "longitude", "elevation_m", "metadata"}

// ImportStations imports a stations file and returns its accounting. On
// error nothing is changed.
//
// Columns are matched by header name, case-insensitive: the station code in
// "id" (or, if there is no "id", in "station_id" or "station"), then "name",
// "latitude", "longitude", "elevation_m". A "metadata" column, if present,
// must hold a JSON object (or be empty); its keys go into the metadata.
// Every other named column becomes a metadata key with the header text as
// the key and the cell text, exactly as in the file, as a JSON string:
// numbers are not converted, so codes like "007" and dates keep their
// spelling (use CAST(json_extract(metadata, '$.key') AS REAL) in SQL for
// arithmetic).
//
// An empty cell means "not given": it never clears a stored value. The id,
// name and numeric columns are trimmed of surrounding blanks. Latitude must
// lie in [-90, 90], longitude in [-180, 180]; latitude, longitude and
// elevation_m must be decimal numbers (with DecimalComma, a comma instead of
// the point) or the row is rejected with the reason ("NA" is rejected too:
// leave an unknown cell empty).
//
// Upsert: a station not yet stored is inserted (rows_stored). A station that
// is stored, or that appeared on an earlier line of the file, is merged: the
// given fields overwrite the stored ones, and metadata keys are merged key by
// key (stored keys not in the file are kept). The row counts as duplicate;
// if anything changed it also counts as replaced.
//
// The same file again: when the file's SHA-256 equals that of an earlier
// finished stations batch, the import fails with an AlreadyImportedError
// naming that batch (for a regular file before anything is read; for
// standard input at its end), unless Again is set; then it is merged as any
// file and ImportResult.SameFileBatch names the earlier batch.
func ImportStations(ctx context.Context, s *store.Store, path string, opt StationsOptions) (*ImportResult, error) {
	sameFile, sum, err := sameFileBefore(ctx, s, "stations", path)
	if err != nil {
		return nil, fmt.Errorf("import %s: look up earlier batches: %w", path, err)
	}
	if sameFile != 0 && !opt.Again {
		return nil, &AlreadyImportedError{File: path, SHA256: sum, Batch: sameFile}
	}
	in, err := openInput(path, opt.Stdin)
	if err != nil {
		return nil, fmt.Errorf("import: %w", err)
	}
	defer in.f.Close()
	res, err := importStations(ctx, s, in, opt)
	if res != nil && res.SameFileBatch == 0 {
		res.SameFileBatch = sameFile
	}
	return res, err
}

func importStations(ctx context.Context, s *store.Store, in *importInput, opt StationsOptions) (*ImportResult, error) {
	cr := newCSVReader(in, delimOf(opt.Delimiter))
	h, err := readHeader(cr, in.name)
	if err != nil {
		return nil, err
	}
	hdrErr := func(msg string) error {
		return &InputError{File: in.name, Line: h.line, Msg: msg, Separator: h.separator()}
	}
	iID, idCol := -1, ""
	for _, name := range []string{"id", "station_id", "station"} {
		i, err := h.find(name)
		if err != nil {
			return nil, hdrErr(err.Error())
		}
		if i >= 0 {
			iID, idCol = i, name
			break
		}
	}
	if iID < 0 {
		return nil, hdrErr(fmt.Sprintf("no station code column: the header needs \"id\" (or \"station_id\" or \"station\"); columns: %s", h.list()))
	}
	known := map[string]int{}
	for _, c := range stationColumns {
		i, err := h.find(c)
		if err != nil {
			return nil, hdrErr(err.Error())
		}
		known[c] = i
	}
	// Metadata columns: every other named column. Keys are case-sensitive
	// in JSON, so two headers differing only in case are refused.
	var metaIdx []int
	for i, n := range h.names {
		if n == "" || i == iID {
			continue
		}
		k := strings.ToLower(n)
		if _, isKnown := known[k]; isKnown {
			continue
		}
		if h.dup[k] {
			return nil, hdrErr(fmt.Sprintf("column %q appears more than once in the header (names are compared ignoring case)", n))
		}
		metaIdx = append(metaIdx, i)
	}

	b, err := beginBatch(ctx, s, "stations", in, stationsOptionsRecord{IDCol: idCol, DecimalComma: opt.DecimalComma,
		Delimiter: string(rune(delimOf(opt.Delimiter)))}, opt.Progress)
	if err != nil {
		return nil, err
	}
	b.limit = opt.RejectLimit
	defer b.tx.Rollback()

	sel, err := b.tx.PrepareContext(ctx, `SELECT name, latitude, longitude, elevation_m, metadata FROM stations WHERE id = ?`)
	if err != nil {
		return nil, err
	}
	defer sel.Close()

	for {
		r, err := cr.next()
		if err != nil {
			return nil, readFailure(in.name, cr.nextLine-1, err)
		}
		if r == nil {
			break
		}
		b.res.RowsRead++
		if b.res.RowsRead%progressEvery == 0 {
			if err := b.progress(ctx); err != nil {
				return nil, err
			}
		}
		reason := checkWidth(r, h)
		if reason == "" {
			reason, err = stationRow(ctx, b, sel, r, iID, known, metaIdx, h, opt.DecimalComma)
			if err != nil {
				return nil, err
			}
		}
		if reason != "" {
			if err := b.reject(ctx, r.line, r.raw, reason); err != nil {
				return nil, err
			}
		}
	}
	if in.name == StdinName {
		sum := hex.EncodeToString(in.h.Sum(nil))
		id, err := earlierBatch(ctx, b.tx, "stations", sum)
		if err != nil {
			return nil, fmt.Errorf("import %s: look up earlier batches: %w", in.name, err)
		}
		if id != 0 && !opt.Again {
			return nil, &AlreadyImportedError{File: in.name, SHA256: sum, Batch: id}
		}
		b.res.SameFileBatch = id
	}
	if err := b.finish(ctx); err != nil {
		return nil, err
	}
	res := b.res
	return &res, nil
}

// stationFields is one station as given in a file or stored; nil = not given.
type stationFields struct {
	name                *string
	lat, lon, elevation *float64
	meta                map[string]json.RawMessage
}

func stationRow(ctx context.Context, b *importBatch, sel *sql.Stmt, r *csvRecord, iID int, known map[string]int,
	metaIdx []int, h *csvHeader, decimalComma bool) (string, error) {
	f := r.fields
	id := strings.TrimSpace(f[iID])
	if id == "" {
		return "missing station id", nil
	}
	if reason := idProblem("station id", id); reason != "" {
		return reason, nil
	}
	var in stationFields
	if i := known["name"]; i >= 0 {
		if v := strings.TrimSpace(f[i]); v != "" {
			in.name = &v
		}
	}
	for _, c := range []struct {
		col    string
		dst    **float64
		lo, hi float64
	}{
		{"latitude", &in.lat, -90, 90},
		{"longitude", &in.lon, -180, 180},
		{"elevation_m", &in.elevation, 0, 0},
	} {
		i := known[c.col]
		if i < 0 || strings.TrimSpace(f[i]) == "" {
			continue
		}
		v, reason := parseValue(f[i], decimalComma)
		if reason != "" {
			return c.col + ": " + reason, nil
		}
		if c.lo != c.hi && (v < c.lo || v > c.hi) {
			return fmt.Sprintf("%s: %s is outside [%g, %g]", c.col, strings.TrimSpace(f[i]), c.lo, c.hi), nil
		}
		*c.dst = &v
	}
	in.meta = map[string]json.RawMessage{}
	if i := known["metadata"]; i >= 0 && strings.TrimSpace(f[i]) != "" {
		var m map[string]json.RawMessage
		if err := json.Unmarshal([]byte(f[i]), &m); err != nil || m == nil {
			return fmt.Sprintf("metadata: %q is not a JSON object", f[i]), nil
		}
		for k, v := range m {
			in.meta[k] = v
		}
	}
	for _, i := range metaIdx {
		if f[i] == "" {
			continue
		}
		v, _ := json.Marshal(f[i])
		in.meta[h.names[i]] = v
	}

	var st stationFields
	var name sql.NullString
	var lat, lon, elev sql.NullFloat64
	var meta string
	err := sel.QueryRowContext(ctx, id).Scan(&name, &lat, &lon, &elev, &meta)
	if errors.Is(err, sql.ErrNoRows) {
		metaText, err := encodeMeta(in.meta)
		if err != nil {
			return "", err
		}
		if _, err := b.tx.ExecContext(ctx, `INSERT INTO stations(id, name, latitude, longitude, elevation_m, metadata) VALUES (?, ?, ?, ?, ?, ?)`,
			id, importNullable(in.name), importNullable(in.lat), importNullable(in.lon), importNullable(in.elevation), metaText); err != nil {
			return "", fmt.Errorf("import %s line %d: insert station %q: %w", b.in.name, r.line, id, err)
		}
		b.res.RowsStored++
		return "", nil
	}
	if err != nil {
		return "", fmt.Errorf("import %s line %d: read station %q: %w", b.in.name, r.line, id, err)
	}
	if name.Valid {
		st.name = &name.String
	}
	for _, p := range []struct {
		src sql.NullFloat64
		dst **float64
	}{{lat, &st.lat}, {lon, &st.lon}, {elev, &st.elevation}} {
		if p.src.Valid {
			v := p.src.Float64
			*p.dst = &v
		}
	}
	if err := json.Unmarshal([]byte(meta), &st.meta); err != nil || st.meta == nil {
		return fmt.Sprintf("the stored metadata of station %q is not a JSON object, so it cannot be merged", id), nil
	}

	changed := false
	if in.name != nil && (st.name == nil || *st.name != *in.name) {
		st.name, changed = in.name, true
	}
	for _, p := range []struct{ in, st **float64 }{{&in.lat, &st.lat}, {&in.lon, &st.lon}, {&in.elevation, &st.elevation}} {
		if *p.in != nil && (*p.st == nil || **p.st != **p.in) {
			*p.st, changed = *p.in, true
		}
	}
	for k, v := range in.meta {
		if old, ok := st.meta[k]; !ok || !jsonEqual(old, v) {
			st.meta[k], changed = v, true
		}
	}
	b.res.RowsDuplicate++
	if !changed {
		return "", nil
	}
	metaText, err := encodeMeta(st.meta)
	if err != nil {
		return "", err
	}
	if _, err := b.tx.ExecContext(ctx, `UPDATE stations SET name = ?, latitude = ?, longitude = ?, elevation_m = ?, metadata = ? WHERE id = ?`,
		importNullable(st.name), importNullable(st.lat), importNullable(st.lon), importNullable(st.elevation), metaText, id); err != nil {
		return "", fmt.Errorf("import %s line %d: update station %q: %w", b.in.name, r.line, id, err)
	}
	b.res.RowsReplaced++
	return "", nil
}

func importNullable[T any](p *T) any {
	if p == nil {
		return nil
	}
	return *p
}

// encodeMeta renders metadata as a JSON object with sorted keys.
func encodeMeta(m map[string]json.RawMessage) (string, error) {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	var buf bytes.Buffer
	buf.WriteByte('{')
	for i, k := range keys {
		if i > 0 {
			buf.WriteByte(',')
		}
		kb, _ := json.Marshal(k)
		buf.Write(kb)
		buf.WriteByte(':')
		if err := json.Compact(&buf, m[k]); err != nil {
			return "", fmt.Errorf("metadata key %s: %w", strconv.Quote(k), err)
		}
	}
	buf.WriteByte('}')
	return buf.String(), nil
}

// jsonEqual compares two JSON texts by value.
func jsonEqual(a, b json.RawMessage) bool {
	var x, y any
	if json.Unmarshal(a, &x) != nil || json.Unmarshal(b, &y) != nil {
		return bytes.Equal(a, b)
	}
	xb, _ := json.Marshal(x)
	yb, _ := json.Marshal(y)
	return bytes.Equal(xb, yb)
}
