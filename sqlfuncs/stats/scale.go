package stats

// Scaling by a power of two before squaring.
//
// Sums of squares of values beyond about 1.3e154 overflow float64, and of
// values below about 1e-154 underflow, although the statistic asked for
// (a slope, a correlation, a standard error in the values' unit) may be an
// ordinary number. The least-squares trend and the lag statistics therefore
// work on the values multiplied by 2^−k, k chosen so the largest magnitude
// is about 1, and multiply the results back by 2^k per power of the
// values' unit (a slope by 2^k, an autocovariance by 2^2k; a correlation or
// a p-value is unchanged). Multiplying by a power of two is exact, so the
// results are the unscaled computation's, bit for bit, whenever that one
// does not overflow or underflow; values of moderate magnitude (largest
// within 2^−200 … 2^200) are not scaled at all. A result that is itself
// beyond ±1.8e308 after scaling back is an infinity, which the SQL layer
// reports as an error.

import "math"

// scaleLimit bounds the largest magnitude left unscaled: 2^200 ≈ 1.6e60,
// whose square times a million rows is still far below the float64 range.
const scaleLimit = 200

// UnitScale returns x multiplied by 2^−k and k, where k is the binary
// exponent of the largest finite magnitude of x (NaN entries, the missing
// marker, are ignored and kept). When that magnitude is within
// 2^−scaleLimit … 2^scaleLimit, or x holds no non-zero number, it returns
// x itself and k = 0. Otherwise the result is a new slice.
func UnitScale(x []float64) ([]float64, int) {
	m := 0.0
	for _, v := range x {
		if a := math.Abs(v); a > m && !math.IsInf(a, 0) {
			m = a
		}
	}
	k := unitExponent(m)
	if k == 0 {
		return x, 0
	}
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = math.Ldexp(v, -k)
	}
	return out, k
}

// unitExponent is UnitScale's k for a largest finite magnitude m: 0 when m
// is 0 or within 2^−scaleLimit … 2^scaleLimit, else the binary exponent of
// m.
func unitExponent(m float64) int {
	if m == 0 {
		return 0
	}
	_, k := math.Frexp(m)
	if k >= -scaleLimit && k <= scaleLimit {
		return 0
	}
	return k
}
