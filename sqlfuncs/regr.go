package sqlfuncs

// SQL:2003 regression aggregates, each also a window function with any
// frame. Their numerics live here rather than in package stats: the state
// is the aggregate's own running sums, updated row by row.
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
// Numerics. The state is n, a shift (x₀, y₀) = the first pair added since
// the state was last empty, and the sums Σd, Σe, Σd², Σe², Σde of the
// shifted values d = x − x₀, e = y − y₀, each kept as an unevaluated sum of
// two float64 (double-double, ≈106 bits; Dekker 1971, Numer. Math.
// 18:224–242, with the FMA-based exact product). The centred sums are formed
// only when a value is asked for, e.g. Sxx = Σd² − (Σd)²/n in double-double.
// No sum of squares of raw values is formed, so x near 1.7e9 (unix seconds)
// with a spread of a few seconds keeps full relative precision. (For times
// within a factor 2 of each other d is exact by Sterbenz's lemma.)
// WindowInverse subtracts exactly the terms Step added, so a sliding frame
// costs O(1) per row and does not drift: after k updates the error of a
// centred sum is about k·2⁻¹⁰⁶ times the largest shifted sum of squares. A
// centred sum of squares below 1e-24 of its raw shifted sum is rounding
// noise (e.g. a constant x in a frame whose shift came from a removed row)
// and is treated as exactly 0.
//
// Example (demo store): SELECT regr_slope(value, t) * 31557600 FROM readings
// WHERE series_id = 1 — the least-squares slope per year (1y = 365.25 d).

import (
	"database/sql/driver"
	"math"
)

