package stats

// Least-squares trend of a time series: a polynomial in centred time plus
// optional seasonal harmonics, with classical, Newey–West (HAC) and
// effective-sample-size slope errors.
//
// Model, for a series (t_i, y_i), i = 1..n (t in unix seconds, sorted,
// distinct):
//
//	x_i  = (t_i − t_c) / Y,   Y = 31 557 600 s (365.25 d), t_c = (1/n) Σ t_i
//	u_i  = t_i/P − ⌊t_i/P⌋    (phase in [0, 1); origin: the unix epoch 1970-01-01T00:00:00Z)
//	y_i ≈ c_0 + c_1 x_i + … + c_d x_i^d
//	        + Σ_{k=1}^{K} ( a_k sin(2πk u_i) + b_k cos(2πk u_i) )
//
// Term order of Coef, SE and Terms: [c_0, c_1, …, c_d, a_1, b_1, a_2, b_2, …],
// named "const", "t", "t^2", …, "t^d", "sin1", "cos1", "sin2", "cos2", ….
// Polynomial coefficients are in y-units per year^k; harmonic coefficients
// in y-units. Because the phase is taken from the unix epoch and not from
// the first reading, a stored model evaluates the same at any t whatever
// rows it was fitted on.
//
// t_c is the mean time (not the midpoint of the record): it makes the
// linear column orthogonal to the constant, so for degree 1 without
// harmonics c_0 = ȳ and c_1 equals the plain least-squares slope, and for
// any degree c_1 is the derivative of the fitted polynomial at t_c.

import (
	"fmt"
	"math"

	"trendsql/sqlfuncs/timefmt"

	"gonum.org/v1/gonum/stat/distuv"
)

// SecondsPerYear is the year of every "per year" figure: 365.25 d in
// seconds, as defined by timefmt.
const SecondsPerYear = timefmt.SecondsPerYear

// MaxTrendDegree and MaxHarmonics bound the spec.
const (
	MaxTrendDegree = 6
	MaxHarmonics   = 50
)

// TrendSpec selects the model. Period 0 means no seasonal terms. HACLags < 0
// selects DefaultHACLags(n).
type TrendSpec struct {
	Degree    int
	Period    float64 // seconds
	Harmonics int
	HACLags   int
}

// Params is the number of coefficients, 1 + Degree + 2·Harmonics.
func (s TrendSpec) Params() int { return 1 + s.Degree + 2*s.Harmonics }

// Validate checks the bounds of the spec.
func (s TrendSpec) Validate() error {
	if s.Degree < 0 || s.Degree > MaxTrendDegree {
		return fmt.Errorf("degree %d is out of range 0..%d", s.Degree, MaxTrendDegree)
	}
	if s.Harmonics < 0 || s.Harmonics > MaxHarmonics {
		return fmt.Errorf("harmonics %d is out of range 0..%d", s.Harmonics, MaxHarmonics)
	}
	if s.Harmonics > 0 && !(s.Period > 0 && !math.IsInf(s.Period, 0)) {
		return fmt.Errorf("harmonics=%d needs a positive period", s.Harmonics)
	}
	if s.Period < 0 || math.IsNaN(s.Period) || math.IsInf(s.Period, 0) {
		return fmt.Errorf("period %v s must be positive and finite", s.Period)
	}
	return nil
}

// TrendModel is a fitted trend. Fields documented as "NaN when …" are
// rendered as JSON null by the SQL layer.
type TrendModel struct {
	N       int
	TFirst  float64
	TLast   float64
	TCenter float64 // mean of t
	Degree  int
	Period  float64 // seconds; 0 when there are no harmonics
	Harm    int
	Terms   []string
	Coef    []float64
	SE      []float64 // classical: σ̂ √diag((XᵀX)⁻¹)

	// Slope = c_1 (per year), the derivative of the polynomial at t_c. All
	// slope fields are NaN when Degree = 0.
	SlopePerYear float64
	SlopeSE      float64
	SlopeP       float64 // two-sided, Student t with DFResid df; NaN when SlopeSE = 0 and slope = 0

	R2        float64 // 1 − SSR/Σ(y−ȳ)²; NaN when Σ(y−ȳ)² = 0 (constant y)
	Sigma     float64 // √(SSR/(n−p))
	DFResid   int     // n − p
	ResidACF1 float64 // lag-1 sample ACF of residuals (time order, divisor n); NaN if residuals are constant

	HACLags    int
	HACSlopeSE float64 // Newey–West, Bartlett weights, factor n/(n−p)
	HACP       float64 // two-sided, Student t with DFResid df

	NEff  float64 // n(1−ρ̂₁)/(1+ρ̂₁) (effective size under an AR(1) residual model), = n when ρ̂₁ ≤ 0; NaN when ρ̂₁ is NaN
	NEffP float64 // slope p-value with n_eff (see FitTrend); NaN when n_eff ≤ p
}

