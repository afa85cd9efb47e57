package sqlfuncs_test

// SQL-level tests of mann_kendall, sen_slope, sen_slope_per_year,
// seasonal_kendall, pettitt, cross_corr and cross_correlogram on a real
// store. Expected numbers: testdata/reference/kendall_ref.json
// (kendall_ref.py: scipy 1.10.1 kendalltau / theilslopes /
// mstats.kendalltau_seasonal, statsmodels 0.13.5 ccf, numpy definitions) and
// kendall_ref_r.json (kendall_ref.R: R 4.2.2 cor.test(method = "kendall",
// exact = FALSE, continuity = TRUE) and ccf(na.action = na.pass)).
// Tolerances: 1e-9 relative, 1e-7 relative for p-values.

import (
	"bytes"
	"database/sql"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"trendsql/sqlfuncs/internal/kendallref"
	"trendsql/store/storetest"
)

func openKendallStore(tb testing.TB) *sql.DB {
	tb.Helper()
	return storetest.OpenScratch(tb, `CREATE TABLE kobs (g TEXT, t ANY, x ANY, y ANY) STRICT`).DB
}

// insertK inserts one group in a shuffled order (functions must sort).
func insertK(tb testing.TB, db *sql.DB, g string, t []float64, x, y []any) {
	tb.Helper()
	tx, err := db.Begin()
	if err != nil {
		tb.Fatal(err)
	}
	st, err := tx.Prepare(`INSERT INTO kobs (g, t, x, y) VALUES (?, ?, ?, ?)`)
	if err != nil {
		tb.Fatal(err)
	}
	perm := rand.New(rand.NewPCG(uint64(len(t)), 3)).Perm(len(t))
	for _, i := range perm {
		var xv any
		if x != nil {
			xv = x[i]
		}
		if _, err := st.Exec(g, t[i], xv, y[i]); err != nil {
			tb.Fatal(err)
		}
	}
	st.Close()
	if err := tx.Commit(); err != nil {
		tb.Fatal(err)
	}
}

func anys(v []float64) []any {
	out := make([]any, len(v))
	for i, x := range v {
		out[i] = x
	}
	return out
}

func kClose(got, want, rel float64) bool {
	return got == want || math.Abs(got-want) <= rel*math.Abs(want)
}

type kRefCase struct{ t, y []float64 }

func kRefPath(name string) string { return filepath.Join("..", "testdata", "reference", name) }

// loadKRef reads the reference files through kendallref (shared with the
// stats package's tests) and returns the input series by name.
func loadKRef(t *testing.T) (kendallref.Py, kendallref.R, map[string]kRefCase) {
	t.Helper()
	py, r, list, err := kendallref.Load(kRefPath(""))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]kRefCase{}
	for _, c := range list {
		out[c.Name] = kRefCase{t: c.T, y: c.Y}
	}
	return py, r, out
}

func loadKCases(t *testing.T) map[string]kRefCase {
	_, _, cases := loadKRef(t)
	return cases
}

func jsonMap(t *testing.T, v any) map[string]any {
	t.Helper()
	s, ok := v.(string)
	if !ok {
		t.Fatalf("want JSON text, got %T %v", v, v)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(s), &m); err != nil {
		t.Fatalf("bad JSON %q: %v", s, err)
	}
	return m
}

func num(t *testing.T, m map[string]any, k string) float64 {
	t.Helper()
	v, ok := m[k]
	if !ok {
		t.Fatalf("key %q missing in %v", k, m)
	}
	if v == nil {
		return math.NaN()
	}
	return v.(float64)
}

func queryVal(t *testing.T, db *sql.DB, q string, args ...any) any {
	t.Helper()
	var v any
	if err := db.QueryRow(q, args...).Scan(&v); err != nil {
		t.Fatalf("%s: %v", q, err)
	}
	return v
}

