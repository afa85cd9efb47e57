package stats

import "math"

// DetrendLinear returns the residuals of the least-squares straight line
// fitted to the present values of a gridded series x (NaN marks a missing
// slot), with the slot index k as the regressor:
//
//	e_k = (x_k − x̄) − b·(k − k̄),   b = Σ(k − k̄)(x_k − x̄) / Σ(k − k̄)²
//
// over the present values (x̄, k̄ their means). The design [1, k − k̄] has
// orthogonal columns, so its QR factorisation reduces to these centred sums
// (two passes; no cross-product matrix of uncentred values is formed, whose
// condition would be the square of the design's). Missing slots stay NaN.
// On a regular grid this is R's residuals(lm(x ~ time(x))): the slot index
// is time(x) up to an affine change, which leaves residuals unchanged, and
// lm drops NA rows as only the present values are used here.
//
// slope is b, the fitted line's change per slot (NaN with fewer than 2
// present values).
//
// Degenerate cases: with fewer than 3 present values a line fits exactly,
// and when the residual sum of squares is at most 1e-24 of Σ(x − x̄)² the
// values lie on a line up to rounding; in both cases every present residual
// is exactly 0, so the autocorrelations of the residuals are undefined
// (NULL) rather than correlations of rounding noise. The slope is reported
// in these cases too.
func DetrendLinear(x []float64) (resid []float64, slope float64) {
	out := make([]float64, len(x))
	n := 0
	var kbar, xbar float64
	for k, v := range x {
		out[k] = v
		if !math.IsNaN(v) {
			n++
			kbar += float64(k)
			xbar += v
		}
	}
	// zero sets every present residual to exactly 0.
	zero := func() []float64 {
		for k, v := range out {
			if !math.IsNaN(v) {
				out[k] = 0
			}
		}
		return out
	}
	if n < 2 {
		return zero(), math.NaN()
	}
	kbar /= float64(n)
	xbar /= float64(n)
	var sxx, sxy, syy float64
	for k, v := range x {
		if math.IsNaN(v) {
			continue
		}
		dk, dy := float64(k)-kbar, v-xbar
		sxx += dk * dk
		sxy += dk * dy
		syy += dy * dy
	}
	b := sxy / sxx
	if n < 3 {
		return zero(), b
	}
	var ssr float64
	for k, v := range x {
		if math.IsNaN(v) {
			continue
		}
		e := (v - xbar) - b*(float64(k)-kbar)
		out[k] = e
		ssr += e * e
	}
	if ssr <= 1e-24*syy {
		return zero(), b
	}
	return out, b
}