// TrendTerms returns the term names in coefficient order.
func TrendTerms(degree, harmonics int) []string {
	out := []string{"const"}
	for k := 1; k <= degree; k++ {
		if k == 1 {
			out = append(out, "t")
		} else {
			out = append(out, fmt.Sprintf("t^%d", k))
		}
	}
	for k := 1; k <= harmonics; k++ {
		out = append(out, fmt.Sprintf("sin%d", k), fmt.Sprintf("cos%d", k))
	}
	return out
}

// seasonPhase returns u = t/P − ⌊t/P⌋, the position of t within the period
// counted from the unix epoch, in [0, 1).
func seasonPhase(t, period float64) float64 {
	u := t / period
	return u - math.Floor(u)
}

// nextHarmonic steps (sin kθ, cos kθ) to (sin (k+1)θ, cos (k+1)θ) by the
// angle-addition formulas, given (sin θ, cos θ): one sin/cos evaluation per
// row serves every harmonic (the rounding error grows about linearly in k,
// far below 1e-12 for the few harmonics a seasonal fit uses).
func nextHarmonic(s, c, s1, c1 float64) (float64, float64) {
	return s*c1 + c*s1, c*c1 - s*s1
}

// designRow writes the design row into dst (length 1 + degree +
// 2·harmonics) for centred time x in years and (s1, c1) = sin and cos of
// 2π times the phase (ignored when harmonics = 0).
func designRow(dst []float64, x float64, degree, harmonics int, s1, c1 float64) {
	dst[0] = 1
	pw := 1.0
	for k := 1; k <= degree; k++ {
		pw *= x
		dst[k] = pw
	}
	s, c := s1, c1
	for j := degree + 1; j < degree+1+2*harmonics; j += 2 {
		dst[j], dst[j+1] = s, c
		s, c = nextHarmonic(s, c, s1, c1)
	}
}

// TrendValue evaluates a model given by its parameters at time t. coef must
// have length 1 + degree + 2·harmonics.
func TrendValue(t, tCenter float64, degree int, period float64, harmonics int, coef []float64) float64 {
	x := (t - tCenter) / SecondsPerYear
	v := 0.0
	for k := degree; k >= 0; k-- { // Horner
		v = v*x + coef[k]
	}
	if harmonics > 0 {
		s1, c1 := math.Sincos(2 * math.Pi * seasonPhase(t, period))
		s, c := s1, c1
		for j := degree + 1; j < degree+1+2*harmonics; j += 2 {
			v += coef[j]*s + coef[j+1]*c
			s, c = nextHarmonic(s, c, s1, c1)
		}
	}
	return v
}

// Value evaluates the fitted model at time t.
func (m *TrendModel) Value(t float64) float64 {
	return TrendValue(t, m.TCenter, m.Degree, m.Period, m.Harm, m.Coef)
}

