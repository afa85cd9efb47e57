package stats

// Between-season covariance of the censored seasonal Kendall test.
//
// The values form a matrix x[i][g]: cycle i (e.g. the year) by season g, at
// most one value per cell, missing cells allowed, each value with its
// censoring mark. With b^g_ij = CensoredOrder(x_ig, x_jg) (+1 when the later
// cycle's value is certainly above, −1 certainly below, 0 equal or
// ambiguous; the convention of censored_kendall.go),
//
//	c_ig   = Σ_j b^g_ji        over the cycles j with a value in season g
//	         (0 for a missing cell)
//	K_gh   = Σ_{i<j} b^g_ij·b^h_ij   over cycle pairs with all four values
//	cov(S_g, S_h) = (K_gh + Σ_i c_ig·c_ih) / 3
//	Var_dep(S)    = Σ_g Σ_h cov(S_g, S_h),   Z_dep = (S − sgn S)/√Var_dep.
//
// Without censoring c_ig = 2R_ig − (n_g + 1) with mid-ranks R (and the
// mid-rank for a missing cell), and the formula is term for term the
// covariance of Dietz & Killeen (1981, JASA 76:169–174) used by Hirsch &
// Slack (1984, Water Resources Research 20(6):727–732), SeasonalDependent;
// for g = h it is CensoredMannKendall's Var(S_g). With censoring the same
// bilinear form is used with the censored order in place of the sign of
// differences: for a complete matrix it is the covariance of S_g and S_h
// over all n! orders of the cycles, each equally likely (the null model of
// exchangeable cycles; the polarisation of the permutation variance of
// censored_kendall.go), which the tests check by enumeration. It is this
// project's extension of the correction to censored values, not a
// published procedure.

import (
	"errors"
	"fmt"
	"math"
)

// CensoredSeasonalDependent computes the correction for values y with marks
// c in time order, with their season and cycle indices; S is the censored
// seasonal Kendall statistic. It returns an error when a (cycle, season)
// cell holds two values or the work would exceed MaxDependenceWork.
func CensoredSeasonalDependent(y []float64, c []Censoring, season, cycle []int, seasons int, s int64) (SeasonalDependence, error) {
	var res SeasonalDependence
	if len(y) == 0 {
		return res, errors.New("no values")
	}
	if len(c) != len(y) || len(season) != len(y) || len(cycle) != len(y) {
		return res, errors.New("values, marks, seasons and cycles differ in length")
	}
	c0, c1 := cycle[0], cycle[0]
	for _, k := range cycle {
		c0, c1 = min(c0, k), max(c1, k)
	}
	n := c1 - c0 + 1
	res.Cycles = n
	if float64(seasons)*float64(seasons)*float64(n)*float64(n)/2 > MaxDependenceWork {
		return res, fmt.Errorf("%d cycles × %d seasons is too large for the between-season covariance", n, seasons)
	}
	x := make([]float64, n*seasons) // x[i*seasons+g]
	m := make([]Censoring, n*seasons)
	for i := range x {
		x[i] = math.NaN()
	}
	for k, v := range y {
		if season[k] < 0 || season[k] >= seasons {
			return res, fmt.Errorf("season index %d out of range 0..%d", season[k], seasons-1)
		}
		cell := (cycle[k]-c0)*seasons + season[k]
		if !math.IsNaN(x[cell]) {
			return res, fmt.Errorf("cycle %d, season %d holds more than one value", cycle[k], season[k])
		}
		x[cell], m[cell] = v, c[k]
	}
	order := func(i, j, g int) float64 { // b^g_ij, 0 when a cell is missing
		a, b := i*seasons+g, j*seasons+g
		if math.IsNaN(x[a]) || math.IsNaN(x[b]) {
			return 0
		}
		return float64(CensoredOrder(x[a], m[a], x[b], m[b]))
	}
	score := make([]float64, n*seasons)
	for g := 0; g < seasons; g++ {
		for i := 0; i < n; i++ {
			var ci float64
			for j := 0; j < n; j++ {
				if j != i {
					ci += order(j, i, g)
				}
			}
			score[i*seasons+g] = ci
		}
	}
	var total float64
	for g := 0; g < seasons; g++ {
		for h := g; h < seasons; h++ {
			var k, cc float64
			for i := 0; i < n; i++ {
				cc += score[i*seasons+g] * score[i*seasons+h]
				for j := i + 1; j < n; j++ {
					k += order(i, j, g) * order(i, j, h)
				}
			}
			cov := (k + cc) / 3
			if g == h {
				total += cov
			} else {
				total += 2 * cov
			}
		}
	}
	res.VarS = total
	res.Z = MKZ(s, total)
	res.P = NormalTwoSided(res.Z)
	return res, nil
}
