package sqlfuncs

// Sample cross-covariance and cross-correlation of two series.
//
//	cross_corr(t, x, y, lag [, 'step=<duration>'])              aggregate/window → REAL or NULL
//	cross_correlogram(t, x, y, max_lag [, 'step=<duration>'])   aggregate/window → TEXT (JSON) or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (args.go). x,
// y: INTEGER, REAL or numeric TEXT — typically two stations joined on time,
// e.g. FROM readings a JOIN readings b ON b.t = a.t. lag: INTEGER, any
// sign, |lag| ≤ 2^20; max_lag: INTEGER, 0 ≤ max_lag ≤ 100,000.
//
// NULL, short input, order. A row is used only when both x and y are
// non-NULL (pairs joined on time); a NULL t is an error. Rows may come in
// any order; they are sorted by t and two rows with the same t are an
// error naming the time. No usable rows, |lag| ≥ the number of grid slots,
// a lag without a single complete pair, or a constant x or y give NULL
// (for cross_corr) or null entries (cross_correlogram). Also window
// functions with any frame.
//
// The grid. Lag h means h sampling steps apart. The step is the option
// step=<duration> or else the most common spacing between consecutive
// times of all rows (rows with a NULL x or y included: they mark a slot),
// and readings are placed in slots round((t − t_first)/step),
// exactly as for correlogram (stats/grid.go); a reading off the grid or two
// in one slot is an error. Slots without a pair are missing.
//
// Lag sign: POSITIVE LAG = x LEADS y: lag h pairs x at slot i with y at
// slot i + h. The value is the sample cross-covariance c_xy(h) (divisor
// m(h) + |h|, i.e. n when no slot is missing) and cross-correlation r_xy(h);
// formulas, divisor and the statsmodels/R equivalents are in
// sqlfuncs/stats/crosscorr.go (stats.CrossPrepare, stats.CrossAt).
// CAUTION: R's ccf(x, y) at lag k pairs x[t+k] with y[t], so its sign is
// opposite to this function's; R's ccf(y, x) matches it. These are sample
// statistics; reading r_xy(h) as an estimate of a lagged correlation
// presumes a jointly stationary model.
//
// cross_correlogram JSON keys: n (slots with a pair), n_slots,
// missing_slots, step_s, step, step_inferred, t_first, mean_x, mean_y,
// var_x, var_y (c_xx(0), c_yy(0), divisor n), band (1.96/√n), lags: one
// object per lag −max_lag..max_lag: {lag, pairs, ccvf, ccf}.
//
// Example (demo store; numbers depend on the demo data):
//
//	SELECT cross_corr(a.t, a.value, b.value, 2) FROM readings a
//	JOIN readings b ON b.t = a.t WHERE a.series_id = 1 AND b.series_id = 2;
//
// For x = 3, 1, 2, 5, 4 and y = 1, 2, 3, 5, 4 at daily steps (tested in
// kendall_test.go), cross_corr(t, x, y, 1) = 0 and cross_correlogram(t, x,
// y, 1) is
//
//	{"n":5,"n_slots":5,"missing_slots":0,"step_s":86400,"step":"1d",
//	 "step_inferred":true,"t_first":"2020-09-13T12:26:40Z","mean_x":3,"mean_y":3,
//	 "var_x":2,"var_y":2,"band":0.8765386471799175,"lags":[
//	 {"lag":-1,"pairs":4,"ccvf":1.4,"ccf":0.7},{"lag":0,"pairs":5,"ccvf":1.4,"ccf":0.7},
//	 {"lag":1,"pairs":4,"ccvf":0,"ccf":0}]}