// FitTrend fits the model of spec to (t, y), which must be sorted by t with
// distinct t. It returns (nil, nil) when n ≤ p (too few points for a fit
// with residual degrees of freedom), and an error wrapping ErrRankDeficient
// when the design is numerically singular (e.g. a period that aliases with
// the sampling step, such as period=1d on daily readings).
//
// y is centred on ȳ before the QR solve (c_0 is shifted back), so a constant
// series gives exactly zero for every other coefficient.
//
// Slope significance, all for c_1 (the slope per year at t_c):
//
//   - slope_se = σ̂ √[(XᵀX)⁻¹]₁₁, slope_p from Student t with n−p df.
//   - hac_slope_se: Newey & West (1987) with Bartlett weights 1 − j/(L+1),
//     j = 1..L lags in row (time) order, times the small-sample factor
//     n/(n−p); hac_p from Student t with n−p df. This matches statsmodels
//     0.13.5 OLS(y, X).fit(cov_type='HAC', cov_kwds={'maxlags': L,
//     'use_correction': True}, use_t=True).
//   - n_eff = n(1−ρ̂₁)/(1+ρ̂₁) with ρ̂₁ = resid_acf1 (the AR(1) effective
//     sample size, Santer et al. 2000, J. Geophys. Res. 105(D6):7337–7356;
//     the equation number there, 6, is recalled from memory). ρ̂₁ ≤ 0
//     gives n_eff = n (negative autocorrelation is not
//     allowed to shrink the error). n_eff_p: following Santer et al. (2000)
//     the residual variance is recomputed with n_eff − p in the divisor,
//     i.e. se_eff = slope_se·√((n−p)/(n_eff−p)), and the two-sided p-value
//     uses Student t with n_eff − p (non-integer) df; NaN when n_eff ≤ p.
//
// Values are scaled by a power of two first (UnitScale), so data near
// ±1e308 whose fit is finite gives the finite fit.
func FitTrend(t, y []float64, spec TrendSpec) (*TrendModel, error) {
	ys, k := UnitScale(y)
	m, err := fitTrend(t, ys, spec)
	if err != nil || m == nil || k == 0 {
		return m, err
	}
	// Fields in the values' unit are multiplied back; R², p-values,
	// resid_acf1 and n_eff do not depend on the unit.
	for j := range m.Coef {
		m.Coef[j] = math.Ldexp(m.Coef[j], k)
		m.SE[j] = math.Ldexp(m.SE[j], k)
	}
	m.SlopePerYear = math.Ldexp(m.SlopePerYear, k)
	m.SlopeSE = math.Ldexp(m.SlopeSE, k)
	m.Sigma = math.Ldexp(m.Sigma, k)
	m.HACSlopeSE = math.Ldexp(m.HACSlopeSE, k)
	return m, nil
}

func fitTrend(t, y []float64, spec TrendSpec) (*TrendModel, error) {
	if err := spec.Validate(); err != nil {
		return nil, err
	}
	if len(t) != len(y) {
		return nil, fmt.Errorf("trend: %d times but %d values", len(t), len(y))
	}
	n, p := len(t), spec.Params()
	if n <= p {
		return nil, nil
	}
	tc := compensatedMean(t)
	ybar := compensatedMean(y)

	period := spec.Period
	if spec.Harmonics == 0 {
		period = 0
	}
	lags := spec.HACLags
	if lags < 0 {
		lags = DefaultHACLags(n)
	}
	fit, sst, hac, err := trendLeastSquares(t, y, ybar, tc, spec.Degree, period, spec.Harmonics, lags)
	if err != nil {
		return nil, err
	}
	df := n - p
	sigma := math.Sqrt(fit.SSR / float64(df))
	m := &TrendModel{
		N: n, TFirst: t[0], TLast: t[n-1], TCenter: tc,
		Degree: spec.Degree, Period: period, Harm: spec.Harmonics,
		Terms: TrendTerms(spec.Degree, spec.Harmonics),
		Coef:  fit.Coef, SE: make([]float64, p),
		Sigma: sigma, DFResid: df,
		SlopePerYear: math.NaN(), SlopeSE: math.NaN(), SlopeP: math.NaN(),
		HACSlopeSE: math.NaN(), HACP: math.NaN(), NEffP: math.NaN(),
	}
	m.Coef[0] += ybar
	for j := 0; j < p; j++ {
		m.SE[j] = sigma * math.Sqrt(fit.XtXInv[j*p+j])
	}
	if sst > 0 {
		m.R2 = 1 - fit.SSR/sst
	} else {
		m.R2 = math.NaN()
	}
	m.ResidACF1 = lag1ACF(fit.Resid)
	switch rho := m.ResidACF1; {
	case math.IsNaN(rho):
		m.NEff = math.NaN()
	case rho <= 0:
		m.NEff = float64(n)
	default:
		m.NEff = float64(n) * (1 - rho) / (1 + rho)
	}
	m.HACLags = lags
	if spec.Degree >= 1 {
		b := fit.Coef[1]
		m.SlopePerYear = b
		m.SlopeSE = m.SE[1]
		m.SlopeP = tTwoSided(b, m.SlopeSE, float64(df))
		v := hacFromLagSums(hac, lags, n, p, true)
		m.HACSlopeSE = math.Sqrt(math.Max(v, 0))
		m.HACP = tTwoSided(b, m.HACSlopeSE, float64(df))
		if ne := m.NEff; ne > float64(p) {
			se := m.SlopeSE * math.Sqrt(float64(df)/(ne-float64(p)))
			m.NEffP = tTwoSided(b, se, ne-float64(p))
		}
	}
	return m, nil
}

