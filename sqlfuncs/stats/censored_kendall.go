package stats

// Mann–Kendall S, its variance, Kendall's tau and the seasonal Kendall test
// for values with one or several reporting limits (censored values).
//
// Each value y_i carries a mark c_i:
//
//	Uncensored      the true value is y_i
//	BelowLimit      left-censored ("<y_i"): the true value is below y_i, the
//	                reporting limit
//	AboveLimit      right-censored (">y_i"): the true value is above y_i
//
// so each observation stands for a set of possible true values: {y} for an
// uncensored value, (−∞, y) for "<y", (y, +∞) for ">y".
//
// Convention: a pair is ordered only when the order holds for every pair of
// possible true values; pairs whose order is ambiguous count as ties
// (Helsel 2012, Statistics for Censored Environmental Data Using Minitab and
// R, 2nd ed., Wiley, chapters on correlation and trend). Thus "<5" is below
// 5 and below 7, tied with 3 (3 may lie above or below the unknown value),
// tied with "<1" and with "<5"; two uncensored values are ordered by their
// numbers (equal numbers tie). In terms of the bounds lo ≤ true ≤ hi,
//
//	b_ij = +1  when lo_j > hi_i, or lo_j = hi_i and the bound is excluded on
//	           either side (e.g. 5 against "<5", ">5" against 5)
//	b_ij = −1  symmetrically (j below i)
//	b_ij =  0  otherwise (ambiguous or equal)
//
// The ordering is not transitive ("<1" ties "<5", "<5" ties 3, but "<1" is
// below 3), so tie groups do not exist in general. The statistics are
//
//	S       = Σ_{i<j} b_ij            (i, j in time order)
//	Var(S)  = (P + Σ_i c_i²)/3,   c_i = Σ_{j≠i} b_ij,  P = untied pairs
//	Z       = (S − sgn S)/√Var(S)   (continuity correction), p = 2·P(N(0,1) > |Z|)
//	tau     = S/√(n0·P),  n0 = n(n−1)/2
//
// Var(S) is the exact variance of S over all n! assignments of the values to
// the (distinct) times, each equally likely — the null model of
// exchangeable values — for the given pattern of ordered and ambiguous pairs
// (the permutation variance of a generalised correlation coefficient,
// Daniels 1944, Biometrika 33:129–135, with the time scores sgn(t_j − t_i)).
// With no censoring, or with a single reporting limit and every value below
// it censored, the ordering is an ordinary ranking with ties and Var(S) is
// Kendall's tie-corrected [n(n−1)(2n+5) − Σ_g t_g(t_g−1)(2t_g+5)]/18, and tau
// is tau-b; the tests check both against brute force and against scipy/R.
//
// A simpler alternative (Helsel & Hirsch, Statistical Methods in Water
// Resources, chapter on trend analysis) is to re-censor every value below
// the highest reporting limit at that limit and run the ordinary test with
// the censored values as one tie group; RecensorAtHighestLimit does the
// re-censoring. It discards information when limits vary and is not the
// default here.
//
// S, the untied pairs and the scores c_i are counted in O(n log n): each
// observation gets a lower key and an upper key (value and a side flag for
// excluded bounds) and the pairs are counted with binary search and a
// Fenwick tree over the key ranks.
//
// These are sample statistics; Z and p are calibrated under the null model
// of independent, identically distributed values (no serial correlation).

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// Censoring marks a value as uncensored, below a reporting limit or above a
// measuring limit.
type Censoring int8

const (
	// Uncensored: the value is the measured result.
	Uncensored Censoring = 0
	// BelowLimit: left-censored, the true value is below the stored value
	// (the reporting limit), written "<5".
	BelowLimit Censoring = -1
	// AboveLimit: right-censored, the true value is above the stored value,
	// written ">5".
	AboveLimit Censoring = 1
)

