package sqlfuncs

// Least-squares trend fits.
//
//	trend_fit(t, y [, spec])          aggregate/window  TEXT (JSON model) or NULL
//	trend_slope(t, y)                 aggregate/window  REAL slope per year or NULL
//	trend_value(model, t)             scalar            REAL fitted value or NULL
//	trend_residual(model, t, y)       scalar            REAL y − trend_value(model, t) or NULL
//
// Arguments. t: INTEGER/REAL unix seconds (UTC) or TEXT time (see args.go).
// y: INTEGER, REAL or numeric TEXT. spec: TEXT "key=value, ..." with keys
//
//	degree=0..6       polynomial degree in time (default 1; 0 = a constant
//	                  mean, the sample-mean estimator under a mean-stationary
//	                  model)
//	period=<duration> seasonal period (s, min, h, d, w, y; 1y = 365.25 d)
//	harmonics=1..50   sine/cosine pairs of that period (default 1 if period
//	                  is given; needs period)
//	hac_lags=L        Newey–West truncation lag, L ≥ 0 (default
//	                  floor(4·(n/100)^(2/9)), stats.DefaultHACLags)
//
// Unknown or repeated keys are errors. The spec must be the same on every
// row of a group.
//
// NULL, NaN, short input, order. Rows with NULL y are skipped (SQLite turns
// a NaN computed by an expression such as 0.0/0.0 into NULL first, so it is
// skipped too); a NULL t, non-numeric y, or an infinite REAL is an error
// naming the function and argument. Rows may come in any order: the series
// is sorted by t; two rows with the same t are an error naming the time.
// With n ≤ p rows (p = 1 + degree + 2·harmonics, e.g. n ≤ 2 for the default
// linear trend) or no rows at all, trend_fit and trend_slope return NULL. A
// design that is numerically singular — seasonal terms aliasing with the
// sampling step, e.g. period=1d on daily readings — is an error ("design
// matrix is rank-deficient"), not a silent NULL. Both aggregates are also
// window functions with any frame.
//
// Model and formulas: stats.FitTrend and stats.TrendModel (sqlfuncs/stats/
// trend.go; the blocked Householder QR over rows formed on the fly in
// stats/trend_qr.go, the triangular solve and the Newey–West covariance in
// stats/ols.go). In
// short, y is fitted by least squares on a polynomial in centred time,
// x = (t − mean t) in years of 365.25 d, plus sine/cosine pairs of the
// period with their phase taken from the unix epoch (so a stored model can
// be evaluated at any t).
//
// trend_fit's JSON keys, always in this order (NaN or infinite values are
// written as null); the field of stats.TrendModel that holds each one
// defines it:
//
//	n, t_first, t_last, t_center   rows used; first/last/mean time (unix s)
//	degree, period_s, harmonics    the model (period_s null without harmonics)
//	terms                          ["const","t","t^2",…,"sin1","cos1",…]
//	coef, se                       coefficients in term order, classical se
//	slope_per_year, slope_se       c_1, the derivative of the polynomial at
//	                               t_center (y-units per year), and its se;
//	                               null for degree 0
//	slope_p                        two-sided p of c_1 (Student t)
//	r2, sigma, df_resid            fit quality; r2 null for a constant y
//	resid_acf1                     lag-1 sample ACF of the residuals
//	hac_lags, hac_slope_se, hac_p  Newey–West (HAC) se and p of c_1
//	n_eff, n_eff_p                 AR(1) effective sample size and the slope
//	                               p that uses it; n_eff_p null when
//	                               n_eff ≤ p
//
// For a constant y every coefficient but c_0 is exactly 0, se and sigma are
// 0, slope_p/hac_p are null (0/0) and r2, resid_acf1, n_eff are null.
//
// Reading the significance fields. slope_p assumes independent errors;
// hac_p is consistent under weak serial dependence of unknown form; n_eff_p
// is the correction appropriate when the residuals follow an AR(1) model.
// All three, and resid_acf1, count lags in rows of the time-ordered series:
// a gap in the record is treated as if the rows were adjacent, so they are
// meant for (roughly) regularly sampled series.
//
// trend_slope(t, y) is the shortcut for trend_fit(t, y) ->> 'slope_per_year'
// (same NULL rules, same ties error; stats.TrendSlope); it keeps the (t, y)
// buffer like trend_fit so ties are detected.
//
// trend_value(model, t) evaluates a model produced by trend_fit at any t,
// so residuals are y − trend_value(m, t) in plain SQL (trend_residual is
// that difference). A NULL model, t or y gives NULL; a model that is not
// valid trend_fit JSON is an error naming trend_value.
//
// Examples (exact arithmetic: readings one year of 365.25 d apart, so
// x = −1, 0, 1; slope = 1.25 per year, r2 = 75/76):
//
//	WITH r(t, y) AS (VALUES (0, 1.0), (31557600, 2.0), (63115200, 3.5))
//	SELECT trend_slope(t, y), trend_fit(t, y) ->> 'r2' FROM r;
//	-- 1.25 | 0.9868421052631579
//
//	WITH r(t, y) AS (VALUES (0, 1.0), (31557600, 2.0), (63115200, 3.5)),
//	     m AS (SELECT trend_fit(t, y) AS m FROM r)
//	SELECT t, round(trend_residual(m, t, y), 6), round(trend_value(m, '1972-01-01'), 6) FROM r, m;
//	-- 0 | 0.083333 | 3.414956    31557600 | -0.166667 | 3.414956    63115200 | 0.083333 | 3.414956
//
// Usage on a store: one seasonal trend per series, Newey–West error included:
//
//	SELECT series_id, trend_fit(t, value, 'period=1y, harmonics=2') AS m
//	FROM readings GROUP BY series_id;

