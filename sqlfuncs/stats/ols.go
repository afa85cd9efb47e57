package stats

// Ordinary least squares by Householder QR, with the classical and the
// Newey–West (HAC) covariance of the coefficients.

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/lapack64"
	"gonum.org/v1/gonum/mat"
)

// ErrRankDeficient is returned by OLS when the columns of the design matrix
// are (numerically) linearly dependent, so the coefficients are not
// determined by the data.
var ErrRankDeficient = errors.New("design matrix is rank-deficient")

// MaxCondition is the largest condition number (LAPACK ∞-norm estimate, after
// scaling every column to unit Euclidean norm) that OLS accepts. Beyond it
// the coefficients would carry fewer than about 4 correct digits, so OLS
// reports ErrRankDeficient instead of printing noise.
const MaxCondition = 1e12

// OLSFit is the least-squares solution b of y ≈ X b.
type OLSFit struct {
	N, P  int
	Coef  []float64 // b, length P
	Resid []float64 // e = y − X b, length N, in row order
	SSR   float64   // Σ e_i²
	// XtXInv is (XᵀX)⁻¹, P×P row-major. The classical covariance of b is
	// σ̂² (XᵀX)⁻¹ with σ̂² = SSR/(N−P).
	XtXInv []float64
	// Cond is the condition-number estimate of the column-scaled design.
	Cond float64
}

// OLS solves min ‖y − X b‖₂ for the n×p matrix x (row-major, x[i*p+j]) by
// Householder QR (Golub & Van Loan, Matrix Computations, 4th ed., 2013,
// §5.3.3 "the QR method for least squares"); the normal equations are never
// formed. Columns are first scaled to unit norm (an exact change of
// parameterisation, undone afterwards) so the rank test does not depend on
// units. It needs n ≥ p ≥ 1 and returns ErrRankDeficient (wrapped, with the
// condition estimate) when the scaled design's condition number exceeds
// MaxCondition or a column is all zero.
func OLS(x []float64, n, p int, y []float64) (*OLSFit, error) {
	if p < 1 || n < p || len(x) != n*p || len(y) != n {
		return nil, fmt.Errorf("ols: bad dimensions n=%d p=%d len(x)=%d len(y)=%d", n, p, len(x), len(y))
	}
	scale := make([]float64, p)
	for j := 0; j < p; j++ {
		s := 0.0
		for i := 0; i < n; i++ {
			s += x[i*p+j] * x[i*p+j]
		}
		s = math.Sqrt(s)
		if s == 0 || math.IsNaN(s) || math.IsInf(s, 0) {
			return nil, fmt.Errorf("%w (column %d is all zero or not finite)", ErrRankDeficient, j+1)
		}
		scale[j] = s
	}
	xs := make([]float64, n*p)
	for i := 0; i < n; i++ {
		for j := 0; j < p; j++ {
			xs[i*p+j] = x[i*p+j] / scale[j]
		}
	}
	// Householder QR in place on xs (LAPACK dgeqrf through gonum's lapack64,
	// the calls gonum's mat.QR makes, without its copies of the n×p matrix):
	// R in the upper triangle, the reflectors below it and in tau.
	a := blas64.General{Rows: n, Cols: p, Stride: p, Data: xs}
	tau := make([]float64, p)
	work := []float64{0}
	lapack64.Geqrf(a, tau, work, -1)
	work = make([]float64, int(work[0]))
	lapack64.Geqrf(a, tau, work, len(work))
	// Qᵀ y: its first p entries are the right-hand side of R b_s = (Qᵀ y)_{1..p}.
	qty := append([]float64(nil), y...)
	c := blas64.General{Rows: n, Cols: 1, Stride: 1, Data: qty}
	work = []float64{0}
	lapack64.Ormqr(blas.Left, blas.Trans, a, tau, c, work, -1)
	work = make([]float64, int(work[0]))
	lapack64.Ormqr(blas.Left, blas.Trans, a, tau, c, work, len(work))
	coef, inv, cond, err := solveScaledR(xs[:p*p], qty[:p], scale, p)
	if err != nil {
		return nil, err
	}
	resid := make([]float64, n)
	ssr := 0.0
	for i := 0; i < n; i++ {
		f := 0.0
		for j := 0; j < p; j++ {
			f += x[i*p+j] * coef[j]
		}
		e := y[i] - f
		resid[i] = e
		ssr += e * e
	}
	return &OLSFit{N: n, P: p, Coef: coef, Resid: resid, SSR: ssr, XtXInv: inv, Cond: cond}, nil
}

