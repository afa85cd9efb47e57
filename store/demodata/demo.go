// Package demodata builds the demo store and holds the tour text.
//
// The demo store: an invented monitoring network in the invented Vorlen river
// basin, generated in code from a fixed seed. Nothing here describes a real
// place, gauge or well; the numbers only look like what monitoring networks
// record (seasonal cycles, persistent noise, storm hydrographs, pumping
// declines, a sensor replacement, outages and qualifier flags) so that every
// feature of trendsql has something realistic to work on.
package demodata

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"time"

	"trendsql/store"
	"trendsql/store/csvimport"
)

// Seed is the fixed seed of the demo scenario: the same seed always gives
// the same stations, series and readings, bit for bit.
const Seed uint64 = 20260417

// Source is the import_batches.source recorded for the demo build.
const Source = "demo:generated"

// Generator names the generator version recorded in the batch options;
// bump it when the scenario changes.
const Generator = "vorlen-1"

// Options controls Build.
type Options struct {
	// Seed of the scenario; 0 means Seed.
	Seed uint64
	// Stations keeps only the first n stations of the catalogue (0 = all).
	// Each station draws from its own stream, so the kept stations are
	// identical to those of the full build.
	Stations int
	// MaxYears keeps only the last MaxYears years of each record (0 = all).
	MaxYears float64
}

// Summary describes a built demo store.
type Summary struct {
	Stations int
	Series   int
	Readings int64
	// StationsByType counts stations per metadata station_type.
	StationsByType map[string]int
	BatchID        int64
	// ReplacedDemo is set when an earlier, untouched demo store at the same
	// path was rebuilt (see Create).
	ReplacedDemo bool
}

// Errors of Create.
var (
	// ErrStoreNotEmpty: the target store already holds data (and force
	// was not given).
	ErrStoreNotEmpty = errors.New("store already holds data")
	// ErrNotAStore: the target file exists and is not a trendsql store; it
	// is never replaced.
	ErrNotAStore = errors.New("not a trendsql store")
)