import (
	"database/sql/driver"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"
	"sync"

	"trendsql/sqlfuncs/stats"
	"trendsql/sqlfuncs/timefmt"
)

// parseTrendSpec reads trend_fit's spec text.
func parseTrendSpec(fn, spec string) (stats.TrendSpec, error) {
	s := stats.TrendSpec{Degree: 1, HACLags: -1}
	kv, err := parseSpec(fn, spec, "degree", "period", "harmonics", "hac_lags")
	if err != nil {
		return s, err
	}
	atoi := func(key string, min, max int) (int, error) {
		v, err := strconv.Atoi(kv[key])
		if err != nil || v < min || v > max {
			return 0, fmt.Errorf("%s: option %s=%q: want a whole number in %d..%d", fn, key, kv[key], min, max)
		}
		return v, nil
	}
	if _, ok := kv["degree"]; ok {
		if s.Degree, err = atoi("degree", 0, stats.MaxTrendDegree); err != nil {
			return s, err
		}
	}
	if v, ok := kv["period"]; ok {
		if s.Period, err = timefmt.ParseDuration(v); err != nil {
			return s, fmt.Errorf("%s: option period: %v", fn, err)
		}
		s.Harmonics = 1
	}
	if _, ok := kv["harmonics"]; ok {
		if s.Period == 0 {
			return s, fmt.Errorf("%s: option harmonics needs period=<duration>", fn)
		}
		if s.Harmonics, err = atoi("harmonics", 1, stats.MaxHarmonics); err != nil {
			return s, err
		}
	}
	if _, ok := kv["hac_lags"]; ok {
		if s.HACLags, err = atoi("hac_lags", 0, math.MaxInt32); err != nil {
			return s, err
		}
	}
	return s, nil
}

// TrendModelJSON renders a fitted model exactly as trend_fit returns it;
// summary runs store it as trend_model.
func TrendModelJSON(m *stats.TrendModel) string { return trendJSON(m) }

