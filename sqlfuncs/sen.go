package sqlfuncs

// Theil–Sen slope.
//
//	sen_slope(t, y [, confidence [, options]])   aggregate/window → TEXT (JSON) or NULL
//	sen_slope_per_year(t, y)         aggregate/window → REAL or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (args.go). y:
// INTEGER, REAL or numeric TEXT. confidence: REAL strictly between 0 and 1
// (default 0.95; NULL means the default). options: TEXT "key=value, ..." with
//
//	variance=mann-kendall|hamed-rao
//	                 the Var(S) the interval is computed from (default
//	                 mann-kendall: the tie-corrected variance of
//	                 mann_kendall(t, y)); hamed-rao uses var_s_corrected of
//	                 mann_kendall(t, y, 'correct=hamed-rao, ...') with the
//	                 same max_lag and acf_bound, so the interval pairs with
//	                 that test's p_corrected
//	max_lag=L, acf_bound=normal|anderson
//	                 variance=hamed-rao only: as for mann_kendall
//
// Interval–test pairing. An interval from the same variance as a test
// excludes 0 when that test rejects at 1 − confidence, up to the
// discreteness stated in stats/kendall.go (half a rank, plus half a rank per
// pair with equal y); pair the uncorrected interval with mann_kendall's p
// and the hamed-rao one with its p_corrected.
//
// NULL, short input, order. Rows with NULL y are skipped; a NULL t is an
// error. Rows may come in any order; the series is sorted by t and two rows
// with the same t are an error naming the time. Fewer than 2 rows → NULL.
// Both are also window functions with any frame.
//
// Method: the Theil–Sen slope (Theil 1950, Sen 1968) over all
// N = n(n−1)/2 pairs and Sen's rank interval from the chosen var_s, both in
// stats/sen.go (SenSlope: the median of the pairwise slopes, the mean of
// the two middle ones for even N; the interval's ranks M1, M2 + 1 with their
// rounding and clamping, as scipy.stats.theilslopes). Both are selected
// exactly, without listing every slope, so long series are fine. Slopes are
// reported per year (× 31 557 600 s; 1 y = 365.25 d). The intercept is
// median(y) − slope_per_year · median(t)/31 557 600 s: the line through
// (median t, median y), evaluated at t = 0 (1970-01-01T00:00:00Z); this is
// scipy.stats.theilslopes' default ("separate") intercept with x = years
// since the unix epoch. For a value at a time T use
// median_y + slope_per_year·(T − median_t)/31 557 600.
//
// JSON keys: n, n_pairs, slope_per_year, lower, upper, confidence,
// lower_rank, upper_rank (the 1-based order statistics used; when a rank is
// clamped to 1 or N the interval covers less than the nominal confidence),
// intercept, median_t (ISO 8601 UTC), median_y, interval_variance
// ("mann-kendall" or "hamed-rao"), var_s (the variance used); with
// variance=hamed-rao also correction_factor and interval_note (null, or why
// lower, upper and the ranks are null: the corrected variance is undefined).
//
// Example (demo store; numbers depend on the demo data):
//
//	SELECT series_id, sen_slope_per_year(t, value) AS per_year,
//	       sen_slope(t, value)->>'lower' AS lo, sen_slope(t, value)->>'upper' AS hi
//	FROM readings GROUP BY series_id ORDER BY per_year DESC;
//
// For y = 1, 2, 3, 5, 4 at daily steps from 2020-09-13T12:26:40Z (unix
// 1600000000; tested in kendall_test.go) the ten pair slopes per day are
// −1, 1/2, 2/3, 3/4, 1, 1, 1, 4/3, 3/2, 2, so sen_slope_per_year = 365.25
// and sen_slope(t, y) is
//
//	{"n":5,"n_pairs":10,"slope_per_year":365.25,"lower":-365.25,"upper":730.5,
//	 "confidence":0.95,"lower_rank":1,"upper_rank":10,
//	 "intercept":-18517.51851851852,"median_t":"2020-09-15T12:26:40Z","median_y":3,
//	 "interval_variance":"mann-kendall","var_s":16.666666666666668}
//
// (C = 1.96·√16.67 ≈ 8.0, M1 = 1, M2 + 1 = 10: with n = 5 the ranks reach
// the ends and the interval is just the range of the slopes.)

