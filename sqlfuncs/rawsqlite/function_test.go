package rawsqlite

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"errors"
	"fmt"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	_ "modernc.org/sqlite"
)

// openConn opens a scratch database with one connection and returns it with
// its C-level handle (the test skips when the fast path is switched off).
func openConn(t *testing.T) (*sql.Conn, Conn) {
	t.Helper()
	if err := Check(); err != nil {
		t.Skip("C-level path unavailable: " + err.Error())
	}
	db, err := sql.Open("sqlite", "file:"+filepath.Join(t.TempDir(), "raw.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { db.Close() })
	conn, err := db.Conn(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	var handle Conn
	if err := conn.Raw(func(dc any) error {
		h, err := ConnOf(dc)
		handle = h
		return err
	}); err != nil {
		t.Fatal(err)
	}
	return conn, handle
}

// testSum is the state of raw_sum: the total of the integer arguments and
// the boxed form of the last argument seen.
type testSum struct {
	total int64
	last  driver.Value
	texts []string
}

var testSums Slots[testSum]

func newTestSum() (*testSum, error) { return &testSum{}, nil }

// rawSum(x [, mode]) sums INTEGER x over the group like SQLite's sum();
// mode 'last' returns the boxed last argument instead, 'texts' the texts
// seen (read in place), 'panic' panics in Value.
var rawSum = &Function{
	Name:    "raw_sum",
	MinArgs: 1, MaxArgs: 2,
	Step: func(c Context, args Args) {
		s, err := testSums.Get(c, true, newTestSum)
		if err != nil {
			c.Error(err)
			return
		}
		v := args.At(0)
		switch v.Type() {
		case Integer:
			s.total += v.Int64()
		case Text:
			s.texts = append(s.texts, string(v.Text()))
		}
		s.last = args.Boxed()[0]
	},
	Inverse: func(c Context, args Args) {
		s, err := testSums.Get(c, true, newTestSum)
		if err != nil {
			c.Error(err)
			return
		}
		if v := args.At(0); v.Type() == Integer {
			s.total -= v.Int64()
		}
	},
	Value: func(c Context) { rawSumValue(c, false) },
	Final: func(c Context) { rawSumValue(c, true) },
}

func rawSumValue(c Context, final bool) {
	if final {
		defer testSums.Release(c)
	}
	s, _ := testSums.Get(c, false, nil)
	if s == nil {
		c.Result(nil)
		return
	}
	switch s.last {
	case "panic":
		panic("on purpose")
	case "error":
		c.Error(fmt.Errorf("%s: asked for an error", c.Name()))
	case "blob":
		c.Result([]byte("a\x00b"))
	case "empty blob":
		c.Result([]byte{})
	case "texts":
		c.Result(strings.Join(s.texts, "|"))
	case "type":
		c.Result(int32(1)) // not a driver value kind
	default:
		if s.texts != nil {
			c.Result(fmt.Sprintf("%#v", s.last))
			return
		}
		c.Result(s.total)
	}
}

// The callbacks against SQLite's own aggregates (sum, total over a sliding
// frame) and the documented conversions of values and results.
func TestFunctionMatchesBuiltins(t *testing.T) {
	conn, handle := openConn(t)
	ctx := context.Background()
	if err := conn.Raw(func(any) error { return handle.CreateFunction(rawSum) }); err != nil {
		t.Fatal(err)
	}
	if _, err := conn.ExecContext(ctx, `CREATE TABLE v(g INTEGER, x)`); err != nil {
		t.Fatal(err)
	}
	if _, err := conn.ExecContext(ctx, `WITH RECURSIVE s(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM s WHERE i < 300)
		INSERT INTO v SELECT i % 7, (i * 7919) % 1000 - 500 FROM s`); err != nil {
		t.Fatal(err)
	}
	rowsOf := func(q string) []string {
		t.Helper()
		rows, err := conn.QueryContext(ctx, q)
		if err != nil {
			t.Fatal(err)
		}
		defer rows.Close()
		var out []string
		for rows.Next() {
			var a, b any
			if err := rows.Scan(&a, &b); err != nil {
				t.Fatal(err)
			}
			out = append(out, fmt.Sprintf("%v %v", a, b))
		}
		if err := rows.Err(); err != nil {
			t.Fatal(err)
		}
		return out
	}
	for _, q := range [][2]string{
		{`SELECT g, raw_sum(x) FROM v GROUP BY g ORDER BY g`, `SELECT g, sum(x) FROM v GROUP BY g ORDER BY g`},
		{`SELECT g, raw_sum(x) OVER (PARTITION BY g ORDER BY rowid ROWS 5 PRECEDING) FROM v ORDER BY g, rowid`,
			`SELECT g, sum(x) OVER (PARTITION BY g ORDER BY rowid ROWS 5 PRECEDING) FROM v ORDER BY g, rowid`},
	} {
		got, want := rowsOf(q[0]), rowsOf(q[1])
		if len(got) == 0 || !reflect.DeepEqual(got, want) {
			t.Errorf("%s:\n got  %v\n want %v", q[0], got, want)
		}
	}
	if live := testSums.Live(); live != 0 {
		t.Errorf("%d group states still held after the statements", live)
	}

	scalar := func(q string) (any, error) {
		var v any
		err := conn.QueryRowContext(ctx, q).Scan(&v)
		return v, err
	}
	cases := []struct {
		q    string
		want any
		err  string
	}{
		{q: `SELECT raw_sum(x) FROM v WHERE 0`, want: nil},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('ab'), ('c'), (''), ('texts'))`, want: "ab|c||texts"},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('a'), (2.5))`, want: "2.5"},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('a'), (-3))`, want: "-3"},
		{q: `SELECT raw_sum(column1) FROM (VALUES (1), ('x'))`, want: `"x"`},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('a'), (x'0102'))`, want: `[]byte{0x1, 0x2}`},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('a'), (NULL))`, want: `<nil>`},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('blob'))`, want: []byte("a\x00b")},
		{q: `SELECT typeof(raw_sum(column1)) FROM (VALUES ('empty blob'))`, want: "blob"},
		{q: `SELECT raw_sum(column1, 0) FROM (VALUES (4), (5))`, want: int64(9)},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('panic'))`, err: "raw_sum: internal error: on purpose"},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('error'))`, err: "raw_sum: asked for an error"},
		{q: `SELECT raw_sum(column1) FROM (VALUES ('type'))`, err: "raw_sum: internal error: result of type int32"},
	}
	for _, c := range cases {
		got, err := scalar(c.q)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("%s: error %v, want one containing %q", c.q, err, c.err)
			}
			continue
		}
		if err != nil || !reflect.DeepEqual(got, c.want) {
			t.Errorf("%s = %#v (%v), want %#v", c.q, got, err, c.want)
		}
	}
	if _, err := scalar(`SELECT raw_sum(1, 2, 3)`); err == nil {
		t.Error("raw_sum with 3 arguments was accepted; only 1 and 2 are registered")
	}
	if live := testSums.Live(); live != 0 {
		t.Errorf("%d group states still held after errors", live)
	}
}

