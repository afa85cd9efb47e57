package sqlfuncs_test

// SQL-level tests of trend_fit, trend_slope, trend_value and trend_residual
// on a real store. Expected numbers come from testdata/reference/
// trend_ref.json, written by trend_ref.py with Debian's statsmodels 0.13.5
// (the exact calls are listed in that script); tolerances 1e-9 relative,
// 1e-7 for p-values.

import (
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"trendsql/sqlfuncs/internal/trendref"
	"trendsql/store"
	"trendsql/store/storetest"
)

func openTrendStore(tb testing.TB) *store.Store {
	tb.Helper()
	return storetest.OpenScratch(tb, `CREATE TABLE obs (g INTEGER, t ANY, y ANY) STRICT`)
}

func insertObs(tb testing.TB, db *sql.DB, g int, t []any, y []any) {
	tb.Helper()
	tx, err := db.Begin()
	if err != nil {
		tb.Fatal(err)
	}
	st, err := tx.Prepare(`INSERT INTO obs (g, t, y) VALUES (?, ?, ?)`)
	if err != nil {
		tb.Fatal(err)
	}
	for i := range t {
		if _, err := st.Exec(g, t[i], y[i]); err != nil {
			tb.Fatal(err)
		}
	}
	st.Close()
	if err := tx.Commit(); err != nil {
		tb.Fatal(err)
	}
}

// The reference file's layout is described once, in trendref.
type sqlRefCase = trendref.Trend

func loadSQLRef(tb testing.TB) trendref.File {
	tb.Helper()
	f, err := trendref.Load("..")
	if err != nil {
		tb.Fatal(err)
	}
	return f
}

func specText(c sqlRefCase) string {
	parts := []string{fmt.Sprintf("degree=%d", c.Input.Degree)}
	if c.Input.Harmonics > 0 {
		// period_s is 31557600 (1y) in every seasonal reference case.
		if c.Input.PeriodS != 365.25*86400 {
			panic("reference period is not 1y")
		}
		parts = append(parts, "period=1y", fmt.Sprintf("harmonics=%d", c.Input.Harmonics))
	}
	if c.Input.HACLags >= 0 {
		parts = append(parts, fmt.Sprintf("hac_lags=%d", c.Input.HACLags))
	}
	return strings.Join(parts, ", ")
}

func closeTo(got, want, rel, abs float64) bool {
	if math.IsNaN(got) || math.IsNaN(want) {
		return false
	}
	return math.Abs(got-want) <= rel*math.Abs(want)+abs
}

// trendJSONKeys lists the documented key order of trend_fit.
var trendJSONKeys = []string{"n", "t_first", "t_last", "t_center", "degree", "period_s", "harmonics", "terms", "coef", "se",
	"slope_per_year", "slope_se", "slope_p", "r2", "sigma", "df_resid", "resid_acf1", "hac_lags", "hac_slope_se", "hac_p", "n_eff", "n_eff_p"}

func topLevelKeys(t *testing.T, text string) []string {
	t.Helper()
	dec := json.NewDecoder(strings.NewReader(text))
	var keys []string
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		t.Fatalf("not a JSON object: %s", text)
	}
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			t.Fatal(err)
		}
		keys = append(keys, tok.(string))
		var skip json.RawMessage
		if err := dec.Decode(&skip); err != nil {
			t.Fatal(err)
		}
	}
	return keys
}

