package store

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"fmt"
	"strings"
	"sync"

	sqlite "modernc.org/sqlite"

	"trendsql/sqlfuncs"
)

// Censored readings reaching functions that do not handle censoring.
//
// In the readings table a censored reading keeps its limit in value and its
// mark in censored; readings_view shows it as reported ('<5'), and the value
// functions refuse such text row by row. A statement on the table itself
// would hand the limits to trend_fit, sample_acf, mann_kendall, … as if they
// were measured values. PrepareUser refuses such a statement before it runs
// when the store holds censored readings.
//
// While a statement is compiled the guard's authorizer records, per
// connection (censorWatch), whether the statement
//   - reads the stored number of a reading: readings.value other than
//     inside readings_view (directly, through a CTE or a view of the
//     user's), or readings_view.value_number;
//   - reads the mark: readings.censored other than inside readings_view, or
//     readings_view.censored — the caller then handles censoring (a filter
//     such as WHERE censored IS NULL, a CASE substitute, a mark argument);
//   - calls a function that does not handle censoring
//     (sqlfuncs.IgnoresCensoring).
//
// A statement doing the first and the third without the second is refused
// when the store holds censored readings (counted through the partial index
// readings_censored), with a *CensoredReadError. The authorizer sees a
// function before the columns of a later WHERE clause, so the decision is
// taken after the whole statement is compiled, not inside the authorizer.
// The test is on the statement as a whole: reading the mark anywhere in it
// counts as handling censoring, and a statement that reads readings.value
// and calls one of the functions on something else is refused as well.

// censorWatch records what the statement being compiled on one connection
// reads and calls.
type censorWatch struct {
	mu       sync.Mutex
	value    bool   // reads the stored number of a reading
	censored bool   // reads the censoring mark
	fn       string // first function called that does not handle censoring
}

func (w *censorWatch) reset() {
	w.mu.Lock()
	w.value, w.censored, w.fn = false, false, ""
	w.mu.Unlock()
}

// observe records one authorizer callback.
func (w *censorWatch) observe(action sqlite.AuthorizerActionCode, arg1, arg2, db, view string) {
	switch action {
	case sqlite.AuthRead:
		if db != "" && !strings.EqualFold(db, "main") {
			return
		}
		table, col := strings.ToLower(arg1), strings.ToLower(arg2)
		inView := strings.EqualFold(view, "readings_view")
		w.mu.Lock()
		switch {
		case table == "readings" && !inView && col == "value", table == "readings_view" && col == "value_number":
			w.value = true
		case table == "readings" && !inView && col == "censored", table == "readings_view" && col == "censored":
			w.censored = true
		}
		w.mu.Unlock()
	case sqlite.AuthFunction:
		if sqlfuncs.IgnoresCensoring(arg2) {
			w.mu.Lock()
			if w.fn == "" {
				w.fn = strings.ToLower(arg2)
			}
			w.mu.Unlock()
		}
	}
}

// verdict returns the function that makes the compiled statement use
// stored limits as values, or "".
func (w *censorWatch) verdict() string {
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.value && !w.censored {
		return w.fn
	}
	return ""
}

// watches maps the store's driver connections to their censorWatch.
// Entries live as long as the Store.
type watches struct {
	mu sync.Mutex
	m  map[driver.Conn]*censorWatch
}

func (ws *watches) add(c driver.Conn) *censorWatch {
	w := &censorWatch{}
	ws.mu.Lock()
	if ws.m == nil {
		ws.m = map[driver.Conn]*censorWatch{}
	}
	ws.m[c] = w
	ws.mu.Unlock()
	return w
}

func (ws *watches) of(conn *sql.Conn) (*censorWatch, error) {
	var w *censorWatch
	err := conn.Raw(func(dc any) error {
		c, ok := dc.(driver.Conn)
		if !ok {
			return nil
		}
		ws.mu.Lock()
		w = ws.m[c]
		ws.mu.Unlock()
		return nil
	})
	return w, err
}

// CensoredReadError refuses a statement that hands the stored limits of
// censored readings to a function that does not handle censoring. It
// matches ErrCensoredRead.
type CensoredReadError struct {
	Function string // the function called, lower case
	Censored int64  // censored readings in the store
}

func (e *CensoredReadError) Error() string {
	return fmt.Sprintf("%s does not handle censoring, and this statement reads readings.value without readings.censored: "+
		"the store holds %d censored readings, whose value is the reporting limit, not a measured value. "+
		"Use readings_view (a censored reading shows as text such as '<5', which %s refuses), "+
		"say what to do with censored readings (WHERE censored IS NULL leaves them out, which biases a trend upward when they are low values; "+
		"or a substitute such as CASE WHEN censored = '<' THEN value / 2 ELSE value END), "+
		"or use %s",
		e.Function, e.Censored, e.Function, strings.Join(sqlfuncs.CensoredFunctionNames(), ", "))
}

func (e *CensoredReadError) Unwrap() error { return ErrCensoredRead }

// CensoredReadings counts the censored readings of the store.
func CensoredReadings(ctx context.Context, q Querier) (int64, error) {
	var n int64
	if err := q.QueryRowContext(ctx, `SELECT count(*) FROM readings WHERE censored IS NOT NULL`).Scan(&n); err != nil {
		return 0, fmt.Errorf("count censored readings: %w", err)
	}
	return n, nil
}

// PrepareUser compiles one statement of user SQL on conn. On a store opened
// for user SQL (Options.ReadOnly or Options.UserSQL) it refuses, with a
// *CensoredReadError, a statement that reads the stored numbers of readings
// without their censoring marks and calls a function that does not handle
// censoring, when the store holds censored readings (see the top of this
// file). The caller runs and closes the returned statement.
func (s *Store) PrepareUser(ctx context.Context, conn *sql.Conn, text string) (*sql.Stmt, error) {
	w, err := s.watches.of(conn)
	if err != nil {
		return nil, err
	}
	if w != nil {
		w.reset()
	}
	st, err := conn.PrepareContext(ctx, text)
	if err != nil || w == nil {
		return st, err
	}
	fn := w.verdict()
	if fn == "" {
		return st, nil
	}
	n, err := CensoredReadings(ctx, conn)
	if err != nil {
		st.Close()
		return nil, err
	}
	if n == 0 {
		return st, nil
	}
	st.Close()
	return nil, &CensoredReadError{Function: fn, Censored: n}
}
