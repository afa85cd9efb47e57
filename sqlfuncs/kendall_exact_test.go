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
