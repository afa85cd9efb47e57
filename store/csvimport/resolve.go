package csvimport

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/timefmt"
)

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
	pr := pendingRow{ser: ss, t: p.t, v: p.v, q: p.q, c: p.c, line: p.line}
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
	if mode != DupError {
		// A repeat of a row from an earlier chunk is compared with (and
		// recorded against) what the store now holds for it, so the queued
		// rows must be written first.
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
				return &InputError{File: im.in.name, Line: p.line, Err: ErrDuplicate, Msg: fmt.Sprintf(
					"duplicate reading: station %q variable %q at %s also appears on line %d; nothing was imported",
					ss.station, ss.variable, timefmt.FormatUTC(p.t), p.dupLine)}
			}
			dup = true
		} else if p.probe {
			if sv, ok := im.found[storedKey{ss.id, p.t}]; ok {
				if mode == DupError {
					same := "a different value"
					if sv.v == p.v {
						same = "the same value"
					}
					return &InputError{File: im.in.name, Line: p.line, Err: ErrDuplicate, Msg: fmt.Sprintf(
						"duplicate reading: station %q variable %q at %s is already stored (with %s: %s); nothing was imported",
						ss.station, ss.variable, timefmt.FormatUTC(p.t), same, strconv.FormatFloat(sv.v, 'g', -1, 64))}
				}
				dup = true
			}
		}
		if dup {
			im.res.RowsDuplicate++
			prevV, prevC := im.previous(i)
			switch {
			case mode == DupKeepFirst:
				write = false
				if err := im.recordDuplicate(ctx, p, prevV, prevC, p.v, p.c); err != nil {
					return err
				}
			case im.unchanged(i):
				write = false // replace with the very same reading: nothing to do
			default:
				im.res.RowsReplaced++
				if err := im.recordDuplicate(ctx, p, p.v, p.c, prevV, prevC); err != nil {
					return err
				}
			}
		} else {
			im.res.RowsStored++
			if p.c != 0 {
				im.res.RowsCensored++
			}
		}
		if write {
			p.written = true
			im.noteMark(ss.id, p.t, p.c)
			ss.written++
			if err := im.w.Add(ctx, Reading{SeriesID: ss.id, T: p.t, Value: p.v, Qualifier: p.q}); err != nil {
				return fmt.Errorf("import %s near line %d: %w", im.in.name, p.line, err)
			}
		}
	}
	im.pending = im.pending[:0]
	clear(im.found)
	return im.flushDuplicates(ctx)
}

// previous returns the reading that duplicate row i meets: the latest
// earlier row of this chunk with the same series and time that was
// written, else what the store holds.
func (im *readingsImporter) previous(i int) (float64, int8) {
	p := &im.pending[i]
	if p.dupLine != 0 {
		for j := i - 1; j >= 0; j-- {
			if q := &im.pending[j]; q.ser == p.ser && q.t == p.t && q.written {
				return q.v, q.c
			}
		}
	}
	sv := im.found[storedKey{p.ser.id, p.t}]
	return sv.v, markFromDB(sv.c)
}

// unchanged reports whether duplicate row i carries the same value and
// qualifier as the reading it would replace: the latest earlier row of this
// chunk with the same series and time, else what the store holds.
func (im *readingsImporter) unchanged(i int) bool {
	p := &im.pending[i]
	if p.dupLine != 0 {
		for j := i - 1; j >= 0; j-- {
			if q := &im.pending[j]; q.ser == p.ser && q.t == p.t {
				return q.v == p.v && q.c == p.c && sameQualifier(q.q, p.q)
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
	return sv.v == p.v && markFromDB(sv.c) == p.c && sameQualifier(q, p.q)
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
		q := "SELECT t, value, qualifier, censored FROM readings WHERE series_id = ? AND t IN (" +
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
		if err := rows.Scan(&t, &sv.v, &sv.q, &sv.c); err != nil {
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