// tTwoSided is 2·P(T_df > |b/se|); NaN when b = se = 0; 0 when se = 0 < |b|.
func tTwoSided(b, se, df float64) float64 {
	if math.IsNaN(b) || math.IsNaN(se) || !(df > 0) {
		return math.NaN()
	}
	if se == 0 {
		if b == 0 {
			return math.NaN()
		}
		return 0
	}
	z := math.Abs(b / se)
	return 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Survival(z)
}

// TrendSlope is the least-squares slope per year of y on t (degree-1
// trend, no harmonics), computed in two centred passes:
// Σ x_i (y_i − ȳ) / Σ x_i², x_i = (t_i − t_c)/Y. It equals FitTrend's
// SlopePerYear for the default spec (to rounding) and, like it, is NaN when
// n ≤ 2 (a fit needs more points than parameters). Values are scaled as in
// FitTrend (UnitScale).
func TrendSlope(t, y []float64) float64 {
	n := len(t)
	if n <= 2 || len(y) != n {
		return math.NaN()
	}
	// The two means and the scale of y in one pass; the results are those
	// of compensatedMean(t), UnitScale(y) and compensatedMean of the
	// scaled y, bit for bit.
	tc, ybar, ymax := meansAndMaxAbs(t, y)
	k := unitExponent(ymax)
	if k != 0 {
		y, k = UnitScale(y)
		ybar = compensatedMean(y)
	}
	sxx, sxy := 0.0, 0.0
	for i := range t {
		x := (t[i] - tc) / SecondsPerYear
		sxx += x * x
		sxy += x * (y[i] - ybar)
	}
	if sxx == 0 {
		return math.NaN()
	}
	return math.Ldexp(sxy/sxx, k)
}

// meansAndMaxAbs returns compensatedMean(t), compensatedMean(y) and the
// largest finite magnitude of y (as UnitScale finds it) from one pass over
// both series (len(y) ≥ len(t) > 0): the two sums are independent chains
// of additions, so interleaving them costs little more than one.
func meansAndMaxAbs(t, y []float64) (tm, ym, ymax float64) {
	y = y[:len(t)]
	st, ct, sy, cy := 0.0, 0.0, 0.0, 0.0
	for i, x := range t {
		u := st + x
		if math.Abs(st) >= math.Abs(x) {
			ct += (st - u) + x
		} else {
			ct += (x - u) + st
		}
		st = u
		v := y[i]
		w := sy + v
		if math.Abs(sy) >= math.Abs(v) {
			cy += (sy - w) + v
		} else {
			cy += (v - w) + sy
		}
		sy = w
		if a := math.Abs(v); a > ymax && !math.IsInf(a, 0) {
			ymax = a
		}
	}
	n := float64(len(t))
	return (st + ct) / n, (sy + cy) / n, ymax
}

// compensatedMean is the mean with a compensated sum (Neumaier 1974, ZAMM 54:39–51),
// so the mean of unix times near 1.7e9 s is correct to about one rounding.
func compensatedMean(v []float64) float64 {
	s, c := 0.0, 0.0
	for _, x := range v {
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			c += (s - t) + x
		} else {
			c += (x - t) + s
		}
		s = t
	}
	return (s + c) / float64(len(v))
}
