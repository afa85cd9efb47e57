package sqlfuncs_test

// SQL-level checks of censored_mann_kendall, censored_seasonal_kendall and
// censored_sen_slope: the single-limit reference cases of
// testdata/reference/censored_ref.json / censored_ref_r.json (scipy 1.10.1
// and R 4.2.2 on the data with the censored values replaced by one common
// value below the limit; see censored_ref.py for the equivalence), the
// example in the header of censored.go, marks, options and errors.

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

type censRefFile struct {
	MKCases []struct {
		Name string    `json:"name"`
		T    []float64 `json:"t"`
		Y    []float64 `json:"y"`
		C    []int     `json:"c"`
	} `json:"mk_cases"`
	SeasonalCases []struct {
		Name string      `json:"name"`
		X    [][]float64 `json:"x"`
		CX   [][]int     `json:"cx"`
	} `json:"seasonal_cases"`
	Seasonal []struct {
		PIndep float64 `json:"p_indep"`
		PDep   float64 `json:"p_dep"`
	} `json:"seasonal"`
	Sen []struct {
		Name  string    `json:"name"`
		T     []float64 `json:"t"`
		Y     []float64 `json:"y"`
		Slope float64   `json:"slope_per_year"`
	} `json:"sen"`
}

type censRFile struct {
	MK []struct {
		Name string   `json:"name"`
		Z    *float64 `json:"z"`
		P    *float64 `json:"p"`
		Tau  *float64 `json:"tau"`
	} `json:"mk"`
}

func markText(c int) any {
	switch c {
	case -1:
		return "<"
	case 1:
		return ">"
	}
	return nil
}

func TestCensoredSQLReference(t *testing.T) {
	var py censRefFile
	var r censRFile
	for name, dst := range map[string]any{"censored_ref.json": &py, "censored_ref_r.json": &r} {
		b, err := os.ReadFile(kRefPath(name))
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, dst); err != nil {
			t.Fatal(err)
		}
	}
	if len(py.MKCases) < 9 || len(r.MK) != len(py.MKCases) || len(py.SeasonalCases) < 3 {
		t.Fatalf("reference files look truncated")
	}
	db := openKendallStore(t)
	for i, c := range py.MKCases {
		marks := make([]any, len(c.C))
		for k, m := range c.C {
			marks[k] = markText(m)
		}
		insertK(t, db, c.Name, c.T, marks, anys(c.Y))
		m := jsonMap(t, queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = ?`, c.Name))
		// R 4.2.2 cor.test(t, y_sub, method = "kendall", exact = FALSE, continuity = TRUE)
		rr := r.MK[i]
		if rr.Name != c.Name || math.Abs(num(t, m, "z")-*rr.Z) > 1e-9*math.Max(1, math.Abs(*rr.Z)) || !kClose(num(t, m, "p"), *rr.P, 1e-9) || !kClose(num(t, m, "tau"), *rr.Tau, 1e-9) {
			t.Errorf("%s: %v; R z %v p %v tau %v", c.Name, m, *rr.Z, *rr.P, *rr.Tau)
		}
	}
	for i, c := range py.SeasonalCases {
		var tt, yy []float64
		var marks []any
		m := len(c.X[0])
		for yr, row := range c.X {
			for g, v := range row {
				tt = append(tt, 40*timefmt.SecondsPerYear+float64(yr)*timefmt.SecondsPerYear+(float64(g)+0.5)*timefmt.SecondsPerYear/float64(m))
				yy = append(yy, v)
				marks = append(marks, markText(c.CX[yr][g]))
			}
		}
		insertK(t, db, c.Name, tt, marks, anys(yy))
		res := jsonMap(t, queryVal(t, db, `SELECT censored_seasonal_kendall(t, y, x, '1y', ?) FROM kobs WHERE g = ?`, m, c.Name))
		// scipy 1.10.1 scipy.stats.mstats.kendalltau_seasonal "global p-value (indep)"
		if !kClose(num(t, res, "p"), py.Seasonal[i].PIndep, 1e-9) {
			t.Errorf("%s: p %v, scipy %v", c.Name, res["p"], py.Seasonal[i].PIndep)
		}
		// scipy 1.10.1 kendalltau_seasonal "global p-value (dep)": one value
		// per season and year, so the between-season covariance applies.
		if !kClose(num(t, res, "p_dependent"), py.Seasonal[i].PDep, 1e-9) || num(t, res, "cycles") != float64(len(c.X)) || res["dependent_note"] != nil {
			t.Errorf("%s: p_dependent %v cycles %v note %v, scipy dep %v", c.Name, res["p_dependent"], res["cycles"], res["dependent_note"], py.Seasonal[i].PDep)
		}
	}
	for _, c := range py.Sen {
		insertK(t, db, c.Name, c.T, nil, anys(c.Y))
		res := jsonMap(t, queryVal(t, db, `SELECT censored_sen_slope(t, y, x) FROM kobs WHERE g = ?`, c.Name))
		// scipy 1.10.1 scipy.stats.theilslopes(y, t / 31557600)
		if !kClose(num(t, res, "slope_per_year"), c.Slope, 1e-9) || res["censored"].(float64) != 0 {
			t.Errorf("%s: %v, scipy slope %v", c.Name, res, c.Slope)
		}
	}
}

// TestCensoredSQLDocExample checks the example in the header of censored.go
// (derived by hand there).
func TestCensoredSQLDocExample(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	insertK(t, db, "doc", []float64{day, 2 * day, 3 * day, 4 * day, 5 * day},
		[]any{"<", nil, "<", "", int64(0)}, anys([]float64{1, 2, 1, 3, 4}))
	want := `{"n":5,"censored":2,"censored_share":0.4,"limits":1,"highest_limit":1,"recensored_at":null,"s":7,"var_s":15.666666666666666,"z":1.5158734579197342,"p":0.1295513529044089,"tau":0.7378647873726218,"concordant":8,"discordant":1,"ambiguous_pairs":1,"tied_pairs":0}`
	if got := queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'doc'`); got != want {
		t.Errorf("doc example:\n got %v\nwant %s", got, want)
	}
	// z = (7 − 1)/√(47/3), tau = 7/√90, p = erfc(|z|/√2).
	if z := 6 / math.Sqrt(47.0/3); math.Abs(z-1.5158734579197342) > 1e-15 || math.Abs(7/math.Sqrt(90)-0.7378647873726218) > 1e-15 || math.Abs(math.Erfc(z/math.Sqrt2)-0.1295513529044089) > 1e-15 {
		t.Error("hand-derived numbers in the doc example are inconsistent")
	}
}