type comoments struct {
	fn            string
	n             int64
	x0, y0        float64 // shift: the first pair added since the state was empty
	sd, se        dd      // Σd, Σe
	sdd, see, sde dd      // Σd², Σe², Σde
	mx, my        float64 // derived by finish(), called before every value
	sxx, syy, sxy float64
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

func (c *comoments) update(y, x float64, sign float64) {
	d, e := x-c.x0, y-c.y0
	c.sd = c.sd.accum(ddFrom(sign * d))
	c.se = c.se.accum(ddFrom(sign * e))
	c.sdd = c.sdd.accum(twoProd(sign*d, d))
	c.see = c.see.accum(twoProd(sign*e, e))
	c.sde = c.sde.accum(twoProd(sign*d, e))
}

func (c *comoments) add(args []driver.Value) error {
	y, x, ok, err := c.pair(args)
	if err != nil || !ok {
		return err
	}
	c.addPair(y, x)
	return nil
}

func (c *comoments) remove(args []driver.Value) error {
	y, x, ok, err := c.pair(args)
	if err != nil || !ok {
		return err
	}
	c.removePair(y, x)
	return nil
}

// addPair adds one non-NULL (y, x) row; the first row fixes the shift.
// Shared with the zero-allocation adapter (fastpath.go).
func (c *comoments) addPair(y, x float64) {
	if c.n == 0 {
		*c = comoments{fn: c.fn, x0: x, y0: y}
	}
	c.n++
	c.update(y, x, 1)
}

// removePair undoes addPair for the oldest row of a window frame.
func (c *comoments) removePair(y, x float64) {
	if c.n <= 1 {
		*c = comoments{fn: c.fn}
		return
	}
	c.n--
	c.update(y, x, -1)
}

// finish derives the means and centred sums from the shifted sums.
func (c *comoments) finish() {
	if c.n == 0 {
		return
	}
	n := float64(c.n)
	md, me := c.sd.divF(n), c.se.divF(n)
	c.mx = ddFrom(c.x0).add(md).float()
	c.my = ddFrom(c.y0).add(me).float()
	centred := func(sqq, sp, sq dd) float64 {
		// Σpq − (Σp)(Σq)/n
		v := sqq.add(sp.mul(sq).divF(n).neg()).float()
		return v
	}
	c.sxx = centred(c.sdd, c.sd, c.sd)
	c.syy = centred(c.see, c.se, c.se)
	c.sxy = centred(c.sde, c.sd, c.se)
	// (An overflowed sum stays non-finite, for checkResult to report.)
	if s := c.sdd.float(); c.sxx <= 1e-24*s && !math.IsInf(s, 0) {
		c.sxx = 0
	}
	if s := c.see.float(); c.syy <= 1e-24*s && !math.IsInf(s, 0) {
		c.syy = 0
	}
	if c.sxx == 0 || c.syy == 0 {
		c.sxy = 0
	}
}

// dd is a double-double number hi + lo with |lo| ≤ ulp(hi)/2 (Dekker 1971).
type dd struct{ hi, lo float64 }

func ddFrom(x float64) dd { return dd{x, 0} }

func (a dd) float() float64 { return a.hi + a.lo }

func (a dd) neg() dd { return dd{-a.hi, -a.lo} }

// twoSum returns s = fl(a+b) and the exact error (Knuth's TwoSum).
func twoSum(a, b float64) (s, e float64) {
	s = a + b
	bb := s - a
	e = (a - (s - bb)) + (b - bb)
	return
}

// twoProd returns a·b exactly as a double-double (using FMA).
func twoProd(a, b float64) dd {
	p := a * b
	return dd{p, math.FMA(a, b, -p)}
}

func (a dd) add(b dd) dd {
	s, e := twoSum(a.hi, b.hi)
	t, f := twoSum(a.lo, b.lo)
	e += t
	s, e = twoSum(s, e)
	e += f
	s, e = twoSum(s, e)
	return dd{s, e}
}

// accum is the running-sum addition used per row: one TwoSum of the high
// parts, the low parts added in plain arithmetic, then a fast
// renormalisation (the "sloppy" double-double addition; Hida, Li & Bailey
// 2001, "Algorithms for quad-double precision floating point arithmetic",
// ARITH-15). Its error is at most a few u²·(|a| + |b|) with u = 2⁻⁵³, which
// over k rows bounds the sum's error by about k·2⁻¹⁰⁴ times the largest
// partial sum of magnitudes — the accuracy running sums need — at about
// half the cost of add.
func (a dd) accum(b dd) dd {
	s, e := twoSum(a.hi, b.hi)
	e += a.lo + b.lo
	hi := s + e
	return dd{hi, e - (hi - s)}
}

func (a dd) mul(b dd) dd {
	p := twoProd(a.hi, b.hi)
	p.lo += a.hi*b.lo + a.lo*b.hi
	s, e := twoSum(p.hi, p.lo)
	return dd{s, e}
}

func (a dd) divF(b float64) dd {
	q1 := a.hi / b
	r := a.add(twoProd(q1, b).neg())
	q2 := r.hi / b
	s, e := twoSum(q1, q2)
	return dd{s, e}
}

type regrFunc struct {
	comoments
	result func(c *comoments) driver.Value
}

func (r *regrFunc) value() (driver.Value, error) {
	r.finish()
	return r.result(&r.comoments), nil
}

func init() {
	type def struct {
		name, summary string
		result        func(c *comoments) driver.Value
	}
	nullIfEmpty := func(f func(c *comoments) float64) func(c *comoments) driver.Value {
		return func(c *comoments) driver.Value {
			if c.n == 0 {
				return nil
			}
			return f(c)
		}
	}
	defs := []def{
		{"regr_count", "number of rows where y and x are both non-NULL (SQL:2003)", func(c *comoments) driver.Value { return c.n }},
		{"regr_avgx", "mean of x over rows where y and x are non-NULL (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.mx })},
		{"regr_avgy", "mean of y over rows where y and x are non-NULL (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.my })},
		{"regr_sxx", "Σ(x−x̄)² over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.sxx })},
		{"regr_syy", "Σ(y−ȳ)² over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.syy })},
		{"regr_sxy", "Σ(x−x̄)(y−ȳ) over non-NULL pairs (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.sxy })},
		{"regr_slope", "least-squares slope of y on x, Sxy/Sxx; NULL if Sxx = 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.n == 0 || c.sxx == 0 {
				return nil
			}
			return c.sxy / c.sxx
		}},
		{"regr_intercept", "least-squares intercept ȳ − slope·x̄; NULL if Sxx = 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.n == 0 || c.sxx == 0 {
				return nil
			}
			return c.my - c.sxy/c.sxx*c.mx
		}},
		{"regr_r2", "coefficient of determination Sxy²/(Sxx·Syy); 1 if Syy = 0 < Sxx (SQL:2003)", func(c *comoments) driver.Value {
			if c.n == 0 || c.sxx == 0 {
				return nil
			}
			if c.syy == 0 {
				return 1.0
			}
			return c.sxy * c.sxy / (c.sxx * c.syy)
		}},
		{"covar_pop", "population covariance Sxy/n (SQL:2003)", nullIfEmpty(func(c *comoments) float64 { return c.sxy / float64(c.n) })},
		{"covar_samp", "sample covariance Sxy/(n−1); NULL if n < 2 (SQL:2003)", func(c *comoments) driver.Value {
			if c.n < 2 {
				return nil
			}
			return c.sxy / float64(c.n-1)
		}},
		{"corr", "Pearson correlation Sxy/√(Sxx·Syy); NULL if either variance is 0 (SQL:2003)", func(c *comoments) driver.Value {
			if c.n == 0 || c.sxx == 0 || c.syy == 0 {
				return nil
			}
			r := c.sxy / math.Sqrt(c.sxx*c.syy)
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
