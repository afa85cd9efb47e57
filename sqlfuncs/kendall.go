package sqlfuncs

// Mann–Kendall trend test.
//
//	mann_kendall(t, y [, options])   aggregate/window → TEXT (JSON) or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (args.go). y:
// INTEGER, REAL or numeric TEXT. options: TEXT "key=value, ..." with
//
//	correct=none|hamed-rao   variance correction for serial correlation
//	                         (default none)
//	max_lag=L                hamed-rao only: examine rank autocorrelation
//	                         lags 1..L (default every lag 1..n−1)
//	acf_bound=normal|anderson
//	                         hamed-rao only: the 5 % significance bound for
//	                         the rank autocorrelations (default normal)
//
// NULL, short input, order. Rows with NULL y are skipped; a NULL t is an
// error. Rows may come in any order; the series is sorted by t and two rows
// with the same t are an error naming the time. Fewer than 2 rows → NULL.
// Also a window function with any frame. The options must be the same on
// every row of a group.
//
// Method: the Mann–Kendall test (Mann 1945) with Kendall's tie-corrected
// variance and tau-b (Kendall 1975); formulas, continuity correction and
// conventions in stats/kendall.go (MannKendall). s is S, var_s is Var(S),
// z and p the two-sided normal approximation, tau is tau-b; z and p are
// calibrated under the null model of independent, identically distributed
// values. correct=hamed-rao applies the variance correction for serial
// correlation of Hamed & Rao (1998), in stats/hamedrao.go (detrending by the
// Sen slope, rank autocorrelations, the two significance bounds, exact rank
// ties): correction_factor is its n/n*_s, var_s_corrected = var_s ·
// correction_factor, and z_corrected, p_corrected follow from it. The lags
// count rows, so the correction presumes (near-)regular sampling. Needs
// n ≥ 3 (else the corrected fields are null); when every detrended value is
// equal correction_factor is null with the reason in correction_note, and a
// factor ≤ 0 also leaves the corrected fields null.
//
// JSON keys: n, s, var_s, z, p, tau, concordant, discordant, tied_pairs
// (pairs with equal y), tie_groups; with correct=hamed-rao also correction
// ("hamed-rao"), correction_factor, var_s_corrected, z_corrected,
// p_corrected, acf_lags_used (significant lags kept), acf_max_lag,
// acf_bound ("normal" or "anderson"), acf_threshold (1.959964/√n; null for
// anderson, whose bound depends on the lag), sen_slope_per_year (the
// detrending slope), correction_note (null, or why the corrected fields are
// null). Undefined values (z, p when var_s = 0; tau when every y is equal)
// are null.
//
// Example (demo store; the numbers depend on the demo data):
//
//	SELECT series_id, mann_kendall(t, value)->>'p' AS p,
//	       mann_kendall(t, value, 'correct=hamed-rao')->>'p_corrected' AS p_hr
//	FROM readings GROUP BY series_id;
//
// For y = 1, 2, 3, 5, 4 at five increasing times (tested in kendall_test.go):
//
//	{"n":5,"s":8,"var_s":16.666666666666668,"z":1.7146428199482247,
//	 "p":0.08641073297370006,"tau":0.8,"concordant":9,"discordant":1,
//	 "tied_pairs":0,"tie_groups":0}
//
// (S = 9 − 1 = 8, var_s = 5·4·15/18, z = 7/√var_s.)