import (
	"database/sql/driver"
	"fmt"
	"math"
	"strconv"
	"strings"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

const crossMaxLag = 1 << 20

func crossStep(fn string, opts []driver.Value) (float64, error) {
	if len(opts) < 2 {
		return 0, nil
	}
	text, err := argText(fn, "options", opts[1])
	if err != nil {
		return 0, err
	}
	m, err := parseSpec(fn, text, "step")
	if err != nil {
		return 0, err
	}
	s, ok := m["step"]
	if !ok {
		return 0, nil
	}
	d, err := timefmt.ParseDuration(s)
	if err != nil {
		return 0, fmt.Errorf("%s: option step: %v", fn, err)
	}
	if !(d > 0) {
		return 0, fmt.Errorf("%s: option step=%q must be positive", fn, s)
	}
	return d, nil
}

// crossGrid places the paired rows on one grid. x and y come back
// multiplied by 2^−kx and 2^−ky (stats.UnitScale; 0 unless magnitudes are
// extreme): means are multiplied back by 2^k, (co)variances by 2^(kx+ky).
func crossGrid(fn string, r Rows, step float64) (g stats.Grid, x, y []float64, kx, ky int, err error) {
	g, x, err = stats.RegularizeWithMissing(r.T, r.X, r.MissingT, step)
	if err != nil {
		return g, nil, nil, 0, 0, fmt.Errorf("%s: %v", fn, err)
	}
	x, kx = stats.UnitScale(x)
	y, ky = stats.UnitScale(g.Fill(r.Y))
	return g, x, y, kx, ky, nil
}

func crossCorrValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "cross_corr"
	lag, err := argInt(fn, "lag", opts[0], -crossMaxLag, crossMaxLag)
	if err != nil {
		return nil, err
	}
	step, err := crossStep(fn, opts)
	if err != nil {
		return nil, err
	}
	if r.Len() == 0 {
		return nil, nil
	}
	_, x, y, _, _, err := crossGrid(fn, r, step)
	if err != nil {
		return nil, err
	}
	st := stats.CrossPrepare(x, y)
	c := stats.CrossAt(x, y, st, int(lag))
	if math.IsNaN(c.Corr) {
		return nil, nil
	}
	return c.Corr, nil
}

func crossCorrelogramValue(r Rows, opts []driver.Value) (driver.Value, error) {
	const fn = "cross_correlogram"
	maxLag, err := argInt(fn, "max_lag", opts[0], 0, maxLagListArg)
	if err != nil {
		return nil, err
	}
	step, err := crossStep(fn, opts)
	if err != nil {
		return nil, err
	}
	if r.Len() == 0 {
		return nil, nil
	}
	g, x, y, kx, ky, err := crossGrid(fn, r, step)
	if err != nil {
		return nil, err
	}
	st := stats.CrossPrepare(x, y)
	unscaled := st
	unscaled.MeanX, unscaled.MeanY = math.Ldexp(st.MeanX, kx), math.Ldexp(st.MeanY, ky)
	unscaled.VarX, unscaled.VarY = math.Ldexp(st.VarX, 2*kx), math.Ldexp(st.VarY, 2*ky)
	var b jsonObj
	b.int("n", int64(st.N))
	b.int("n_slots", int64(g.NSlots))
	b.int("missing_slots", int64(g.Missing))
	if g.Step > 0 {
		b.num("step_s", g.Step)
		b.str("step", stats.FormatStep(g.Step))
	} else {
		b.raw("step_s", "null")
		b.raw("step", "null")
	}
	b.raw("step_inferred", strconv.FormatBool(step == 0))
	b.str("t_first", isoTime(r.T[0]))
	b.num("mean_x", unscaled.MeanX)
	b.num("mean_y", unscaled.MeanY)
	b.num("var_x", unscaled.VarX)
	b.num("var_y", unscaled.VarY)
	b.num("band", 1.96/math.Sqrt(float64(st.N)))
	var lags strings.Builder
	lags.WriteByte('[')
	for k, c := range stats.CrossAll(x, y, st, int(maxLag)) {
		h := c.Lag
		if k > 0 {
			lags.WriteByte(',')
		}
		lags.WriteString(`{"lag":` + strconv.Itoa(h) + `,"pairs":` + strconv.Itoa(c.Pairs) +
			`,"ccvf":` + jsonNum(math.Ldexp(c.Cov, kx+ky)) + `,"ccf":` + jsonNum(c.Corr) + `}`)
	}
	lags.WriteByte(']')
	b.raw("lags", lags.String())
	return b.String(), nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{Name: "cross_corr", Signature: "cross_corr(t, x, y, lag [, 'step=<duration>'])", Kind: Aggregate,
			Summary: "sample cross-correlation r_xy(lag) of pairs joined on time, divisor n, on the regular grid; positive lag = x leads y"},
		argNames: []string{"t", "x", "y", "lag", "options"}, values: 2, minOptions: 1, maxOptions: 2,
		compute: crossCorrValue,
	})
	defineSeries(seriesSpec{
		doc: Doc{Name: "cross_correlogram", Signature: "cross_correlogram(t, x, y, max_lag [, 'step=<duration>'])", Kind: Aggregate,
			Summary: "JSON cross-correlogram for lags −max_lag..max_lag: pairs, ccvf (divisor n), ccf; positive lag = x leads y"},
		argNames: []string{"t", "x", "y", "max_lag", "options"}, values: 2, minOptions: 1, maxOptions: 2,
		compute: crossCorrelogramValue,
	})
}
