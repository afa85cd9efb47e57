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
// added (the test of Hirsch, Slack & Smith 1982; Hirsch & Slack 1984 give a
// covariance-corrected variant, not implemented here). A season with fewer
// than 2 values has no pairs: S_g = 0 and Var(S_g) = 0, so it contributes
// nothing (it is still listed with its count).
//
// The seasonal Sen slope is the median of all within-season pairwise slopes
// (y_b − y_a)/(t_b − t_a), a and b in the same season (Hirsch, Slack & Smith
// 1982), selected exactly as in sen.go. Its interval uses the rank rule of
// SenSlope with N = number of within-season pairs and Var(S) the summed
// variance above.

import (
	"errors"
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
}

// SeasonalKendall runs the test on a series sorted by t (distinct t) with
// season[i] in 0..seasons−1. With 0 < confidence < 1 the seasonal Sen slope
// gets an interval.
func SeasonalKendall(t, y []float64, season []int, seasons int, confidence float64) (SeasonalResult, error) {
	n := len(t)
	if len(y) != n || len(season) != n {
		return SeasonalResult{}, errors.New("t, y and season differ in length")
	}
	if seasons < 1 {
		return SeasonalResult{}, errors.New("seasons must be at least 1")
	}
	res := SeasonalResult{N: n, Seasons: seasons, PerSeason: make([]SeasonStat, seasons)}
	counts := make([]int, seasons+1)
	for _, g := range season {
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
		g := season[i]
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
	if res.Pairs == 0 {
		res.Sen = SenResult{N: n, Slope: math.NaN(), Lower: math.NaN(), Upper: math.NaN()}
		return res, nil
	}
	conf := confidence
	if !(res.VarS > 0) {
		conf = 0
	}
	sen, err := senSlopeBlocks(gt, gy, blocks, conf, res.VarS)
	if err != nil {
		return res, err
	}
	if conf == 0 {
		sen.Lower, sen.Upper = math.NaN(), math.NaN()
	}
	sen.MedianT, sen.MedianY = median(t), median(y)
	res.Sen = sen
	return res, nil
}
