package stats

// The least-squares solve of the trend model without an n×p design matrix.

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"
)

// perYear is 1/Y: the time column is formed as (t − t_c)·(1/Y), a product
// in place of the quotient (within about one rounding of it, a relative
// perturbation of the column of the size the QR's own bound allows).
const perYear = 1 / SecondsPerYear

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
		ss := floats.Dot(cj, cj)
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
			w := (q.r[j*m+k] + floats.Dot(cj, ck)) * tau
			q.r[j*m+k] -= w
			floats.AddScaled(ck, -w, cj)
		}
	}
	q.rows = 0
}

// trendLeastSquares solves the trend model's least-squares problem for
// times t (centre tc) and the values y centred on ybar, yc = y − ybar
// (formed on the fly, not stored). It returns the fit, Σ yc², and, when
// degree ≥ 1, the lag sums S_j = Σ_{i>j} z_i z_{i−j}, j = 0..min(lags,
// n−1), of the products z_i = (x_iᵀ h) e_i with h the column of (XᵀX)⁻¹
// for the slope c_1, from which hacFromLagSums gives HACVariance's sum.
//
// Method. Every column but the constant is centred on its mean over the
// readings: with m_j the computed mean of column j and Z̃ the centred
// columns, X b = 1·(c_0 + Σ_j m_j c_j) + Z̃ c exactly, for any m, so the
// slope and seasonal coefficients c are those of the centred design and
// c_0 = c̃_0 − Σ_j m_j c_j with c̃_0 the mean of yc. The centred columns are
// orthogonal to the constant, so the constant drops out of the reduction:
// only [Z̃ | yc] (p − 1 columns and y) is factorised, and c is the same for
// yc and its projection orthogonal to the constant, so yc need not be
// centred exactly. (XᵀX)⁻¹ of the original parametrisation follows from
// V = (Z̃ᵀZ̃)⁻¹: V for the non-constant block, −V m beside it and
// 1/n + mᵀ V m for the constant (a sum of non-negative terms). The rank
// test below works on the column-scaled centred design; its condition
// number is the fit's Cond (1 when the constant is the only column).
//
// Passes. The first computes sin and cos of the first harmonic (kept, 2n
// numbers; the phase is reduced to [0, 1) before them) and the column sums
// (summed in blocks of qrBlock rows whose totals are added); the second
// forms the centred rows, never stored, and builds R and Qᵀy by the
// blocked Householder reduction of rowQR; the third forms them again for
// the residuals e = yc − c̃_0 − Z̃ c and the products z_i, whose lag sums
// are taken block by block with the last min(lags, n−1) products of the
// blocks before kept, so z is never stored.
//
// Stability. The factorisation is Householder QR of [Z̃ | yc]: a sequence
// of (p−1)·⌈n/qrBlock⌉ Householder reflections, each acting on qrBlock + 1
// rows, so the error analysis of a product of Householder transformations
// applies (Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed.,
// 2002, Lemma 19.3 and Theorem 19.4, recalled from memory): the computed R
// is the exact factor of Z̃ + ΔZ with ‖ΔZ e_j‖ ≤ c·p·n·u·‖Z̃ e_j‖ column by
// column (u the unit roundoff, c a small constant), the same order as one
// dgeqrf call, and the normal equations are never formed, so the
// coefficient error grows with the condition number of the design and not
// with its square. Centring adds two perturbations of the same kind, each
// column by column and measured against the original column x_j = X e_j
// (‖Z̃ e_j‖ ≤ ‖x_j‖ up to rounding, the mean being the least-squares
// constant). First, the subtraction x_ij − m_j rounds each entry by at
// most u·|x_ij − m_j|. Second, dropping the constant treats the computed
// centred columns as exactly orthogonal to it, while their exact sum is
// the rounding error of n·m_j, at most about k·u·Σ_i |x_ij| with
// k = qrBlock + n/qrBlock + 2 for the blocked sums: the computation is
// exact for the column minus its own mean, a change of norm at most
// k·u·‖x_j‖ (Cauchy–Schwarz). How accurate m is otherwise does not
// matter: any m gives the same model exactly. Because every bound is
// column by column, the columns' scale does not enter it: the column norms
// ‖Z̃ e_j‖ = ‖R e_j‖ are read off R afterwards, and the rank test and the
// solve use R D⁻¹ (D the column norms), exactly the matrix the
// factorisation of the column-scaled centred design would give in exact
// arithmetic. The time column is centred on the mean time before any of
// this, so unix-second times near 1.7e9 s lose no digits to the constant.
func trendLeastSquares(t, y []float64, ybar, tc float64, degree int, period float64, harmonics, lags int) (fit *OLSFit, sst float64, hac []float64, err error) {
	n, p := len(t), 1+degree+2*harmonics
	pq := p - 1 // centred columns in the reduction
	fn := float64(n)

	// Pass 1: sin and cos of the first harmonic, column means.
	var sc []float64 // sin and cos of the first harmonic, row by row
	if harmonics > 0 {
		sc = make([]float64, 2*n)
	}
	mean := make([]float64, pq)
	part := make([]float64, pq)
	for i0 := 0; i0 < n; i0 += qrBlock {
		i1 := min(i0+qrBlock, n)
		clear(part)
		for i := i0; i < i1; i++ {
			x := (t[i] - tc) * perYear
			pw := 1.0
			for k := 0; k < degree; k++ {
				pw *= x
				part[k] += pw
			}
			if harmonics > 0 {
				s1, c1 := math.Sincos(2 * math.Pi * seasonPhase(t[i], period))
				sc[2*i], sc[2*i+1] = s1, c1
				s, c := s1, c1
				for j := degree; j < pq; j += 2 {
					part[j] += s
					part[j+1] += c
					s, c = nextHarmonic(s, c, s1, c1)
				}
			}
		}
		for j, v := range part {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= fn
	}

	// Pass 2: the centred rows, reduced block by block.
	q := newRowQR(pq)
	ysum := 0.0
	for i0 := 0; i0 < n; i0 += qrBlock {
		b := min(qrBlock, n-i0)
		centredBlock(q.blk, t[i0:i0+b], sc[min(2*i0, len(sc)):], tc, degree, harmonics, mean)
		yb := q.blk[pq*qrBlock : pq*qrBlock+b]
		for k, v := range y[i0 : i0+b] {
			v -= ybar
			yb[k] = v
			ysum += v
			sst += v * v
		}
		q.rows = b
		q.flush()
	}
	c0 := ysum / fn // the constant of the centred design

	coef, inv, cond := make([]float64, p), make([]float64, p*p), 1.0
	var cv, vv []float64 // c and V of the centred design
	if pq > 0 {
		m := q.m
		scale := make([]float64, pq)
		for j := 0; j < pq; j++ {
			s := 0.0
			for i := 0; i <= j; i++ {
				s += q.r[i*m+j] * q.r[i*m+j]
			}
			scale[j] = math.Sqrt(s)
		}
		// A seasonal column that takes one value at every reading up to
		// rounding (e.g. readings at exact multiples of half the period give
		// sin ≈ ±1e-16) would pass a scaled rank test, so seasonal columns
		// are checked against their natural magnitude 1 first.
		for j := degree; j < pq; j++ {
			if scale[j]/math.Sqrt(fn) < 1e-9 {
				return nil, 0, nil, fmt.Errorf("%w (column %s has the same value at every reading time)", ErrRankDeficient, TrendTerms(degree, harmonics)[j+1])
			}
		}
		for j, s := range scale {
			if s == 0 || math.IsNaN(s) || math.IsInf(s, 0) {
				return nil, 0, nil, fmt.Errorf("%w (column %d is constant or not finite)", ErrRankDeficient, j+2)
			}
		}
		rs := make([]float64, pq*pq)
		rhs := make([]float64, pq)
		for i := 0; i < pq; i++ {
			for j := i; j < pq; j++ {
				rs[i*pq+j] = q.r[i*m+j] / scale[j]
			}
			rhs[i] = q.r[i*m+pq]
		}
		cv, vv, cond, err = solveScaledR(rs, rhs, scale, pq)
		if err != nil {
			return nil, 0, nil, err
		}
	}
	// Back to the original parametrisation.
	coef[0] = c0
	inv[0] = 1 / fn
	for j := 0; j < pq; j++ {
		coef[j+1] = cv[j]
		coef[0] -= mean[j] * cv[j]
		vm := 0.0
		for k := 0; k < pq; k++ {
			vm += vv[j*pq+k] * mean[k]
			inv[(j+1)*p+k+1] = vv[j*pq+k]
		}
		inv[j+1] = -vm
		inv[(j+1)*p] = -vm
		inv[0] += mean[j] * vm
	}

	// Pass 3: residuals and the HAC lag sums.
	resid := make([]float64, n)
	var h, zr []float64
	L := hacLagCount(lags, n) - 1
	if degree >= 1 {
		h = make([]float64, pq) // column of V for the slope
		for j := range h {
			h[j] = vv[j*pq]
		}
		hac = make([]float64, L+1)
		zr = make([]float64, L+qrBlock) // L products before the block, then the block's
	}
	ssr := 0.0
	blk := q.blk
	for i0 := 0; i0 < n; i0 += qrBlock {
		b := min(qrBlock, n-i0)
		centredBlock(blk, t[i0:i0+b], sc[min(2*i0, len(sc)):], tc, degree, harmonics, mean)
		rb := resid[i0 : i0+b]
		for k, v := range y[i0 : i0+b] {
			rb[k] = (v - ybar) - c0
		}
		for j := 0; j < pq; j++ {
			floats.AddScaled(rb, -cv[j], blk[j*qrBlock:j*qrBlock+b])
		}
		ssr += floats.Dot(rb, rb)
		if h != nil {
			zb := zr[L : L+b]
			copy(zb, blk[:b])
			floats.Scale(h[0], zb)
			for j := 1; j < pq; j++ {
				floats.AddScaled(zb, h[j], blk[j*qrBlock:j*qrBlock+b])
			}
			floats.Mul(zb, rb)
			for j := range hac {
				hac[j] += floats.Dot(zb, zr[L-j:L-j+b])
			}
			copy(zr, zr[b:b+L])
		}
	}
	return &OLSFit{N: n, P: p, Coef: coef, Resid: resid, SSR: ssr, XtXInv: inv, Cond: cond}, sst, hac, nil
}

// centredBlock writes the centred design columns of the rows with times
// tb (at most qrBlock) into blk, column j at blk[j*qrBlock:]: x^k − m
// for k = 1..degree, then the harmonics from sc (sin and cos of the first
// harmonic, row by row, starting at the block's first row) minus their
// means.
func centredBlock(blk, tb, sc []float64, tc float64, degree, harmonics int, mean []float64) {
	pq := degree + 2*harmonics
	for k, tv := range tb {
		x := (tv - tc) * perYear
		pw := 1.0
		for d := 0; d < degree; d++ {
			pw *= x
			blk[d*qrBlock+k] = pw - mean[d]
		}
		if harmonics > 0 {
			s1, c1 := sc[2*k], sc[2*k+1]
			s, c := s1, c1
			for j := degree; j < pq; j += 2 {
				blk[j*qrBlock+k] = s - mean[j]
				blk[(j+1)*qrBlock+k] = c - mean[j+1]
				s, c = nextHarmonic(s, c, s1, c1)
			}
		}
	}
}
