package sqlfuncs_test

// mann_kendall(..., 'correct=hamed-rao') against the exact-rational
// reference testdata/reference/hamed_rao_exact.json (hamed_rao_exact.py:
// Sen slope, detrended values and their ranks in exact decimal arithmetic
// with Python's fractions.Fraction). Tolerances: 1e-9 relative, 1e-7
// relative for p-values.

import (
	"encoding/json"
	"math"
	"os"
	"strings"
	"testing"
)

func TestMannKendallHamedRaoExactSQL(t *testing.T) {
	b, err := os.ReadFile(kRefPath("hamed_rao_exact.json"))
	if err != nil {
		t.Fatal(err)
	}
	var f struct {
		Cases []struct {
			Name       string    `json:"name"`
			T          []float64 `json:"t"`
			Y          []float64 `json:"y"`
			Bound      string    `json:"bound"`
			Factor     *float64  `json:"factor"`
			LagsUsed   int       `json:"lags_used"`
			PCorrected *float64  `json:"p_corrected"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(b, &f); err != nil {
		t.Fatal(err)
	}
	db := openKendallStore(t)
	for _, c := range f.Cases {
		insertK(t, db, c.Name, c.T, nil, anys(c.Y))
		m := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao, acf_bound='||?) FROM kobs WHERE g = ?`, c.Bound, c.Name))
		nf := func(p *float64) float64 {
			if p == nil {
				return math.NaN()
			}
			return *p
		}
		got, want := num(t, m, "correction_factor"), nf(c.Factor)
		if math.IsNaN(want) != math.IsNaN(got) || (!math.IsNaN(want) && !kClose(got, want, 1e-9)) {
			t.Errorf("%s: correction_factor %v, exact reference %v", c.Name, got, want)
		}
		if math.IsNaN(want) && m["correction_note"] == nil {
			t.Errorf("%s: null factor without correction_note: %v", c.Name, m)
		}
		if int(num(t, m, "acf_lags_used")) != c.LagsUsed || m["acf_bound"] != c.Bound {
			t.Errorf("%s: lags %v bound %v, reference %d %s", c.Name, m["acf_lags_used"], m["acf_bound"], c.LagsUsed, c.Bound)
		}
		gp, wp := num(t, m, "p_corrected"), nf(c.PCorrected)
		if math.IsNaN(wp) != math.IsNaN(gp) || (!math.IsNaN(wp) && !kClose(gp, wp, 1e-7)) {
			t.Errorf("%s: p_corrected %v, exact reference %v", c.Name, gp, wp)
		}
	}
}

// sen_slope(..., 'variance=hamed-rao') computes the interval from the
// var_s_corrected of mann_kendall(..., 'correct=hamed-rao') with the same
// options, and reports which variance it used. The ranks follow the
// documented rule C = z·√var_s, lower = round((N − C)/2)-th slope, upper =
// (round((N + C)/2) + 1)-th.
func TestSenSlopeIntervalVarianceSQL(t *testing.T) {
	db := openKendallStore(t)
	const t0, day = 1600000000.0, 86400.0
	var tt, y []float64
	e := 0.0
	for i := 0; i < 60; i++ {
		e = 0.8*e + math.Sin(float64(i)*1.7)
		tt = append(tt, t0+day*float64(i))
		y = append(y, math.Round((0.02*float64(i)+e)*10)/10)
	}
	insertK(t, db, "ar", tt, nil, anys(y))
	for _, bound := range []string{"normal", "anderson"} {
		mk := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y, 'correct=hamed-rao, acf_bound='||?) FROM kobs WHERE g = 'ar'`, bound))
		sen := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y, 0.9, 'variance=hamed-rao, acf_bound='||?) FROM kobs WHERE g = 'ar'`, bound))
		v := num(t, mk, "var_s_corrected")
		if sen["interval_variance"] != "hamed-rao" || num(t, sen, "var_s") != v || num(t, sen, "correction_factor") != num(t, mk, "correction_factor") {
			t.Fatalf("%s: sen_slope %v; mann_kendall var_s_corrected %v", bound, sen, v)
		}
		N := num(t, sen, "n_pairs")
		c := 1.6448536269514722 * math.Sqrt(v) // z_{0.95}
		lo := math.Max(math.RoundToEven((N-c)/2), 1)
		hi := math.Min(math.RoundToEven((N+c)/2)+1, N)
		if num(t, sen, "lower_rank") != lo || num(t, sen, "upper_rank") != hi {
			t.Errorf("%s: ranks %v..%v, rule gives %v..%v", bound, sen["lower_rank"], sen["upper_rank"], lo, hi)
		}
	}
	plain := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y, 0.9, 'variance=mann-kendall') FROM kobs WHERE g = 'ar'`))
	mk := jsonMap(t, queryVal(t, db, `SELECT mann_kendall(t, y) FROM kobs WHERE g = 'ar'`))
	if plain["interval_variance"] != "mann-kendall" || num(t, plain, "var_s") != num(t, mk, "var_s") {
		t.Errorf("variance=mann-kendall: %v", plain)
	}
	// A series exactly on a line: the corrected variance is undefined, so
	// is the interval, and interval_note says why.
	insertK(t, db, "line", tt[:9], nil, []any{1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0})
	line := jsonMap(t, queryVal(t, db, `SELECT sen_slope(t, y, 0.95, 'variance=hamed-rao') FROM kobs WHERE g = 'line'`))
	if line["lower"] != nil || line["upper"] != nil || line["interval_note"] == nil || num(t, line, "slope_per_year") != 365.25 {
		t.Errorf("exact line: %v", line)
	}
	for _, bad := range []string{"variance=hr", "max_lag=3", "variance=hamed-rao, acf_bound=wide"} {
		var v any
		if err := db.QueryRow(`SELECT sen_slope(t, y, 0.95, ?) FROM kobs WHERE g = 'ar'`, bad).Scan(&v); err == nil || !strings.Contains(err.Error(), "sen_slope") {
			t.Errorf("options %q: error %v, want one naming sen_slope", bad, err)
		}
	}
}