func TestKendallSQLReference(t *testing.T) {
	db := openKendallStore(t)
	cases := loadKCases(t)
	for name, c := range cases {
		insertK(t, db, name, c.t, nil, anys(c.y))
	}
	py, r, _ := loadKRef(t)
	if len(py.MK) < 14 || len(py.Sen) < 39 || len(r.Cases) < 12 {
		t.Fatal("reference files look truncated")
	}
	for _, ref := range py.MK {
		m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = ?`, ref.Name))
		// numpy O(n²) definition (kendall_ref.py)
		if num(t, m, "s") != float64(ref.S) || !kClose(num(t, m, "var_s"), ref.VarS, 1e-12) {
			t.Errorf("%s: %v; reference S=%v var=%v", ref.Name, m, ref.S, ref.VarS)
		}
		// scipy 1.10.1 kendalltau(t, y) tau-b
		if ref.Tau != nil && !kClose(num(t, m, "tau"), *ref.Tau, 1e-9) {
			t.Errorf("%s: tau %v, scipy %v", ref.Name, m["tau"], *ref.Tau)
		}
		if ref.Tau == nil && m["tau"] != nil {
			t.Errorf("%s: tau should be null, got %v", ref.Name, m["tau"])
		}
	}
	for _, ref := range r.Cases {
		m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = ?`, ref.Name))
		// R 4.2.2 cor.test(t, y, method="kendall", exact=FALSE, continuity=TRUE)
		if z := num(t, m, "z"); !kClose(z, ref.Z, 1e-9) && math.Abs(z-ref.Z) > 1e-12 {
			t.Errorf("%s: z %v, R %v", ref.Name, z, ref.Z)
		}
		if p := num(t, m, "p"); !kClose(p, ref.P, 1e-7) {
			t.Errorf("%s: p %v, R %v", ref.Name, p, ref.P)
		}
	}
	for _, ref := range py.Sen {
		m := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y, ?) FROM kobs WHERE g = ?`, ref.Confidence, ref.Name))
		// scipy 1.10.1 theilslopes(y, x=t/31557600, alpha=confidence)
		for k, want := range map[string]float64{"slope_per_year": ref.SlopePerYear, "lower": ref.Lower, "upper": ref.Upper} {
			if got := num(t, m, k); !kClose(got, want, 1e-9) && math.Abs(got-want) > 1e-12 {
				t.Errorf("%s conf %v: %s = %v, scipy %v", ref.Name, ref.Confidence, k, got, want)
			}
		}
		scale := math.Abs(num(t, m, "median_y")) + math.Abs(ref.SlopePerYear*1.6e9/31557600)
		if got := num(t, m, "intercept"); math.Abs(got-ref.Intercept) > 1e-9*scale {
			t.Errorf("%s: intercept %v, scipy %v", ref.Name, got, ref.Intercept)
		}
		if ref.Confidence == 0.95 {
			s := queryVal(t, db, `SELECT sen_slope_per_year(t, y) FROM kobs WHERE g = ?`, ref.Name).(float64)
			if !kClose(s, ref.SlopePerYear, 1e-9) && math.Abs(s-ref.SlopePerYear) > 1e-12 {
				t.Errorf("%s: sen_slope_per_year %v, scipy %v", ref.Name, s, ref.SlopePerYear)
			}
		}
	}
	for _, ref := range py.HamedRao {
		// max_lag = n − 1 is the default (every lag); a cap keeps fewer lags
		n := len(cases[ref.Name].t)
		all := queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao, max_lag=`+strconv.Itoa(n-1)+`') FROM kobs WHERE g = ?`, ref.Name)
		def := queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao') FROM kobs WHERE g = ?`, ref.Name)
		if all != def {
			t.Errorf("%s: max_lag=n−1 %v differs from the default %v", ref.Name, all, def)
		}
		capped := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao, max_lag=1') FROM kobs WHERE g = ?`, ref.Name))
		if num(t, capped, "acf_max_lag") != 1 || num(t, capped, "acf_lags_used") > 1 {
			t.Errorf("%s: max_lag=1 gave %v", ref.Name, capped)
		}
		m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao') FROM kobs WHERE g = ?`, ref.Name))
		// kendall_ref.py: published formula with scipy/statsmodels building blocks
		if !kClose(num(t, m, "correction_factor"), ref.Factor, 1e-9) || !kClose(num(t, m, "p_corrected"), ref.PCorrected, 1e-7) {
			t.Errorf("%s: %v; reference factor %v p %v", ref.Name, m, ref.Factor, ref.PCorrected)
		}
	}
}

