package stats

// Running co-moments of (x, y) pairs: the state of the SQL:2003 regression
// aggregates (regr_*, covar_*, corr in package sqlfuncs), updated one pair
// at a time and, for a sliding window frame, taken back one pair at a time.
//
// The state is n, a shift (x₀, y₀) = the first pair added since the state
// was last empty, and the sums Σd, Σe, Σd², Σe², Σde of the shifted values
// d = x − x₀, e = y − y₀, each kept as an unevaluated sum of two float64
// (double-double, ≈106 bits; Dekker 1971, Numer. Math. 18:224–242, with the
// FMA-based exact product). Finish forms the means and the centred sums
//
//	x̄   = x₀ + Σd/n,  ȳ = y₀ + Σe/n
//	Sxx = Σd² − (Σd)²/n,  Syy = Σe² − (Σe)²/n,  Sxy = Σde − (Σd)(Σe)/n
//
// in double-double, only when a value is asked for. No sum of squares of
// raw values is formed, so x near 1.7e9 (unix seconds) with a spread of a
// few seconds keeps full relative precision. (For times within a factor 2
// of each other d is exact by Sterbenz's lemma.) RemovePair subtracts
// exactly the terms AddPair added, so a sliding frame costs O(1) per row and
// does not drift: after k updates the error of a centred sum is about
// k·2⁻¹⁰⁶ times the largest shifted sum of squares. A centred sum of squares
// below 1e-24 of its raw shifted sum is rounding noise (e.g. a constant x in
// a frame whose shift came from a removed row) and is set to exactly 0, and
// Sxy is 0 whenever Sxx or Syy is. An overflowed sum stays non-finite.

import "math"

// Comoments is the running state of a set of (x, y) pairs. The zero value
// is the empty set. MeanX, MeanY, Sxx, Syy and Sxy are set by Finish, which
// must be called after the last AddPair or RemovePair before they are read;
// they are unset while N is 0.
type Comoments struct {
	N             int64
	x0, y0        float64 // shift: the first pair added since the state was empty
	sd, se        dd      // Σd, Σe
	sdd, see, sde dd      // Σd², Σe², Σde
	MeanX, MeanY  float64
	Sxx, Syy, Sxy float64
}

func (c *Comoments) update(y, x float64, sign float64) {
	d, e := x-c.x0, y-c.y0
	c.sd = c.sd.accum(ddFrom(sign * d))
	c.se = c.se.accum(ddFrom(sign * e))
	c.sdd = c.sdd.accum(ddProd(sign*d, d))
	c.see = c.see.accum(ddProd(sign*e, e))
	c.sde = c.sde.accum(ddProd(sign*d, e))
}

// AddPair adds one pair; the first pair of an empty state fixes the shift.
func (c *Comoments) AddPair(y, x float64) {
	if c.N == 0 {
		*c = Comoments{x0: x, y0: y}
	}
	c.N++
	c.update(y, x, 1)
}

// RemovePair takes back a pair added earlier (the oldest row of a window
// frame); removing the last pair empties the state.
func (c *Comoments) RemovePair(y, x float64) {
	if c.N <= 1 {
		*c = Comoments{}
		return
	}
	c.N--
	c.update(y, x, -1)
}

// Finish derives the means and centred sums from the shifted sums.
func (c *Comoments) Finish() {
	if c.N == 0 {
		return
	}
	n := float64(c.N)
	md, me := c.sd.divF(n), c.se.divF(n)
	c.MeanX = ddFrom(c.x0).add(md).float()
	c.MeanY = ddFrom(c.y0).add(me).float()
	centred := func(sqq, sp, sq dd) float64 {
		// Σpq − (Σp)(Σq)/n
		v := sqq.add(sp.mul(sq).divF(n).neg()).float()
		return v
	}
	c.Sxx = centred(c.sdd, c.sd, c.sd)
	c.Syy = centred(c.see, c.se, c.se)
	c.Sxy = centred(c.sde, c.sd, c.se)
	if s := c.sdd.float(); c.Sxx <= 1e-24*s && !math.IsInf(s, 0) {
		c.Sxx = 0
	}
	if s := c.see.float(); c.Syy <= 1e-24*s && !math.IsInf(s, 0) {
		c.Syy = 0
	}
	if c.Sxx == 0 || c.Syy == 0 {
		c.Sxy = 0
	}
}

// dd is a double-double number hi + lo with |lo| ≤ ulp(hi)/2 (Dekker 1971).
type dd struct{ hi, lo float64 }

func ddFrom(x float64) dd { return dd{x, 0} }

// ddProd returns a·b exactly as a double-double (twoProd, using FMA).
func ddProd(a, b float64) dd {
	p, e := twoProd(a, b)
	return dd{p, e}
}

func (a dd) float() float64 { return a.hi + a.lo }

func (a dd) neg() dd { return dd{-a.hi, -a.lo} }

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
	p := ddProd(a.hi, b.hi)
	p.lo += a.hi*b.lo + a.lo*b.hi
	s, e := twoSum(p.hi, p.lo)
	return dd{s, e}
}

func (a dd) divF(b float64) dd {
	q1 := a.hi / b
	r := a.add(ddProd(q1, b).neg())
	q2 := r.hi / b
	s, e := twoSum(q1, q2)
	return dd{s, e}
}
