package sqlfuncs_test

// SQL-level tests of sample_acvf, sample_acf, correlogram, correlogram_rows,
// ljung_box, box_pierce, ljung_box_p and box_pierce_p on real stores.
//
// Reference values: testdata/reference/acf_r.json, written by acf_ref.R with
// R 4.2.2 (stats::acf with na.action = na.pass, stats::pacf, stats::Box.test,
// residuals of stats::lm) on datasets shipped with R (Nile, co2, presidents,
// LakeHuron). Tolerances: 1e-9 relative (or 1e-12 absolute of the lag-0
// scale for values near zero), 1e-7 relative for p-values.

import (
	"context"
	"database/sql"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"trendsql/sqlfuncs/stats"
	"trendsql/store"
	"trendsql/store/storetest"
)

type acfRefCase struct {
	Name   string     `json:"name"`
	Source string     `json:"source"`
	Dates  []string   `json:"dates"`
	Y      []*float64 `json:"y"`
	MaxLag int        `json:"max_lag"`
	ACVF   []*float64 `json:"acvf"`
	ACF    []*float64 `json:"acf"`
	PACF   []*float64 `json:"pacf"`
	// LmSlope is coef(lm(x ~ time(x)))[2] of the raw series, per year
	// (residual cases only).
	LmSlope *float64 `json:"lm_slope"`
	Box     []struct {
		Type  string  `json:"type"`
		Lags  int     `json:"lags"`
		Fitdf int     `json:"fitdf"`
		Q     float64 `json:"q"`
		P     float64 `json:"p"`
	} `json:"box"`
}