func TestKendallSQLSeasonalPettittCross(t *testing.T) {
	db := openKendallStore(t)
	py, _, _ := loadKRef(t)
	for _, ref := range py.Seasonal {
		insertK(t, db, ref.Name, ref.T, nil, anys(ref.Y))
		m := jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, '1y', ?) FROM kobs WHERE g = ?`, ref.Seasons, ref.Name))
		// scipy 1.10.1 mstats.kendalltau_seasonal: global p (indep); numpy S and slope
		if num(t, m, "s") != float64(ref.S) || !kClose(num(t, m, "p"), ref.PGlobalIndep, 1e-7) || !kClose(num(t, m, "slope_per_year"), ref.SlopePerYear, 1e-9) {
			t.Errorf("%s: %v; reference S=%v p=%v slope=%v", ref.Name, m, ref.S, ref.PGlobalIndep, ref.SlopePerYear)
		}
		// scipy 1.10.1 mstats.kendalltau_seasonal "global p-value (dep)"
		if !kClose(num(t, m, "p_dependent"), ref.PGlobalDep, 1e-7) || m["dependent_note"] != nil {
			t.Errorf("%s: p_dependent %v (%v), mstats %v", ref.Name, m["p_dependent"], m["dependent_note"], ref.PGlobalDep)
		}
	}
	for _, ref := range py.Pettitt {
		insertK(t, db, ref.Name, ref.T, nil, anys(ref.Y))
		m := jsonMap(t, queryVal(t, db, `SELECT pettitt(t, y) FROM kobs WHERE g = ?`, ref.Name))
		// numpy double-sum definition (kendall_ref.py)
		if num(t, m, "k") != float64(ref.K) || num(t, m, "u") != ref.U || !kClose(num(t, m, "p"), ref.P, 1e-9) {
			t.Errorf("%s: %v; reference k=%v u=%v p=%v", ref.Name, m, ref.K, ref.U, ref.P)
		}
		k := ref.K
		if m["t_change"] != fmtUTC(ref.T[k-1]) || m["t_after"] != fmtUTC(ref.T[k]) {
			t.Errorf("%s: t_change %v t_after %v", ref.Name, m["t_change"], m["t_after"])
		}
	}
	for _, ref := range py.CCF {
		insertK(t, db, ref.Name, ref.T, anys(ref.X), anys(ref.Y))
		for h := -ref.MaxLag; h <= ref.MaxLag; h++ {
			want := ref.CcfYX[max(h, 0)]
			if h < 0 {
				want = ref.CcfXY[-h]
			}
			// statsmodels 0.13.5 ccf(y, x, adjusted=False)[h] / ccf(x, y, adjusted=False)[−h]
			got := queryVal(t, db, `SELECT cross_corr(t, x, y, ?) FROM kobs WHERE g = ?`, h, ref.Name).(float64)
			if !kClose(got, want, 1e-9) {
				t.Errorf("%s lag %d: %v, statsmodels %v", ref.Name, h, got, want)
			}
		}
		m := jsonMap(t, queryVal(t, db, `SELECT cross_correlogram(t, x, y, ?) FROM kobs WHERE g = ?`, ref.MaxLag, ref.Name))
		lags := m["lags"].([]any)
		if len(lags) != 2*ref.MaxLag+1 || m["step"] != "1d" || num(t, m, "missing_slots") != 0 {
			t.Fatalf("%s: correlogram %v", ref.Name, m)
		}
		for _, l := range lags {
			lm := l.(map[string]any)
			h := int(lm["lag"].(float64))
			want := ref.CcfYX[max(h, 0)]
			if h < 0 {
				want = ref.CcfXY[-h]
			}
			if !kClose(lm["ccf"].(float64), want, 1e-9) {
				t.Errorf("%s correlogram lag %d: %v, statsmodels %v", ref.Name, h, lm["ccf"], want)
			}
		}
	}
}

func fmtUTC(t float64) string {
	return time.Unix(int64(t), 0).UTC().Format("2006-01-02T15:04:05Z")
}

func TestKendallSQLTraps(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	// ties in time → error naming the function and the time
	insertK(t, db, "tied", []float64{1.6e9, 1.6e9 + day, 1.6e9 + day}, nil, anys([]float64{1, 2, 3}))
	for _, f := range []string{"mann_kendall(t, y)", "sen_slope(t, y)", "sen_slope_per_year(t, y)", "seasonal_kendall(t, y, '1y')", "pettitt(t, y)"} {
		var v any
		err := db.QueryRow(`SELECT ` + f + ` FROM kobs WHERE g = 'tied'`).Scan(&v)
		name := f[:strings.Index(f, "(")]
		if err == nil || !strings.Contains(err.Error(), name) || !strings.Contains(err.Error(), "same time") || !strings.Contains(err.Error(), "2020-09-14") {
			t.Errorf("%s on tied times: err = %v", f, err)
		}
	}
	// NULL values skipped; fewer than 2 rows → NULL
	if _, err := db.Exec(`INSERT INTO kobs VALUES ('one', 1600000000, NULL, 5), ('one', 1600086400, NULL, NULL)`); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"mann_kendall(t, y)", "sen_slope(t, y)", "sen_slope_per_year(t, y)", "seasonal_kendall(t, y, '1y')", "pettitt(t, y)", "cross_corr(t, y, y, 0)"} {
		if v := queryVal(t, db, `SELECT `+f+` FROM kobs WHERE g = 'one'`); v != nil && !strings.HasPrefix(f, "cross") {
			t.Errorf("%s with one usable row = %v, want NULL", f, v)
		}
		if v := queryVal(t, db, `SELECT `+f+` FROM kobs WHERE g = 'nothing'`); v != nil {
			t.Errorf("%s with no rows = %v, want NULL", f, v)
		}
	}
	// all equal
	insertK(t, db, "flat", []float64{1.6e9, 1.6e9 + day, 1.6e9 + 2*day, 1.6e9 + 5*day}, nil, anys([]float64{2, 2, 2, 2}))
	m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao') FROM kobs WHERE g = 'flat'`))
	if m["s"].(float64) != 0 || m["var_s"].(float64) != 0 || m["z"] != nil || m["p"] != nil || m["tau"] != nil || m["p_corrected"] != nil {
		t.Errorf("all equal: %v", m)
	}
	m = jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y) FROM kobs WHERE g = 'flat'`))
	if m["slope_per_year"].(float64) != 0 || m["lower"].(float64) != 0 || m["upper"].(float64) != 0 {
		t.Errorf("all equal Sen: %v", m)
	}
	if v := queryVal(t, db, `SELECT cross_corr(t, y, y, 0) FROM kobs WHERE g = 'flat'`); v != nil {
		t.Errorf("constant cross_corr = %v, want NULL", v)
	}
	// the documented example of mann_kendall (kendall.go header)
	insertK(t, db, "doc", []float64{1.6e9, 1.6e9 + day, 1.6e9 + 2*day, 1.6e9 + 3*day, 1.6e9 + 4*day}, nil, anys([]float64{1, 2, 3, 5, 4}))
	got := queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = 'doc'`).(string)
	if !strings.HasPrefix(got, `{"n":5,"s":8,"var_s":16.666666666666668,"z":1.7146428199482247,"p":0.0864107`) || !strings.HasSuffix(got, `"tau":0.8,"concordant":9,"discordant":1,"tied_pairs":0,"tie_groups":0}`) {
		t.Errorf("doc example: %s", got)
	}
	// bad options / arguments → errors naming the function
	for _, q := range []string{
		`SELECT mann_kendall(t, y, 'correct=bogus') FROM kobs WHERE g = 'doc'`,
		`SELECT mann_kendall(t, y, 'max_lag=3') FROM kobs WHERE g = 'doc'`,
		`SELECT sen_slope(t, y, 1.5) FROM kobs WHERE g = 'doc'`,
		`SELECT sen_slope(t, y, 'abc') FROM kobs WHERE g = 'doc'`,
		`SELECT seasonal_kendall(t, y, '-1y') FROM kobs WHERE g = 'doc'`,
		`SELECT seasonal_kendall(t, y, 'calendar-month', 4) FROM kobs WHERE g = 'doc'`,
		`SELECT seasonal_kendall(t, y, '1y', 0) FROM kobs WHERE g = 'doc'`,
		`SELECT cross_corr(t, y, y, 1, 'step=0d') FROM kobs WHERE g = 'doc'`,
		`SELECT pettitt(t, y, 1) FROM kobs WHERE g = 'doc'`,
	} {
		var v any
		err := db.QueryRow(q).Scan(&v)
		name := strings.TrimPrefix(q, "SELECT ")
		name = name[:strings.Index(name, "(")]
		if err == nil || !strings.Contains(err.Error(), name) {
			t.Errorf("%s: err = %v, want an error naming %s", q, err, name)
		}
	}
	// seasonal with a season holding one value: season 1 of 2 (half-years) gets one value
	const y = 31557600.0
	insertK(t, db, "season1", []float64{0.1 * y, 1.1 * y, 2.1 * y, 2.6 * y}, nil, anys([]float64{1, 2, 4, 9}))
	m = jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, '1y', 2) FROM kobs WHERE g = 'season1'`))
	if m["s"].(float64) != 3 || m["seasons_used"].(float64) != 1 || !kClose(m["var_s"].(float64), 3*2*11/18.0, 1e-15) {
		t.Errorf("season with one value: %v", m)
	}
	// calendar months
	m = jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, 'calendar-month') FROM kobs WHERE g = 'season1'`))
	if m["season_definition"] != "calendar-month" || m["period_s"] != nil {
		t.Errorf("calendar-month: %v", m)
	}
	// several values per (cycle, season): the dependence fields are null with a note
	m = jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, '10y', 2) FROM kobs WHERE g = 'season1'`))
	if m["p_dependent"] != nil || !strings.Contains(m["dependent_note"].(string), "more than one value") || m["p"] == nil {
		t.Errorf("several values per cell: %v", m)
	}
}

func TestKendallSQLWindow(t *testing.T) {
	// As a window function each frame equals the aggregate over the same rows.
	db := openKendallStore(t)
	n := 40
	tt := make([]float64, n)
	yy := make([]float64, n)
	rng := rand.New(rand.NewPCG(5, 6))
	for i := range tt {
		tt[i] = 1.6e9 + float64(i)*86400
		yy[i] = math.Round(rng.NormFloat64()*4) + float64(i)*0.1
	}
	insertK(t, db, "w", tt, nil, anys(yy))
	rows, err := db.Query(`SELECT t, sen_slope_per_year(t, y) OVER w, mann_kendall(t, y) OVER w
		FROM kobs WHERE g = 'w' WINDOW w AS (ORDER BY t ROWS BETWEEN 9 PRECEDING AND CURRENT ROW) ORDER BY t`)
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	i := 0
	for rows.Next() {
		var tv float64
		var s sql.NullFloat64
		var mk sql.NullString
		if err := rows.Scan(&tv, &s, &mk); err != nil {
			t.Fatal(err)
		}
		lo := max(0, i-9)
		wantS := queryVal(t, db, `SELECT sen_slope_per_year(t, y) FROM kobs WHERE g = 'w' AND t BETWEEN ? AND ?`, tt[lo], tt[i])
		wantMK := queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = 'w' AND t BETWEEN ? AND ?`, tt[lo], tt[i])
		if i == 0 {
			if s.Valid || mk.Valid {
				t.Errorf("frame of one row: %v %v", s, mk)
			}
		} else if s.Float64 != wantS.(float64) || mk.String != wantMK.(string) {
			t.Errorf("row %d: window %v %v, aggregate %v %v", i, s.Float64, mk.String, wantS, wantMK)
		}
		i++
	}
	if i != n {
		t.Fatalf("%d rows", i)
	}
}