func TestCensoredSQLMarksOptionsErrors(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	tt := []float64{day, 2 * day, 3 * day, 4 * day, 5 * day, 6 * day}
	insertK(t, db, "multi", tt, []any{"<", nil, " < ", ">", int64(-1), int64(1)}, anys([]float64{5, 3, 1, 6, 2, 8}))
	m := jsonMap(t, queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'multi'`))
	want, err := stats.CensoredMannKendall([]float64{5, 3, 1, 6, 2, 8}, []stats.Censoring{-1, 0, -1, 1, -1, 1})
	if err != nil {
		t.Fatal(err)
	}
	if num(t, m, "s") != float64(want.S) || num(t, m, "var_s") != want.VarS || num(t, m, "limits") != 3 || num(t, m, "highest_limit") != 5 || num(t, m, "censored") != 5 {
		t.Errorf("multi: %v, want S %d var %v", m, want.S, want.VarS)
	}
	// recensor=highest: everything below 5 becomes "<5" (3 and "<1", "<2").
	m = jsonMap(t, queryVal(t, db, `SELECT censored_mann_kendall(t, y, x, 'recensor=highest') FROM kobs WHERE g = 'multi'`))
	rw, _ := stats.CensoredMannKendall([]float64{5, 5, 5, 6, 5, 8}, []stats.Censoring{-1, -1, -1, 1, -1, 1})
	if num(t, m, "recensored_at") != 5 || num(t, m, "s") != float64(rw.S) || num(t, m, "var_s") != rw.VarS {
		t.Errorf("recensor: %v, want S %d var %v", m, rw.S, rw.VarS)
	}
	// Every value censored: no ordered pair, no slope.
	insertK(t, db, "allcens", tt[:4], []any{"<", "<", "<", "<"}, anys([]float64{1, 2, 1, 5}))
	m = jsonMap(t, queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'allcens'`))
	if m["p"] != nil || m["tau"] != nil || num(t, m, "s") != 0 || num(t, m, "ambiguous_pairs") != 6 {
		t.Errorf("all censored: %v", m)
	}
	m = jsonMap(t, queryVal(t, db, `SELECT censored_sen_slope(t, y, x) FROM kobs WHERE g = 'allcens'`))
	if m["slope_per_year"] != nil || num(t, m, "censored_share") != 1 {
		t.Errorf("all censored slope: %v", m)
	}
	// Two values in one season of one cycle: no covariance correction, and
	// the note says why.
	m = jsonMap(t, queryVal(t, db, `SELECT censored_seasonal_kendall(t, y, x, '1y', 2) FROM kobs WHERE g = 'multi'`))
	if m["p_dependent"] != nil || m["cycles"] != nil || !strings.Contains(fmt.Sprint(m["dependent_note"]), "holds more than one value") || m["p"] == nil {
		t.Errorf("several values per cell: %v", m)
	}
	// Fewer than 2 rows → NULL.
	if v := queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'allcens' AND t = ?`, day); v != nil {
		t.Errorf("one row: %v", v)
	}
	// Window: a running test over the rows so far, the last equals the aggregate.
	var last string
	rows, err := db.Query(`SELECT censored_mann_kendall(t, y, x) OVER (ORDER BY t) FROM kobs WHERE g = 'multi'`)
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var v *string
		if err := rows.Scan(&v); err != nil {
			t.Fatal(err)
		}
		if v != nil {
			last = *v
		}
	}
	rows.Close()
	if agg := queryVal(t, db, `SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'multi'`); last != agg {
		t.Errorf("window last %s, aggregate %v", last, agg)
	}
	insertK(t, db, "dup", []float64{day, day}, nil, anys([]float64{1, 2}))
	for q, wantErr := range map[string]string{
		`SELECT censored_mann_kendall(t, y, 'x') FROM kobs WHERE g = 'multi'`:                  `censored_mann_kendall: argument mark: "x" is not a censoring mark`,
		`SELECT censored_mann_kendall(t, y, 2) FROM kobs WHERE g = 'multi'`:                    `argument mark: 2 is not a censoring mark`,
		`SELECT censored_mann_kendall(t, y) FROM kobs WHERE g = 'multi'`:                       `wrong number of arguments`,
		`SELECT censored_mann_kendall(t, y, x, 'recensor=lowest') FROM kobs WHERE g = 'multi'`: `option recensor="lowest"`,
		`SELECT censored_mann_kendall(t, y, x) FROM kobs WHERE g = 'dup'`:                      `two rows have the same time 1970-01-02T00:00:00Z`,
		`SELECT censored_seasonal_kendall(t, y, x, 'soon') FROM kobs WHERE g = 'multi'`:        `censored_seasonal_kendall: argument period`,
		`SELECT censored_sen_slope(t, y, x, 0.9, 1) FROM kobs WHERE g = 'multi'`:               `censored_sen_slope: wrong number of arguments`,
		`SELECT censored_sen_slope(t, y, x, 1) FROM kobs WHERE g = 'multi'`:                    `censored_sen_slope: argument confidence = 1 must be strictly between 0 and 1`,
	} {
		var v any
		err := db.QueryRow(q).Scan(&v)
		if err == nil || !strings.Contains(err.Error(), wantErr) {
			t.Errorf("%s: error %v, want %q", q, err, wantErr)
		}
	}
}

// TestCensoredValuesRefused: functions without censoring support never read
// a reported censored value ('<5') as a number; series aggregates name the
// count and the alternatives, and the censored functions read the mark from
// the text.
func TestCensoredValuesRefused(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	var tt []float64
	var ys []any
	for i := 0; i < 12; i++ {
		tt = append(tt, 1.6e9+float64(i)*day)
		switch i % 4 {
		case 0:
			ys = append(ys, "<2")
		case 1:
			ys = append(ys, "< 0.5")
		default:
			ys = append(ys, float64(i))
		}
	}
	insertK(t, db, "lab", tt, nil, ys)
	for _, fn := range []string{"trend_fit(t, y)", "trend_slope(t, y)", "sample_acf(t, y, 1)", "correlogram(t, y, 2)", "ljung_box(t, y, 2)", "mann_kendall(t, y)", "sen_slope(t, y)", "pettitt(t, y)"} {
		name := fn[:strings.Index(fn, "(")]
		var v any
		err := db.QueryRow(`SELECT ` + fn + ` FROM kobs WHERE g = 'lab'`).Scan(&v)
		if err == nil || !strings.Contains(err.Error(), name+": 6 of 12 values are censored (e.g. \"<2\")") || !strings.Contains(err.Error(), "censored_mann_kendall, censored_seasonal_kendall or censored_sen_slope") {
			t.Errorf("%s: %v, %v", fn, v, err)
		}
	}
	// As a window function: the first frame holding a censored row is an error.
	var w any
	if err := db.QueryRow(`SELECT trend_slope(t, y) OVER (ORDER BY t ROWS BETWEEN 1 PRECEDING AND CURRENT ROW) FROM kobs WHERE g = 'lab'`).Scan(&w); err == nil || !strings.Contains(err.Error(), "trend_slope: 1 of 1 values are censored") {
		t.Errorf("window: %v %v", w, err)
	}
	// Row-wise functions fail on the row.
	var v any
	if err := db.QueryRow(`SELECT regr_slope(y, t) FROM kobs WHERE g = 'lab'`).Scan(&v); err == nil || !strings.Contains(err.Error(), `"<2" is a censored value`) {
		t.Errorf("regr_slope: %v %v", v, err)
	}
	// An explicit substitute is the caller's choice and works.
	if err := db.QueryRow(`SELECT trend_slope(t, CASE WHEN y LIKE '<%' THEN 0 ELSE y END) FROM kobs WHERE g = 'lab'`).Scan(&v); err != nil || v == nil {
		t.Errorf("explicit substitute: %v %v", v, err)
	}
	// The censored functions read '<2' and '< 0.5' as marked limits.
	got := jsonMap(t, queryVal(t, db, `SELECT censored_mann_kendall(t, y, NULL) FROM kobs WHERE g = 'lab'`))
	yy := make([]float64, 12)
	cc := make([]stats.Censoring, 12)
	for i := range yy {
		switch i % 4 {
		case 0:
			yy[i], cc[i] = 2, stats.BelowLimit
		case 1:
			yy[i], cc[i] = 0.5, stats.BelowLimit
		default:
			yy[i] = float64(i)
		}
	}
	want, _ := stats.CensoredMannKendall(yy, cc)
	if num(t, got, "s") != float64(want.S) || num(t, got, "var_s") != want.VarS || num(t, got, "limits") != 2 || num(t, got, "censored") != 6 {
		t.Errorf("censored_mann_kendall on reported values: %v, want S %d var %v", got, want.S, want.VarS)
	}
	if err := db.QueryRow(`SELECT censored_mann_kendall(t, y, '>') FROM kobs WHERE g = 'lab'`).Scan(&v); err == nil || !strings.Contains(err.Error(), `value "<2" and mark ">" disagree`) {
		t.Errorf("disagreeing mark: %v %v", v, err)
	}
}

// TestCensoredSenIntervalSQL: the interval keys of censored_sen_slope are
// stats.AkritasTheilSenInterval's ends per year (checked there against a
// brute force and scipy.stats.theilslopes), with the confidence argument
// and its default; an unbounded end is null.
func TestCensoredSenIntervalSQL(t *testing.T) {
	db := openKendallStore(t)
	day := 86400.0
	var tt, yy []float64
	var marks []any
	var cc []stats.Censoring
	for i := 0; i < 30; i++ {
		tt = append(tt, 1.6e9+float64(i)*7*day)
		v := 2 + 0.05*float64(i) + float64((i*7)%5)/2
		switch {
		case v < 3:
			yy, cc, marks = append(yy, 3), append(cc, stats.BelowLimit), append(marks, "<")
		default:
			yy, cc, marks = append(yy, v), append(cc, stats.Uncensored), append(marks, nil)
		}
	}
	insertK(t, db, "ci", tt, marks, anys(yy))
	for _, q := range []struct {
		sql  string
		conf float64
	}{{`SELECT censored_sen_slope(t, y, x) FROM kobs WHERE g = 'ci'`, 0.95}, {`SELECT censored_sen_slope(t, y, x, NULL) FROM kobs WHERE g = 'ci'`, 0.95}, {`SELECT censored_sen_slope(t, y, x, 0.8) FROM kobs WHERE g = 'ci'`, 0.8}} {
		m := jsonMap(t, queryVal(t, db, q.sql))
		want, err := stats.AkritasTheilSenInterval(tt, yy, cc, q.conf)
		if err != nil {
			t.Fatal(err)
		}
		spy := timefmt.SecondsPerYear
		if math.IsNaN(want.CILower) || math.IsNaN(want.CIUpper) {
			t.Fatalf("%s: test data give an unbounded interval %+v", q.sql, want)
		}
		if num(t, m, "lower") != want.CILower*spy || num(t, m, "upper") != want.CIUpper*spy || num(t, m, "confidence") != q.conf || num(t, m, "var_s") != want.VarS {
			t.Errorf("%s: %v, want %+v", q.sql, m, want)
		}
		if !(num(t, m, "lower") <= num(t, m, "slope_per_year") && num(t, m, "slope_per_year") <= num(t, m, "upper")) {
			t.Errorf("%s: slope outside its interval: %v", q.sql, m)
		}
	}
	// Three values: S(β) stays within ±1.96·√Var(S) everywhere.
	m := jsonMap(t, queryVal(t, db, `SELECT censored_sen_slope(t, y, x) FROM kobs WHERE g = 'ci' AND t < ?`, tt[3]))
	if m["lower"] != nil || m["upper"] != nil || m["slope_per_year"] == nil {
		t.Errorf("three values: %v, want null ends", m)
	}
}
