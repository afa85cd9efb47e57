package stats

// Pettitt (1979) rank test for a single change point ("A non-parametric
// approach to the change-point problem", Applied Statistics 28(2):126–135).
//
// For a series y_1..y_n in time order and each split 1 ≤ k < n,
//
//	U_k = Σ_{i ≤ k} Σ_{j > k} sgn(y_i − y_j) = 2·Σ_{i ≤ k} r_i − k(n + 1)
//
// with r_i the ranks of y (average ranks for ties; the two forms agree
// exactly because Σ_j sgn(y_i − y_j) = 2r_i − (n + 1)). The statistic is
// K = max_k |U_k|, attained first at k* (the earliest split in case of equal
// |U_k|), and its approximate two-sided significance (Pettitt 1979)
//
//	p ≈ 2·exp(−6K² / (n³ + n²)),  capped at 1.
//
// k* is the number of values before the change: the change happens between
// the k*-th and (k*+1)-th values. U_{k*} > 0 means the values before the
// change tend to be larger (a downward shift). O(n log n) for the ranks.

import (
	"errors"
	"math"
)

// PettittResult holds the test.
type PettittResult struct {
	N int
	K int     // k*: values before the change (1 ≤ K < N)
	U float64 // U_{k*}, signed
	P float64
}

// Pettitt runs the test on y in time order (n ≥ 2).
func Pettitt(y []float64) (PettittResult, error) {
	n := len(y)
	if n < 2 {
		return PettittResult{}, errors.New("the Pettitt test needs at least 2 values")
	}
	r := Ranks(y)
	var cum float64
	best := -1.0
	res := PettittResult{N: n}
	nf := float64(n)
	for k := 1; k < n; k++ {
		cum += r[k-1]
		u := 2*cum - float64(k)*(nf+1)
		if a := math.Abs(u); a > best {
			best, res.K, res.U = a, k, u
		}
	}
	res.P = math.Min(1, 2*math.Exp(-6*best*best/(nf*nf*nf+nf*nf)))
	return res, nil
}
