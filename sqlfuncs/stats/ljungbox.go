package stats

// Portmanteau tests on sample autocorrelations.
//
//	Ljung–Box:   Q = n (n + 2) Σ_{k=1}^{h} ρ̂(k)² / (n − k)
//	             (Ljung & Box 1978, "On a measure of lack of fit in time
//	             series models", Biometrika 65(2))
//	Box–Pierce:  Q = n Σ_{k=1}^{h} ρ̂(k)²
//	             (Box & Pierce 1970, JASA 65(332))
//
// ρ̂ is the sample ACF of acf.go, n the number of PRESENT values (missing
// grid slots do not count) — the convention of R's Box.test (R 4.2.2), which
// computes ρ̂ with acf(..., na.action = na.pass) and n = sum(!is.na(x)).
// Without missing values this is also statsmodels' acorr_ljungbox(x,
// lags=[h], boxpierce=True, model_df=fitdf). Under the null hypothesis that
// the series is i.i.d. (or the residuals of a correctly specified model with
// fitdf fitted parameters) Q is approximately χ² with h − fitdf degrees of
// freedom; p = P(χ² > Q) (upper tail, gonum).
//
// The statistic is undefined (ok = false) when h < 1, h ≥ n, or any ρ̂(k),
// k ≤ h, is undefined (a constant series, or a lag without pairs). When
// h − fitdf ≤ 0 the statistic is returned with P = NaN.

import "math"

// Portmanteau is the result of a Ljung–Box or Box–Pierce test.
type Portmanteau struct {
	Q  float64
	DF int     // h − fitdf
	P  float64 // NaN when DF ≤ 0
	N  int     // present values
}

// ljungBoxTerms returns the cumulative Ljung–Box Q for h = 0..L (index 0 is
// 0) from rho = ρ̂(0..≥L) and n present values; NaN from the first h that is
// undefined on.
func ljungBoxTerms(rho []float64, n, L int) []float64 {
	out := make([]float64, L+1)
	nf := float64(n)
	sum := 0.0
	bad := false
	for h := 1; h <= L; h++ {
		if bad || h >= n || h >= len(rho) || math.IsNaN(rho[h]) {
			bad = true
			out[h] = math.NaN()
			continue
		}
		sum += rho[h] * rho[h] / (nf - float64(h))
		out[h] = nf * (nf + 2) * sum
	}
	return out
}

func portmanteau(rho []float64, n, lags, fitdf int, boxPierce bool) (Portmanteau, bool) {
	if lags < 1 || lags >= n || lags >= len(rho) {
		return Portmanteau{}, false
	}
	var q float64
	if boxPierce {
		s := 0.0
		for k := 1; k <= lags; k++ {
			if math.IsNaN(rho[k]) {
				return Portmanteau{}, false
			}
			s += rho[k] * rho[k]
		}
		q = float64(n) * s
	} else {
		q = ljungBoxTerms(rho, n, lags)[lags]
		if math.IsNaN(q) {
			return Portmanteau{}, false
		}
	}
	r := Portmanteau{Q: q, DF: lags - fitdf, P: math.NaN(), N: n}
	if r.DF > 0 {
		r.P = ChiSquareUpper(q, float64(r.DF))
	}
	return r, true
}

// LjungBox returns the Ljung–Box test over lags 1..lags from rho = ρ̂(0..)
// and n present values.
func LjungBox(rho []float64, n, lags, fitdf int) (Portmanteau, bool) {
	return portmanteau(rho, n, lags, fitdf, false)
}

// BoxPierce returns the Box–Pierce test over lags 1..lags from rho = ρ̂(0..)
// and n present values.
func BoxPierce(rho []float64, n, lags, fitdf int) (Portmanteau, bool) {
	return portmanteau(rho, n, lags, fitdf, true)
}

// SeriesPortmanteau computes the sample ACF of the gridded series x (NaN =
// missing) up to lags and returns the Ljung–Box (boxPierce false) or
// Box–Pierce test.
func SeriesPortmanteau(x []float64, lags, fitdf int, boxPierce bool) (Portmanteau, bool) {
	if lags < 1 || lags >= len(x) {
		return Portmanteau{}, false
	}
	a := SampleACVF(x, lags)
	return portmanteau(ACF(a.ACVF), a.N, lags, fitdf, boxPierce)
}