// bound is one end of an observation's set of possible values: the value and
// a side: −1 just below v (excluded upper end of "<v"), 0 at v, +1 just above
// v (excluded lower end of ">v"). ±∞ use value ±Inf with side 0.
type bound struct {
	v    float64
	side int8
}

func cmpBound(a, b bound) int {
	switch {
	case a.v < b.v:
		return -1
	case a.v > b.v:
		return 1
	case a.side < b.side:
		return -1
	case a.side > b.side:
		return 1
	}
	return 0
}

// bounds returns the lower and upper bound of the possible true values.
func bounds(y float64, c Censoring) (lo, hi bound) {
	switch c {
	case BelowLimit:
		return bound{math.Inf(-1), 0}, bound{y, -1}
	case AboveLimit:
		return bound{y, 1}, bound{math.Inf(1), 0}
	}
	return bound{y, 0}, bound{y, 0}
}

// CensoredOrder is b_ij of the convention above: +1 when the value b is
// certainly above a, −1 when certainly below, 0 when equal or ambiguous.
func CensoredOrder(ya float64, ca Censoring, yb float64, cb Censoring) int {
	loA, hiA := bounds(ya, ca)
	loB, hiB := bounds(yb, cb)
	if cmpBound(loB, hiA) > 0 {
		return 1
	}
	if cmpBound(hiB, loA) < 0 {
		return -1
	}
	return 0
}

func checkCensored(y []float64, c []Censoring) error {
	if len(c) != len(y) {
		return errors.New("values and censoring marks differ in length")
	}
	for i, v := range y {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("value %d is %v", i+1, v)
		}
		if c[i] < BelowLimit || c[i] > AboveLimit {
			return fmt.Errorf("value %d has censoring mark %d (want −1, 0 or 1)", i+1, c[i])
		}
	}
	return nil
}

// CensoredMKResult holds the censored Mann–Kendall statistics. Z and P are
// NaN when Var(S) = 0 (every pair tied or ambiguous); Tau is NaN when there
// is no untied pair.
type CensoredMKResult struct {
	N          int
	Censored   int // values marked BelowLimit or AboveLimit
	S          int64
	VarS       float64
	Z, P       float64
	Tau        float64
	Pairs      int64 // n0 = n(n−1)/2
	Concor     int64 // pairs with the later value certainly above
	Discor     int64 // pairs with the later value certainly below
	Ambiguous  int64 // pairs tied because of censoring (not equal numbers)
	TiedEqual  int64 // pairs of uncensored values with equal numbers
	ScoreSumSq int64 // Σ_i c_i²
}

