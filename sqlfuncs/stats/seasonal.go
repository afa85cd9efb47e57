package stats

// Seasonal Kendall test and seasonal Sen slope (Hirsch, Slack & Smith 1982,
// "Techniques of trend analysis for monthly water quality data", Water
// Resources Research 18(1):107–121).
//
// Each observation belongs to one season g = 1..m. Within each season the
// Mann–Kendall statistic S_g and its variance Var(S_g) (tie correction
// within the season) are computed over the season's values in time order;
// then
//
//	S = Σ_g S_g,   Var(S) = Σ_g Var(S_g)
//	Z = (S − sgn S)/√Var(S)  (continuity correction),  p = 2·P(N(0,1) > |Z|)
//
// The seasons are treated as independent: no covariance between seasons is
// added (the test of Hirsch, Slack & Smith 1982; the covariance-corrected
// variant of Hirsch & Slack 1984 is SeasonalDependent below). A season with fewer
// than 2 values has no pairs: S_g = 0 and Var(S_g) = 0, so it contributes
// nothing (it is still listed with its count).
//
// The seasonal Sen slope is the median of all within-season pairwise slopes
// (y_b − y_a)/(t_b − t_a), a and b in the same season (Hirsch, Slack & Smith
// 1982), selected exactly as in sen.go. Its interval uses the rank rule of
// SenSlope with N = number of within-season pairs and Var(S) the variance of
// the test it is reported with: the summed variance above, or the
// covariance-corrected Var_dep(S) below (SenWithVar). This interval is
// this project's choice, the direct analogue of the one-series interval; it
// is not checked against an outside library.

import (
	"errors"
	"fmt"
	"math"
	"time"
)

// SeasonOf returns the season index 0..seasons−1 of time t (unix seconds)
// for seasons of equal length period/seasons counted from the unix epoch
// 1970-01-01T00:00:00Z: floor(((t mod period) / period) · seasons), with mod
// taken into [0, period).
func SeasonOf(t, period float64, seasons int) int {
	ph := math.Mod(t, period)
	if ph < 0 {
		ph += period
	}
	g := int(math.Floor(ph / period * float64(seasons)))
	if g >= seasons {
		g = seasons - 1
	}
	if g < 0 {
		g = 0
	}
	return g
}

// CalendarMonth returns the UTC calendar month 0..11 of unix time t.
func CalendarMonth(t float64) int {
	return int(time.Unix(int64(math.Floor(t)), 0).UTC().Month()) - 1
}

// SeasonStat is one season's contribution.
type SeasonStat struct {
	Season int
	N      int
	S      int64
	VarS   float64
}

// SeasonalResult is the seasonal Kendall test with the seasonal Sen slope
// (slopes in y per unit of t).
type SeasonalResult struct {
	N           int
	Seasons     int
	SeasonsUsed int // seasons with at least 2 values
	S           int64
	VarS        float64
	Z, P        float64
	Pairs       int64 // within-season pairs
	Sen         SenResult
	PerSeason   []SeasonStat

	// the values grouped by season (time order within each), for SenWithVar
	gt, gy []float64
	blocks []int
}

// SeasonalKendall runs the test on a series sorted by t (distinct t) with
// season[i] in 0..seasons−1. With 0 < confidence < 1 the seasonal Sen slope
// gets an interval.
func SeasonalKendall(t, y []float64, season []int, seasons int, confidence float64) (SeasonalResult, error) {
	if len(season) != len(t) {
		return SeasonalResult{}, errors.New("t, y and season differ in length")
	}
	return SeasonalKendallBy(t, y, func(i int) int { return season[i] }, seasons, confidence)
}