// solveScaledR finishes a least-squares solve from the triangular factor of
// the column-scaled design: r holds R (p×p row-major, upper triangle read;
// Xs = Q R with Xs = X D⁻¹, D = diag(scale)), rhs the first p entries of
// Qᵀ y (overwritten). It returns b = D⁻¹ R⁻¹ rhs, (XᵀX)⁻¹ = D⁻¹ R⁻¹ R⁻ᵀ D⁻¹
// and the ∞-norm condition estimate of R (dtrcon), which equals that of the
// scaled design up to the norm's lack of orthogonal invariance; an error
// wrapping ErrRankDeficient when it exceeds MaxCondition.
func solveScaledR(r, rhs, scale []float64, p int) (coef, inv []float64, cond float64, err error) {
	rt := blas64.Triangular{N: p, Stride: p, Data: r, Uplo: blas.Upper, Diag: blas.NonUnit}
	cond = 1 / lapack64.Trcon(lapack.MaxRowSum, rt, make([]float64, 3*p), make([]int, p))
	if !(cond <= MaxCondition) {
		return nil, nil, cond, fmt.Errorf("%w (condition number %.3g)", ErrRankDeficient, cond)
	}
	c := blas64.General{Rows: p, Cols: 1, Stride: 1, Data: rhs}
	if !lapack64.Trtrs(blas.NoTrans, rt, c) {
		return nil, nil, cond, fmt.Errorf("%w (R is singular)", ErrRankDeficient)
	}
	rm := mat.NewTriDense(p, mat.Upper, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			rm.SetTri(i, j, r[i*p+j])
		}
	}
	var rinv mat.TriDense
	if err := rinv.InverseTri(rm); err != nil {
		return nil, nil, cond, fmt.Errorf("%w (%v)", ErrRankDeficient, err)
	}
	inv = make([]float64, p*p)
	for i := 0; i < p; i++ {
		for j := 0; j < p; j++ {
			s := 0.0
			for k := max(i, j); k < p; k++ {
				s += rinv.At(i, k) * rinv.At(j, k)
			}
			inv[i*p+j] = s / (scale[i] * scale[j])
		}
	}
	coef = make([]float64, p)
	for j := 0; j < p; j++ {
		coef[j] = rhs[j] / scale[j]
	}
	return coef, inv, cond, nil
}

// HACVariance returns the Newey–West heteroskedasticity-and-autocorrelation
// consistent variance of the linear combination cᵀb, for the design x used
// in fit (rows in time order):
//
//	h  = (XᵀX)⁻¹ c,   z_i = (x_iᵀ h) e_i
//	Ŝ  = Σ_i z_i² + 2 Σ_{j=1}^{L} w_j Σ_{i=j+1}^{n} z_i z_{i−j},   w_j = 1 − j/(L+1)
//	V  = Ŝ · n/(n−p)   when correction is true, else Ŝ.
//
// This is cᵀ (XᵀX)⁻¹ Ω̂ (XᵀX)⁻¹ c with the Bartlett-kernel estimate Ω̂ of
// Newey & West (1987), Econometrica 55(3):703–708, eq. (2)–(3); the optional
// factor n/(n−p) is the degrees-of-freedom correction that statsmodels 0.13.5
// applies with cov_kwds={'use_correction': True} (common practice: the
// HC1-style small-sample correction). Lags count rows, not time: a gap in
// the series is treated as adjacent rows. The weights always use the given
// L; lags j ≥ n contribute nothing (there are no such pairs), which is also
// what statsmodels does.
func HACVariance(fit *OLSFit, x []float64, c []float64, lags int, correction bool) float64 {
	n, p := fit.N, fit.P
	h := make([]float64, p)
	for i := 0; i < p; i++ {
		s := 0.0
		for j := 0; j < p; j++ {
			s += fit.XtXInv[i*p+j] * c[j]
		}
		h[i] = s
	}
	z := make([]float64, n)
	for i := 0; i < n; i++ {
		s := 0.0
		for j := 0; j < p; j++ {
			s += x[i*p+j] * h[j]
		}
		z[i] = s * fit.Resid[i]
	}
	return hacSum(z, lags, p, correction)
}