// CensoredMannKendall computes the statistics of y (in time order, distinct
// times) with censoring marks c. It needs n ≥ 2.
func CensoredMannKendall(y []float64, c []Censoring) (CensoredMKResult, error) {
	n := len(y)
	if n < 2 {
		return CensoredMKResult{}, errors.New("Mann–Kendall needs at least 2 values")
	}
	if err := checkCensored(y, c); err != nil {
		return CensoredMKResult{}, err
	}
	r := CensoredMKResult{N: n, Pairs: int64(n) * int64(n-1) / 2}
	lo := make([]bound, n)
	hi := make([]bound, n)
	for i := range y {
		lo[i], hi[i] = bounds(y[i], c[i])
		if c[i] != Uncensored {
			r.Censored++
		}
	}
	// Ranks of all bounds in one ordering, equal bounds sharing a rank.
	keys := make([]bound, 0, 2*n)
	keys = append(keys, lo...)
	keys = append(keys, hi...)
	slices.SortFunc(keys, cmpBound)
	keys = slices.CompactFunc(keys, func(a, b bound) bool { return cmpBound(a, b) == 0 })
	rank := func(b bound) int {
		k, _ := slices.BinarySearchFunc(keys, b, cmpBound)
		return k
	}
	loR := make([]int, n)
	hiR := make([]int, n)
	for i := range y {
		loR[i], hiR[i] = rank(lo[i]), rank(hi[i])
	}
	// Concordant: i < j with lo_j > hi_i. Discordant: i < j with hi_j < lo_i.
	m := len(keys)
	fhi := make(rankCounter, m+1) // upper-bound ranks of earlier values
	flo := make(rankCounter, m+1) // lower-bound ranks of earlier values
	for j := 0; j < n; j++ {
		r.Concor += fhi.below(loR[j])              // hi_i rank < lo_j rank
		r.Discor += int64(j) - flo.below(hiR[j]+1) // lo_i rank > hi_j rank
		fhi.add(hiR[j])
		flo.add(loR[j])
	}
	r.S = r.Concor - r.Discor
	untied := r.Concor + r.Discor
	// Scores c_i = #{j: lo_j > hi_i} − #{j: hi_j < lo_i}.
	sLo := append([]int(nil), loR...)
	sHi := append([]int(nil), hiR...)
	slices.Sort(sLo)
	slices.Sort(sHi)
	for i := 0; i < n; i++ {
		above, _ := slices.BinarySearch(sLo, hiR[i]+1) // lo_j rank ≤ hi_i rank
		below, _ := slices.BinarySearch(sHi, loR[i])   // hi_j rank < lo_i rank
		ci := int64(n-above) - int64(below)
		r.ScoreSumSq += ci * ci
	}
	// Equal uncensored numbers: tie groups among uncensored values.
	var un []float64
	for i, v := range y {
		if c[i] == Uncensored {
			un = append(un, v)
		}
	}
	slices.Sort(un)
	_, r.TiedEqual, _ = tieGroups(un)
	r.Ambiguous = r.Pairs - untied - r.TiedEqual
	r.VarS = (float64(untied) + float64(r.ScoreSumSq)) / 3
	r.Z = MKZ(r.S, r.VarS)
	r.P = NormalTwoSided(r.Z)
	if untied > 0 {
		r.Tau = float64(r.S) / math.Sqrt(float64(r.Pairs)*float64(untied))
	} else {
		r.Tau = math.NaN()
	}
	return r, nil
}

// rankCounter is a binary indexed tree counting ranks 0..len−2.
type rankCounter []int64

func (f rankCounter) add(r int) {
	for r++; r < len(f); r += r & -r {
		f[r]++
	}
}

// below returns how many added ranks are < r.
func (f rankCounter) below(r int) int64 {
	var s int64
	for ; r > 0; r -= r & -r {
		s += f[r]
	}
	return s
}

// CensoredSeasonStat is one season's contribution to the censored seasonal
// Kendall test.
type CensoredSeasonStat struct {
	Season   int
	N        int
	Censored int
	S        int64
	VarS     float64
}

// CensoredSeasonalResult is the seasonal Kendall test on censored values.
type CensoredSeasonalResult struct {
	N           int
	Censored    int
	Seasons     int
	SeasonsUsed int // seasons with at least 2 values
	S           int64
	VarS        float64
	Z, P        float64
	Pairs       int64 // within-season pairs
	Untied      int64 // within-season pairs that are ordered
	PerSeason   []CensoredSeasonStat
}