func loadACFRef(tb testing.TB, name string) map[string]acfRefCase {
	tb.Helper()
	b, err := os.ReadFile(filepath.Join("..", "testdata", "reference", name))
	if err != nil {
		tb.Fatal(err)
	}
	var f struct {
		Cases []acfRefCase `json:"cases"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		tb.Fatalf("%s: %v", name, err)
	}
	out := map[string]acfRefCase{}
	for _, c := range f.Cases {
		out[c.Name] = c
	}
	return out
}

// unix returns the unix seconds of the case's dates.
func (c acfRefCase) unix(tb testing.TB) []int64 {
	out := make([]int64, len(c.Dates))
	for i, d := range c.Dates {
		tt, err := time.Parse("2006-01-02", d)
		if err != nil {
			tb.Fatal(err)
		}
		out[i] = tt.Unix()
	}
	return out
}

// openACFStore opens a fresh store with a scratch table lagobs(g, t, y)
// that accepts NULL values and text times, and checks integrity at cleanup.
func openACFStore(tb testing.TB) *store.Store {
	tb.Helper()
	return storetest.OpenScratch(tb, `CREATE TABLE lagobs (g INTEGER, t ANY, y ANY) STRICT`)
}

func insertLagObs(tb testing.TB, db *sql.DB, g int, t []any, y []any) {
	tb.Helper()
	tx, err := db.Begin()
	if err != nil {
		tb.Fatal(err)
	}
	st, err := tx.Prepare(`INSERT INTO lagobs (g, t, y) VALUES (?, ?, ?)`)
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

// insertReadings stores a series in the real readings table (missing values
// are simply absent) under station code st.
func insertReadings(tb testing.TB, db *sql.DB, st string, t []int64, y []*float64) int64 {
	tb.Helper()
	var ts []int64
	var ys []float64
	for i := range t {
		if y[i] != nil {
			ts, ys = append(ts, t[i]), append(ys, *y[i])
		}
	}
	return storetest.InsertSeries(tb, db, st, "v", ts, ys)
}

type corrJSON struct {
	N            int      `json:"n"`
	NSlots       int      `json:"n_slots"`
	MissingSlots int      `json:"missing_slots"`
	StepS        *float64 `json:"step_s"`
	Step         *string  `json:"step"`
	StepInferred bool     `json:"step_inferred"`
	TFirst       string   `json:"t_first"`
	Mean         *float64 `json:"mean"`
	ACVF0        *float64 `json:"acvf0"`
	Fitdf        int      `json:"fitdf"`
	Detrend      string   `json:"detrend"`
	DetrendSlope *float64 `json:"detrend_slope_per_year"`
	Band         *float64 `json:"band"`
	Lags         []struct {
		Lag   int      `json:"lag"`
		Pairs int      `json:"pairs"`
		ACVF  *float64 `json:"acvf"`
		ACF   *float64 `json:"acf"`
		PACF  *float64 `json:"pacf"`
		Band  *float64 `json:"band"`
		QLB   *float64 `json:"q_lb"`
		DFLB  int      `json:"df_lb"`
		PLB   *float64 `json:"p_lb"`
	} `json:"lags"`
}

type portJSON struct {
	Q            float64  `json:"q"`
	DF           int      `json:"df"`
	P            *float64 `json:"p"`
	N            int      `json:"n"`
	Lags         int      `json:"lags"`
	Fitdf        int      `json:"fitdf"`
	NSlots       int      `json:"n_slots"`
	MissingSlots int      `json:"missing_slots"`
	Step         string   `json:"step"`
}

func relClose(got, want, rel, abs float64) bool {
	d := math.Abs(got - want)
	return d <= rel*math.Max(math.Abs(got), math.Abs(want)) || d <= abs
}

func pClose(got, want float64) bool {
	if want == 0 {
		return got < 1e-300
	}
	return math.Abs(got-want) <= 1e-7*want
}

func eqPtr(got, want *float64, rel, abs float64) bool {
	if got == nil || want == nil {
		return got == nil && want == nil
	}
	return relClose(*got, *want, rel, abs)
}

func fstr(p *float64) string {
	if p == nil {
		return "null"
	}
	return fmt.Sprint(*p)
}

// checkCorrelogram compares a correlogram JSON with a reference case.
func checkCorrelogram(t *testing.T, label string, text string, c acfRefCase) corrJSON {
	t.Helper()
	var j corrJSON
	if err := json.Unmarshal([]byte(text), &j); err != nil {
		t.Fatalf("%s: bad JSON %q: %v", label, text, err)
	}
	if len(j.Lags) != c.MaxLag {
		t.Fatalf("%s: %d lags, want %d", label, len(j.Lags), c.MaxLag)
	}
	scale := *c.ACVF[0]
	if !eqPtr(j.ACVF0, c.ACVF[0], 1e-9, 0) {
		t.Errorf("%s: acvf0 %s want %v", label, fstr(j.ACVF0), scale)
	}
	for _, l := range j.Lags {
		h := l.Lag
		if !eqPtr(l.ACVF, c.ACVF[h], 1e-9, 1e-12*scale) || !eqPtr(l.ACF, c.ACF[h], 1e-9, 1e-12) || !eqPtr(l.PACF, c.PACF[h], 1e-9, 1e-12) {
			t.Errorf("%s lag %d: acvf %s acf %s pacf %s; want %s %s %s", label, h, fstr(l.ACVF), fstr(l.ACF), fstr(l.PACF), fstr(c.ACVF[h]), fstr(c.ACF[h]), fstr(c.PACF[h]))
		}
	}
	for _, b := range c.Box {
		if b.Type != "Ljung-Box" || b.Fitdf != j.Fitdf || b.Lags > len(j.Lags) {
			continue
		}
		l := j.Lags[b.Lags-1]
		if l.QLB == nil || l.PLB == nil || !relClose(*l.QLB, b.Q, 1e-9, 0) || !pClose(*l.PLB, b.P) || l.DFLB != b.Lags-b.Fitdf {
			t.Errorf("%s: q_lb(%d) = %s p %s; want %v %v", label, b.Lags, fstr(l.QLB), fstr(l.PLB), b.Q, b.P)
		}
	}
	return j
}

func queryString(t *testing.T, db *sql.DB, q string, args ...any) (sql.NullString, error) {
	t.Helper()
	var s sql.NullString
	err := db.QueryRow(q, args...).Scan(&s)
	return s, err
}

// checkTests compares ljung_box / box_pierce (JSON and scalar p) with the
// reference Box.test values of a case, for the rows selected by where.
func checkTests(t *testing.T, db *sql.DB, label, from string, c acfRefCase) {
	t.Helper()
	checkTestsOpts(t, db, label, from, c, "")
}

// checkSingleLags compares sample_acvf and sample_acf at lags 0, 1 and
// c.MaxLag (with the options text opts, empty for none) with c.
func checkSingleLags(t *testing.T, db *sql.DB, label, from, opts string, c acfRefCase) {
	t.Helper()
	optArg := ""
	if opts != "" {
		optArg = ", '" + opts + "'"
	}
	for _, h := range []int{0, 1, c.MaxLag} {
		var g, r sql.NullFloat64
		q := fmt.Sprintf("SELECT sample_acvf(t, value, ?%s), sample_acf(t, value, ?%s) FROM %s", optArg, optArg, from)
		if err := db.QueryRow(q, h, h).Scan(&g, &r); err != nil {
			t.Fatal(err)
		}
		if !g.Valid || !r.Valid || !relClose(g.Float64, *c.ACVF[h], 1e-9, 1e-12**c.ACVF[0]) || !relClose(r.Float64, *c.ACF[h], 1e-9, 1e-12) {
			t.Errorf("%s lag %d: sample_acvf %v sample_acf %v; want %v %v", label, h, g, r, *c.ACVF[h], *c.ACF[h])
		}
	}
}

// checkTestsOpts is checkTests with an options argument (empty: none).
func checkTestsOpts(t *testing.T, db *sql.DB, label, from string, c acfRefCase, opts string) {
	t.Helper()
	optArg := ""
	if opts != "" {
		optArg = ", '" + opts + "'"
	}
	for _, b := range c.Box {
		fn := map[string]string{"Ljung-Box": "ljung_box", "Box-Pierce": "box_pierce"}[b.Type]
		s, err := queryString(t, db, fmt.Sprintf("SELECT %s(t, value, ?, ?%s) FROM %s", fn, optArg, from), b.Lags, b.Fitdf)
		if err != nil || !s.Valid {
			t.Fatalf("%s %s: %v %v", label, fn, s, err)
		}
		var j portJSON
		if err := json.Unmarshal([]byte(s.String), &j); err != nil {
			t.Fatal(err)
		}
		if !relClose(j.Q, b.Q, 1e-9, 0) || j.P == nil || !pClose(*j.P, b.P) || j.DF != b.Lags-b.Fitdf || j.Lags != b.Lags || j.Fitdf != b.Fitdf {
			t.Errorf("%s %s(lags=%d, fitdf=%d) = %s; want q %v p %v", label, fn, b.Lags, b.Fitdf, s.String, b.Q, b.P)
		}
		var p sql.NullFloat64
		if err := db.QueryRow(fmt.Sprintf("SELECT %s_p(t, value, ?, ?%s) FROM %s", fn, optArg, from), b.Lags, b.Fitdf).Scan(&p); err != nil || !p.Valid || !pClose(p.Float64, b.P) {
			t.Errorf("%s %s_p = %v %v; want %v", label, fn, p, err, b.P)
		}
	}
}

// TestCorrelogramAgainstR runs correlogram, ljung_box, box_pierce and the
// p shortcuts through SQL on R's datasets stored as readings, with the grid
// step inferred from the calendar dates (1y, 1y/4, 1y/12), and compares
// with R 4.2.2 (see acf_ref.R). presidents has 6 missing quarters.
func TestCorrelogramAgainstR(t *testing.T) {
	ref := loadACFRef(t, "acf_r.json")
	s := openACFStore(t)
	wantStep := map[string]string{"nile": "1y", "co2": "30.4375d", "presidents": "0.25y", "lakehuron": "1y"}
	for name, step := range wantStep {
		c := ref[name]
		sid := insertReadings(t, s.DB, name, c.unix(t), c.Y)
		from := fmt.Sprintf("readings WHERE series_id = %d", sid)
		text, err := queryString(t, s.DB, "SELECT correlogram(t, value, ?) FROM "+from, c.MaxLag)
		if err != nil || !text.Valid {
			t.Fatalf("%s: %v %v", name, text, err)
		}
		j := checkCorrelogram(t, "R "+name, text.String, c)
		if j.Step == nil || *j.Step != step || !j.StepInferred {
			t.Errorf("%s: step %v inferred %v, want %s", name, j.Step, j.StepInferred, step)
		}
		// Slots run from the first to the last present value; missing
		// values inside that span are missing slots.
		first, last, missing := -1, -1, 0
		for i, v := range c.Y {
			if v != nil {
				if first < 0 {
					first = i
				}
				last = i
			}
		}
		for i := first; i <= last; i++ {
			if c.Y[i] == nil {
				missing++
			}
		}
		if j.N != last-first+1-missing || j.NSlots != last-first+1 || j.MissingSlots != missing {
			t.Errorf("%s: n %d slots %d missing %d", name, j.N, j.NSlots, j.MissingSlots)
		}
		if want := 1.96 / math.Sqrt(float64(j.N)); j.Band == nil || *j.Band != want {
			t.Errorf("%s: band %v want %v", name, fstr(j.Band), want)
		}
		checkTests(t, s.DB, "R "+name, from, c)
		// The same with the step given explicitly.
		text2, err := queryString(t, s.DB, "SELECT correlogram(t, value, ?, 'step="+step+"') FROM "+from, c.MaxLag)
		if err != nil || !strings.Contains(text2.String, `"step_inferred":false`) {
			t.Fatalf("%s explicit step: %v %v", name, text2, err)
		}
		checkCorrelogram(t, "R "+name+" step="+step, text2.String, c)
		checkSingleLags(t, s.DB, name, from, "", c)
	}
}

// olsResiduals returns the residuals of the least-squares line y = a + b·k
// on the index k = 0..n−1, solved by QR (gonum mat.QR).
func olsResiduals(t *testing.T, y []float64) []float64 {
	n := len(y)
	x := mat.NewDense(n, 2, nil)
	for k := 0; k < n; k++ {
		x.Set(k, 0, 1)
		x.Set(k, 1, float64(k)-float64(n-1)/2) // centred
	}
	var qr mat.QR
	qr.Factorize(x)
	var beta mat.Dense
	if err := qr.SolveTo(&beta, false, mat.NewDense(n, 1, y)); err != nil {
		t.Fatal(err)
	}
	out := make([]float64, n)
	for k := range out {
		out[k] = y[k] - beta.At(0, 0) - beta.At(1, 0)*x.At(k, 1)
	}
	return out
}

// TestResidualCorrelogramAgainstR: residuals of a straight-line fit on the
// time index (computed here by QR; R: residuals(lm(x ~ time(x)))) of the
// Nile and co2 series, stored through SQL and analysed with correlogram and
// the tests (fitdf = 2 cases included).
func TestResidualCorrelogramAgainstR(t *testing.T) {
	ref := loadACFRef(t, "acf_r.json")
	s := openACFStore(t)
	for _, name := range []string{"nile", "co2"} {
		c := ref[name]
		rc := ref[name+"_lm_resid"]
		y := make([]float64, len(c.Y))
		for i, v := range c.Y {
			y[i] = *v
		}
		res := olsResiduals(t, y)
		for i := range res {
			if !relClose(res[i], *rc.Y[i], 1e-9, 1e-9*math.Sqrt(*rc.ACVF[0])) {
				t.Fatalf("%s residual %d: %v want %v", name, i, res[i], *rc.Y[i])
			}
		}
		ts := c.unix(t)
		tv, yv := make([]any, len(ts)), make([]any, len(ts))
		for i := range ts {
			tv[i], yv[i] = c.Dates[i], res[i] // text dates on purpose
		}
		g := len(name)
		insertLagObs(t, s.DB, g, tv, yv)
		from := fmt.Sprintf("(SELECT t, y AS value FROM lagobs WHERE g = %d)", g)
		for _, fitdf := range []int{0, 2} {
			text, err := queryString(t, s.DB, fmt.Sprintf("SELECT correlogram(t, value, ?, 'fitdf=%d') FROM %s", fitdf, from), rc.MaxLag)
			if err != nil || !text.Valid {
				t.Fatalf("%s: %v %v", name, text, err)
			}
			checkCorrelogram(t, fmt.Sprintf("R %s residuals fitdf=%d", name, fitdf), text.String, rc)
		}
		checkTests(t, s.DB, "R "+name+" residuals", from, rc)
	}
}

// TestDetrendLinearAgainstR: the detrend=linear option on the raw Nile,
// co2 and presidents readings (monthly co2: slots of 1y/12, times at
// calendar month starts; presidents: quarters with 6 missing) against R's
// correlogram and tests of residuals(lm(x ~ time(x))) (R 4.2.2, acf_ref.R
// cases nile_lm_resid, co2_lm_resid and presidents_lm_resid, the last with
// na.action = na.exclude): the residuals of a line on the slot index, which
// time(x) is up to an affine change.
func TestDetrendLinearAgainstR(t *testing.T) {
	ref := loadACFRef(t, "acf_r.json")
	s := openACFStore(t)
	for _, name := range []string{"nile", "co2", "presidents"} {
		c, rc := ref[name], ref[name+"_lm_resid"]
		sid := insertReadings(t, s.DB, name+"-raw", c.unix(t), c.Y)
		from := fmt.Sprintf("readings WHERE series_id = %d", sid)
		for _, fitdf := range []int{0, 2} {
			text, err := queryString(t, s.DB, fmt.Sprintf("SELECT correlogram(t, value, ?, 'fitdf=%d, detrend=linear') FROM %s", fitdf, from), rc.MaxLag)
			if err != nil || !text.Valid {
				t.Fatalf("%s: %v %v", name, text, err)
			}
			j := checkCorrelogram(t, fmt.Sprintf("R %s detrend=linear fitdf=%d", name, fitdf), text.String, rc)
			if j.Detrend != "linear" {
				t.Errorf("%s: detrend key %q in %.200s", name, j.Detrend, text.String)
			}
			// The removed line's slope per year: R's coef(lm(x ~ time(x)))[2]
			// (time(x) counts years for these annual, quarterly and monthly
			// series).
			if rc.LmSlope == nil || !eqPtr(j.DetrendSlope, rc.LmSlope, 1e-9, 0) {
				t.Errorf("%s: detrend_slope_per_year %s, want R lm slope %s", name, fstr(j.DetrendSlope), fstr(rc.LmSlope))
			}
		}
		// Without the option there is no line and no slope.
		text, err := queryString(t, s.DB, "SELECT correlogram(t, value, 2) FROM "+from)
		if err != nil || !strings.Contains(text.String, `"detrend":"none","detrend_slope_per_year":null`) {
			t.Errorf("%s without detrend: %.300s %v", name, text.String, err)
		}
		checkTestsOpts(t, s.DB, "R "+name+" detrend=linear", from, rc, "detrend=linear")
		checkSingleLags(t, s.DB, name+" detrended", from, "detrend=linear", rc)
	}
}

// TestCorrelogramOnePass: one correlogram(…, 'detrend=linear') carries the
// three figures of the per-series diagnostic query — the least-squares
// slope, the residual correlogram and the residual Ljung–Box test — so they
// equal trend_slope and ljung_box of the same rows when every reading sits
// exactly on its slot (common practice: all three are the least-squares
// line and the Ljung–Box Q of its residuals). The values are R's co2 series
// (with its calendar months replaced by exact hours) and presidents'
// quarters with 6 missing (replaced by exact days); the slope is also
// checked against R's coef(lm(x ~ time(x)))[2] rescaled to the new step.
func TestCorrelogramOnePass(t *testing.T) {
	ref := loadACFRef(t, "acf_r.json")
	s := openACFStore(t)
	for _, tc := range []struct {
		name string
		step int64   // seconds between slots
		per  float64 // slots per unit of R's time(x)
	}{{"co2", 3600, 12}, {"presidents", 86400, 4}} {
		c, rc := ref[tc.name], ref[tc.name+"_lm_resid"]
		tt := make([]int64, len(c.Y))
		for i := range tt {
			tt[i] = 1500000000 + int64(i)*tc.step
		}
		sid := insertReadings(t, s.DB, tc.name+"-grid", tt, c.Y)
		var corr string
		var slope, lbQ, lbP float64
		err := s.DB.QueryRow(`SELECT correlogram(t, value, 24, 'detrend=linear'), trend_slope(t, value),
			ljung_box(t, value, 24, 0, 'detrend=linear') ->> 'q', ljung_box(t, value, 24, 0, 'detrend=linear') ->> 'p'
			FROM readings WHERE series_id = ?`, sid).Scan(&corr, &slope, &lbQ, &lbP)
		if err != nil {
			t.Fatal(err)
		}
		var j corrJSON
		if err := json.Unmarshal([]byte(corr), &j); err != nil {
			t.Fatal(err)
		}
		if j.DetrendSlope == nil || !relClose(*j.DetrendSlope, slope, 1e-9, 0) {
			t.Errorf("%s: detrend_slope_per_year %s, trend_slope %v", tc.name, fstr(j.DetrendSlope), slope)
		}
		// R's slope is per unit of time(x) = tc.per slots; ours per year of
		// 365.25 d = SecondsPerYear/step slots.
		want := *rc.LmSlope / tc.per * (stats.SecondsPerYear / float64(tc.step))
		if !eqPtr(j.DetrendSlope, &want, 1e-9, 0) {
			t.Errorf("%s: detrend_slope_per_year %s, want R %v", tc.name, fstr(j.DetrendSlope), want)
		}
		l := j.Lags[23]
		if l.QLB == nil || l.PLB == nil || !relClose(*l.QLB, lbQ, 1e-12, 0) || !relClose(*l.PLB, lbP, 1e-12, 0) {
			t.Errorf("%s: correlogram q_lb(24) %s p %s, ljung_box %v %v", tc.name, fstr(l.QLB), fstr(l.PLB), lbQ, lbP)
		}
	}
}

// TestDetrendLinearEdges: the option's spelling, its error, and the
// degenerate groups (fewer than 3 readings; readings on an exact line),
// whose residual autocorrelations are NULL, not correlations of rounding
// noise. Expected values are the definitions (common practice).
func TestDetrendLinearEdges(t *testing.T) {
	s := openACFStore(t)
	db := s.DB
	tv := []any{int64(1700000000), int64(1700003600), int64(1700007200), int64(1700010800), int64(1700014400)}
	insertLagObs(t, db, 901, tv, []any{1.5, 3.0, 4.5, 6.0, 7.5}) // exact line
	insertLagObs(t, db, 902, tv[:2], []any{1.0, 2.0})
	insertLagObs(t, db, 903, tv, []any{1.0, 3.0, 2.0, 5.0, 4.0})
	for _, g := range []int{901, 902} {
		var r sql.NullFloat64
		if err := db.QueryRow("SELECT sample_acf(t, y, 1, 'detrend=linear') FROM lagobs WHERE g = ?", g).Scan(&r); err != nil || r.Valid {
			t.Errorf("group %d: sample_acf of residuals = %v %v, want NULL", g, r, err)
		}
	}
	// 903: residuals of 1,3,2,5,4 on k = 0..4 (slope 0.8, intercept 1.4):
	// −0.4, 0.8, −1.0, 1.2, −0.6; γ̂(0) = 3.6/5, γ̂(1) = (−0.32 − 0.8 − 1.2 − 0.72)/5.
	var r sql.NullFloat64
	if err := db.QueryRow("SELECT sample_acf(t, y, 1, ' detrend = linear ') FROM lagobs WHERE g = 903").Scan(&r); err != nil || !r.Valid || !relClose(r.Float64, -3.04/3.6, 1e-12, 0) {
		t.Errorf("group 903: sample_acf of residuals = %v %v, want %v", r, err, -3.04/3.6)
	}
	var none, def sql.NullFloat64
	if err := db.QueryRow("SELECT sample_acf(t, y, 1, 'detrend=none'), sample_acf(t, y, 1) FROM lagobs WHERE g = 903").Scan(&none, &def); err != nil || none != def {
		t.Errorf("detrend=none %v differs from no option %v (%v)", none, def, err)
	}
	_, err := queryString(t, db, "SELECT correlogram(t, y, 2, 'detrend=quadratic') FROM lagobs WHERE g = 903")
	if err == nil || !strings.Contains(err.Error(), "correlogram: option detrend=\"quadratic\" must be linear or none") {
		t.Errorf("bad detrend: %v", err)
	}
}

// TestCorrelogramRows: the table-valued function joined per station, as in
// the documented example, on a writable and on a read-only store.
func TestCorrelogramRows(t *testing.T) {
	ref := loadACFRef(t, "acf_r.json")
	s := openACFStore(t)
	names := []string{"nile", "lakehuron", "presidents"}
	ids := map[int64]string{}
	for _, name := range names {
		c := ref[name]
		ids[insertReadings(t, s.DB, name, c.unix(t), c.Y)] = name
	}
	const L = 10
	q := `WITH per_station AS (
	        SELECT series_id, correlogram(t, value, ?) AS c FROM readings GROUP BY series_id)
	      SELECT s.series_id, c.* FROM per_station s, correlogram_rows(s.c) c ORDER BY s.series_id, c.lag`
	check := func(db *sql.DB, label string) {
		rows, err := db.Query(q, L)
		if err != nil {
			t.Fatalf("%s: %v", label, err)
		}
		defer rows.Close()
		cols, _ := rows.Columns()
		want := []string{"series_id", "lag", "acvf", "acf", "pacf", "band_lower", "band_upper", "ljung_box_q", "ljung_box_p"}
		if strings.Join(cols, ",") != strings.Join(want, ",") {
			t.Fatalf("%s: columns %v", label, cols)
		}
		count := 0
		for rows.Next() {
			var sid int64
			var lag any
			var acvf, acf, pacf, lo, hi, q, p sql.NullFloat64
			if err := rows.Scan(&sid, &lag, &acvf, &acf, &pacf, &lo, &hi, &q, &p); err != nil {
				t.Fatal(err)
			}
			h, ok := lag.(int64)
			if !ok {
				t.Fatalf("%s: lag is %T, want INTEGER", label, lag)
			}
			c := ref[ids[sid]]
			n := 0
			for _, v := range c.Y {
				if v != nil {
					n++
				}
			}
			if !relClose(acvf.Float64, *c.ACVF[h], 1e-9, 1e-12**c.ACVF[0]) || !relClose(acf.Float64, *c.ACF[h], 1e-9, 1e-12) || !relClose(pacf.Float64, *c.PACF[h], 1e-9, 1e-12) {
				t.Errorf("%s %s lag %d: %v %v %v", label, ids[sid], h, acvf, acf, pacf)
			}
			if b := 1.96 / math.Sqrt(float64(n)); lo.Float64 != -b || hi.Float64 != b || !q.Valid || !p.Valid {
				t.Errorf("%s %s lag %d: band %v %v q %v p %v", label, ids[sid], h, lo, hi, q, p)
			}
			count++
		}
		if err := rows.Err(); err != nil {
			t.Fatal(err)
		}
		if count != L*len(names) {
			t.Fatalf("%s: %d rows, want %d", label, count, L*len(names))
		}
	}
	check(s.DB, "writable")

	// Read-only open: the temp tables must still be created.
	ro, err := store.Open(context.Background(), s.Path, store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer ro.Close()
	check(ro.DB, "read-only")

	// Direct call, NULL argument, undefined figures, malformed JSON.
	var n int
	if err := s.DB.QueryRow(`SELECT count(*) FROM correlogram_rows(NULL)`).Scan(&n); err != nil || n != 0 {
		t.Errorf("NULL argument: %d rows, %v", n, err)
	}
	var acf sql.NullFloat64
	var lag int64
	if err := s.DB.QueryRow(`SELECT lag, acf FROM correlogram_rows('{"band":0.5,"lags":[{"lag":3,"acf":null}]}')`).Scan(&lag, &acf); err != nil || lag != 3 || acf.Valid {
		t.Errorf("null figure: lag %d acf %v %v", lag, acf, err)
	}
	for _, bad := range []string{`'not json'`, `'{"n":1}'`, `42`} {
		_, err := s.DB.Exec(`SELECT * FROM correlogram_rows(` + bad + `)`)
		if err == nil || !strings.Contains(err.Error(), "correlogram_rows") {
			t.Errorf("correlogram_rows(%s): error %v", bad, err)
		}
	}
	if _, err := s.DB.Exec(`SELECT * FROM correlogram_rows`); err == nil || !strings.Contains(err.Error(), "correlogram_rows") {
		t.Errorf("no argument: error %v", err)
	}
}

func nullFloat(t *testing.T, db *sql.DB, q string, args ...any) (sql.NullFloat64, error) {
	t.Helper()
	var v sql.NullFloat64
	err := db.QueryRow(q, args...).Scan(&v)
	return v, err
}

// TestLagTraps covers the lag functions' edge cases: constant series, n = 1
// and 2, lag ≥ n, all NULL, ties in time, reverse order, NaN from an
// expression, off-grid readings, large time offsets, bad options.
func TestLagTraps(t *testing.T) {
	s := openACFStore(t)
	db := s.DB
	t0 := int64(1_700_000_000)
	h := int64(3600)
	add := func(g int, ts []int64, ys []any) {
		tv := make([]any, len(ts))
		for i, x := range ts {
			tv[i] = x
		}
		insertLagObs(t, db, g, tv, ys)
	}
	add(1, []int64{t0, t0 + h, t0 + 2*h, t0 + 3*h}, []any{5.0, 5.0, 5.0, 5.0}) // constant
	add(2, []int64{t0}, []any{7.0})                                            // n = 1
	add(3, []int64{t0, t0 + h}, []any{1.0, 3.0})                               // n = 2
	add(4, []int64{t0, t0 + h, t0 + 2*h}, []any{nil, nil, nil})                // all NULL
	add(5, []int64{t0, t0 + h, t0 + h}, []any{1.0, 2.0, 3.0})                  // tie
	add(6, []int64{t0, t0 + h, t0 + 2*h, t0 + 3*h + 1800, t0 + 5*h, t0 + 6*h, t0 + 7*h}, []any{1.0, 2.0, 4.0, 3.0, 5.0, 1.0, 2.0})
	add(7, []int64{t0, t0 + h, t0 + 2*h, t0 + 3*h, t0 + 5*h}, []any{1.0, 4.0, 2.0, 8.0, 5.0})

	one := func(q string, g int, args ...any) (sql.NullFloat64, error) {
		return nullFloat(t, db, fmt.Sprintf(q, g), args...)
	}
	// Constant: γ̂ = 0, ρ̂ undefined, tests undefined.
	if v, err := one("SELECT sample_acvf(t, y, 1) FROM lagobs WHERE g = %d", 1); err != nil || !v.Valid || v.Float64 != 0 {
		t.Errorf("constant acvf: %v %v", v, err)
	}
	for _, q := range []string{"SELECT sample_acf(t, y, 1) FROM lagobs WHERE g = %d", "SELECT sample_acf(t, y, 0) FROM lagobs WHERE g = %d", "SELECT ljung_box_p(t, y, 2) FROM lagobs WHERE g = %d"} {
		if v, err := one(q, 1); err != nil || v.Valid {
			t.Errorf("constant %q: %v %v", q, v, err)
		}
	}
	if c, err := queryString(t, db, "SELECT correlogram(t, y, 2) FROM lagobs WHERE g = 1"); err != nil || !strings.Contains(c.String, `"acf":null`) || !strings.Contains(c.String, `"acvf0":0`) {
		t.Errorf("constant correlogram: %v %v", c, err)
	}
	// n = 1: γ̂(0) = 0; lag 1 ≥ n → NULL; correlogram has null lags.
	if v, err := one("SELECT sample_acvf(t, y, 0) FROM lagobs WHERE g = %d", 2); err != nil || !v.Valid || v.Float64 != 0 {
		t.Errorf("n=1 lag 0: %v %v", v, err)
	}
	if v, err := one("SELECT sample_acvf(t, y, 1) FROM lagobs WHERE g = %d", 2); err != nil || v.Valid {
		t.Errorf("n=1 lag 1: %v %v", v, err)
	}
	if c, err := queryString(t, db, "SELECT correlogram(t, y, 2) FROM lagobs WHERE g = 2"); err != nil || !strings.Contains(c.String, `"n":1`) || !strings.Contains(c.String, `"step":null`) || !strings.Contains(c.String, `{"lag":2,"pairs":0,"acvf":null`) {
		t.Errorf("n=1 correlogram: %v %v", c, err)
	}
	// n = 2: γ̂(1) = (1−2)(3−2)/2 = −0.5, ρ̂(1) = −0.5; lag 2 ≥ n → NULL;
	// Ljung–Box needs lags < n.
	if v, err := one("SELECT sample_acvf(t, y, 1) FROM lagobs WHERE g = %d", 3); err != nil || v.Float64 != -0.5 {
		t.Errorf("n=2 acvf: %v %v", v, err)
	}
	if v, err := one("SELECT sample_acf(t, y, 1) FROM lagobs WHERE g = %d", 3); err != nil || v.Float64 != -0.5 {
		t.Errorf("n=2 acf: %v %v", v, err)
	}
	for _, q := range []string{"SELECT sample_acf(t, y, 2) FROM lagobs WHERE g = %d", "SELECT ljung_box_p(t, y, 2) FROM lagobs WHERE g = %d", "SELECT box_pierce(t, y, 2) FROM lagobs WHERE g = %d"} {
		if v, err := queryString(t, db, fmt.Sprintf(q, 3)); err != nil || v.Valid {
			t.Errorf("n=2 %q: %v %v", q, v, err)
		}
	}
	// All NULL and no rows at all: NULL everywhere.
	for _, g := range []int{4, 99} {
		for _, fn := range []string{"sample_acvf(t, y, 0)", "sample_acf(t, y, 1)", "correlogram(t, y, 3)", "ljung_box(t, y, 1)", "box_pierce_p(t, y, 1)"} {
			if v, err := queryString(t, db, fmt.Sprintf("SELECT %s FROM lagobs WHERE g = %d", fn, g)); err != nil || v.Valid {
				t.Errorf("group %d %s: %v %v", g, fn, v, err)
			}
		}
	}
	// Tie in time: an error naming the function and the time.
	_, err := one("SELECT sample_acf(t, y, 1) FROM lagobs WHERE g = %d", 5)
	if err == nil || !strings.Contains(err.Error(), "sample_acf") || !strings.Contains(err.Error(), "2023-11-14T23:13:20Z") {
		t.Errorf("tie: %v", err)
	}
	// Off grid (a reading half-way between hourly slots): error with a step.
	_, err = queryString(t, db, "SELECT correlogram(t, y, 2) FROM lagobs WHERE g = 6")
	if err == nil || !strings.Contains(err.Error(), "correlogram") || !strings.Contains(err.Error(), "2023-11-15T01:43:20Z") || !strings.Contains(err.Error(), "try step=30min") {
		t.Errorf("off grid: %v", err)
	}
	if c, err := queryString(t, db, "SELECT correlogram(t, y, 2, 'step=30min') FROM lagobs WHERE g = 6"); err != nil || !strings.Contains(c.String, `"missing_slots":8`) {
		t.Errorf("off grid with the suggested step: %v %v", c, err)
	}
	// Reverse order and NaN from an expression (SQLite makes 0.0/0.0 NULL,
	// so the row is a missing value): same as the plain query without it.
	base, err := queryString(t, db, "SELECT correlogram(t, y, 3) FROM lagobs WHERE g = 7")
	if err != nil || !strings.Contains(base.String, `"missing_slots":1`) {
		t.Fatalf("gapped: %v %v", base, err)
	}
	rev, err := queryString(t, db, "SELECT correlogram(t, y, 3) FROM (SELECT * FROM lagobs WHERE g = 7 ORDER BY t DESC)")
	if err != nil || rev.String != base.String {
		t.Errorf("reverse order: %v vs %v (%v)", rev, base, err)
	}
	nan, err := queryString(t, db, "SELECT correlogram(t, y, 3) FROM (SELECT t, y FROM lagobs WHERE g = 7 UNION ALL SELECT ?, 0.0/0.0)", t0+4*h)
	if err != nil || nan.String != base.String {
		t.Errorf("NaN from expression: %v vs %v (%v)", nan, base, err)
	}
	// Text times, same series.
	txt, err := queryString(t, db, "SELECT correlogram(strftime('%Y-%m-%dT%H:%M:%SZ', t, 'unixepoch'), y, 3) FROM lagobs WHERE g = 7")
	if err != nil || txt.String != base.String {
		t.Errorf("text times: %v (%v)", txt, err)
	}
	// Bad arguments: clear errors naming the function.
	for q, want := range map[string]string{
		"SELECT sample_acf(t, y, -1) FROM lagobs WHERE g = 7":                   "sample_acf: argument lag",
		"SELECT correlogram(t, y, 2, 'step=2 parsecs') FROM lagobs WHERE g = 7": "correlogram: option step",
		"SELECT correlogram(t, y, 2, 'lag=2') FROM lagobs WHERE g = 7":          "correlogram: unknown option",
		"SELECT ljung_box(t, y, 0) FROM lagobs WHERE g = 7":                     "ljung_box: argument lags",
		"SELECT ljung_box(t, y, 2, 'x') FROM lagobs WHERE g = 7":                "ljung_box: argument fitdf",
		"SELECT sample_acvf(t, 'abc', 1) FROM lagobs WHERE g = 7":               "sample_acvf: argument y",
		"SELECT sample_acvf(NULL, y, 1) FROM lagobs WHERE g = 7":                "sample_acvf: argument t is NULL",
		"SELECT sample_acvf(t, y) FROM lagobs WHERE g = 7":                      "sample_acvf: wrong number of arguments",
	} {
		_, err := queryString(t, db, q)
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: error %v, want %q", q, err, want)
		}
	}
	// fitdf ≥ lags: Q reported, p NULL.
	if j, err := queryString(t, db, "SELECT ljung_box(t, y, 2, 2) FROM lagobs WHERE g = 7"); err != nil || !strings.Contains(j.String, `"df":0,"p":null`) {
		t.Errorf("fitdf = lags: %v %v", j, err)
	}
}

// TestLagWindow: every lag function used as a window function with a
// sliding frame equals the aggregate recomputed on that frame.
func TestLagWindow(t *testing.T) {
	s := openACFStore(t)
	db := s.DB
	ref := loadACFRef(t, "acf_r.json")
	c := ref["presidents"] // quarterly, with missing quarters
	ts := c.unix(t)
	tv, yv := make([]any, len(ts)), make([]any, len(ts))
	for i := range ts {
		tv[i] = ts[i]
		if c.Y[i] != nil {
			yv[i] = *c.Y[i]
		}
	}
	insertLagObs(t, db, 1, tv, yv)
	exprs := []string{"sample_acvf(t, y, 2)", "sample_acf(t, y, 1)", "correlogram(t, y, 4, 'step=0.25y')", "ljung_box(t, y, 3, 1)", "box_pierce_p(t, y, 2)"}
	for _, e := range exprs {
		rows, err := db.Query(fmt.Sprintf(`SELECT t, %s OVER (ORDER BY t ROWS BETWEEN 11 PRECEDING AND CURRENT ROW) FROM lagobs WHERE g = 1 ORDER BY t`, e))
		if err != nil {
			t.Fatalf("%s: %v", e, err)
		}
		type win struct {
			t int64
			v sql.NullString
		}
		var got []win
		for rows.Next() {
			var w win
			if err := rows.Scan(&w.t, &w.v); err != nil {
				t.Fatal(err)
			}
			got = append(got, w)
		}
		rows.Close()
		if len(got) != len(ts) {
			t.Fatalf("%s: %d window rows", e, len(got))
		}
		nonNull := 0
		for i, w := range got {
			lo := 0
			if i > 11 {
				lo = i - 11
			}
			want, err := queryString(t, db, fmt.Sprintf(`SELECT %s FROM lagobs WHERE g = 1 AND t BETWEEN ? AND ?`, e), ts[lo], ts[i])
			if err != nil {
				t.Fatal(err)
			}
			if w.v != want {
				t.Fatalf("%s at row %d: window %v, aggregate on the frame %v", e, i, w.v, want)
			}
			if w.v.Valid {
				nonNull++
			}
		}
		if nonNull < len(ts)/2 {
			t.Errorf("%s: only %d non-NULL windows", e, nonNull)
		}
	}
}
