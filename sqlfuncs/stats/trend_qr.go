package stats

// The least-squares solve of the trend model without an n×p design matrix.

import (
	"fmt"
	"math"
)

// qrBlock is the number of design rows reduced together by one set of
// Householder reflections in rowQR.
const qrBlock = 64

// rowQR is a Householder QR factorisation of [X | y] fed one row at a time.
// It keeps only the triangular factor: r is p×(p+1) row-major, with R in its
// first p columns and the first p entries of Qᵀy in the last. Rows are
// gathered into a block of qrBlock rows (column-major, so the reflector
// loops run over contiguous memory) and the block is reduced against R by p
// Householder reflections, each acting on R's row j and the block's rows:
// the structured update of a QR factorisation by appended rows (Golub & Van
// Loan, Matrix Computations, 4th ed., 2013, §6.5, "updating matrix
// factorizations"; the same reflectors dgeqrf would form on the stacked
// matrix [R; block], whose rows below the diagonal of R are zero).
type rowQR struct {
	p, m int       // coefficients; m = p + 1 columns with y
	r    []float64 // p×m row-major
	blk  []float64 // m×qrBlock: column k of the block at blk[k*qrBlock:]
	rows int       // rows in blk
}

func newRowQR(p int) *rowQR {
	return &rowQR{p: p, m: p + 1, r: make([]float64, p*(p+1)), blk: make([]float64, (p+1)*qrBlock)}
}

// flush reduces the gathered rows into r.
func (q *rowQR) flush() {
	b, p, m := q.rows, q.p, q.m
	if b == 0 {
		return
	}
	for j := 0; j < p; j++ {
		cj := q.blk[j*qrBlock : j*qrBlock+b]
		ss := sumSq(cj)
		if ss == 0 {
			continue // H = I, as dlarfg gives for a zero tail
		}
		// The reflector H = I − τ v vᵀ with v = (1, cj/(α−β)) maps
		// (α, cj) to (β, 0), β = −sign(α)·‖(α, cj)‖ (dlarfg's choice).
		alpha := q.r[j*m+j]
		beta := -math.Copysign(math.Sqrt(alpha*alpha+ss), alpha)
		tau := (beta - alpha) / beta
		sc := 1 / (alpha - beta)
		for i := range cj {
			cj[i] *= sc
		}
		q.r[j*m+j] = beta
		for k := j + 1; k < m; k++ {
			ck := q.blk[k*qrBlock : k*qrBlock+b]
			w := (q.r[j*m+k] + dot(cj, ck)) * tau
			q.r[j*m+k] -= w
			ck = ck[:len(cj)]
			for i, v := range cj {
				ck[i] -= w * v
			}
		}
	}
	q.rows = 0
}

