package sqlfuncs

// Lag statistics of a time series: sample autocovariance and autocorrelation
// by lag, the correlogram, and the Ljung–Box / Box–Pierce tests.
//
//	sample_acvf(t, y, lag [, options])          aggregate/window → REAL γ̂(lag)
//	sample_acf(t, y, lag [, options])           aggregate/window → REAL ρ̂(lag)
//	correlogram(t, y, max_lag [, options])      aggregate/window → JSON (below), max_lag ≤ 100,000
//	ljung_box(t, y, lags [, fitdf [, options]]) aggregate/window → JSON {q, df, p, n, ...}
//	box_pierce(t, y, lags [, fitdf [, options]]) aggregate/window → JSON {q, df, p, n, ...}
//	ljung_box_p(t, y, lags [, fitdf [, options]]) aggregate/window → REAL p
//	box_pierce_p(t, y, lags [, fitdf [, options]]) aggregate/window → REAL p
//
// Rows may come in any order; each group is sorted by t. A row whose value
// is NULL is an explicit missing reading: its value is skipped but its time
// counts when the step is inferred (below). Two rows with the same t and a
// value are an error.
//
// options is text of comma-separated key=value pairs: step=<duration> (the
// grid, below), detrend=linear|none and, for correlogram, fitdf=<k>.
// detrend=linear analyses the residuals of the least-squares straight line
// on the slot index instead of the values (stats.DetrendLinear: centred
// least squares, whose design has orthogonal columns; on a gap-free regular
// series exactly R's residuals(lm(x ~ time(x)))), so "is there dependence
// left once a linear trend is removed?" is one aggregate over the raw
// readings. Every statistic
// below is then of the residuals (ȳ is their mean, about 0); the tests' n
// and degrees of freedom are unchanged (fitdf is for fitted ARMA terms and
// is not adjusted for the line). With fewer than 3 readings, or readings on
// an exact line, the residuals are 0 and the autocorrelations NULL.
//
// The grid. Lag h means h sampling steps apart. The step is the option
// "step=<duration>" (s, min, h, d, w, y; 1y = 365.25 d), or else it is
// inferred as the most common spacing between the consecutive times of all
// rows, those with a NULL value included, so 1, NULL, 2, NULL, 3 at unit
// spacing has step 1 and two missing slots (spacings of 28–31 d count as one month = 1y/12, 89–92 d as one quarter =
// 1y/4, 365–366 d as one year; ties go to the smaller spacing). Each
// reading sits in slot round((t − t_first)/step); a reading half a step or
// more from its slot, or two readings in one slot, is an error that names
// the times and suggests a step. Slots without a reading are missing values.
//
// Method: the sample autocovariance γ̂(h) with divisor m(h) + h (the usual
// n without missing slots; R's acf with na.action = na.pass with them), the
// sample ACF ρ̂(h) = γ̂(h)/γ̂(0) clamped to [−1, 1] and the PACF α̂(h) by the
// Durbin–Levinson recursion are defined in stats/acf.go; the Ljung–Box and
// Box–Pierce statistics, their χ²(lags − fitdf) p-values and the n they use
// (the PRESENT readings, as R's Box.test) in stats/ljungbox.go. The same n
// gives the band 1.96/√n.
//
// NULL results: no readings, lag ≥ N (grid slots), a lag with no complete
// pair, a constant series (for ρ̂, α̂ and Q), for the tests lags ≥ n, and
// the p-values when lags − fitdf ≤ 0. The PACF is NULL from the first lag
// where the matrix [ρ̂(|i−j|)] is not positive definite or ρ̂ is undefined
// (with missing slots ρ̂ need not be positive definite), and at every later
// lag; pacf_null_from and pacf_note say where and why.
//
// correlogram JSON keys:
//
//	n              readings present
//	n_slots        grid slots N (first to last reading)
//	missing_slots  N − n
//	step_s, step   the grid step in seconds and as text (e.g. "1d", "30.4375d");
//	               null when there is a single reading and no step option
//	step_inferred  true when the step was inferred, false when given
//	t_first        time of the first reading (slot 0), ISO 8601 UTC
//	mean           ȳ
//	acvf0          γ̂(0)
//	fitdf          degrees of freedom subtracted for the Ljung–Box p-values
//	detrend        "linear" when the residuals of a straight line were
//	               analysed, else "none"
//	detrend_slope_per_year
//	               the removed line's slope in y per year (365.25 d): its
//	               change per slot divided by the step; null without
//	               detrend=linear, with a single reading or without a step.
//	               Fitted on slot positions, so it equals trend_slope(t, y)
//	               when every reading sits exactly on its slot (regular
//	               times; a reading off its slot by less than half a step
//	               counts at the slot)
//	band           1.96/√n
//	pacf_null_from the first lag ≤ max_lag whose pacf is null because of the
//	               PACF rule above (null when none is)
//	pacf_note      why pacf is null from that lag (null when none is)
//	lags           one object per lag 1..max_lag:
//	    lag, pairs (m(h)), acvf, acf, pacf, band,
//	    q_lb (cumulative Ljung–Box Q over lags 1..lag), df_lb, p_lb
//	    — null where undefined (including lags ≥ N).
//
// Examples (demo store):
//
//	SELECT series_id, sample_acf(t, value, 1) FROM readings GROUP BY series_id;
//	SELECT series_id, correlogram(t, value, 24, 'step=1d') AS c FROM readings GROUP BY series_id;
//	SELECT series_id, ljung_box(t, value, 10)->>'p' FROM readings GROUP BY series_id;
//	SELECT series_id, ljung_box_p(t, value, 24, 0, 'detrend=linear') FROM readings GROUP BY series_id;