func TestKendallSQLLongSeries(t *testing.T) {
	// n = 100,000 through SQL: O(n²) would not finish; run once, no timing.
	if testing.Short() {
		t.Skip("long series skipped in -short")
	}
	db := openKendallStore(t)
	n := 100000
	tt := make([]float64, n)
	yy := make([]float64, n)
	for i := range tt {
		tt[i] = 1.5e9 + float64(i)*3600
		yy[i] = math.Round(math.Sin(float64(i)/500)*100)/10 + float64(i)*1e-4
	}
	insertK(t, db, "long", tt, nil, anys(yy))
	m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao') FROM kobs WHERE g = 'long'`))
	if num(t, m, "n") != float64(n) || num(t, m, "s") <= 0 {
		t.Errorf("long MK: %v", m)
	}
	m = jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y) FROM kobs WHERE g = 'long'`))
	if !(num(t, m, "lower") <= num(t, m, "slope_per_year") && num(t, m, "slope_per_year") <= num(t, m, "upper")) || num(t, m, "n_pairs") != float64(n)*float64(n-1)/2 {
		t.Errorf("long Sen: %v", m)
	}
}

// TestKendallLiveScipy draws random series (ties, irregular times, several
// sizes), runs them through SQL and through /usr/bin/python3 scipy 1.10.1
// (kendalltau, theilslopes) and compares. Skips when scipy is missing
// locally; fails when CI is set.
func TestKendallLiveScipy(t *testing.T) {
	const py = "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import scipy.stats").Run(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI: %s with scipy is required: %v", py, err)
		}
		t.Skipf("%s with scipy not available: %v", py, err)
	}
	db := openKendallStore(t)
	rng := rand.New(rand.NewPCG(20261204, 99)) // fixed: a failure must be reproducible
	type series struct {
		Name string    `json:"name"`
		T    []float64 `json:"t"`
		Y    []float64 `json:"y"`
	}
	var all []series
	for i := 0; i < 12; i++ {
		n := 3 + rng.IntN(400)
		s := series{Name: "live" + strconv.Itoa(i)}
		tv := 1.4e9 + rng.Float64()*1e8
		for j := 0; j < n; j++ {
			tv += float64(1 + rng.IntN(5*86400))
			s.T = append(s.T, tv)
			v := rng.NormFloat64() + float64(j)*0.01*float64(i%3-1)
			if i%2 == 0 {
				v = math.Round(v*2) / 2 // ties
			}
			s.Y = append(s.Y, v)
		}
		all = append(all, s)
		insertK(t, db, s.Name, s.T, nil, anys(s.Y))
	}
	in, _ := json.Marshal(all)
	script := `
