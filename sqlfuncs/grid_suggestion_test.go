package sqlfuncs_test

import (
	"regexp"
	"strings"
	"testing"
)

// A grid error's suggestion can be acted on where the user is: every lag
// function that reports readings off its inferred grid suggests a step=
// option, and that option, given in the function's documented options
// argument, is accepted. For ljung_box and box_pierce (and their _p forms)
// the options come after fitdf; the suggestion put in fitdf's place gets an
// error that names the call with it in the right place, and that call runs.
func TestGridErrorSuggestionIsActionableSQL(t *testing.T) {
	db := openKendallStore(t)
	const day = 86400.0
	// Daily readings and one at 138.9 h (5.79 days): it shares the 1d slot
	// of the 6th day.
	tt := []float64{0, day, 2 * day, 3 * day, 4 * day, 5 * day, 500000, 6 * day, 7 * day, 8 * day}
	y := []any{1.0, 2.0, 1.5, 3.0, 2.0, 4.0, 1.0, 2.0, 3.0, 1.0}
	insertK(t, db, "off", tt, y, y)
	suggested := regexp.MustCompile(`step=([0-9.]+[a-z]+)`)
	calls := map[string]string{ // the call without and with the options argument
		"correlogram(t, y, 2)":            "correlogram(t, y, 2, '%s')",
		"sample_acf(t, y, 1)":             "sample_acf(t, y, 1, '%s')",
		"sample_acvf(t, y, 1)":            "sample_acvf(t, y, 1, '%s')",
		"cross_corr(t, x, y, 1)":          "cross_corr(t, x, y, 1, '%s')",
		"cross_correlogram(t, x, y, 1)":   "cross_correlogram(t, x, y, 1, '%s')",
		"ljung_box(t, y, 2)":              "ljung_box(t, y, 2, 0, '%s')",
		"ljung_box_p(t, y, 2)":            "ljung_box_p(t, y, 2, 0, '%s')",
		"box_pierce(t, y, 2)":             "box_pierce(t, y, 2, 0, '%s')",
		"box_pierce_p(t, y, 2)":           "box_pierce_p(t, y, 2, 0, '%s')",
		"correlogram(t, y, 2, 'fitdf=1')": "correlogram(t, y, 2, 'fitdf=1, %s')",
	}
	for call, with := range calls {
		var v any
		err := db.QueryRow(`SELECT ` + call + ` FROM kobs WHERE g = 'off'`).Scan(&v)
		if err == nil {
			t.Fatalf("%s: no grid error on the off-grid series", call)
		}
		m := suggested.FindStringSubmatch(err.Error())
		if m == nil {
			t.Errorf("%s: the grid error suggests no step: %v", call, err)
			continue
		}
		opt := "step=" + m[1]
		fixed := strings.Replace(with, "%s", opt, 1)
		if err := db.QueryRow(`SELECT ` + fixed + ` FROM kobs WHERE g = 'off'`).Scan(&v); err != nil || v == nil {
			t.Errorf("%s suggests %s, but %s gives %v, %v", call, opt, fixed, v, err)
		}
		fn := call[:strings.Index(call, "(")]
		if !strings.HasPrefix(fn, "ljung_box") && !strings.HasPrefix(fn, "box_pierce") {
			continue
		}
		// The suggestion put where fitdf goes: the error shows where it belongs.
		wrong := strings.Replace(call, ")", ", '"+opt+"')", 1)
		err = db.QueryRow(`SELECT ` + wrong + ` FROM kobs WHERE g = 'off'`).Scan(&v)
		want := fn + "(t, y, 2, 0, '" + opt + "')"
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("%s: error %v, want one naming %s", wrong, err, want)
			continue
		}
		if err := db.QueryRow(`SELECT ` + want + ` FROM kobs WHERE g = 'off'`).Scan(&v); err != nil || v == nil {
			t.Errorf("the call the error names, %s, gives %v, %v", want, v, err)
		}
	}
}