// A Stmt against the same rows written through database/sql.
func TestStmtMatchesDatabaseSQL(t *testing.T) {
	conn, handle := openConn(t)
	ctx := context.Background()
	if _, err := conn.ExecContext(ctx, `CREATE TABLE w(k INTEGER PRIMARY KEY, i INTEGER, f REAL, s TEXT)`); err != nil {
		t.Fatal(err)
	}
	type row struct {
		i int64
		f float64
		s *string
	}
	str := func(s string) *string { return &s }
	long := strings.Repeat("qualifier ", 1000) // more than the buffer's first size
	rows := []row{{1, 0.5, str("E")}, {-7, -1e300, nil}, {1 << 60, 3, str("")}, {0, 2.25, str(long)}, {5, 1, str("ü")}}
	if _, err := conn.ExecContext(ctx, `BEGIN`); err != nil {
		t.Fatal(err)
	}
	var changed int64
	if err := conn.Raw(func(any) error {
		if !handle.InTransaction() {
			return fmt.Errorf("InTransaction is false inside BEGIN")
		}
		st, err := handle.Prepare(`INSERT INTO w(k, i, f, s) VALUES (?, ?, ?, ?)`)
		if err != nil {
			return err
		}
		defer st.Close()
		if n := handle.OpenStatements(); n < 1 {
			return fmt.Errorf("%d open statements after Prepare", n)
		}
		for k, r := range rows {
			need := 0
			if r.s != nil {
				need = len(*r.s)
			}
			if err := st.BeginTexts(need); err != nil {
				return err
			}
			if err := st.BindInt64(1, int64(k+1)); err != nil {
				return err
			}
			if err := st.BindInt64(2, r.i); err != nil {
				return err
			}
			if err := st.BindFloat64(3, r.f); err != nil {
				return err
			}
			if r.s == nil {
				err = st.BindNull(4)
			} else {
				err = st.BindText(4, *r.s)
			}
			if err != nil {
				return err
			}
			n, err := st.Exec()
			if err != nil {
				return err
			}
			changed += n
		}
		// A duplicate key fails with the driver's wording and code.
		if err := st.BindInt64(1, 1); err != nil {
			return err
		}
		_, err = st.Exec()
		var e *Error
		if !errors.As(err, &e) || !strings.Contains(e.Error(), "UNIQUE constraint failed: w.k") || e.Code() != 1555 {
			return fmt.Errorf("duplicate key: %v", err)
		}
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	if _, err := conn.ExecContext(ctx, `COMMIT`); err != nil {
		t.Fatal(err)
	}
	if changed != int64(len(rows)) {
		t.Errorf("Exec reported %d changed rows, want %d", changed, len(rows))
	}
	if err := conn.Raw(func(any) error {
		if n := handle.OpenStatements(); n != 0 {
			return fmt.Errorf("%d statements left open after Close", n)
		}
		return nil
	}); err != nil {
		t.Error(err)
	}
	// The same rows through database/sql in a second table.
	if _, err := conn.ExecContext(ctx, `CREATE TABLE w2(k INTEGER PRIMARY KEY, i INTEGER, f REAL, s TEXT)`); err != nil {
		t.Fatal(err)
	}
	for k, r := range rows {
		var s any
		if r.s != nil {
			s = *r.s
		}
		if _, err := conn.ExecContext(ctx, `INSERT INTO w2 VALUES (?, ?, ?, ?)`, k+1, r.i, r.f, s); err != nil {
			t.Fatal(err)
		}
	}
	var differ int
	if err := conn.QueryRowContext(ctx, `SELECT count(*) FROM (SELECT k, i, f, s, typeof(s) FROM w EXCEPT SELECT k, i, f, s, typeof(s) FROM w2)`).Scan(&differ); err != nil {
		t.Fatal(err)
	}
	if differ != 0 {
		t.Errorf("%d rows differ from the database/sql ones", differ)
	}
}