import (
	"database/sql/driver"
	"fmt"
	"math"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

// maxLagArg bounds lag arguments; maxLagListArg bounds the max_lag of the
// functions that return one JSON object per lag (correlogram,
// cross_correlogram): 100,000 lags is already about 15 MB of JSON, and
// lags at or beyond the grid's slots carry no information.
const (
	maxLagArg     = 1 << 20
	maxLagListArg = 100_000
)

// lagOptions are the parsed trailing arguments of a lag function.
type lagOptions struct {
	step    float64 // 0 = infer
	fitdf   int
	detrend bool // residuals of a straight line on the slot index
}

// parseLagOptions reads "step=<duration>", "detrend=linear|none" (and
// "fitdf=<k>" when allowFitdf).
func parseLagOptions(fn string, v driver.Value, allowFitdf bool) (lagOptions, error) {
	var o lagOptions
	text, err := argText(fn, "options", v)
	if err != nil {
		return o, err
	}
	keys := []string{"step", "detrend"}
	if allowFitdf {
		keys = append(keys, "fitdf")
	}
	m, err := parseSpec(fn, text, keys...)
	if err != nil {
		return o, err
	}
	if s, ok := m["step"]; ok {
		d, err := timefmt.ParseDuration(s)
		if err != nil {
			return o, fmt.Errorf("%s: option step: %v", fn, err)
		}
		o.step = d
	}
	if s, ok := m["fitdf"]; ok {
		k, err := strconv.Atoi(s)
		if err != nil || k < 0 {
			return o, fmt.Errorf("%s: option fitdf=%q must be a whole number ≥ 0", fn, s)
		}
		o.fitdf = k
	}
	switch d := m["detrend"]; d {
	case "", "none":
	case "linear":
		o.detrend = true
	default:
		return o, fmt.Errorf("%s: option detrend=%q must be linear or none", fn, d)
	}
	return o, nil
}

// gridded places one group's rows on the grid and, with detrend=linear,
// replaces the values by their residuals from a straight line on the slot
// index (stats.DetrendLinear). lineSlope is that line's slope in y per year
// (NaN without detrend=linear, with fewer than 2 readings or without a
// step). The values come back multiplied by 2^−k (stats.UnitScale; k = 0
// unless their magnitudes are extreme): a mean or slope in the values' unit
// is multiplied back by 2^k, an autocovariance by 2^2k.
func gridded(fn string, r Rows, o lagOptions) (g stats.Grid, x []float64, lineSlope float64, k int, err error) {
	g, x, err = stats.RegularizeWithMissing(r.T, r.Y, r.MissingT, o.step)
	if err != nil {
		return g, nil, math.NaN(), 0, fmt.Errorf("%s: %v", fn, err)
	}
	x, k = stats.UnitScale(x)
	lineSlope = math.NaN()
	if o.detrend {
		var perSlot float64
		x, perSlot = stats.DetrendLinear(x)
		if g.Step > 0 {
			lineSlope = math.Ldexp(perSlot/g.Step*stats.SecondsPerYear, k)
		}
	}
	return g, x, lineSlope, k, nil
}

func detrendName(o lagOptions) string {
	if o.detrend {
		return "linear"
	}
	return "none"
}

func nullIfNaN(v float64) driver.Value {
	if math.IsNaN(v) {
		return nil
	}
	return v
}

// lagValue is the shared compute of sample_acvf and sample_acf.
func lagValue(fn string, acf bool) func(r Rows, opts []driver.Value) (driver.Value, error) {
	return func(r Rows, opts []driver.Value) (driver.Value, error) {
		lag, err := argInt(fn, "lag", opts[0], 0, maxLagArg)
		if err != nil {
			return nil, err
		}
		var o lagOptions
		if len(opts) > 1 {
			if o, err = parseLagOptions(fn, opts[1], false); err != nil {
				return nil, err
			}
		}
		if r.Len() == 0 {
			return nil, nil
		}
		_, x, _, k, err := gridded(fn, r, o)
		if err != nil {
			return nil, err
		}
		if int(lag) >= len(x) {
			return nil, nil
		}
		g0, gh, _ := stats.ACVFAtLag(x, int(lag))
		if !acf {
			return nullIfNaN(math.Ldexp(gh, 2*k)), nil
		}
		return nullIfNaN(stats.ACF([]float64{g0, gh})[1]), nil
	}
}

func correlogramValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "correlogram"
	maxLag, err := argInt(fn, "max_lag", opts[0], 0, maxLagListArg)
	if err != nil {
		return nil, err
	}
	var o lagOptions
	if len(opts) > 1 {
		if o, err = parseLagOptions(fn, opts[1], true); err != nil {
			return nil, err
		}
	}
	if r.Len() == 0 {
		return nil, nil
	}
	g, x, lineSlope, k, err := gridded(fn, r, o)
	if err != nil {
		return nil, err
	}
	c := stats.ComputeCorrelogram(x, int(maxLag), o.fitdf)
	c.Mean, c.ACVF0 = math.Ldexp(c.Mean, k), math.Ldexp(c.ACVF0, 2*k)
	for i := range c.Lags {
		c.Lags[i].ACVF = math.Ldexp(c.Lags[i].ACVF, 2*k)
	}
	band := 1.96 / math.Sqrt(float64(c.N))
	out := jsonObj{b: make([]byte, 0, 256+160*int(maxLag))}
	out.int("n", int64(c.N))
	out.int("n_slots", int64(c.NSlots))
	out.int("missing_slots", int64(c.Missing))
	if g.Step > 0 {
		out.num("step_s", g.Step)
		out.str("step", stats.FormatStep(g.Step))
	} else {
		out.raw("step_s", "null")
		out.raw("step", "null")
	}
	out.raw("step_inferred", strconv.FormatBool(o.step == 0))
	out.str("detrend", detrendName(o))
	out.num("detrend_slope_per_year", lineSlope)
	out.str("t_first", isoTime(r.T[0]))
	out.num("mean", c.Mean)
	out.num("acvf0", c.ACVF0)
	out.int("fitdf", int64(o.fitdf))
	out.num("band", band)
	if c.PACFStop.Lag > 0 {
		out.int("pacf_null_from", int64(c.PACFStop.Lag))
		out.str("pacf_note", c.PACFStop.Reason)
	} else {
		out.raw("pacf_null_from", "null")
		out.raw("pacf_note", "null")
	}
	var row jsonObj
	bandJSON := string(appendJSONNum(nil, band)) // the same in every lag
	out.array("lags", int(maxLag), func(b []byte, i int) []byte {
		h := i + 1
		l := stats.CorrelogramLag{ACVF: math.NaN(), ACF: math.NaN(), PACF: math.NaN(), LBQ: math.NaN(), LBP: math.NaN()}
		if h <= len(c.Lags) {
			l = c.Lags[h-1]
		}
		row.b = row.b[:0]
		row.int("lag", int64(h))
		row.int("pairs", int64(l.Pairs))
		row.num("acvf", l.ACVF)
		row.num("acf", l.ACF)
		row.num("pacf", l.PACF)
		row.raw("band", bandJSON)
		row.num("q_lb", l.LBQ)
		row.int("df_lb", int64(h-o.fitdf))
		row.num("p_lb", l.LBP)
		return append(append(b, row.b...), '}')
	})
	return out.String(), nil
}