// Build writes the demo scenario into s (which should be empty) in one
// transaction, recording a stations batch and a readings batch with source
// Source, and series_batches rows for every series.
func Build(ctx context.Context, s *store.Store, opt Options) (Summary, error) {
	if opt.Seed == 0 {
		opt.Seed = Seed
	}
	cat := demoCatalogue()
	if opt.Stations > 0 && opt.Stations < len(cat) {
		cat = cat[:opt.Stations]
	}
	sum := Summary{StationsByType: map[string]int{}}
	optJSON, _ := json.Marshal(map[string]any{"generator": Generator, "seed": opt.Seed, "stations": opt.Stations, "max_years": opt.MaxYears})
	now := func() string { return time.Now().UTC().Format(time.RFC3339) }

	rt, err := csvimport.BeginReadingsTx(ctx, s, csvimport.ConflictError)
	if err != nil {
		return sum, fmt.Errorf("demo: begin: %w", err)
	}
	defer rt.End()
	tx, w := rt.Tx, rt.W

	res, err := tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES ('stations', ?, ?, ?)`, Source, now(), string(optJSON))
	if err != nil {
		return sum, fmt.Errorf("demo: record stations batch: %w", err)
	}
	stBatch, _ := res.LastInsertId()
	for i := range cat {
		st := &cat[i]
		if _, err := tx.ExecContext(ctx, `INSERT INTO stations(id, name, latitude, longitude, elevation_m, metadata) VALUES (?, ?, ?, ?, ?, ?)`,
			st.id, st.name, st.lat, st.lon, st.elev, st.metadata()); err != nil {
			return sum, fmt.Errorf("demo: station %s: %w", st.id, err)
		}
		sum.StationsByType[string(st.kind)]++
	}
	if _, err := tx.ExecContext(ctx, `UPDATE import_batches SET finished_at = ?, rows_read = ?, rows_stored = ? WHERE id = ?`,
		now(), len(cat), len(cat), stBatch); err != nil {
		return sum, fmt.Errorf("demo: finish stations batch: %w", err)
	}

	res, err = tx.ExecContext(ctx, `INSERT INTO import_batches(kind, source, started_at, options) VALUES ('readings', ?, ?, ?)`, Source, now(), string(optJSON))
	if err != nil {
		return sum, fmt.Errorf("demo: record readings batch: %w", err)
	}
	batch, _ := res.LastInsertId()
	type counted struct {
		id   int64
		rows int
	}
	var perSeries []counted
	for i := range cat {
		st := &cat[i]
		g := &generator{rng: rand.New(rand.NewPCG(opt.Seed, uint64(i+1))), st: st, opt: opt}
		for _, ser := range g.series() {
			res, err := tx.ExecContext(ctx, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, ?)`, st.id, ser.variable, ser.unit)
			if err != nil {
				return sum, fmt.Errorf("demo: series %s/%s: %w", st.id, ser.variable, err)
			}
			sid, _ := res.LastInsertId()
			for _, r := range ser.readings {
				if err := w.Add(ctx, csvimport.Reading{SeriesID: sid, T: r.t, Value: r.v, Qualifier: r.q}); err != nil {
					return sum, fmt.Errorf("demo: %s/%s: %w", st.id, ser.variable, err)
				}
			}
			perSeries = append(perSeries, counted{sid, len(ser.readings)})
			sum.Readings += int64(len(ser.readings))
		}
	}
	// Water-quality samples with censored results, after every other
	// series so that their ids do not move (waterquality.go).
	type mark struct{ sid, t int64 }
	var censored []mark
	for i := range cat {
		ser, cens, ok := phosphorus(&cat[i], i, opt)
		if !ok {
			continue
		}
		res, err := tx.ExecContext(ctx, `INSERT INTO series(station_id, variable, unit) VALUES (?, ?, ?)`, cat[i].id, ser.variable, ser.unit)
		if err != nil {
			return sum, fmt.Errorf("demo: series %s/%s: %w", cat[i].id, ser.variable, err)
		}
		sid, _ := res.LastInsertId()
		for k, r := range ser.readings {
			if err := w.Add(ctx, csvimport.Reading{SeriesID: sid, T: r.t, Value: r.v}); err != nil {
				return sum, fmt.Errorf("demo: %s/%s: %w", cat[i].id, ser.variable, err)
			}
			if cens[k] {
				censored = append(censored, mark{sid, r.t})
			}
		}
		perSeries = append(perSeries, counted{sid, len(ser.readings)})
		sum.Readings += int64(len(ser.readings))
	}
	stored, err := w.Flush(ctx)
	if err != nil {
		return sum, err
	}
	if stored != sum.Readings {
		return sum, fmt.Errorf("demo: stored %d readings, generated %d", stored, sum.Readings)
	}
	for _, m := range censored {
		if _, err := tx.ExecContext(ctx, `UPDATE readings SET censored = '<' WHERE series_id = ? AND t = ?`, m.sid, m.t); err != nil {
			return sum, fmt.Errorf("demo: censoring marks: %w", err)
		}
	}
	for _, c := range perSeries {
		if _, err := tx.ExecContext(ctx, `INSERT INTO series_batches(series_id, batch_id, rows) VALUES (?, ?, ?)`, c.id, batch, c.rows); err != nil {
			return sum, fmt.Errorf("demo: series_batches: %w", err)
		}
	}
	if _, err := tx.ExecContext(ctx, `UPDATE import_batches SET finished_at = ?, rows_read = ?, rows_stored = ?, rows_censored = ? WHERE id = ?`,
		now(), sum.Readings, stored, len(censored), batch); err != nil {
		return sum, fmt.Errorf("demo: finish readings batch: %w", err)
	}
	if err := tx.Commit(); err != nil {
		return sum, fmt.Errorf("demo: commit: %w", err)
	}
	sum.Stations, sum.Series, sum.BatchID = len(cat), len(perSeries), batch
	return sum, nil
}

// Create builds the demo store at path. The store is built in a
// temporary file next to path and moved into place only when complete, so an
// interrupted build leaves path untouched. An existing store that holds any
// stations, readings or import batches is replaced only when force is set; a
// file that is not a trendsql store is never replaced.
func Create(ctx context.Context, path string, opt Options, force bool) (Summary, error) {
	empty, replacedDemo, err := check(ctx, path, force)
	if err != nil {
		return Summary{}, err
	}
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".demo-*")
	if err != nil {
		return Summary{}, fmt.Errorf("demo: %w", err)
	}
	tmp := f.Name()
	f.Close()
	cleanup := func(p string) {
		for _, suffix := range []string{"", "-wal", "-shm", "-journal"} {
			os.Remove(p + suffix)
		}
	}
	ok := false
	defer func() {
		if !ok {
			cleanup(tmp)
		}
	}()
	s, err := store.Open(ctx, tmp, store.Options{})
	if err != nil {
		return Summary{}, err
	}
	sum, err := Build(ctx, s, opt)
	if err == nil {
		// Fold the WAL into the main file so the single file can be moved.
		_, err = s.DB.ExecContext(ctx, `PRAGMA wal_checkpoint(TRUNCATE)`)
	}
	if cerr := s.Close(); err == nil && cerr != nil {
		err = cerr
	}
	if err != nil {
		return sum, err
	}
	os.Remove(tmp + "-wal")
	os.Remove(tmp + "-shm")
	// Checked again just before the store is replaced: a writer that
	// started while the demo was built keeps its store.
	if !empty {
		if err := store.CheckNotInUse(ctx, path); err != nil {
			return sum, fmt.Errorf("demo: %w; refusing to replace it", err)
		}
	}
	// Side files of the replaced store must not be applied to the new one.
	os.Remove(path + "-wal")
	os.Remove(path + "-shm")
	if err := os.Rename(tmp, path); err != nil {
		return sum, fmt.Errorf("demo: move the built store into place: %w", err)
	}
	ok = true
	sum.ReplacedDemo = replacedDemo
	return sum, nil
}