// TestTrendFitSQLReference runs trend_fit on the reference series stored
// in shuffled row order and compares with statsmodels 0.13.5 (see
// trend_ref.py: OLS().fit() and fit(cov_type='HAC', cov_kwds={'maxlags': L,
// 'use_correction': True}, use_t=True)).
func TestTrendFitSQLReference(t *testing.T) {
	s := openTrendStore(t)
	ref := loadSQLRef(t)
	rng := rand.New(rand.NewPCG(1, 2))
	for g, c := range ref.Trend {
		n := len(c.Input.T)
		perm := rng.Perm(n)
		tt, yy := make([]any, n), make([]any, n)
		for i, p := range perm {
			tt[i], yy[i] = int64(c.Input.T[p]), c.Input.Y[p]
			if float64(int64(c.Input.T[p])) != c.Input.T[p] {
				tt[i] = c.Input.T[p]
			}
		}
		insertObs(t, s.DB, g, tt, yy)
		spec := specText(c)
		var text string
		var slope sql.NullFloat64
		if err := s.DB.QueryRow(`SELECT trend_fit(t, y, ?), trend_slope(t, y) FROM obs WHERE g = ?`, spec, g).Scan(&text, &slope); err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		if keys := topLevelKeys(t, text); strings.Join(keys, ",") != strings.Join(trendJSONKeys, ",") {
			t.Errorf("%s: keys %v, want %v", c.Name, keys, trendJSONKeys)
		}
		var got trendref.Trend // trend_fit's keys are the reference file's
		if err := json.Unmarshal([]byte(text), &got); err != nil {
			t.Fatalf("%s: %v in %s", c.Name, err, text)
		}
		label := c.Name + " (" + c.Source + ", spec '" + spec + "')"
		cmp := func(field string, g, w *float64, rel, abs float64) {
			switch {
			case w == nil && g == nil:
			case w == nil || g == nil:
				t.Errorf("%s: %s = %v, statsmodels %v", label, field, g, w)
			case !closeTo(*g, *w, rel, abs):
				t.Errorf("%s: %s = %.17g, statsmodels %.17g", label, field, *g, *w)
			}
		}
		if got.N != c.N || got.DFResid != c.DFResid || got.HACLags != c.HACLags {
			t.Errorf("%s: n/df/lags %d/%d/%d, want %d/%d/%d", label, got.N, got.DFResid, got.HACLags, c.N, c.DFResid, c.HACLags)
		}
		for j := range c.Coef {
			cmp(fmt.Sprintf("coef[%d]", j), &got.Coef[j], &c.Coef[j], 1e-9, 1e-9*c.SE[j])
			cmp(fmt.Sprintf("se[%d]", j), &got.SE[j], &c.SE[j], 1e-9, 0)
		}
		cmp("t_center", &got.TCenter, &c.TCenter, 1e-15, 0)
		cmp("sigma", &got.Sigma, &c.Sigma, 1e-9, 0)
		cmp("r2", got.R2, c.R2, 1e-9, 1e-12)
		cmp("resid_acf1", got.ResidACF1, c.ResidACF1, 1e-9, 1e-12)
		if c.Input.Degree >= 1 {
			cmp("slope_per_year", got.SlopePerYear, c.SlopePerYear, 1e-9, 1e-9**c.SlopeSE)
			cmp("slope_se", got.SlopeSE, c.SlopeSE, 1e-9, 0)
			cmp("slope_p", got.SlopeP, c.SlopeP, 1e-7, 0)
			cmp("hac_slope_se", got.HACSlopeSE, c.HACSlopeSE, 1e-9, 0)
			cmp("hac_p", got.HACP, c.HACP, 1e-7, 0)
			cmp("n_eff", got.NEff, c.NEff, 1e-9, 0)
			cmp("n_eff_p", got.NEffP, c.NEffP, 1e-7, 0)
		} else if got.SlopePerYear != nil || got.HACP != nil {
			t.Errorf("%s: degree 0 has slope fields", label)
		}
		if c.Input.Degree == 1 && c.Input.Harmonics == 0 {
			if !slope.Valid || !closeTo(slope.Float64, *c.SlopePerYear, 1e-9, 0) {
				t.Errorf("%s: trend_slope = %v, statsmodels %v", label, slope, *c.SlopePerYear)
			}
		}
		// trend_value of the stored model at other times = statsmodels
		// params @ design(t_eval).
		for i, tq := range c.TEval {
			var v float64
			if err := s.DB.QueryRow(`SELECT trend_value(?, ?)`, text, tq).Scan(&v); err != nil {
				t.Fatal(err)
			}
			if !closeTo(v, c.Value[i], 1e-9, 1e-9*c.Sigma) {
				t.Errorf("%s: trend_value(t=%v) = %.17g, statsmodels %.17g", label, tq, v, c.Value[i])
			}
		}
	}
}