// portmanteauValue computes Ljung–Box or Box–Pierce; scalarP selects the
// REAL p-value shortcut instead of JSON.
func portmanteauValue(fn string, boxPierce, scalarP bool) func(r Rows, opts []driver.Value) (driver.Value, error) {
	return func(r Rows, opts []driver.Value) (driver.Value, error) {
		lags, err := argInt(fn, "lags", opts[0], 1, maxLagArg)
		if err != nil {
			return nil, err
		}
		var fitdf int64
		if len(opts) > 1 && opts[1] != nil {
			if text, ok := opts[1].(string); ok && strings.Contains(text, "=") {
				// Options such as the step= a grid error suggests go after fitdf.
				return nil, fmt.Errorf("%s: argument fitdf must be a whole number, got %s; options go in the argument after fitdf: %s(t, y, %d, 0, '%s')",
					fn, describe(text), fn, lags, strings.ReplaceAll(text, "'", "''"))
			}
			if fitdf, err = argInt(fn, "fitdf", opts[1], 0, maxLagArg); err != nil {
				return nil, err
			}
		}
		var o lagOptions
		if len(opts) > 2 {
			if o, err = parseLagOptions(fn, opts[2], false); err != nil {
				return nil, err
			}
		}
		if r.Len() < 2 {
			return nil, nil
		}
		g, x, _, _, err := gridded(fn, r, o)
		if err != nil {
			return nil, err
		}
		res, ok := stats.SeriesPortmanteau(x, int(lags), int(fitdf), boxPierce)
		if !ok {
			return nil, nil
		}
		if scalarP {
			return nullIfNaN(res.P), nil
		}
		var out jsonObj
		out.num("q", res.Q)
		out.int("df", int64(res.DF))
		out.num("p", res.P)
		out.int("n", int64(res.N))
		out.int("lags", lags)
		out.int("fitdf", fitdf)
		out.int("n_slots", int64(g.NSlots))
		out.int("missing_slots", int64(g.Missing))
		out.str("step", stats.FormatStep(g.Step))
		out.str("detrend", detrendName(o))
		return out.String(), nil
	}
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "sample_acvf", Signature: "sample_acvf(t, y, lag [, 'step=<duration>, detrend=linear'])", Kind: Aggregate,
			Summary: "sample autocovariance γ̂(lag) = S(lag)/(m(lag)+lag) on the regular grid (divisor n without gaps; R acf na.pass convention with missing slots); NULL if lag ≥ slots"},
		argNames: []string{"t", "y", "lag", "options"}, values: 1, minOptions: 1, maxOptions: 2,
		compute: lagValue("sample_acvf", false),
	})
	defineSeries(seriesSpec{
		doc: Doc{Name: "sample_acf", Signature: "sample_acf(t, y, lag [, 'step=<duration>, detrend=linear'])", Kind: Aggregate,
			Summary: "sample autocorrelation ρ̂(lag) = γ̂(lag)/γ̂(0) on the regular grid; NULL for a constant series or lag ≥ slots"},
		argNames: []string{"t", "y", "lag", "options"}, values: 1, minOptions: 1, maxOptions: 2,
		compute: lagValue("sample_acf", true),
	})
	defineSeries(seriesSpec{
		doc: Doc{Name: "correlogram", Signature: "correlogram(t, y, max_lag [, 'step=<duration>, fitdf=<k>, detrend=linear'])", Kind: Aggregate,
			Summary: "JSON correlogram: n, grid step, missing slots, mean, γ̂(0), and per lag acvf, acf, pacf (Durbin–Levinson), ±1.96/√n band, cumulative Ljung–Box Q and p; with detrend=linear also the removed line's slope per year"},
		argNames: []string{"t", "y", "max_lag", "options"}, values: 1, minOptions: 1, maxOptions: 2,
		compute: correlogramValue,
	})
	for _, d := range []struct {
		name, summary      string
		boxPierce, scalarP bool
	}{
		{"ljung_box", "JSON {q, df, p, n}: Ljung–Box Q = n(n+2)Σρ̂(k)²/(n−k) over lags 1..lags, p from χ²(lags − fitdf)", false, false},
		{"box_pierce", "JSON {q, df, p, n}: Box–Pierce Q = nΣρ̂(k)² over lags 1..lags, p from χ²(lags − fitdf)", true, false},
		{"ljung_box_p", "Ljung–Box p-value (REAL); NULL when undefined or lags ≤ fitdf", false, true},
		{"box_pierce_p", "Box–Pierce p-value (REAL); NULL when undefined or lags ≤ fitdf", true, true},
	} {
		defineSeries(seriesSpec{
			doc:      Doc{Name: d.name, Signature: d.name + "(t, y, lags [, fitdf [, 'step=<duration>, detrend=linear']])", Kind: Aggregate, Summary: d.summary},
			argNames: []string{"t", "y", "lags", "fitdf", "options"}, values: 1, minOptions: 1, maxOptions: 3,
			compute: portmanteauValue(d.name, d.boxPierce, d.scalarP),
		})
	}
}