// Check returns the refusal Create would return for path, or nil when
// Create would build the demo store there; it changes nothing.
func Check(ctx context.Context, path string, force bool) error {
	_, _, err := check(ctx, path, force)
	return err
}

// check is Check, and reports whether path holds no store data (empty) and
// whether it is an untouched demo store that Create would replace.
func check(ctx context.Context, path string, force bool) (empty, replacesDemo bool, err error) {
	empty, err = storeIsEmpty(ctx, path)
	if err != nil || empty {
		return empty, false, err
	}
	if err := store.CheckNotInUse(ctx, path); err != nil {
		return false, false, fmt.Errorf("demo: %w; refusing to replace it", err)
	}
	if force {
		return false, false, nil
	}
	// An untouched demo store (only generated batches, no summary runs)
	// holds nothing a user made: rebuilding it is safe, so running the
	// README's first command twice works.
	if demoOnly, _ := storeIsUntouchedDemo(ctx, path); !demoOnly {
		return false, false, fmt.Errorf("demo: %s: %w; refusing to overwrite it", path, ErrStoreNotEmpty)
	}
	return false, true, nil
}

// IsDemo reports whether a store holds the demo build: its mark is the
// import batch the demo records with source Source, which no import writes.
func IsDemo(ctx context.Context, q store.Querier) (bool, error) {
	var n int
	err := q.QueryRowContext(ctx, `SELECT EXISTS (SELECT 1 FROM import_batches WHERE source = ?)`, Source).Scan(&n)
	return n == 1, err
}

// storeIsUntouchedDemo reports whether the store at path holds only what an
// earlier demo build wrote: every import batch has the demo's source and
// no summary run exists. Any error counts as "no".
func storeIsUntouchedDemo(ctx context.Context, path string) (bool, error) {
	db, err := sql.Open("sqlite", store.DSN(path, true))
	if err != nil {
		return false, err
	}
	defer db.Close()
	var batches, demoBatches, runs int
	err = db.QueryRowContext(ctx, `SELECT count(*), count(*) FILTER (WHERE source = ?) FROM import_batches`, Source).Scan(&batches, &demoBatches)
	if err != nil {
		return false, err
	}
	if err := db.QueryRowContext(ctx, `SELECT count(*) FROM summary_runs`).Scan(&runs); err != nil {
		return false, err
	}
	return batches > 0 && batches == demoBatches && runs == 0, nil
}

// storeIsEmpty reports whether path is absent, an empty file, an SQLite file
// without tables, or a trendsql store without stations, readings or batches.
// A file that is anything else is an error: it is never replaced.
func storeIsEmpty(ctx context.Context, path string) (bool, error) {
	fi, err := os.Stat(path)
	if errors.Is(err, os.ErrNotExist) {
		return true, nil
	}
	if err != nil {
		return false, fmt.Errorf("demo: %w", err)
	}
	if fi.IsDir() {
		return false, fmt.Errorf("demo: %s is a directory, not a store file", path)
	}
	if fi.Size() == 0 {
		return true, nil
	}
	db, err := sql.Open("sqlite", store.DSN(path, true))
	if err != nil {
		return false, fmt.Errorf("demo: %s: %w", path, err)
	}
	defer db.Close()
	notStore := func(why string) error {
		return fmt.Errorf("demo: %s exists and is %w (%s); refusing to replace it", path, ErrNotAStore, why)
	}
	var tables, hasStations int
	err = db.QueryRowContext(ctx, `SELECT count(*), count(*) FILTER (WHERE name = 'stations') FROM sqlite_schema WHERE type = 'table'`).Scan(&tables, &hasStations)
	if err != nil {
		return false, notStore(strings.TrimSpace(err.Error()))
	}
	if tables == 0 {
		return true, nil
	}
	if hasStations == 0 {
		return false, notStore("no stations table")
	}
	var used int
	err = db.QueryRowContext(ctx, `SELECT EXISTS (SELECT 1 FROM stations) OR EXISTS (SELECT 1 FROM readings) OR EXISTS (SELECT 1 FROM import_batches)`).Scan(&used)
	if err != nil {
		return false, notStore(strings.TrimSpace(err.Error()))
	}
	return used == 0, nil
}