func queryOne(t *testing.T, db *sql.DB, q string, args ...any) (any, error) {
	t.Helper()
	var v any
	err := db.QueryRow(q, args...).Scan(&v)
	return v, err
}

func TestTrendFitSQLTraps(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	base := 1.7e9
	var tt, yy []any
	for i := 0; i < 30; i++ {
		tt = append(tt, int64(base)+int64(i)*86400*7)
		yy = append(yy, 5+0.01*float64(i)+0.3*math.Sin(float64(i)))
	}
	insertObs(t, db, 1, tt, yy)

	// Reverse row order gives the identical JSON text.
	fwd, err := queryOne(t, db, `SELECT trend_fit(t, y, 'period=13w, hac_lags=3') FROM (SELECT * FROM obs WHERE g = 1 ORDER BY t)`)
	if err != nil {
		t.Fatal(err)
	}
	rev, err := queryOne(t, db, `SELECT trend_fit(t, y, 'period=13w, hac_lags=3') FROM (SELECT * FROM obs WHERE g = 1 ORDER BY t DESC)`)
	if err != nil || fwd != rev {
		t.Errorf("reverse order: %v vs %v (%v)", rev, fwd, err)
	}
	// The same times as ISO 8601 text give the same model.
	iso, err := queryOne(t, db, `SELECT trend_fit(strftime('%Y-%m-%dT%H:%M:%SZ', t, 'unixepoch'), y, 'period=13w, hac_lags=3') FROM obs WHERE g = 1`)
	if err != nil || iso != fwd {
		t.Errorf("ISO text times: %v vs %v (%v)", iso, fwd, err)
	}

	// A NaN computed by an expression arrives as NULL and is skipped: the
	// fit equals the fit without that row.
	insertObs(t, db, 2, append(append([]any{}, tt...), int64(base)-86400), append(append([]any{}, yy...), 0.0))
	withNaN, err := queryOne(t, db, `SELECT trend_fit(t, CASE WHEN t < ? THEN 0.0/0.0 ELSE y END, 'period=13w, hac_lags=3') FROM obs WHERE g = 2`, int64(base))
	if err != nil || withNaN != fwd {
		t.Errorf("NaN row: %v vs %v (%v)", withNaN, fwd, err)
	}

	// Too few rows, all NULL, empty: NULL from trend_fit and trend_slope.
	insertObs(t, db, 3, []any{int64(base)}, []any{1.0})
	insertObs(t, db, 4, []any{int64(base), int64(base) + 60}, []any{1.0, 2.0})
	insertObs(t, db, 5, []any{int64(base), int64(base) + 60, int64(base) + 120}, []any{nil, nil, nil})
	for _, q := range []string{
		`SELECT trend_fit(t, y) FROM obs WHERE g = 3`,
		`SELECT trend_fit(t, y) FROM obs WHERE g = 4`,
		`SELECT trend_fit(t, y, 'degree=1') FROM obs WHERE g = 4`,
		`SELECT trend_fit(t, y) FROM obs WHERE g = 5`,
		`SELECT trend_fit(t, y) FROM obs WHERE g = 99`,
		`SELECT trend_slope(t, y) FROM obs WHERE g = 4`,
		`SELECT trend_slope(t, y) FROM obs WHERE g = 5`,
		`SELECT trend_slope(t, y) FROM obs WHERE g = 99`,
		`SELECT trend_fit(t, y, 'degree=0') FROM obs WHERE g = 3`,
		`SELECT trend_fit(t, y, 'degree=1, period=1y') FROM obs WHERE g = 4`,
		`SELECT trend_value(NULL, 0)`,
		`SELECT trend_value(?, NULL)`,
		`SELECT trend_residual(?, 0, NULL)`,
	} {
		v, err := queryOne(t, db, q, fwd)
		if err != nil || v != nil {
			t.Errorf("%s: got %v, %v; want NULL", q, v, err)
		}
	}
	// degree 0 with n = 2: the mean, one residual df.
	if v, err := queryOne(t, db, `SELECT trend_fit(t, y, 'degree=0') ->> 'coef' FROM obs WHERE g = 4`); err != nil || v != "[1.5]" {
		t.Errorf("degree 0 mean: %v, %v", v, err)
	}

	// Constant series: slope exactly 0, r2 and resid_acf1 null.
	insertObs(t, db, 6, tt, []any{2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5})
	var slope, sigma float64
	var r2, acf1, p any
	if err := db.QueryRow(`SELECT m ->> 'slope_per_year', m ->> 'sigma', m ->> 'r2', m ->> 'resid_acf1', m ->> 'slope_p' FROM (SELECT trend_fit(t, y) AS m FROM obs WHERE g = 6)`).Scan(&slope, &sigma, &r2, &acf1, &p); err != nil {
		t.Fatal(err)
	}
	if slope != 0 || sigma != 0 || r2 != nil || acf1 != nil || p != nil {
		t.Errorf("constant: slope %v sigma %v r2 %v acf1 %v p %v", slope, sigma, r2, acf1, p)
	}

	// trend_residual = y − trend_value; residuals of a degree-1 fit sum to 0.
	var maxDiff, sumRes float64
	if err := db.QueryRow(`WITH m AS (SELECT trend_fit(t, y) AS m FROM obs WHERE g = 1)
		SELECT max(abs(trend_residual(m, t, y) - (y - trend_value(m, t)))), sum(trend_residual(m, t, y)) FROM obs, m WHERE g = 1`).Scan(&maxDiff, &sumRes); err != nil {
		t.Fatal(err)
	}
	if maxDiff != 0 || math.Abs(sumRes) > 1e-12 {
		t.Errorf("trend_residual: max diff %v, residual sum %v", maxDiff, sumRes)
	}
}

