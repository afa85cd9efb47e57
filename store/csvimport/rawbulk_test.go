package csvimport

// Parity tests of the C-level bulk insert (rawbulk.go) against the
// database/sql insert it replaces: both write the same generated rows into
// two fresh stores, and the stored rows (types, exact value bits, qualifier
// bytes), the affected-row counts and the error texts must be identical.
// The rows are generated for the test only; the reference is the
// database/sql path of modernc.org/sqlite v1.62.0 (driver-side binding of
// the same statement text).

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	sqlite3 "modernc.org/sqlite/lib"

	"trendsql/sqlfuncs/rawsqlite"
	"trendsql/store"
	"trendsql/store/storetest"
)

// rawOff reports whether the environment disables the C-level paths; the
// writer must then fall back to database/sql.
func rawOff() bool {
	return strings.EqualFold(os.Getenv(rawsqlite.EnvVar), "off")
}

// rawSetup opens a store with three series and returns their ids.
func rawSetup(t *testing.T) (*store.Store, []int64) {
	t.Helper()
	s := storetest.Open(t)
	var ids []int64
	for _, st := range []string{"RB-1", "RB-2", "RB-3"} {
		if _, err := s.DB.Exec(`INSERT INTO stations(id) VALUES (?)`, st); err != nil {
			t.Fatal(err)
		}
		var id int64
		if err := s.DB.QueryRow(`INSERT INTO series(station_id, variable) VALUES (?, 'stage') RETURNING id`, st).Scan(&id); err != nil {
			t.Fatal(err)
		}
		ids = append(ids, id)
	}
	return s, ids
}

// rawRow is one stored reading, rendered exactly.
type rawRow struct {
	sid, t      int64
	vtype       string
	vbits       uint64
	qtype, qhex string
}