import json, sys
import scipy.stats as ss
out = []
for c in json.load(sys.stdin):
    t = [v / 31557600.0 for v in c["t"]]
    r = ss.theilslopes(c["y"], t, alpha=0.95)
    out.append({"tau": float(ss.kendalltau(c["t"], c["y"])[0]), "slope": float(r[0]), "lower": float(r[2]), "upper": float(r[3])})
json.dump(out, sys.stdout)
`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = bytes.NewReader(in)
	outb, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v", err)
	}
	var ref []struct{ Tau, Slope, Lower, Upper float64 }
	if err := json.Unmarshal(outb, &ref); err != nil {
		t.Fatal(err)
	}
	for i, s := range all {
		mk := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = ?`, s.Name))
		sen := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y, 0.95) FROM kobs WHERE g = ?`, s.Name))
		if !kClose(num(t, mk, "tau"), ref[i].Tau, 1e-9) {
			t.Errorf("%s (n=%d): tau %v, scipy %v", s.Name, len(s.T), mk["tau"], ref[i].Tau)
		}
		for k, want := range map[string]float64{"slope_per_year": ref[i].Slope, "lower": ref[i].Lower, "upper": ref[i].Upper} {
			if got := num(t, sen, k); !kClose(got, want, 1e-9) && math.Abs(got-want) > 1e-12 {
				t.Errorf("%s (n=%d): %s %v, scipy %v", s.Name, len(s.T), k, got, want)
			}
		}
	}
}

// TestKendallDocExamples checks the example results printed in the header
// comments of kendall.go, sen.go, seasonal.go, pettitt.go and crosscorr.go
// (each derived by hand there from the small data set).
func TestKendallDocExamples(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	insertK(t, db, "doc", []float64{1.6e9, 1.6e9 + day, 1.6e9 + 2*day, 1.6e9 + 3*day, 1.6e9 + 4*day},
		anys([]float64{3, 1, 2, 5, 4}), anys([]float64{1, 2, 3, 5, 4}))
	for q, want := range map[string]string{
		"mann_kendall(t, y)":              `{"n":5,"s":8,"var_s":16.666666666666668,"z":1.7146428199482247,"p":0.08641073297370006,"tau":0.8,"concordant":9,"discordant":1,"tied_pairs":0,"tie_groups":0}`,
		"sen_slope(t, y)":                 `{"n":5,"n_pairs":10,"slope_per_year":365.25,"lower":-365.25,"upper":730.5,"confidence":0.95,"lower_rank":1,"upper_rank":10,"intercept":-18517.51851851852,"median_t":"2020-09-15T12:26:40Z","median_y":3,"interval_variance":"mann-kendall","var_s":16.666666666666668}`,
		"seasonal_kendall(t, y, '2d', 2)": `{"n":5,"period_s":172800,"season_definition":"epoch-slices","seasons":2,"seasons_used":2,"s":4,"var_s":4.666666666666666,"z":1.3887301496588274,"p":0.16491482255330134,"cycles":3,"var_s_dependent":6.666666666666666,"z_dependent":1.161895003862225,"p_dependent":0.24527811680677292,"dependent_note":null,"n_pairs":4,"slope_per_year":319.59375,"lower":182.625,"upper":547.875,"lower_dependent":182.625,"upper_dependent":547.875,"confidence":0.95,"per_season":[{"season":0,"n":3,"s":3,"var_s":3.6666666666666665},{"season":1,"n":2,"s":1,"var_s":1}]}`,
		"pettitt(t, y)":                   `{"n":5,"k":2,"t_change":"2020-09-14T12:26:40Z","t_after":"2020-09-15T12:26:40Z","u":-6,"abs_u":6,"p":0.47385551736424353,"median_before":1.5,"median_after":4}`,
		"cross_correlogram(t, x, y, 1)":   `{"n":5,"n_slots":5,"missing_slots":0,"step_s":86400,"step":"1d","step_inferred":true,"t_first":"2020-09-13T12:26:40Z","mean_x":3,"mean_y":3,"var_x":2,"var_y":2,"band":0.8765386471799175,"lags":[{"lag":-1,"pairs":4,"ccvf":1.4,"ccf":0.7},{"lag":0,"pairs":5,"ccvf":1.4,"ccf":0.7},{"lag":1,"pairs":4,"ccvf":0,"ccf":0}]}`,
	} {
		if got := queryVal(t, db, "SELECT "+q+" FROM kobs WHERE g = 'doc'"); got != want {
			t.Errorf("%s:\n got %v\nwant %s", q, got, want)
		}
	}
	if got := queryVal(t, db, "SELECT sen_slope_per_year(t, y) FROM kobs WHERE g = 'doc'"); got != 365.25 {
		t.Errorf("sen_slope_per_year = %v", got)
	}
	if got := queryVal(t, db, "SELECT cross_corr(t, x, y, 1) FROM kobs WHERE g = 'doc'"); got != 0.0 {
		t.Errorf("cross_corr = %v", got)
	}
}

// TestCrossCorrSQLMissingSlots: pairs on a daily grid with missing days,
// against R 4.2.2 ccf(y, x, lag.max = L, na.action = na.pass)
// (testdata/reference/kendall_ref_r.json, kendall_ref.R).
func TestCrossCorrSQLMissingSlots(t *testing.T) {
	_, r, _ := loadKRef(t)
	if len(r.CCF) < 2 {
		t.Fatal("reference file lacks ccf cases")
	}
	db := openKendallStore(t)
	for _, ref := range r.CCF {
		tt := make([]float64, len(ref.Day))
		for i, d := range ref.Day {
			tt[i] = 1.5e9 + d*86400
		}
		insertK(t, db, ref.Name, tt, anys(ref.X), anys(ref.Y))
		m := jsonMap(t, queryVal(t, db, `SELECT cross_correlogram(t, x, y, ?) FROM kobs WHERE g = ?`, ref.MaxLag, ref.Name))
		if num(t, m, "missing_slots") == 0 || m["step"] != "1d" {
			t.Fatalf("%s: %v", ref.Name, m)
		}
		lags := m["lags"].([]any)
		if len(lags) != len(ref.Lags) {
			t.Fatalf("%s: %d lags, R %d", ref.Name, len(lags), len(ref.Lags))
		}
		for i, l := range lags {
			lm := l.(map[string]any)
			if lm["lag"].(float64) != ref.Lags[i] || !kClose(lm["ccf"].(float64), ref.CcfYX[i], 1e-9) {
				t.Errorf("%s lag %v: %v, R ccf(y, x) lag %v = %v", ref.Name, lm["lag"], lm["ccf"], ref.Lags[i], ref.CcfYX[i])
			}
		}
	}
}

// TestSeasonalKendallLiveScipy draws random year × season matrices (with
// ties and missing cells), stores them as readings in 1/m-year slices and
// compares seasonal_kendall with /usr/bin/python3 scipy 1.10.1
// scipy.stats.mstats.kendalltau_seasonal ("global p-value (indep)" and
// "(dep)"). Skips when scipy is missing locally; fails when CI is set.
func TestSeasonalKendallLiveScipy(t *testing.T) {
	const py = "/usr/bin/python3"
	if err := exec.Command(py, "-c", "import scipy.stats.mstats").Run(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("CI: %s with scipy is required: %v", py, err)
		}
		t.Skipf("%s with scipy not available: %v", py, err)
	}
	db := openKendallStore(t)
	rng := rand.New(rand.NewPCG(20261204, 7)) // fixed: a failure must be reproducible
	type mat struct {
		Name    string      `json:"name"`
		Seasons int         `json:"seasons"`
		X       [][]float64 `json:"x"` // NaN → missing, sent as null
	}
	var mats []mat
	const year = 31557600.0
	for c := 0; c < 8; c++ {
		years, m := 4+rng.IntN(12), 2+rng.IntN(11)
		mt := mat{Name: "slive" + strconv.Itoa(c), Seasons: m}
		var tt, yy []float64
		for i := 0; i < years; i++ {
			row := make([]float64, m)
			for g := 0; g < m; g++ {
				v := rng.NormFloat64() + 0.1*float64(i)*float64(c%3-1)
				if c%2 == 0 {
					v = math.Round(v) // ties
				}
				if rng.Float64() < 0.1 {
					row[g] = math.NaN()
					continue
				}
				row[g] = v
				tt = append(tt, 40*year+float64(i)*year+(float64(g)+0.5)*year/float64(m))
				yy = append(yy, v)
			}
			mt.X = append(mt.X, row)
		}
		mats = append(mats, mt)
		insertK(t, db, mt.Name, tt, nil, anys(yy))
	}
	type jmat struct {
		Name string       `json:"name"`
		X    [][]*float64 `json:"x"`
	}
	var send []jmat
	for _, mt := range mats {
		jm := jmat{Name: mt.Name}
		for _, row := range mt.X {
			r := make([]*float64, len(row))
			for g := range row {
				if !math.IsNaN(row[g]) {
					v := row[g]
					r[g] = &v
				}
			}
			jm.X = append(jm.X, r)
		}
		send = append(send, jm)
	}
	in, _ := json.Marshal(send)
	script := `
