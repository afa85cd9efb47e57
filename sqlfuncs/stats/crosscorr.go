package stats

// Sample cross-covariance and cross-correlation of two series on one regular
// grid (x and y gridded together; NaN marks a missing slot).
//
// Lag sign: positive h means x leads y, i.e. x at slot i is paired with y at
// slot i + h. With x̄, ȳ the means over the present slots,
//
//	S_xy(h) = Σ_i (x_i − x̄)(y_{i+h} − ȳ)       over the m(h) slot pairs with
//	                                            both values present
//	c_xy(h) = S_xy(h) / (m(h) + |h|)            divisor n without missing slots
//	r_xy(h) = c_xy(h) / √(c_xx(0)·c_yy(0)),     clamped to [−1, 1]
//
// and c_xy(−h) pairs x_{i+h} with y_i. Without missing slots the divisor is
// n (not n − |h|; common practice, Brockwell & Davis, Introduction to Time
// Series and Forecasting, 2nd ed., 2002, §7.2), which is
// statsmodels.tsa.stattools.ccf(y, x, adjusted=False)[h] for h ≥ 0 and
// ccf(x, y, adjusted=False)[|h|] for h < 0 (statsmodels 0.13.5 puts the
// first argument ahead). With missing slots it is R's
// ccf(y, x, na.action = na.pass) at lag h (R 4.2.2, whose lag k pairs the
// first argument at t + k with the second at t; note that R's ccf(x, y) has
// the opposite sign to this function).

import "math"

// CrossCov holds one lag of the cross-covariance.
type CrossCov struct {
	Lag   int
	Pairs int     // m(h)
	Cov   float64 // c_xy(h); NaN when m(h) = 0
	Corr  float64 // r_xy(h); NaN when undefined
}

// CrossStats holds the means and lag-0 variances used by every lag.
type CrossStats struct {
	N            int // slots with both values present
	MeanX, MeanY float64
	VarX, VarY   float64 // c_xx(0), c_yy(0) (divisor n)
}

// CrossPrepare computes the means and lag-0 variances of x and y over the
// slots where both are present (they are missing together by construction).
func CrossPrepare(x, y []float64) CrossStats {
	var s CrossStats
	for i := range x {
		if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
			s.N++
			s.MeanX += x[i]
			s.MeanY += y[i]
		}
	}
	if s.N == 0 {
		s.MeanX, s.MeanY, s.VarX, s.VarY = math.NaN(), math.NaN(), math.NaN(), math.NaN()
		return s
	}
	s.MeanX /= float64(s.N)
	s.MeanY /= float64(s.N)
	for i := range x {
		if !math.IsNaN(x[i]) && !math.IsNaN(y[i]) {
			dx, dy := x[i]-s.MeanX, y[i]-s.MeanY
			s.VarX += dx * dx
			s.VarY += dy * dy
		}
	}
	s.VarX /= float64(s.N)
	s.VarY /= float64(s.N)
	return s
}

// CrossAt returns lag h (any sign) of the cross-covariance/correlation.
func CrossAt(x, y []float64, st CrossStats, h int) CrossCov {
	c := CrossCov{Lag: h, Cov: math.NaN(), Corr: math.NaN()}
	n := len(x)
	a := abs(h)
	if a >= n {
		return c
	}
	var sum float64
	for i := 0; i+a < n; i++ {
		var xv, yv float64
		if h >= 0 {
			xv, yv = x[i], y[i+a]
		} else {
			xv, yv = x[i+a], y[i]
		}
		if math.IsNaN(xv) || math.IsNaN(yv) {
			continue
		}
		c.Pairs++
		sum += (xv - st.MeanX) * (yv - st.MeanY)
	}
	c.finish(sum, st)
	return c
}

// finish sets Cov = S_xy(h)/(m(h)+|h|) and Corr from the lag sum (both stay
// NaN when there are no pairs).
func (c *CrossCov) finish(sum float64, st CrossStats) {
	if c.Pairs == 0 {
		return
	}
	c.Cov = sum / float64(c.Pairs+abs(c.Lag))
	if st.VarX > 0 && st.VarY > 0 {
		r := c.Cov / math.Sqrt(st.VarX*st.VarY)
		c.Corr = math.Max(-1, math.Min(1, r))
	}
}

func abs(h int) int {
	if h < 0 {
		return -h
	}
	return h
}