// trendJSON renders a model with the documented key order.
func trendJSON(m *stats.TrendModel) string {
	var o jsonObj
	o.int("n", int64(m.N))
	o.num("t_first", m.TFirst)
	o.num("t_last", m.TLast)
	o.num("t_center", m.TCenter)
	o.int("degree", int64(m.Degree))
	if m.Harm > 0 {
		o.num("period_s", m.Period)
	} else {
		o.num("period_s", math.NaN())
	}
	o.int("harmonics", int64(m.Harm))
	o.strs("terms", m.Terms)
	o.nums("coef", m.Coef)
	o.nums("se", m.SE)
	o.num("slope_per_year", m.SlopePerYear)
	o.num("slope_se", m.SlopeSE)
	o.num("slope_p", m.SlopeP)
	o.num("r2", m.R2)
	o.num("sigma", m.Sigma)
	o.int("df_resid", int64(m.DFResid))
	o.num("resid_acf1", m.ResidACF1)
	o.int("hac_lags", int64(m.HACLags))
	o.num("hac_slope_se", m.HACSlopeSE)
	o.num("hac_p", m.HACP)
	o.num("n_eff", m.NEff)
	o.num("n_eff_p", m.NEffP)
	return o.String()
}

// trendModel is the part of trend_fit's JSON that trend_value needs.
type trendModel struct {
	TCenter   float64
	Degree    int
	Period    float64
	Harmonics int
	Coef      []float64
}

func (m *trendModel) value(t float64) float64 {
	return stats.TrendValue(t, m.TCenter, m.Degree, m.Period, m.Harmonics, m.Coef)
}

// parseTrendModel validates model JSON; the error does not name a function.
func parseTrendModel(text string) (*trendModel, error) {
	var raw struct {
		TCenter   *float64   `json:"t_center"`
		Degree    *int       `json:"degree"`
		Period    *float64   `json:"period_s"`
		Harmonics *int       `json:"harmonics"`
		Coef      []*float64 `json:"coef"`
	}
	if err := json.Unmarshal([]byte(text), &raw); err != nil {
		return nil, fmt.Errorf("not trend_fit JSON: %v", err)
	}
	switch {
	case raw.TCenter == nil:
		return nil, errors.New(`model has no "t_center"`)
	case raw.Degree == nil:
		return nil, errors.New(`model has no "degree"`)
	case raw.Coef == nil:
		return nil, errors.New(`model has no "coef"`)
	}
	m := &trendModel{TCenter: *raw.TCenter, Degree: *raw.Degree}
	if raw.Harmonics != nil {
		m.Harmonics = *raw.Harmonics
	}
	if raw.Period != nil {
		m.Period = *raw.Period
	}
	if m.Degree < 0 || m.Degree > stats.MaxTrendDegree {
		return nil, fmt.Errorf("model degree %d is out of range 0..%d", m.Degree, stats.MaxTrendDegree)
	}
	if m.Harmonics < 0 || m.Harmonics > stats.MaxHarmonics {
		return nil, fmt.Errorf("model harmonics %d is out of range 0..%d", m.Harmonics, stats.MaxHarmonics)
	}
	if m.Harmonics > 0 && !(m.Period > 0 && !math.IsInf(m.Period, 0)) {
		return nil, fmt.Errorf("model has harmonics=%d but no positive \"period_s\"", m.Harmonics)
	}
	p := 1 + m.Degree + 2*m.Harmonics
	if len(raw.Coef) != p {
		return nil, fmt.Errorf("model has %d coefficients; degree %d with %d harmonics needs %d", len(raw.Coef), m.Degree, m.Harmonics, p)
	}
	for i, c := range raw.Coef {
		if c == nil {
			return nil, fmt.Errorf("model coefficient %d is null", i+1)
		}
		m.Coef = append(m.Coef, *c)
	}
	return m, nil
}

// Parsed models by text: trend_value is usually called on every row with a
// few distinct models (one per station). The cache is cleared when it holds
// modelCacheMax entries.
const modelCacheMax = 256

var modelCache struct {
	sync.Mutex
	m map[string]*trendModel
}

func modelArg(fn string, v driver.Value) (*trendModel, error) {
	text, err := argText(fn, "model", v)
	if err != nil {
		return nil, err
	}
	modelCache.Lock()
	m, ok := modelCache.m[text]
	modelCache.Unlock()
	if ok {
		return m, nil
	}
	m, err = parseTrendModel(text)
	if err != nil {
		return nil, fmt.Errorf("%s: argument model %s: %v", fn, describe(v), err)
	}
	modelCache.Lock()
	if modelCache.m == nil || len(modelCache.m) >= modelCacheMax {
		modelCache.m = map[string]*trendModel{}
	}
	modelCache.m[text] = m
	modelCache.Unlock()
	return m, nil
}

