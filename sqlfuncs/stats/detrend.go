package stats

import "math"

// DetrendLinear returns the residuals of the least-squares straight line
// fitted to the present values of a gridded series x (NaN marks a missing
// slot), with the slot index k as the regressor:
//
//	e_k = x_k − (a + b·(k − k̄)),   k̄ = mean slot index of the present values
//
// solved by Householder QR (OLS) on the centred design [1, k − k̄]. Missing
// slots stay NaN. On a regular grid this is R's residuals(lm(x ~ time(x)))
// for a series without gaps (the slot index is time(x) up to an affine
// change, which leaves residuals unchanged; lm drops NA rows as the present
// values are used here).
//
// Degenerate cases: with fewer than 3 present values a line fits exactly,
// and when the residual sum of squares is at most 1e-24 of Σ(x − x̄)² the
// values lie on a line up to rounding; in both cases every present residual
// is exactly 0, so the autocorrelations of the residuals are undefined
// (NULL) rather than correlations of rounding noise.
func DetrendLinear(x []float64) []float64 {
	out := make([]float64, len(x))
	var ks, ys []float64
	for k, v := range x {
		out[k] = v
		if !math.IsNaN(v) {
			ks = append(ks, float64(k))
			ys = append(ys, v)
		}
	}
	n := len(ys)
	zero := func() []float64 {
		for k, v := range out {
			if !math.IsNaN(v) {
				out[k] = 0
			}
		}
		return out
	}
	if n < 3 {
		return zero()
	}
	var kbar, ybar float64
	for i := range ks {
		kbar += ks[i]
		ybar += ys[i]
	}
	kbar /= float64(n)
	ybar /= float64(n)
	design := make([]float64, 2*n)
	var sst float64
	for i, k := range ks {
		design[2*i] = 1
		design[2*i+1] = k - kbar
		sst += (ys[i] - ybar) * (ys[i] - ybar)
	}
	fit, err := OLS(design, n, 2, ys)
	if err != nil || fit.SSR <= 1e-24*sst {
		// The only rank deficiency possible is a single distinct slot,
		// excluded above; an error here would be a non-finite value.
		return zero()
	}
	i := 0
	for k, v := range out {
		if !math.IsNaN(v) {
			out[k] = fit.Resid[i]
			i++
		}
	}
	return out
}
