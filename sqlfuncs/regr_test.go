package sqlfuncs_test

// Tests of the SQL:2003 regr_* aggregates. Expected values: the "regr"
// cases of testdata/reference/trend_ref.json, computed by trend_ref.py in
// exact rational arithmetic (Python 3.11 fractions.Fraction on the float64
// inputs, rounded once at the end) with x = unix seconds near 1.7e9, plus
// statsmodels 0.13.5 OLS(y, add_constant(x)).fit().params[1] as a second
// source for the slope. Tolerance 1e-9 relative. NULL rules: ISO/IEC
// 9075-2:2003 §10.9 (as summarised in regr.go's header).

import (
	"database/sql"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

var regrFuncs = []string{"regr_count", "regr_avgx", "regr_avgy", "regr_sxx", "regr_syy", "regr_sxy",
	"regr_slope", "regr_intercept", "regr_r2", "covar_pop", "covar_samp", "corr"}

func regrSelect(where string) string {
	var cols []string
	for _, f := range regrFuncs {
		cols = append(cols, f+"(y, t)")
	}
	return "SELECT " + strings.Join(cols, ", ") + " FROM obs WHERE " + where
}

func scanRegr(t *testing.T, row *sql.Row) []any {
	t.Helper()
	vals := make([]any, len(regrFuncs))
	ptrs := make([]any, len(vals))
	for i := range vals {
		ptrs[i] = &vals[i]
	}
	if err := row.Scan(ptrs...); err != nil {
		t.Fatal(err)
	}
	return vals
}

func TestRegrExactReference(t *testing.T) {
	s := openTrendStore(t)
	ref := loadSQLRef(t)
	if len(ref.Regr) == 0 {
		t.Fatal("no regr reference cases")
	}
	rng := rand.New(rand.NewPCG(8, 9))
	for g, c := range ref.Regr {
		n := len(c.X)
		tt, yy := make([]any, n), make([]any, n)
		for i, p := range rng.Perm(n) {
			tt[i], yy[i] = c.X[p], c.Y[p]
		}
		// Rows with a NULL in either argument are ignored.
		tt = append(tt, 1.7e9+5, nil)
		yy = append(yy, nil, 3.0)
		insertObs(t, s.DB, g, tt, yy)
		got := scanRegr(t, s.DB.QueryRow(regrSelect(fmt.Sprintf("g = %d", g))))
		want := []float64{float64(c.Count), c.Avgx, c.Avgy, c.Sxx, c.Syy, c.Sxy, c.Slope, c.Intercept, c.R2, c.CovarPop, c.CovarSamp, c.Corr}
		if got[0] != c.Count {
			t.Errorf("n=%d: regr_count = %v, want %d", n, got[0], c.Count)
		}
		for i := 1; i < len(regrFuncs); i++ {
			v, ok := got[i].(float64)
			if !ok || !closeTo(v, want[i], 1e-9, 0) {
				t.Errorf("n=%d: %s = %v, exact %.17g", n, regrFuncs[i], got[i], want[i])
			}
		}
		if v, _ := got[6].(float64); !closeTo(v, c.SMSlope, 1e-9, 0) {
			t.Errorf("n=%d: regr_slope = %v, statsmodels %.17g", n, v, c.SMSlope)
		}
	}
}

func TestRegrNullRules(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	insertObs(t, db, 1, []any{1.7e9, nil}, []any{nil, 2.0})                       // no complete pair
	insertObs(t, db, 2, []any{1.7e9}, []any{4.0})                                 // one pair
	insertObs(t, db, 3, []any{1.7e9, 1.7e9 + 1, 1.7e9 + 3}, []any{2.0, 2.0, 2.0}) // constant y
	insertObs(t, db, 4, []any{1.7e9, 1.7e9, 1.7e9}, []any{1.0, 2.0, 4.0})         // constant x
	cases := []struct {
		g    int
		want []any
	}{
		// SQL:2003: empty set → regr_count 0, all others NULL.
		{1, []any{int64(0), nil, nil, nil, nil, nil, nil, nil, nil, nil, nil, nil}},
		// One pair: means defined, sums 0, slope/intercept/r2/corr NULL
		// (Sxx = 0), covar_pop 0, covar_samp NULL (n − 1 = 0).
		{2, []any{int64(1), 1.7e9, 4.0, 0.0, 0.0, 0.0, nil, nil, nil, 0.0, nil, nil}},
		// Constant y: slope 0, intercept ȳ, r2 = 1 (Syy = 0 < Sxx), corr NULL.
		{3, []any{int64(3), 1.7e9 + 4.0/3, 2.0, 14.0 / 3, 0.0, 0.0, 0.0, 2.0, 1.0, 0.0, 0.0, nil}},
		// Constant x: slope, intercept, r2, corr NULL.
		{4, []any{int64(3), 1.7e9, 7.0 / 3, 0.0, 14.0 / 3, 0.0, nil, nil, nil, 0.0, 0.0, nil}},
	}
	for _, c := range cases {
		got := scanRegr(t, db.QueryRow(regrSelect(fmt.Sprintf("g = %d", c.g))))
		for i := range c.want {
			w, g := c.want[i], got[i]
			wf, wok := w.(float64)
			gf, gok := g.(float64)
			if wok && gok && closeTo(gf, wf, 1e-12, 1e-12) {
				continue
			}
			if fmt.Sprint(g) != fmt.Sprint(w) {
				t.Errorf("group %d: %s = %v, want %v", c.g, regrFuncs[i], g, w)
			}
		}
	}
	if _, err := queryOne(t, db, `SELECT regr_slope('abc', 1)`); err == nil || !strings.Contains(err.Error(), `regr_slope: argument y: "abc" is not a number`) {
		t.Errorf("non-numeric y: %v", err)
	}
	if _, err := queryOne(t, db, `SELECT corr(1, 9e999)`); err == nil || !strings.Contains(err.Error(), "corr: argument x is +Inf") {
		t.Errorf("infinite x: %v", err)
	}
}

// TestRegrSlidingWindow: every regr_* over a sliding ROWS frame equals the
// aggregate recomputed over the same rows (x near 1.7e9, NULLs inside the
// frames), to 1e-9 relative (plus 1e-9·scale absolute for sums that can be
// near zero, scale = the recomputed √(Sxx·Syy) or the mean magnitude).
func TestRegrSlidingWindow(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	rng := rand.New(rand.NewPCG(10, 11))
	var tt, yy []any
	x := 1.7e9
	for i := 0; i < 400; i++ {
		x += float64(1+rng.IntN(600)) + 0.5
		tt = append(tt, x)
		if i%17 == 3 {
			yy = append(yy, nil)
		} else {
			yy = append(yy, 50+1e-5*(x-1.7e9)+rng.NormFloat64())
		}
	}
	insertObs(t, db, 1, tt, yy)
	var cols []string
	for _, f := range regrFuncs {
		cols = append(cols, f+"(y, t) OVER w")
	}
	rows, err := db.Query(`SELECT t, ` + strings.Join(cols, ", ") + ` FROM obs WHERE g = 1 WINDOW w AS (ORDER BY t ROWS BETWEEN 24 PRECEDING AND CURRENT ROW) ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	var ts []float64
	var wins [][]any
	for rows.Next() {
		vals := make([]any, len(regrFuncs)+1)
		ptrs := make([]any, len(vals))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		if err := rows.Scan(ptrs...); err != nil {
			t.Fatal(err)
		}
		ts = append(ts, vals[0].(float64))
		wins = append(wins, vals[1:])
	}
	rows.Close()
	for i := range wins {
		lo := ts[max(0, i-24)]
		want := scanRegr(t, db.QueryRow(regrSelect(fmt.Sprintf("g = 1 AND t BETWEEN %v AND %v", lo, ts[i]))))
		sxx, _ := want[3].(float64)
		syy, _ := want[4].(float64)
		for j, f := range regrFuncs {
			wf, wok := want[j].(float64)
			gf, gok := wins[i][j].(float64)
			if !wok || !gok {
				if fmt.Sprint(want[j]) != fmt.Sprint(wins[i][j]) {
					t.Errorf("row %d %s: window %v, recomputed %v", i, f, wins[i][j], want[j])
				}
				continue
			}
			abs := 0.0
			switch f {
			case "regr_sxy", "covar_pop", "covar_samp":
				abs = 1e-9 * math.Sqrt(sxx*syy)
			case "regr_avgx", "regr_avgy":
				abs = 0
			}
			if !closeTo(gf, wf, 1e-9, abs) {
				t.Errorf("row %d %s: window %.17g, recomputed %.17g", i, f, gf, wf)
			}
		}
	}
}

// TestRegrSlidingWindowLong slides a 6-row frame over 3000 rows whose x
// drifts far from the first row (shift) while the frame's own spread stays
// small, with runs of equal x so that some frames have Sxx = 0 exactly
// (slope NULL by SQL:2003). Every frame must equal the recomputed
// aggregate to 1e-9 relative, and NULL exactly where the recomputation is.
func TestRegrSlidingWindowLong(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	rng := rand.New(rand.NewPCG(12, 13))
	var xs, ys []any
	x := 1.7e9
	for i := 0; i < 3000; i++ {
		if i%40 >= 10 { // 10 equal x in a row every 40 rows
			x += 3600 * float64(1+rng.IntN(48))
		}
		xs = append(xs, x)
		ys = append(ys, 7+1e-6*(x-1.7e9)+0.01*rng.NormFloat64())
	}
	tx, err := db.Begin()
	if err != nil {
		t.Fatal(err)
	}
	for i := range xs {
		if _, err := tx.Exec(`INSERT INTO obs (g, t, y) VALUES (?, ?, ?)`, i, xs[i], ys[i]); err != nil {
			t.Fatal(err)
		}
	}
	if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
	q := `SELECT g, regr_sxx(y, t) OVER w, regr_slope(y, t) OVER w, corr(y, t) OVER w, regr_avgx(y, t) OVER w
		FROM obs WINDOW w AS (ORDER BY g ROWS BETWEEN 5 PRECEDING AND CURRENT ROW) ORDER BY g`
	rows, err := db.Query(q)
	if err != nil {
		t.Fatal(err)
	}
	type win struct {
		g                    int
		sxx, slope, cor, avg any
	}
	var got []win
	for rows.Next() {
		var w win
		if err := rows.Scan(&w.g, &w.sxx, &w.slope, &w.cor, &w.avg); err != nil {
			t.Fatal(err)
		}
		got = append(got, w)
	}
	rows.Close()
	nulls := 0
	for _, w := range got {
		var r win
		if err := db.QueryRow(`SELECT regr_sxx(y, t), regr_slope(y, t), corr(y, t), regr_avgx(y, t) FROM obs WHERE g BETWEEN ? AND ?`, max(0, w.g-5), w.g).Scan(&r.sxx, &r.slope, &r.cor, &r.avg); err != nil {
			t.Fatal(err)
		}
		for k, pair := range [][2]any{{w.sxx, r.sxx}, {w.slope, r.slope}, {w.cor, r.cor}, {w.avg, r.avg}} {
			gv, gok := pair[0].(float64)
			rv, rok := pair[1].(float64)
			if gok != rok || (gok && !closeTo(gv, rv, 1e-9, 0)) {
				t.Errorf("frame ending %d, column %d: window %v, recomputed %v", w.g, k, pair[0], pair[1])
			}
		}
		if r.slope == nil {
			nulls++
		}
	}
	if nulls < 100 {
		t.Errorf("only %d frames with constant x; the test data should have many", nulls)
	}
}