// hacSum is the Bartlett-weighted long-run sum of HACVariance for the
// products z_i = (x_iᵀ h) e_i in time order, p coefficients.
func hacSum(z []float64, lags, p int, correction bool) float64 {
	n := len(z)
	s := make([]float64, hacLagCount(lags, n))
	for j := range s {
		s[j] = floats.Dot(z[j:], z[:n-j])
	}
	return hacFromLagSums(s, lags, n, p, correction)
}

// hacLagCount is the number of lag sums S_0..S_L' the HAC sum needs for n
// products: L' = min(lags, n − 1), lags < 0 counting as 0.
func hacLagCount(lags, n int) int {
	return max(min(lags, n-1), 0) + 1
}

// hacFromLagSums is hacSum from the lag sums s[j] = Σ_{i>j} z_i z_{i−j},
// j = 0..len(s)−1 (lags beyond len(s)−1 have no pairs), with Bartlett
// weights for the given lags.
func hacFromLagSums(s []float64, lags, n, p int, correction bool) float64 {
	v := s[0]
	for j := 1; j < len(s); j++ {
		w := 1 - float64(j)/float64(lags+1)
		v += 2 * w * s[j]
	}
	if correction {
		v *= float64(n) / float64(n-p)
	}
	return v
}

// DefaultHACLags is the Newey–West rule-of-thumb truncation lag
// floor(4·(n/100)^(2/9)) (Newey & West 1994, Rev. Econ. Stud. 61(4):631–653,
// the Bartlett-kernel plug-in rule with its usual constant 4; common
// practice).
func DefaultHACLags(n int) int {
	if n <= 0 {
		return 0
	}
	return int(math.Floor(4 * math.Pow(float64(n)/100, 2.0/9.0)))
}

// lag1ACF is the lag-1 sample autocorrelation of e in the given order with
// the sample mean removed and divisor n in both numerator and denominator
// (the package convention, see doc.go): Σ_{i=1}^{n−1} (e_i−ē)(e_{i+1}−ē) /
// Σ (e_i−ē)². It is NaN when n < 2 or the denominator is 0.
func lag1ACF(e []float64) float64 {
	n := len(e)
	if n < 2 {
		return math.NaN()
	}
	sum := 0.0
	for _, v := range e {
		sum += v
	}
	mean := sum / float64(n)
	// Sums of d_i = e_i − mean; the corrected mean mean + δ (δ the mean of
	// the d_i, as in demeaned) is applied to the sums afterwards:
	// Σ(d−δ)² = Σd² − nδ², Σ(d_i−δ)(d_{i+1}−δ) = Σd_i d_{i+1} −
	// δ(2Σd − d_1 − d_n) + (n−1)δ².
	d0 := e[0] - mean
	s0, s1, sd, prev := d0*d0, 0.0, d0, d0
	for _, v := range e[1:] {
		d := v - mean
		s0 += d * d
		s1 += prev * d
		sd += d
		prev = d
	}
	delta := sd / float64(n)
	s0 -= float64(n) * delta * delta
	s1 += -delta*(2*sd-d0-prev) + float64(n-1)*delta*delta
	if !(s0 > 0) {
		return math.NaN()
	}
	return s1 / s0
}