func TestTrendFitSQLErrors(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	insertObs(t, db, 1, []any{int64(1700000000), int64(1700086400), int64(1700000000), int64(1700172800)}, []any{1.0, 2.0, 3.0, 4.0})
	var tt, yy []any
	for i := 0; i < 20; i++ {
		tt = append(tt, int64(1699920000)+int64(i)*86400) // daily at 00:00 UTC
		yy = append(yy, float64(i%4))
	}
	insertObs(t, db, 2, tt, yy)
	insertObs(t, db, 3, []any{nil, int64(1)}, []any{1.0, 2.0})
	insertObs(t, db, 4, []any{int64(1), int64(2)}, []any{"abc", 2.0})
	cases := []struct{ q, want string }{
		{`SELECT trend_fit(t, y) FROM obs WHERE g = 1`, "trend_fit: two rows have the same time 2023-11-14T22:13:20Z"},
		{`SELECT trend_slope(t, y) FROM obs WHERE g = 1`, "trend_slope: two rows have the same time 2023-11-14T22:13:20Z"},
		{`SELECT trend_fit(t, y, 'period=1d') FROM obs WHERE g = 2`, "trend_fit: design matrix is rank-deficient"},
		{`SELECT trend_fit(t, y, 'degree=7') FROM obs WHERE g = 2`, "trend_fit: option degree=\"7\": want a whole number in 0..6"},
		{`SELECT trend_fit(t, y, 'degree=1, lag=3') FROM obs WHERE g = 2`, `trend_fit: unknown option "lag"`},
		{`SELECT trend_fit(t, y, 'harmonics=2') FROM obs WHERE g = 2`, "trend_fit: option harmonics needs period=<duration>"},
		{`SELECT trend_fit(t, y, 'period=3 months') FROM obs WHERE g = 2`, "trend_fit: option period: duration"},
		{`SELECT trend_fit(t, y, 'hac_lags=-1') FROM obs WHERE g = 2`, "trend_fit: option hac_lags="},
		{`SELECT trend_fit(t, y, 7) FROM obs WHERE g = 2`, "trend_fit: argument spec must be text"},
		{`SELECT trend_fit(t, y) FROM obs WHERE g = 3`, "trend_fit: argument t is NULL"},
		{`SELECT trend_fit(t, y) FROM obs WHERE g = 4`, `trend_fit: argument y: "abc" is not a number`},
		{`SELECT trend_fit(t, y, 'degree=' || ((t / 86400) % 2)) FROM obs WHERE g = 2`, "trend_fit: option arguments must be the same"},
		{`SELECT trend_fit(t, 9e999) FROM obs WHERE g = 2`, "trend_fit: argument y is +Inf"},
		{`SELECT trend_value('{"degree":1}', 0)`, `trend_value: argument model "{\"degree\":1}": model has no "t_center"`},
		{`SELECT trend_value('not json', 0)`, `trend_value: argument model "not json": not trend_fit JSON`},
		{`SELECT trend_value('{"t_center":0,"degree":1,"coef":[1]}', 0)`, "trend_value: argument model" /* coefficient count */},
		{`SELECT trend_value('{"t_center":0,"degree":0,"harmonics":1,"coef":[1,2,3]}', 0)`, `no positive "period_s"`},
		{`SELECT trend_value('{"t_center":0,"degree":1,"coef":[1,null]}', 0)`, "model coefficient 2 is null"},
		{`SELECT trend_value('{"t_center":0,"degree":0,"coef":[1]}', 'yesterday')`, "trend_value: argument t"},
		{`SELECT trend_residual('{"t_center":0,"degree":0,"coef":[1]}', 0, 'x')`, `trend_residual: argument y: "x" is not a number`},
	}
	for _, c := range cases {
		_, err := queryOne(t, db, c.q)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s:\n got error %v\nwant it to contain %q", c.q, err, c.want)
		}
	}
	if _, err := queryOne(t, db, `SELECT trend_value('{"t_center":0,"degree":1,"coef":[1]}', 0)`); err == nil || !strings.Contains(err.Error(), "model has 1 coefficients; degree 1 with 0 harmonics needs 2") {
		t.Errorf("coefficient count error: %v", err)
	}
}

