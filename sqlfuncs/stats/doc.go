// Package stats is trendsql's numerical core: plain Go functions over slices
// with no SQL imports (it uses package timefmt for the year length and
// durations). It holds every statistic, including the per-series summary
// that summary runs store (summary.go) and the Benjamini–Hochberg
// adjustment across a run's series (fdr.go). The SQL bindings in package
// sqlfuncs convert arguments and call into here.
//
// Conventions used throughout (one notation for the whole repository):
//
//   - A series is (t_i, y_i), i = 1..n, sorted by t with distinct t; t in
//     unix seconds. Times are centred and scaled to years (1 y = 365.25 d)
//     before any fit.
//   - ȳ is the sample mean (1/n) Σ y_i.
//   - γ̂(h) = (1/n) Σ_{i=1}^{n−h} (y_i − ȳ)(y_{i+h} − ȳ): divisor n, not n−h
//     (common practice; the convention of R's acf and statsmodels' acovf).
//   - ρ̂(h) = γ̂(h) / γ̂(0).
//   - Every estimator states its divisor at its definition.
//
// Functions return (value, ok) or an error instead of panicking: they run
// inside SQL callbacks.
package stats

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// ChiSquareUpper returns P(X > q) for X ~ χ²(df), or NaN for df ≤ 0.
func ChiSquareUpper(q, df float64) float64 {
	if !(df > 0) || math.IsNaN(q) {
		return math.NaN()
	}
	if q <= 0 {
		return 1
	}
	return distuv.ChiSquared{K: df}.Survival(q)
}

// NormalTwoSided returns the two-sided p-value 2·P(Z > |z|) for Z ~ N(0, 1),
// computed as erfc(|z|/√2) so that small p-values keep full relative
// precision (1 − erf(·) would round to 0 beyond |z| ≈ 8.3).
func NormalTwoSided(z float64) float64 {
	if math.IsNaN(z) {
		return math.NaN()
	}
	return math.Erfc(math.Abs(z) / math.Sqrt2)
}