// trendLeastSquares solves the trend model's least-squares problem for
// times t (centre tc) and centred values yc. It returns the fit and, when
// degree ≥ 1, the products z_i = (x_iᵀ h) e_i with h the column of (XᵀX)⁻¹
// for the slope c_1, which HACVariance's sum needs.
//
// Method and stability. The design rows are formed twice, never stored
// (only sin and cos of the first harmonic are kept, 2n numbers):
// once to build R and Qᵀy by the blocked Householder reduction of rowQR,
// once for the residuals e = yc − X b. The factorisation is Householder QR
// of [X | yc]: a sequence of p·⌈n/qrBlock⌉ Householder reflections, each
// acting on qrBlock + 1 rows, so the error analysis of a product of
// Householder transformations applies (Higham, Accuracy and Stability of
// Numerical Algorithms, 2nd ed., 2002, Lemma 19.3 and Theorem 19.4, recalled
// from memory): the computed R is the exact factor of X + ΔX with
// ‖ΔX e_j‖ ≤ c·p·n·u·‖X e_j‖ column by column (u the unit roundoff, c a
// small constant), the same order as one dgeqrf call on X, and the normal
// equations are never formed, so the coefficient error grows with the
// condition number of the design and not with its square. Because that
// bound is column by column, the columns' scale does not enter it: the
// column norms ‖X e_j‖ = ‖R e_j‖ are read off R afterwards, and the rank
// test and the solve use R D⁻¹ (D the column norms), exactly the matrix
// the factorisation of the column-scaled design would give in exact
// arithmetic. The time column is centred on the mean time before any of
// this, so unix-second times near 1.7e9 s lose no digits to the constant.
func trendLeastSquares(t, yc []float64, tc float64, degree int, period float64, harmonics int) (*OLSFit, []float64, error) {
	n, p := len(t), 1+degree+2*harmonics
	q := newRowQR(p)
	row := make([]float64, p)
	var sc []float64 // sin and cos of the first harmonic, row by row
	if harmonics > 0 {
		sc = make([]float64, 2*n)
	}
	for i := 0; i < n; i++ {
		var s1, c1 float64
		if harmonics > 0 {
			s1, c1 = math.Sincos(2 * math.Pi * seasonPhase(t[i], period))
			sc[2*i], sc[2*i+1] = s1, c1
		}
		designRow(row, (t[i]-tc)/SecondsPerYear, degree, harmonics, s1, c1)
		k := q.rows
		for j, v := range row {
			q.blk[j*qrBlock+k] = v
		}
		q.blk[p*qrBlock+k] = yc[i]
		q.rows++
		if q.rows == qrBlock {
			q.flush()
		}
	}
	q.flush()

	m := q.m
	scale := make([]float64, p)
	for j := 0; j < p; j++ {
		s := 0.0
		for i := 0; i <= j; i++ {
			s += q.r[i*m+j] * q.r[i*m+j]
		}
		scale[j] = math.Sqrt(s)
	}
	// A sine column that is rounding noise at every reading (e.g. readings
	// at exact multiples of half the period give sin ≈ ±1e-16) would pass a
	// scaled rank test, so seasonal columns are checked against their
	// natural magnitude 1 first.
	for j := degree + 1; j < p; j++ {
		if scale[j]/math.Sqrt(float64(n)) < 1e-9 {
			return nil, nil, fmt.Errorf("%w (column %s is zero at every reading time)", ErrRankDeficient, TrendTerms(degree, harmonics)[j])
		}
	}
	for j, s := range scale {
		if s == 0 || math.IsNaN(s) || math.IsInf(s, 0) {
			return nil, nil, fmt.Errorf("%w (column %d is all zero or not finite)", ErrRankDeficient, j+1)
		}
	}
	rs := make([]float64, p*p)
	rhs := make([]float64, p)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			rs[i*p+j] = q.r[i*m+j] / scale[j]
		}
		rhs[i] = q.r[i*m+p]
	}
	coef, inv, cond, err := solveScaledR(rs, rhs, scale, p)
	if err != nil {
		return nil, nil, err
	}

	resid := make([]float64, n)
	var z, h []float64
	if degree >= 1 {
		z = make([]float64, n)
		h = make([]float64, p)
		for j := range h {
			h[j] = inv[j*p+1]
		}
	}
	ssr := 0.0
	for i := 0; i < n; i++ {
		var s1, c1 float64
		if harmonics > 0 {
			s1, c1 = sc[2*i], sc[2*i+1]
		}
		designRow(row, (t[i]-tc)/SecondsPerYear, degree, harmonics, s1, c1)
		f := 0.0
		for j, v := range row {
			f += v * coef[j]
		}
		e := yc[i] - f
		resid[i] = e
		ssr += e * e
		if z != nil {
			g := 0.0
			for j, v := range row {
				g += v * h[j]
			}
			z[i] = g * e
		}
	}
	return &OLSFit{N: n, P: p, Coef: coef, Resid: resid, SSR: ssr, XtXInv: inv, Cond: cond}, z, nil
}

// dot is Σ a_i b_i over len(a) (b at least as long) with four partial sums.
func dot(a, b []float64) float64 {
	b = b[:len(a)]
	var s0, s1, s2, s3 float64
	i := 0
	for ; i+4 <= len(a); i += 4 {
		s0 += a[i] * b[i]
		s1 += a[i+1] * b[i+1]
		s2 += a[i+2] * b[i+2]
		s3 += a[i+3] * b[i+3]
	}
	for ; i < len(a); i++ {
		s0 += a[i] * b[i]
	}
	return (s0 + s1) + (s2 + s3)
}

// sumSq is Σ a_i² with four partial sums.
func sumSq(a []float64) float64 { return dot(a, a) }