// TestTrendFitSQLWindow: a sliding ROWS frame gives, row by row, the same
// text as the aggregate over the same rows, for trend_fit and trend_slope.
func TestTrendFitSQLWindow(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	rng := rand.New(rand.NewPCG(3, 4))
	var tt, yy []any
	ts := int64(1.7e9)
	for i := 0; i < 60; i++ {
		ts += 3600 * int64(1+rng.IntN(30))
		tt = append(tt, ts)
		if i%11 == 5 {
			yy = append(yy, nil) // missing values inside frames
		} else {
			yy = append(yy, 10+rng.NormFloat64())
		}
	}
	insertObs(t, db, 1, tt, yy)
	rows, err := db.Query(`SELECT t,
		trend_fit(t, y, 'degree=2, hac_lags=2') OVER w,
		trend_slope(t, y) OVER w
		FROM obs WHERE g = 1 WINDOW w AS (ORDER BY t ROWS BETWEEN 9 PRECEDING AND CURRENT ROW) ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	type row struct {
		t     int64
		fit   any
		slope any
	}
	var got []row
	for rows.Next() {
		var r row
		if err := rows.Scan(&r.t, &r.fit, &r.slope); err != nil {
			t.Fatal(err)
		}
		got = append(got, r)
	}
	rows.Close()
	if len(got) != 60 {
		t.Fatalf("%d window rows", len(got))
	}
	nonNull := 0
	for i, r := range got {
		lo := got[max(0, i-9)].t
		var fit, slope any
		if err := db.QueryRow(`SELECT trend_fit(t, y, 'degree=2, hac_lags=2'), trend_slope(t, y) FROM obs WHERE g = 1 AND t BETWEEN ? AND ?`, lo, r.t).Scan(&fit, &slope); err != nil {
			t.Fatal(err)
		}
		if fmt.Sprint(fit) != fmt.Sprint(r.fit) || fmt.Sprint(slope) != fmt.Sprint(r.slope) {
			t.Errorf("row %d: window %v / %v, aggregate %v / %v", i, r.fit, r.slope, fit, slope)
		}
		if r.fit != nil {
			nonNull++
		}
	}
	if nonNull < 50 {
		t.Errorf("only %d non-NULL window fits", nonNull)
	}
}

// TestTrendFitSQLGroups: one model per group, stored in a table, gives
// residuals in plain SQL.
func TestTrendFitSQLGroups(t *testing.T) {
	s := openTrendStore(t)
	db := s.DB
	for g := 1; g <= 3; g++ {
		var tt, yy []any
		for i := 0; i < 40; i++ {
			tt = append(tt, int64(1.7e9)+int64(i)*86400)
			yy = append(yy, float64(g)*float64(i)/365.25+math.Cos(float64(i*g)))
		}
		insertObs(t, db, g, tt, yy)
	}
	if _, err := db.Exec(`CREATE TABLE models AS SELECT g, trend_fit(t, y) AS m FROM obs GROUP BY g`); err != nil {
		t.Fatal(err)
	}
	rows, err := db.Query(`SELECT g, m ->> 'slope_per_year', (SELECT sum(y - trend_value(m, t)) FROM obs o WHERE o.g = models.g) FROM models ORDER BY g`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	for rows.Next() {
		var g int
		var slope, sum float64
		if err := rows.Scan(&g, &slope, &sum); err != nil {
			t.Fatal(err)
		}
		var want float64
		if err := db.QueryRow(`SELECT trend_slope(t, y) FROM obs WHERE g = ?`, g).Scan(&want); err != nil {
			t.Fatal(err)
		}
		if !closeTo(slope, want, 1e-12, 0) || math.Abs(sum) > 1e-9 {
			t.Errorf("group %d: slope %v vs trend_slope %v, residual sum %v", g, slope, want, sum)
		}
	}
}

// TestTrendFitDocExample checks the example in trend.go's header.
func TestTrendFitDocExample(t *testing.T) {
	s := openTrendStore(t)
	var slope, r2 float64
	if err := s.DB.QueryRow(`WITH r(t, y) AS (VALUES (0, 1.0), (31557600, 2.0), (63115200, 3.5))
		SELECT trend_slope(t, y), trend_fit(t, y) ->> 'r2' FROM r`).Scan(&slope, &r2); err != nil {
		t.Fatal(err)
	}
	// Hand computation: x = −1, 0, 1 years; ȳ = 13/6; slope = Σx(y−ȳ)/Σx²
	// = (3.5 − 1)/2 = 1.25; residuals 1/12, −2/12, 1/12 so SSR = 1/24;
	// SST = Σ(y−ȳ)² = (49 + 1 + 64)/36 = 19/6; r2 = 1 − (1/24)/(19/6) = 75/76.
	if slope != 1.25 || !closeTo(r2, 75.0/76, 1e-15, 0) {
		t.Errorf("doc example: slope %v r2 %.17g; want 1.25, %.17g", slope, r2, 75.0/76)
	}
	rows, err := s.DB.Query(`WITH r(t, y) AS (VALUES (0, 1.0), (31557600, 2.0), (63115200, 3.5)),
	     m AS (SELECT trend_fit(t, y) AS m FROM r)
	SELECT t, round(trend_residual(m, t, y), 6), round(trend_value(m, '1972-01-01'), 6) FROM r, m ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	// Residuals 1/12, −2/12, 1/12; value at 1972-01-01 (t = 63072000 s):
	// 13/6 + 1.25·(63072000 − 31557600)/31557600.
	want := [][3]float64{{0, 0.083333, 3.414956}, {31557600, -0.166667, 3.414956}, {63115200, 0.083333, 3.414956}}
	i := 0
	for rows.Next() {
		var got [3]float64
		if err := rows.Scan(&got[0], &got[1], &got[2]); err != nil {
			t.Fatal(err)
		}
		if i >= len(want) || got != want[i] {
			t.Errorf("doc example row %d: %v", i, got)
		}
		i++
	}
	if v := 13.0/6 + 1.25*(63072000-31557600)/31557600.0; math.Abs(v-3.414956) > 5e-7 {
		t.Errorf("hand value %v", v)
	}
}

// ----- benchmarks -----

// trendBenchStore returns a store in b.TempDir() whose obs table holds n
// hourly rows in group 1.
func trendBenchStore(b *testing.B, n int) *store.Store {
	s := openTrendStore(b)
	var tt, yy []any
	rng := rand.New(rand.NewPCG(5, 6))
	for i := 0; i < n; i++ {
		tt = append(tt, int64(1.6e9)+int64(i)*3600)
		yy = append(yy, 100+float64(i)*1e-4+rng.NormFloat64())
	}
	insertObs(b, s.DB, 1, tt, yy)
	return s
}

func timeQuery(b *testing.B, db *sql.DB, q string) float64 {
	b.Helper()
	start := time.Now()
	var v any
	if err := db.QueryRow(q).Scan(&v); err != nil {
		b.Fatal(err)
	}
	return time.Since(start).Seconds()
}

// benchTrendQuery times q and avg(y) over the same rows alternately and
// reports x_avg (q's time over avg's) and ns/row.
func benchTrendQuery(b *testing.B, s *store.Store, n int, q string) {
	timeQuery(b, s.DB, q) // warm up
	b.ResetTimer()
	var tf, ta float64
	for i := 0; i < b.N; i++ {
		ta += timeQuery(b, s.DB, `SELECT avg(y) FROM obs WHERE g = 1`)
		tf += timeQuery(b, s.DB, q)
	}
	b.ReportMetric(tf/ta, "x_avg")
	b.ReportMetric(tf/float64(b.N)/float64(n)*1e9, "ns/row")
}

// BenchmarkTrendSlopeStep: trend_slope through SQL, per row, relative to
// avg(y) over the same rows in the same process.
func BenchmarkTrendSlopeStep(b *testing.B) {
	for _, n := range []int{1000, 10000, 100000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			s := trendBenchStore(b, n)
			b.Run("sql", func(b *testing.B) {
				benchTrendQuery(b, s, n, `SELECT trend_slope(t, y) FROM obs WHERE g = 1`)
			})
		})
	}
}

// BenchmarkTrendFit: trend_fit (linear; quadratic with two annual
// harmonics) through SQL relative to avg(y). The kernel alone is
// BenchmarkFitTrendKernel in package stats.
func BenchmarkTrendFit(b *testing.B) {
	for _, n := range []int{1000, 10000, 100000} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			s := trendBenchStore(b, n)
			for _, spec := range []string{"degree=1", "degree=2, period=1y, harmonics=2"} {
				b.Run(strings.ReplaceAll(spec, " ", ""), func(b *testing.B) {
					benchTrendQuery(b, s, n, `SELECT trend_fit(t, y, '`+spec+`') FROM obs WHERE g = 1`)
				})
			}
		})
	}
}