// SeasonalKendallBy is SeasonalKendall with the season of value i given
// by season(i) (called twice per value) instead of an array of n indices.
func SeasonalKendallBy(t, y []float64, season func(i int) int, seasons int, confidence float64) (SeasonalResult, error) {
	n := len(t)
	if len(y) != n {
		return SeasonalResult{}, errors.New("t, y and season differ in length")
	}
	if seasons < 1 {
		return SeasonalResult{}, errors.New("seasons must be at least 1")
	}
	res := SeasonalResult{N: n, Seasons: seasons, PerSeason: make([]SeasonStat, seasons)}
	counts := make([]int, seasons+1)
	for i := 0; i < n; i++ {
		g := season(i)
		if g < 0 || g >= seasons {
			return res, errors.New("season index out of range")
		}
		counts[g+1]++
	}
	blocks := make([]int, seasons+1)
	for g := 1; g <= seasons; g++ {
		blocks[g] = blocks[g-1] + counts[g]
	}
	// group by season, keeping time order within each season
	gt := make([]float64, n)
	gy := make([]float64, n)
	fill := append([]int(nil), blocks[:seasons]...)
	for i := 0; i < n; i++ {
		g := season(i)
		gt[fill[g]] = t[i]
		gy[fill[g]] = y[i]
		fill[g]++
	}
	for g := 0; g < seasons; g++ {
		st := SeasonStat{Season: g, N: blocks[g+1] - blocks[g]}
		if st.N >= 2 {
			mk, err := MannKendall(gy[blocks[g]:blocks[g+1]])
			if err != nil {
				return res, err
			}
			st.S, st.VarS = mk.S, mk.VarS
			res.SeasonsUsed++
			res.Pairs += mk.Pairs
		}
		res.S += st.S
		res.VarS += st.VarS
		res.PerSeason[g] = st
	}
	res.Z = MKZ(res.S, res.VarS)
	res.P = NormalTwoSided(res.Z)
	res.gt, res.gy, res.blocks = gt, gy, blocks
	if res.Pairs == 0 {
		res.Sen = SenResult{N: n, Slope: math.NaN(), Lower: math.NaN(), Upper: math.NaN()}
		return res, nil
	}
	conf := confidence
	if !(res.VarS > 0) {
		conf = 0
	}
	// gt, gy hold the same values as t, y, so their medians are those of
	// the series.
	sen, err := senSlopeBlocks(gt, gy, blocks, conf, res.VarS, true)
	if err != nil {
		return res, err
	}
	if conf == 0 {
		sen.Lower, sen.Upper = math.NaN(), math.NaN()
	}
	res.Sen = sen
	return res, nil
}

// SenWithVar returns the seasonal Sen slope with its interval at the given
// confidence computed from varS instead of the summed variance: with
// Var_dep(S) of SeasonalDependent the interval pairs with the
// covariance-corrected test (same rank rule, N the within-season pairs).
// Lower and Upper are NaN when varS is not positive or not a number.
func (r SeasonalResult) SenWithVar(confidence, varS float64) (SenResult, error) {
	if r.Pairs == 0 {
		return SenResult{N: r.N, Slope: math.NaN(), Lower: math.NaN(), Upper: math.NaN()}, nil
	}
	conf := confidence
	if !(varS > 0) {
		conf = 0
	}
	sen, err := senSlopeBlocks(r.gt, r.gy, r.blocks, conf, varS, true)
	if err != nil {
		return sen, err
	}
	if conf == 0 {
		sen.Lower, sen.Upper = math.NaN(), math.NaN()
	}
	return sen, nil
}

// SeasonalDependence is the between-season covariance correction of the
// seasonal Kendall variance (Dietz & Killeen 1981, JASA 76:169–174;
// Hirsch & Slack 1984, Water Resources Research 20(6):727–732).
//
// The values form a matrix x[i][g]: cycle i (e.g. the year) by season g, at
// most one value per cell, missing cells allowed. With n the number of
// cycles from the first to the last, n_g the values present in season g,
// R_ig the rank of x[i][g] within season g (average ranks for ties; a
// missing cell gets the mid-rank (n_g + 1)/2) and
// K_gh = Σ_{i<j} sgn(x_jg − x_ig)·sgn(x_jh − x_ih) over cycle pairs with all
// four values present,
//
//	cov(S_g, S_h) = [K_gh + 4·Σ_i R_ig·R_ih − n(n_g + 1)(n_h + 1)] / 3
//	Var_dep(S)    = Σ_g Σ_h cov(S_g, S_h)
//
// (the diagonal is this formula with h = g, which equals the
// Mann–Kendall variance for a complete season without ties). This is the
// variance behind scipy.stats.mstats.kendalltau_seasonal's
// "global p-value (dep)" (scipy 1.10.1). Z_dep = (S − sgn S)/√Var_dep.
type SeasonalDependence struct {
	Cycles int
	VarS   float64
	Z, P   float64
}