import (
	"database/sql/driver"
	"fmt"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

type mkOptions struct {
	hamedRao bool
	hr       stats.HamedRaoOptions
}

func parseMKOptions(fn string, v driver.Value) (mkOptions, error) {
	var o mkOptions
	text, err := argText(fn, "options", v)
	if err != nil {
		return o, err
	}
	m, err := parseSpec(fn, text, "correct", "max_lag", "acf_bound")
	if err != nil {
		return o, err
	}
	switch c := strings.ToLower(m["correct"]); c {
	case "", "none":
	case "hamed-rao":
		o.hamedRao = true
	default:
		return o, fmt.Errorf("%s: option correct=%q: want none or hamed-rao", fn, c)
	}
	if s, ok := m["max_lag"]; ok {
		if !o.hamedRao {
			return o, fmt.Errorf("%s: option max_lag needs correct=hamed-rao", fn)
		}
		k, err := strconv.Atoi(s)
		if err != nil || k < 1 {
			return o, fmt.Errorf("%s: option max_lag=%q must be a whole number ≥ 1", fn, s)
		}
		o.hr.MaxLag = k
	}
	if s, ok := m["acf_bound"]; ok {
		if !o.hamedRao {
			return o, fmt.Errorf("%s: option acf_bound needs correct=hamed-rao", fn)
		}
		switch strings.ToLower(s) {
		case "normal":
		case "anderson":
			o.hr.Bound = stats.BoundAnderson
		default:
			return o, fmt.Errorf("%s: option acf_bound=%q: want normal or anderson", fn, s)
		}
	}
	return o, nil
}

func mannKendallValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "mann_kendall"
	var o mkOptions
	if len(opts) > 0 {
		var err error
		if o, err = parseMKOptions(fn, opts[0]); err != nil {
			return nil, err
		}
	}
	if r.Len() < 2 {
		return nil, nil
	}
	mk, err := stats.MannKendall(r.Y)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	var b jsonObj
	b.int("n", int64(mk.N))
	b.int("s", mk.S)
	b.num("var_s", mk.VarS)
	b.num("z", mk.Z)
	b.num("p", mk.P)
	b.num("tau", mk.Tau)
	b.int("concordant", mk.Concor)
	b.int("discordant", mk.Discor)
	b.int("tied_pairs", mk.TiedY)
	b.int("tie_groups", mk.Ties)
	if o.hamedRao {
		b.str("correction", "hamed-rao")
		if mk.N < 3 {
			for _, k := range []string{"correction_factor", "var_s_corrected", "z_corrected", "p_corrected", "acf_lags_used", "acf_max_lag"} {
				b.raw(k, "null")
			}
			b.str("acf_bound", o.hr.Bound.String())
			b.raw("acf_threshold", "null")
			b.raw("sen_slope_per_year", "null")
			b.str("correction_note", "the Hamed–Rao correction needs at least 3 values")
		} else {
			hr, err := stats.HamedRaoWith(r.T, r.Y, mk, o.hr, nil)
			if err != nil {
				return nil, fmt.Errorf("%s: %v", fn, err)
			}
			b.num("correction_factor", hr.Factor)
			b.num("var_s_corrected", hr.VarS)
			b.num("z_corrected", hr.Z)
			b.num("p_corrected", hr.P)
			b.int("acf_lags_used", int64(hr.LagsUsed))
			b.int("acf_max_lag", int64(hr.MaxLag))
			b.str("acf_bound", hr.Bound.String())
			b.num("acf_threshold", hr.Threshold)
			b.num("sen_slope_per_year", hr.SenPerTime*timefmt.SecondsPerYear)
			if hr.Undefined != "" {
				b.str("correction_note", hr.Undefined)
			} else {
				b.raw("correction_note", "null")
			}
		}
	}
	return b.String(), nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "mann_kendall", Signature: "mann_kendall(t, y [, 'correct=hamed-rao, max_lag=<L>, acf_bound=normal|anderson'])", Kind: Aggregate,
			Summary: "JSON {n, s, var_s, z, p, tau, ...}: Mann–Kendall trend test (tie-corrected variance, continuity-corrected z, two-sided normal p, tau-b); correct=hamed-rao adds the Hamed–Rao (1998) serial-correlation correction"},
		argNames: []string{"t", "y", "options"}, values: 1, minOptions: 0, maxOptions: 1,
		compute: mannKendallValue,
	})
}