// CensoredSeasonalKendall is the seasonal Kendall test (Hirsch, Slack &
// Smith 1982, Water Resources Research 18(1):107–121) with the censored
// ordering above: within each season g, S_g and Var(S_g) are
// CensoredMannKendall's over the season's values in time order; S = Σ S_g,
// Var(S) = Σ Var(S_g), Z with continuity correction and two-sided normal p.
// y must be in time order with distinct times and season[i] in
// 0..seasons−1.
//
// Var(S) = Σ Var(S_g) assumes the seasons' statistics independent: no
// between-season covariance is estimated (common practice for the seasonal
// Kendall test when no covariance correction is requested). When seasons
// move together from cycle to cycle (a wet year raising every month), the
// covariances are positive, Var(S) is underestimated and P is too small;
// CensoredSeasonalDependent computes the covariance-corrected variance.
func CensoredSeasonalKendall(y []float64, c []Censoring, season []int, seasons int) (CensoredSeasonalResult, error) {
	n := len(y)
	if len(season) != n {
		return CensoredSeasonalResult{}, errors.New("values and seasons differ in length")
	}
	if err := checkCensored(y, c); err != nil {
		return CensoredSeasonalResult{}, err
	}
	if seasons < 1 {
		return CensoredSeasonalResult{}, errors.New("seasons must be at least 1")
	}
	res := CensoredSeasonalResult{N: n, Seasons: seasons, PerSeason: make([]CensoredSeasonStat, seasons)}
	gy := make([][]float64, seasons)
	gc := make([][]Censoring, seasons)
	for i, g := range season {
		if g < 0 || g >= seasons {
			return res, fmt.Errorf("season index %d out of range 0..%d", g, seasons-1)
		}
		gy[g] = append(gy[g], y[i])
		gc[g] = append(gc[g], c[i])
		if c[i] != Uncensored {
			res.Censored++
		}
	}
	for g := 0; g < seasons; g++ {
		st := CensoredSeasonStat{Season: g, N: len(gy[g])}
		for _, m := range gc[g] {
			if m != Uncensored {
				st.Censored++
			}
		}
		if st.N >= 2 {
			mk, err := CensoredMannKendall(gy[g], gc[g])
			if err != nil {
				return res, err
			}
			st.S, st.VarS = mk.S, mk.VarS
			res.SeasonsUsed++
			res.Pairs += mk.Pairs
			res.Untied += mk.Concor + mk.Discor
		}
		res.S += st.S
		res.VarS += st.VarS
		res.PerSeason[g] = st
	}
	res.Z = MKZ(res.S, res.VarS)
	res.P = NormalTwoSided(res.Z)
	return res, nil
}

// RecensorAtHighestLimit returns copies of y and c in which every value
// below the highest reporting limit L (the largest y among BelowLimit
// values) becomes "<L": censored values with lower limits and uncensored
// values below L alike. Values at or above L and AboveLimit values are kept.
// With no BelowLimit value the copies equal the input and L is NaN.
func RecensorAtHighestLimit(y []float64, c []Censoring) ([]float64, []Censoring, float64) {
	yy := append([]float64(nil), y...)
	cc := append([]Censoring(nil), c...)
	limit := math.NaN()
	for i, v := range y {
		if c[i] == BelowLimit && (math.IsNaN(limit) || v > limit) {
			limit = v
		}
	}
	if math.IsNaN(limit) {
		return yy, cc, limit
	}
	for i, v := range y {
		if (c[i] == BelowLimit) || (c[i] == Uncensored && v < limit) {
			yy[i], cc[i] = limit, BelowLimit
		}
	}
	return yy, cc, limit
}

// CensoringProfile describes the censoring of a series.
type CensoringProfile struct {
	N            int
	Below, Above int
	Share        float64 // (Below + Above)/N, NaN for N = 0
	Limits       int     // distinct reporting limits among BelowLimit values
	HighestLimit float64 // largest reporting limit, NaN without BelowLimit values
}

// ProfileCensoring counts censored values and distinct reporting limits.
func ProfileCensoring(y []float64, c []Censoring) CensoringProfile {
	p := CensoringProfile{N: len(y), HighestLimit: math.NaN(), Share: math.NaN()}
	var lims []float64
	for i, v := range y {
		switch c[i] {
		case BelowLimit:
			p.Below++
			lims = append(lims, v)
		case AboveLimit:
			p.Above++
		}
	}
	if p.N > 0 {
		p.Share = float64(p.Below+p.Above) / float64(p.N)
	}
	if len(lims) > 0 {
		slices.Sort(lims)
		p.HighestLimit = lims[len(lims)-1]
		p.Limits = len(slices.Compact(lims))
	}
	return p
}