// MaxDependenceWork bounds seasons² · cycles² / 2 for the dependence
// correction (about a second of work).
const MaxDependenceWork = 4e8

// SeasonalDependent computes the correction for values in time order with
// their season and cycle indices; S is the seasonal Kendall statistic.
// It returns an error when a (cycle, season) cell holds two values or the
// work would exceed MaxDependenceWork.
func SeasonalDependent(y []float64, season, cycle []int, seasons int, s int64) (SeasonalDependence, error) {
	return SeasonalDependentBy(y, func(k int) (int, int) { return season[k], cycle[k] }, seasons, s)
}

// SeasonalDependentBy is SeasonalDependent with the season and cycle of
// value k given by cell(k) (called twice per value) instead of two arrays
// of n indices.
func SeasonalDependentBy(y []float64, cell func(k int) (season, cycle int), seasons int, s int64) (SeasonalDependence, error) {
	var res SeasonalDependence
	if len(y) == 0 {
		return res, errors.New("no values")
	}
	_, c0 := cell(0)
	c1 := c0
	for k := range y {
		_, c := cell(k)
		c0, c1 = min(c0, c), max(c1, c)
	}
	n := c1 - c0 + 1
	res.Cycles = n
	if float64(seasons)*float64(seasons)*float64(n)*float64(n)/2 > MaxDependenceWork {
		return res, fmt.Errorf("%d cycles × %d seasons is too large for the between-season covariance", n, seasons)
	}
	x := make([]float64, n*seasons) // x[i*seasons+g]
	for i := range x {
		x[i] = math.NaN()
	}
	for k, v := range y {
		g, c := cell(k)
		at := (c-c0)*seasons + g
		if !math.IsNaN(x[at]) {
			return res, fmt.Errorf("cycle %d, season %d holds more than one value", c, g)
		}
		x[at] = v
	}
	// ranks within each season, mid-rank for missing cells
	R := make([]float64, n*seasons)
	np := make([]int, seasons)
	col := make([]float64, 0, n)
	idx := make([]int, 0, n)
	for g := 0; g < seasons; g++ {
		col, idx = col[:0], idx[:0]
		for i := 0; i < n; i++ {
			if v := x[i*seasons+g]; !math.IsNaN(v) {
				col = append(col, v)
				idx = append(idx, i)
			}
		}
		np[g] = len(col)
		rk := Ranks(col)
		mid := float64(np[g]+1) / 2
		for i := 0; i < n; i++ {
			R[i*seasons+g] = mid
		}
		for k, i := range idx {
			R[i*seasons+g] = rk[k]
		}
	}
	sgn := func(v float64) float64 {
		switch {
		case v > 0:
			return 1
		case v < 0:
			return -1
		}
		return 0
	}
	nf := float64(n)
	var total float64
	for g := 0; g < seasons; g++ {
		for h := g; h < seasons; h++ {
			var K, rr float64
			for i := 0; i < n; i++ {
				xig, xih := x[i*seasons+g], x[i*seasons+h]
				rr += R[i*seasons+g] * R[i*seasons+h]
				if math.IsNaN(xig) || math.IsNaN(xih) {
					continue
				}
				for j := i + 1; j < n; j++ {
					xjg, xjh := x[j*seasons+g], x[j*seasons+h]
					if math.IsNaN(xjg) || math.IsNaN(xjh) {
						continue
					}
					K += sgn(xjg-xig) * sgn(xjh-xih)
				}
			}
			cov := (K + 4*rr - nf*float64(np[g]+1)*float64(np[h]+1)) / 3
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