func rawDump(t *testing.T, s *store.Store) []rawRow {
	t.Helper()
	rows, err := s.DB.Query(`SELECT series_id, t, typeof(value), value, typeof(qualifier), hex(qualifier) FROM readings ORDER BY series_id, t`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	var out []rawRow
	for rows.Next() {
		var r rawRow
		var v float64
		if err := rows.Scan(&r.sid, &r.t, &r.vtype, &v, &r.qtype, &r.qhex); err != nil {
			t.Fatal(err)
		}
		r.vbits = math.Float64bits(v)
		out = append(out, r)
	}
	if err := rows.Err(); err != nil {
		t.Fatal(err)
	}
	return out
}

// rawStmtCount counts the prepared statements open on conn (-1 when the
// C-level handle is not available).
func rawStmtCount(t *testing.T, conn *sql.Conn) int {
	t.Helper()
	n := -1
	if err := conn.Raw(func(dc any) error {
		handle, err := rawsqlite.ConnOf(dc)
		if err != nil {
			return nil
		}
		n = handle.OpenStatements()
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	return n
}

// rawWriteResult is what one writer run produced.
type rawWriteResult struct {
	stored  int64 // Flush's affected rows
	err     error // first error of Add or Flush
	inTx    int64 // readings visible in the transaction right after the error
	usedRaw bool
}

// rawWrite writes rows through a writer on its own connection and
// transaction and commits, or rolls back after an error. raw selects
// newReadingWriterOn (C-level when available) or NewReadingWriter.
func rawWrite(t *testing.T, s *store.Store, conflict Conflict, rows []Reading, raw bool) rawWriteResult {
	t.Helper()
	ctx := context.Background()
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	before := rawStmtCount(t, conn)
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer tx.Rollback()
	var w *ReadingWriter
	if raw {
		w, err = newReadingWriterOn(ctx, conn, tx, conflict)
	} else {
		w, err = NewReadingWriter(ctx, tx, conflict)
	}
	if err != nil {
		t.Fatal(err)
	}
	res := rawWriteResult{usedRaw: w.raw != nil}
	for _, r := range rows {
		if res.err = w.Add(ctx, r); res.err != nil {
			break
		}
	}
	if res.err == nil {
		res.stored, res.err = w.Flush(ctx)
	}
	if res.err != nil {
		if err := tx.QueryRow(`SELECT count(*) FROM readings`).Scan(&res.inTx); err != nil {
			t.Fatalf("transaction unusable after the insert error: %v", err)
		}
		if err := w.Close(); err != nil {
			t.Fatal(err)
		}
		if err := tx.Rollback(); err != nil {
			t.Fatal(err)
		}
	} else if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
	if after := rawStmtCount(t, conn); after != before {
		t.Errorf("%d prepared statements open on the connection after the writer, %d before (statement leak)", after, before)
	}
	return res
}

// rawRows generates n readings over the series ids. With dups, about one
// row in 11 repeats an earlier time of its series and one in 7 hits the
// pre-stored times of rawPrestored; without, every (series, time) is new.
func rawRows(ids []int64, n int, dups bool) []Reading {
	rng := rand.New(rand.NewPCG(6, 20261202))
	long := strings.Repeat("qualifier text long enough to outgrow the first C buffer ", 6)
	quals := []*string{nil, ptr(""), ptr("E"), ptr("≈ geschätzt"), nil, ptr("a\x00b"), ptr(" spaced "), nil, ptr(long)}
	out := make([]Reading, 0, n)
	next := map[int64]int64{}
	for i := 0; i < n; i++ {
		sid := ids[i%len(ids)]
		tt := 1_000_000 + next[sid]*60
		next[sid]++
		if dups {
			switch {
			case i%11 == 10 && next[sid] > 3:
				tt = 1_000_000 + (next[sid]-3)*60
			case i%7 == 3:
				tt = rawPrestoredT(i % 40)
			}
		}
		var v float64
		switch i % 6 {
		case 0:
			v = rng.NormFloat64() * 1e3
		case 1:
			v = math.Copysign(0, -1)
		case 2:
			v = 5e-324
		case 3:
			v = -1.7976931348623157e308
		case 4:
			v = float64(i)
		default:
			v = -123.456 + rng.Float64()
		}
		out = append(out, Reading{SeriesID: sid, T: tt, Value: v, Qualifier: quals[(i*7+i/13)%len(quals)]})
	}
	return out
}

func ptr(s string) *string { return &s }

// rawPrestoredT is the time of pre-stored reading k (before all generated
// times, and in the range dups aim at).
func rawPrestoredT(k int) int64 { return -500_000 + int64(k)*3600 }

// rawPrestore stores 40 readings in the first series, the same in every
// store, through database/sql.
func rawPrestore(t *testing.T, s *store.Store, ids []int64) {
	t.Helper()
	var rows []Reading
	for k := 0; k < 40; k++ {
		var q *string
		if k%3 == 0 {
			q = ptr("stored")
		}
		rows = append(rows, Reading{SeriesID: ids[0], T: rawPrestoredT(k), Value: float64(k) / 8, Qualifier: q})
	}
	if r := rawWrite(t, s, ConflictError, rows, false); r.err != nil || r.stored != 40 {
		t.Fatalf("pre-store: %d rows, %v", r.stored, r.err)
	}
}

func TestRawWriterMatchesDatabaseSQL(t *testing.T) {
	for _, c := range []struct {
		name     string
		conflict Conflict
		dups     bool
	}{
		{"error", ConflictError, false},
		{"ignore", ConflictIgnore, true},
		{"replace", ConflictReplace, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			sRaw, idsRaw := rawSetup(t)
			sSQL, idsSQL := rawSetup(t)
			if !reflect.DeepEqual(idsRaw, idsSQL) {
				t.Fatalf("series ids differ: %v %v", idsRaw, idsSQL)
			}
			rawPrestore(t, sRaw, idsRaw)
			rawPrestore(t, sSQL, idsSQL)
			// 3 full batches and a partial one.
			rows := rawRows(idsRaw, 3*bulkRows+237, c.dups)
			batches := rawInsertStats.batches.Load()
			a := rawWrite(t, sRaw, c.conflict, rows, true)
			b := rawWrite(t, sSQL, c.conflict, rows, false)
			if a.err != nil || b.err != nil {
				t.Fatalf("errors: C-level %v, database/sql %v", a.err, b.err)
			}
			if a.usedRaw == rawOff() {
				t.Fatalf("C-level writer in use: %v, with %s=%q", a.usedRaw, rawsqlite.EnvVar, os.Getenv(rawsqlite.EnvVar))
			}
			if a.usedRaw {
				if got := rawInsertStats.batches.Load() - batches; got != 3 {
					t.Errorf("%d batches went through the C API, want 3", got)
				}
			}
			if a.stored != b.stored {
				t.Errorf("affected rows: C-level %d, database/sql %d", a.stored, b.stored)
			}
			if c.conflict == ConflictError && a.stored != int64(len(rows)) {
				t.Errorf("affected rows %d, want %d", a.stored, len(rows))
			}
			da, db := rawDump(t, sRaw), rawDump(t, sSQL)
			if len(da) != len(db) {
				t.Fatalf("stored rows: C-level %d, database/sql %d", len(da), len(db))
			}
			for i := range da {
				if da[i] != db[i] {
					t.Fatalf("row %d: C-level %+v, database/sql %+v", i, da[i], db[i])
				}
			}
			// The dump must show what the test meant to write.
			kinds := map[string]bool{}
			for _, r := range da {
				kinds[r.qtype+":"+r.qhex] = true
			}
			for _, k := range []string{"null:", "text:", "text:45", "text:610062", "text:" + fmt.Sprintf("%X", "≈ geschätzt")} {
				if !kinds[k] {
					t.Errorf("no stored qualifier %q", k)
				}
			}
			storetest.Integrity(t, sRaw)
			storetest.Integrity(t, sSQL)
		})
	}
}

func TestRawWriterDuplicateError(t *testing.T) {
	sRaw, ids := rawSetup(t)
	sSQL, _ := rawSetup(t)
	rawPrestore(t, sRaw, ids)
	rawPrestore(t, sSQL, ids)
	want := rawDump(t, sRaw)
	rows := rawRows(ids, 3*bulkRows, false)
	// Row 700 (second batch) hits a stored reading.
	rows[700].SeriesID, rows[700].T = ids[0], rawPrestoredT(17)
	a := rawWrite(t, sRaw, ConflictError, rows, true)
	b := rawWrite(t, sSQL, ConflictError, rows, false)
	if a.err == nil || b.err == nil {
		t.Fatalf("a duplicate did not fail: C-level %v, database/sql %v", a.err, b.err)
	}
	if a.err.Error() != b.err.Error() {
		t.Errorf("error texts differ:\n C-level     %s\n database/sql %s", a.err, b.err)
	}
	if !strings.HasPrefix(a.err.Error(), "insert readings: ") || !strings.Contains(a.err.Error(), "UNIQUE constraint failed: readings.series_id, readings.t") {
		t.Errorf("error %q does not name the insert and the constraint", a.err)
	}
	type coder interface{ Code() int }
	var ca, cb coder
	if !errors.As(a.err, &ca) || !errors.As(b.err, &cb) || ca.Code() != cb.Code() || ca.Code() != sqlite3.SQLITE_CONSTRAINT_PRIMARYKEY {
		t.Errorf("result codes: C-level %v, database/sql %v; want %d both", ca, cb, sqlite3.SQLITE_CONSTRAINT_PRIMARYKEY)
	}
	// The failed statement is undone alone: the first batch is still there.
	if a.inTx != 40+bulkRows || b.inTx != 40+bulkRows {
		t.Errorf("readings in the transaction after the error: C-level %d, database/sql %d, want %d", a.inTx, b.inTx, 40+bulkRows)
	}
	// After the rollback both stores hold only the pre-stored readings.
	if got := rawDump(t, sRaw); !reflect.DeepEqual(got, want) {
		t.Errorf("C-level store changed by a failed write: %d rows", len(got))
	}
	if got := rawDump(t, sSQL); !reflect.DeepEqual(got, want) {
		t.Errorf("database/sql store changed by a failed write: %d rows", len(got))
	}
}

func TestRawWriterRefusesWithoutTransaction(t *testing.T) {
	if rawOff() {
		t.Skip(rawsqlite.EnvVar + "=off: no C-level writer")
	}
	ctx := context.Background()
	s, ids := rawSetup(t)
	conn, err := s.DB.Conn(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	tx, err := conn.BeginTx(ctx, nil)
	if err != nil {
		t.Fatal(err)
	}
	w, err := newReadingWriterOn(ctx, conn, tx, ConflictError)
	if err != nil {
		t.Fatal(err)
	}
	if w.raw == nil {
		t.Fatal("C-level writer not available")
	}
	defer w.Close()
	// The transaction ends (as when database/sql rolls it back on a
	// cancelled context) while the writer still holds queued rows.
	if err := tx.Rollback(); err != nil {
		t.Fatal(err)
	}
	var werr error
	for _, r := range rawRows(ids, bulkRows, false) {
		if werr = w.Add(ctx, r); werr != nil {
			break
		}
	}
	if werr == nil || !strings.Contains(werr.Error(), "transaction is no longer open") {
		t.Errorf("write after the rollback: err = %v", werr)
	}
	// A cancelled context is refused too.
	cctx, cancel := context.WithCancel(ctx)
	cancel()
	if _, err := w.raw.exec(cctx, rawRows(ids, bulkRows, false)); !errors.Is(err, context.Canceled) {
		t.Errorf("write with a cancelled context: err = %v", err)
	}
	if n := impCount(t, s, `SELECT count(*) FROM readings`); n != 0 {
		t.Errorf("%d readings written outside a transaction", n)
	}
}

// rawCSV writes a readings file: n rows over 4 stations, unix-second and
// ISO 8601 times, qualifiers (empty cells are NULL), some bad rows, and
// with overlap the times of rawCSV(n, 0) from row shift on.
func rawCSV(t *testing.T, name string, n, shift int, bump float64) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("station,time,value,qualifier\n")
	t0 := time.Date(2020, 3, 1, 0, 0, 0, 0, time.UTC).Unix()
	quals := []string{"", "E", "", "≈", "", "ice", "", "E"}
	for i := shift; i < shift+n; i++ {
		st := fmt.Sprintf("C%d", i%4)
		tt := t0 + int64(i/4)*900
		ts := fmt.Sprint(tt)
		if i%5 == 0 {
			ts = time.Unix(tt, 0).UTC().Format(time.RFC3339)
		}
		val := fmt.Sprintf("%.4f", 3+float64(i%97)/31+bump*float64(i%2))
		switch {
		case i%251 == 7:
			val = "n/a"
		case i%313 == 11:
			ts = ""
		}
		fmt.Fprintf(&b, "%s,%s,%s,%s\n", st, ts, val, quals[i%len(quals)])
	}
	p := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// rawImportState renders what imports leave in a store, apart from the
// wall-clock times of import_batches.
func rawImportState(t *testing.T, s *store.Store) string {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "%v\n", rawDump(t, s))
	for _, q := range []string{
		`SELECT id, kind, source, source_sha256, options, rows_read, rows_stored, rows_rejected, rows_duplicate, rows_replaced FROM import_batches ORDER BY id`,
		`SELECT batch_id, line, raw, reason FROM import_rejects ORDER BY batch_id, line`,
		`SELECT series_id, batch_id, rows FROM series_batches ORDER BY series_id, batch_id`,
		`SELECT id, station_id, variable, unit FROM series ORDER BY id`,
		`SELECT id, name FROM stations ORDER BY id`,
	} {
		rows, err := s.DB.Query(q)
		if err != nil {
			t.Fatal(err)
		}
		for _, vals := range storetest.ScanAll(t, rows) {
			fmt.Fprintf(&b, "%v\n", vals)
		}
	}
	return b.String()
}

func TestRawImportMatchesDatabaseSQL(t *testing.T) {
	ctx := context.Background()
	first := rawCSV(t, "first.csv", 3*bulkRows+321, 0, 0)
	// Overlaps the second half of first.csv; odd rows carry other values.
	second := rawCSV(t, "second.csv", 2*bulkRows+77, (3*bulkRows+321)/2, 0.5)
	for _, mode := range []OnDuplicate{DupError, DupKeepFirst, DupReplace} {
		t.Run(string(mode), func(t *testing.T) {
			sRaw, sSQL := storetest.Open(t), storetest.Open(t)
			run := func(s *store.Store, file string, off bool) (*ImportResult, error) {
				rawInsertStats.off.Store(off)
				defer rawInsertStats.off.Store(false)
				return ImportReadings(ctx, s, file, ReadingsOptions{Variable: "stage", Unit: "m", OnDuplicate: mode})
			}
			batches := rawInsertStats.batches.Load()
			for _, file := range []string{first, second} {
				ra, ea := run(sRaw, file, false)
				rb, eb := run(sSQL, file, true)
				if (ea == nil) != (eb == nil) || (ea != nil && ea.Error() != eb.Error()) {
					t.Fatalf("%s: errors differ: C-level %v, database/sql %v", filepath.Base(file), ea, eb)
				}
				if ea != nil {
					if mode != DupError || file != second || !errors.Is(ea, ErrDuplicate) {
						t.Fatalf("%s: %v", filepath.Base(file), ea)
					}
					continue
				}
				if !reflect.DeepEqual(ra, rb) {
					t.Errorf("%s: results differ:\n C-level     %+v\n database/sql %+v", filepath.Base(file), ra, rb)
				}
				if ra.RowsRejected == 0 || ra.RowsRead != ra.RowsStored+ra.RowsRejected+ra.RowsDuplicate {
					t.Errorf("%s: unexpected accounting %+v", filepath.Base(file), ra)
				}
				if file == second && (ra.RowsDuplicate == 0 || (mode == DupReplace && ra.RowsReplaced == 0)) {
					t.Errorf("%s: the overlap was not exercised: %+v", filepath.Base(file), ra)
				}
			}
			if got := rawInsertStats.batches.Load() - batches; rawOff() && got != 0 || !rawOff() && got < 3 {
				t.Errorf("%d batches went through the C API (%s=%q)", got, rawsqlite.EnvVar, os.Getenv(rawsqlite.EnvVar))
			}
			if a, b := rawImportState(t, sRaw), rawImportState(t, sSQL); a != b {
				t.Errorf("stores differ after the imports")
			}
			if n := impCount(t, sRaw, `SELECT count(*) FROM readings WHERE qualifier IS NULL`); n == 0 {
				t.Error("no NULL qualifier stored")
			}
			storetest.Integrity(t, sRaw)
			storetest.Integrity(t, sSQL)
		})
	}
}