import json, sys, warnings
import numpy as np
import scipy.stats.mstats as ms
warnings.simplefilter("ignore")
out = []
for c in json.load(sys.stdin):
    x = np.array([[np.nan if v is None else v for v in row] for row in c["x"]])
    r = ms.kendalltau_seasonal(np.ma.masked_invalid(x))
    fin = lambda v: float(v) if np.isfinite(v) else None  # JSON has no NaN
    out.append({"indep": fin(r["global p-value (indep)"]), "dep": fin(r["global p-value (dep)"])})
json.dump(out, sys.stdout)
`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = bytes.NewReader(in)
	outb, err := cmd.Output()
	if err != nil {
		t.Fatalf("python: %v", err)
	}
	var raw []struct{ Indep, Dep *float64 }
	if err := json.Unmarshal(outb, &raw); err != nil {
		t.Fatal(err)
	}
	orNaN := func(p *float64) float64 {
		if p == nil {
			return math.NaN()
		}
		return *p
	}
	ref := make([]struct{ Indep, Dep float64 }, len(raw))
	for i, r := range raw {
		ref[i].Indep, ref[i].Dep = orNaN(r.Indep), orNaN(r.Dep)
	}
	for i, mt := range mats {
		m := jsonMap(t, queryVal(t, db, `SELECT seasonal_kendall(t, y, '1y', ?) FROM kobs WHERE g = ?`, mt.Seasons, mt.Name))
		if math.IsNaN(ref[i].Indep) {
			continue
		}
		if math.IsNaN(ref[i].Dep) {
			// scipy has no dependent p-value here (its covariance estimate
			// gives no positive variance); the function must not give one either.
			if !kClose(num(t, m, "p"), ref[i].Indep, 1e-7) || m["p_dependent"] != nil {
				t.Errorf("%s (%d×%d): p %v p_dependent %v; scipy indep %v, dep undefined", mt.Name, len(mt.X), mt.Seasons, m["p"], m["p_dependent"], ref[i].Indep)
			}
			continue
		}
		if !kClose(num(t, m, "p"), ref[i].Indep, 1e-7) || !kClose(num(t, m, "p_dependent"), ref[i].Dep, 1e-7) {
			t.Errorf("%s (%d×%d): p %v p_dependent %v; scipy indep %v dep %v", mt.Name, len(mt.X), mt.Seasons, m["p"], m["p_dependent"], ref[i].Indep, ref[i].Dep)
		}
	}
}