func init() {
	defineSeries(seriesSpec{
		doc: Doc{
			Name:      "trend_fit",
			Signature: "trend_fit(t, y [, spec])",
			Kind:      Aggregate,
			Summary:   "least-squares trend (polynomial degree 0..6 in centred years, optional seasonal harmonics; QR) as JSON: coef, se, slope_per_year, r2, sigma, resid_acf1, Newey–West hac_slope_se/hac_p, n_eff/n_eff_p; spec 'degree=1, period=1y, harmonics=1, hac_lags=L'",
		},
		argNames:   []string{"t", "y", "spec"},
		values:     1,
		minOptions: 0,
		maxOptions: 1,
		compute: func(r Rows, opts []driver.Value) (driver.Value, error) {
			text := ""
			if len(opts) == 1 {
				var err error
				if text, err = argText("trend_fit", "spec", opts[0]); err != nil {
					return nil, err
				}
			}
			spec, err := parseTrendSpec("trend_fit", text)
			if err != nil {
				return nil, err
			}
			m, err := stats.FitTrend(r.T, r.Y, spec)
			if err != nil {
				if errors.Is(err, stats.ErrRankDeficient) && spec.Harmonics > 0 {
					return nil, fmt.Errorf("trend_fit: %v: the seasonal terms (period=%s, harmonics=%d) are not determined by %d readings at these times; use fewer harmonics or another period", err, timefmt.FormatDuration(spec.Period), spec.Harmonics, r.Len())
				}
				return nil, fmt.Errorf("trend_fit: %v (%d readings)", err, r.Len())
			}
			if m == nil {
				return nil, nil
			}
			return trendJSON(m), nil
		},
	})

	defineSeries(seriesSpec{
		doc: Doc{
			Name:      "trend_slope",
			Signature: "trend_slope(t, y)",
			Kind:      Aggregate,
			Summary:   "least-squares slope of y per year (365.25 d); equals trend_fit(t, y) ->> 'slope_per_year'; NULL for n ≤ 2",
		},
		argNames: []string{"t", "y"},
		values:   1,
		compute: func(r Rows, opts []driver.Value) (driver.Value, error) {
			s := stats.TrendSlope(r.T, r.Y)
			if math.IsNaN(s) {
				return nil, nil
			}
			return s, nil
		},
	})

	defineScalar(Doc{
		Name:      "trend_value",
		Signature: "trend_value(model, t)",
		Kind:      Scalar,
		Summary:   "fitted value of a trend_fit model at time t; NULL if model or t is NULL",
	}, 2, func(args []driver.Value) (driver.Value, error) {
		if args[0] == nil || args[1] == nil {
			return nil, nil
		}
		m, err := modelArg("trend_value", args[0])
		if err != nil {
			return nil, err
		}
		t, err := argTime("trend_value", "t", args[1])
		if err != nil {
			return nil, err
		}
		return finiteResult("trend_value", m.value(t), t)
	})

	defineScalar(Doc{
		Name:      "trend_residual",
		Signature: "trend_residual(model, t, y)",
		Kind:      Scalar,
		Summary:   "y − trend_value(model, t); NULL if any argument is NULL",
	}, 3, func(args []driver.Value) (driver.Value, error) {
		if args[0] == nil || args[1] == nil || args[2] == nil {
			return nil, nil
		}
		m, err := modelArg("trend_residual", args[0])
		if err != nil {
			return nil, err
		}
		t, err := argTime("trend_residual", "t", args[1])
		if err != nil {
			return nil, err
		}
		y, _, err := argValue("trend_residual", "y", args[2])
		if err != nil {
			return nil, err
		}
		return finiteResult("trend_residual", y-m.value(t), t)
	})
}

// finiteResult returns v, or an error when it is not finite: the model's
// value at t lies beyond the range of float64 (the model or t is far outside
// the data the model was fitted to).
func finiteResult(fn string, v, t float64) (driver.Value, error) {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return nil, fmt.Errorf("%s: the result at t = %g is beyond the range of floating-point numbers (is t far outside the fitted data?)", fn, t)
	}
	return v, nil
}