import (
	"database/sql/driver"
	"fmt"
	"math"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

func senConfidence(fn string, opts []driver.Value) (float64, error) {
	if len(opts) == 0 || opts[0] == nil {
		return 0.95, nil
	}
	var c float64
	switch v := opts[0].(type) {
	case float64:
		c = v
	case int64:
		c = float64(v)
	default:
		f, ok, err := argValue(fn, "confidence", v)
		if err != nil || !ok {
			return 0, fmt.Errorf("%s: argument confidence must be a number strictly between 0 and 1, got %s", fn, describe(v))
		}
		c = f
	}
	if !(c > 0 && c < 1) {
		return 0, fmt.Errorf("%s: argument confidence = %v must be strictly between 0 and 1 (e.g. 0.95)", fn, c)
	}
	return c, nil
}

// senIntervalOptions parses sen_slope's options argument.
func senIntervalOptions(fn string, v driver.Value) (hamedRao bool, o stats.HamedRaoOptions, err error) {
	text, err := argText(fn, "options", v)
	if err != nil {
		return false, o, err
	}
	m, err := parseSpec(fn, text, "variance", "max_lag", "acf_bound")
	if err != nil {
		return false, o, err
	}
	switch c := strings.ToLower(m["variance"]); c {
	case "", "mann-kendall":
	case "hamed-rao":
		hamedRao = true
	default:
		return false, o, fmt.Errorf("%s: option variance=%q: want mann-kendall or hamed-rao", fn, c)
	}
	if _, ok := m["max_lag"]; ok && !hamedRao {
		return false, o, fmt.Errorf("%s: option max_lag needs variance=hamed-rao", fn)
	}
	if _, ok := m["acf_bound"]; ok && !hamedRao {
		return false, o, fmt.Errorf("%s: option acf_bound needs variance=hamed-rao", fn)
	}
	if hamedRao {
		spec := "correct=hamed-rao"
		for _, k := range []string{"max_lag", "acf_bound"} {
			if s, ok := m[k]; ok {
				spec += ", " + k + "=" + s
			}
		}
		mo, err := parseMKOptions(fn, spec)
		if err != nil {
			return false, o, err
		}
		o = mo.hr
	}
	return hamedRao, o, nil
}

func senSlopeValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "sen_slope"
	conf, err := senConfidence(fn, opts)
	if err != nil {
		return nil, err
	}
	var hamedRao bool
	var hro stats.HamedRaoOptions
	if len(opts) > 1 && opts[1] != nil {
		if hamedRao, hro, err = senIntervalOptions(fn, opts[1]); err != nil {
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
	varS, factor, note := mk.VarS, math.NaN(), ""
	if hamedRao {
		if r.Len() < 3 {
			varS, note = math.NaN(), "the Hamed–Rao correction needs at least 3 values"
		} else {
			hr, err := stats.HamedRaoWith(r.T, r.Y, mk, hro, nil)
			if err != nil {
				return nil, fmt.Errorf("%s: %v", fn, err)
			}
			varS, factor, note = hr.VarS, hr.Factor, hr.Undefined
		}
	}
	interval := varS >= 0
	c := conf
	if !interval {
		c = 0
	}
	// Values scaled by 2^−k (stats.UnitScale; k = 0 unless magnitudes are
	// extreme) so differences of values near ±1.8e308 do not overflow;
	// every result in the values' unit is multiplied back by 2^k.
	ys, k := stats.UnitScale(r.Y)
	res, err := stats.SenSlopeWithVar(r.T, ys, c, varS)
	if err != nil {
		return nil, fmt.Errorf("%s: %v", fn, err)
	}
	const spy = timefmt.SecondsPerYear
	intercept := math.Ldexp(res.MedianY-res.Slope*spy*(res.MedianT/spy), k)
	slope := math.Ldexp(res.Slope*spy, k)
	var b jsonObj
	b.int("n", int64(res.N))
	b.int("n_pairs", res.Pairs)
	b.num("slope_per_year", slope)
	if interval {
		b.num("lower", math.Ldexp(res.Lower*spy, k))
		b.num("upper", math.Ldexp(res.Upper*spy, k))
	} else {
		b.raw("lower", "null")
		b.raw("upper", "null")
	}
	b.num("confidence", conf)
	if interval {
		b.int("lower_rank", res.LowerRank)
		b.int("upper_rank", res.UpperRank)
	} else {
		b.raw("lower_rank", "null")
		b.raw("upper_rank", "null")
	}
	b.num("intercept", intercept)
	b.str("median_t", isoTime(res.MedianT))
	b.num("median_y", math.Ldexp(res.MedianY, k))
	if hamedRao {
		b.str("interval_variance", "hamed-rao")
	} else {
		b.str("interval_variance", "mann-kendall")
	}
	b.num("var_s", varS)
	if hamedRao {
		b.num("correction_factor", factor)
		if note != "" {
			b.str("interval_note", note)
		} else {
			b.raw("interval_note", "null")
		}
	}
	return b.String(), nil
}

func senPerYearValue(r Rows, opts []driver.Value) (driver.Value, error) {
	if r.Len() < 2 {
		return nil, nil
	}
	ys, k := stats.UnitScale(r.Y) // as in sen_slope
	s, err := stats.SenMedian(r.T, ys)
	if err != nil {
		return nil, fmt.Errorf("sen_slope_per_year: %v", err)
	}
	return math.Ldexp(s*timefmt.SecondsPerYear, k), nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "sen_slope", Signature: "sen_slope(t, y [, confidence [, 'variance=mann-kendall|hamed-rao, max_lag=<L>, acf_bound=normal|anderson']])", Kind: Aggregate,
			Summary: "JSON {slope_per_year, lower, upper, intercept, n_pairs, interval_variance, ...}: Theil–Sen median of pairwise slopes (exact, O(n) memory) with the rank-based interval from the variance of the paired test (Mann–Kendall by default, Hamed–Rao corrected on request; default confidence 0.95)"},
		argNames: []string{"t", "y", "confidence", "options"}, values: 1, minOptions: 0, maxOptions: 2,
		compute: senSlopeValue,
	})
	defineSeries(seriesSpec{
		doc: Doc{Name: "sen_slope_per_year", Signature: "sen_slope_per_year(t, y)", Kind: Aggregate,
			Summary: "Theil–Sen slope (median of pairwise slopes) in y-units per year of 365.25 d; NULL for fewer than 2 rows"},
		argNames: []string{"t", "y"}, values: 1, minOptions: 0, maxOptions: 0,
		compute: senPerYearValue,
	})
}
