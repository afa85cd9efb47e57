package sqlfuncs

// SQL:2003 regression aggregates, each also a window function with any
// frame.
//
//	regr_count(y, x)     INTEGER  number of rows where both y and x are non-NULL
//	regr_avgx(y, x)      REAL     mean of x over those rows
//	regr_avgy(y, x)      REAL     mean of y
//	regr_sxx(y, x)       REAL     Σ (x − x̄)²
//	regr_syy(y, x)       REAL     Σ (y − ȳ)²
//	regr_sxy(y, x)       REAL     Σ (x − x̄)(y − ȳ)
//	regr_slope(y, x)     REAL     Sxy / Sxx            (NULL when Sxx = 0)
//	regr_intercept(y, x) REAL     ȳ − slope · x̄        (NULL when Sxx = 0)
//	regr_r2(y, x)        REAL     Sxy² / (Sxx · Syy); 1 when Syy = 0 < Sxx; NULL when Sxx = 0
//	covar_pop(y, x)      REAL     Sxy / n              (NULL when n = 0)
//	covar_samp(y, x)     REAL     Sxy / (n − 1)        (NULL when n < 2)
//	corr(y, x)           REAL     Sxy / √(Sxx · Syy)   (NULL when Sxx · Syy = 0)
//
// Names, argument order (dependent first) and NULL rules follow ISO/IEC
// 9075-2:2003 (SQL:2003), section 10.9 <aggregate function>: rows with a NULL
// in either argument are ignored; an empty set gives 0 for regr_count and
// NULL for the rest. x and y must be numbers (INTEGER, REAL or numeric TEXT);
// non-numeric text, NaN or infinity is an error naming the function.
//
// Numerics: stats.Comoments (stats/comoments.go) keeps the sums of the
// pairs shifted by the first pair in double-double arithmetic and forms the
// centred sums only when a value is asked for; WindowInverse takes a row
// back exactly, so a sliding frame costs O(1) per row and does not drift.
//
// Example (demo store): SELECT regr_slope(value, t) * 31557600 FROM readings
// WHERE series_id = 1 — the least-squares slope per year (1y = 365.25 d).

import (
	"database/sql/driver"
	"math"

	"trendsql/sqlfuncs/stats"
)

// comoments is a regression aggregate's group state: the pairs' running
// co-moments and the function's name for error messages.
type comoments struct {
	fn string
	stats.Comoments
}

func (c *comoments) pair(args []driver.Value) (y, x float64, ok bool, err error) {
	y, oky, err := argValue(c.fn, "y", args[0])
	if err != nil {
		return 0, 0, false, err
	}
	x, okx, err := argValue(c.fn, "x", args[1])
	if err != nil {
		return 0, 0, false, err
	}
	return y, x, okx && oky, nil
}

func (c *comoments) add(args []driver.Value) error {
	y, x, ok, err := c.pair(args)
	if err != nil || !ok {
		return err
	}
	c.AddPair(y, x)
	return nil
}

func (c *comoments) remove(args []driver.Value) error {
	y, x, ok, err := c.pair(args)
	if err != nil || !ok {
		return err
	}
	c.RemovePair(y, x)
	return nil
}

type regrFunc struct {
	comoments
	result func(c *comoments) driver.Value
}

func (r *regrFunc) value() (driver.Value, error) {
	r.Finish()
	return r.result(&r.comoments), nil
}

func init() {
	type def struct {
		name, summary string
		result        func(c *comoments) driver.Value
	}
	nullIfEmpty := func(f func(c *comoments) float64) func(c *comoments) driver.Value {
		return func(c *comoments) driver.Value {
			if c.N == 0 {
				return nil
			}
			return f(c)
		}
	}
	defs := []def{
		{"regr_count", "number of rows where y and x are both non-NULL (SQL:2003)", func(c *comoments) driver.Value { return c.N }},
		{"regr_avgx", "mean of x over rows where y and x are non-NULL (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.MeanX })},
		{"regr_avgy", "mean of y over rows where y and x are non-NULL (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.MeanY })},
		{"regr_sxx", "Σ(x−x̄)² over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.Sxx })},
		{"regr_syy", "Σ(y−ȳ)² over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.Syy })},
		{"regr_sxy", "Σ(x−x̄)(y−ȳ) over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.Sxy })},
		{"regr_slope", "least-squares slope of y on x, Sxy/Sxx; NULL if Sxx = 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.N == 0 || c.Sxx == 0 {
				return nil
			}
			return c.Sxy / c.Sxx
		}},
		{"regr_intercept", "least-squares intercept ȳ − slope·x̄; NULL if Sxx = 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.N == 0 || c.Sxx == 0 {
				return nil
			}
			return c.MeanY - c.Sxy/c.Sxx*c.MeanX
		}},
		{"regr_r2", "coefficient of determination Sxy²/(Sxx·Syy); 1 if Syy = 0 < Sxx (SQL:2003)", func(c *comoments) driver.Value {
			if c.N == 0 || c.Sxx == 0 {
				return nil
			}
			if c.Syy == 0 {
				return 1.0
			}
			return c.Sxy * c.Sxy / (c.Sxx * c.Syy)
		}},
		{"covar_pop", "population covariance Sxy/n (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.Sxy / float64(c.N) })},
		{"covar_samp", "sample covariance Sxy/(n−1); NULL if n < 2 (SQL:2003)", func(c *comoments) driver.Value {
			if c.N < 2 {
				return nil
			}
			return c.Sxy / float64(c.N-1)
		}},
		{"corr", "Pearson correlation Sxy/√(Sxx·Syy); NULL if either variance is 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.N == 0 || c.Sxx == 0 || c.Syy == 0 {
				return nil
			}
			r := c.Sxy / math.Sqrt(c.Sxx*c.Syy)
			return math.Max(-1, math.Min(1, r))
		}},
	}
	for _, d := range defs {
		d := d
		defineStream(streamSpec{
			doc:   Doc{Name: d.name, Signature: d.name + "(y, x)", Kind: Aggregate, Summary: d.summary},
			nargs: 2,
			make: func() streamState {
				return &regrFunc{comoments: comoments{fn: d.name}, result: d.result}
			},
		})
	}
}
