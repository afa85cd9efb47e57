package stats

// Akritas–Theil–Sen slope: the censored analogue of the Sen slope (Akritas,
// Murphy & LaValley 1995, "The Theil–Sen estimator with doubly censored data
// and applications to astronomy", J. Amer. Statist. Assoc. 90:170–177;
// also Helsel 2012, Statistics for Censored Environmental Data, 2nd ed.,
// Wiley, the chapter on trend), and its confidence interval by inverting
// the censored Kendall test.
//
// For a trial slope β the residuals r_i = y_i − β·t_i keep the censoring of
// y_i (a "<L" value gives "<L − β·t_i"), and S(β) is the censored Kendall S
// of the residuals against time (ordering convention of censored_kendall.go:
// ambiguous pairs count as ties). S(β) is a non-increasing step function;
// the estimate is the midpoint of the interval where it changes sign,
//
//	β̂ = ( sup{β : S(β) > 0} + inf{β : S(β) < 0} ) / 2.
//
// Without censoring S(β) = #{slopes > β} − #{slopes < β} over the pairwise
// slopes (y_j − y_i)/(t_j − t_i), and β̂ is their median, the Sen slope.
//
// Confidence interval (test inversion, Akritas, Murphy & LaValley 1995;
// Helsel 2012): the slopes β not rejected by the censored Kendall test of
// the residuals at level 1 − confidence, with C = z_{(1+confidence)/2}·√Var(S)
// and Var(S) the variance of the censored Mann–Kendall test of y itself
// (CensoredMannKendall: the variance the test of β = 0 uses, as sen_slope
// uses mann_kendall's):
//
//	{β : −C ≤ S(β) ≤ C},   lower = inf{β : S(β) ≤ C},  upper = sup{β : S(β) ≥ −C}.
//
// Both ends are step values s_ij. When S(−∞) ≤ C (or S(+∞) ≥ −C) the set is
// unbounded on that side and the end is NaN (few values, or much
// censoring). Without censoring and without tied slopes, lower and upper
// are the slopes of ranks ⌈(N − C)/2⌉ and ⌊(N + C)/2⌋ + 1 among the N
// sorted pairwise slopes; the Sen interval (Sen 1968 eq. 2.6, SenSlope and
// scipy.stats.theilslopes) rounds both to the nearest integer instead, so
// the two agree when the fractional part of (N − C)/2 is 0 or above 1/2 and
// otherwise the Sen interval reaches one rank further out at each end. The
// interval pairs with the censored Mann–Kendall test up to its continuity
// correction: 0 lies outside it when |S(0)| > C, while the test rejects
// when |S(0)| − 1 > C.
//
// Each pair i < j (t_i < t_j) contributes a step at s_ij = (y_j − y_i)/(t_j −
// t_i), where y are the stored numbers (limits for censored values):
//
//	both uncensored                       +1 for β < s, 0 at s, −1 for β > s
//	j can only be certainly above i       +1 for β ≤ s, 0 for β > s
//	  (i "<", j uncensored or ">"; i uncensored, j ">")
//	j can only be certainly below i       0 for β < s, −1 for β ≥ s
//	  (i ">", j uncensored or "<"; i uncensored, j "<")
//	both "<" or both ">"                  0 for every β
//
// Up to atsSortedSteps steps the steps are collected and sorted (O(N log N)
// time and O(N) memory for N = n(n−1)/2 pairs); walking them in order gives
// S(v+) just after each step value v, and each quantity above is the first
// step value v with S(v+) at or below its threshold (sup{S > 0}: S(v+) ≤ 0;
// inf{S < 0}: S(v+) < 0; lower: S(v+) ≤ C; upper: S(v+) < −C). Beyond that
// the same step values are found in O(n) memory by a few passes over the
// pairs, O(n²) time each (censored_sen_stream.go), with identical results.
// When S(β) never becomes positive or never becomes negative (e.g. every
// pair ambiguous) the slope is undefined (NaN). Slopes are in units of y
// per unit of t. No intercept is computed.

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// MaxCensoredSenValues bounds n for AkritasTheilSen: memory is O(n), but
// time grows as n² (every pair is visited in each of a few passes), so
// longer series are refused rather than left running for many minutes.
const MaxCensoredSenValues = 50_000

// CensoredSenResult is the Akritas–Theil–Sen slope.
type CensoredSenResult struct {
	N        int
	Censored int
	Slope    float64 // β̂, NaN when undefined
	Lower    float64 // sup{β : S(β) > 0}, NaN when S(β) is never positive
	Upper    float64 // inf{β : S(β) < 0}, NaN when S(β) is never negative
	Steps    int64   // pairs whose contribution depends on β

	// Interval (AkritasTheilSenInterval only; zero otherwise).
	Confidence float64 // confidence level, 0 without interval
	VarS       float64 // Var(S) of the censored Mann–Kendall test of y
	Bound      float64 // C = z·√Var(S)
	CILower    float64 // inf{β : S(β) ≤ C}; NaN when unbounded or Var(S) = 0
	CIUpper    float64 // sup{β : S(β) ≥ −C}; NaN when unbounded or Var(S) = 0
}

// AkritasTheilSen computes the slope for values y with marks c at times t
// (sorted ascending, distinct).
func AkritasTheilSen(t, y []float64, c []Censoring) (CensoredSenResult, error) {
	return akritasTheilSen(t, y, c, math.NaN())
}

// AkritasTheilSenInterval computes the slope and its interval at the given
// confidence (strictly between 0 and 1) for values y with marks c at times
// t (sorted ascending, distinct).
func AkritasTheilSenInterval(t, y []float64, c []Censoring, confidence float64) (CensoredSenResult, error) {
	if !(confidence > 0 && confidence < 1) {
		return CensoredSenResult{}, fmt.Errorf("confidence %v must be strictly between 0 and 1", confidence)
	}
	if len(t) < 2 {
		return CensoredSenResult{}, errors.New("Akritas–Theil–Sen slope needs at least 2 values")
	}
	mk, err := CensoredMannKendall(y, c)
	if err != nil {
		return CensoredSenResult{}, err
	}
	z := distuv.UnitNormal.Quantile(1 - (1-confidence)/2)
	bound := z * math.Sqrt(mk.VarS)
	if !(mk.VarS > 0) {
		bound = math.NaN()
	}
	res, err := akritasTheilSen(t, y, c, bound)
	res.Confidence, res.VarS, res.Bound = confidence, mk.VarS, bound
	return res, err
}

// akritasTheilSen computes the slope and, unless bound is NaN, the interval
// ends for S(β) within ±bound.
func akritasTheilSen(t, y []float64, c []Censoring, bound float64) (CensoredSenResult, error) {
	n := len(t)
	if len(y) != n {
		return CensoredSenResult{}, errors.New("t and y differ in length")
	}
	if err := checkCensored(y, c); err != nil {
		return CensoredSenResult{}, err
	}
	if n > MaxCensoredSenValues {
		return CensoredSenResult{}, fmt.Errorf("Akritas–Theil–Sen slope: %d values, at most %d supported (its time grows as n²)", n, MaxCensoredSenValues)
	}
	res := CensoredSenResult{N: n, Slope: math.NaN(), Lower: math.NaN(), Upper: math.NaN(), CILower: math.NaN(), CIUpper: math.NaN()}
	for _, m := range c {
		if m != Uncensored {
			res.Censored++
		}
	}
	for i := 1; i < n; i++ {
		if !(t[i] > t[i-1]) {
			return res, fmt.Errorf("times must be strictly increasing (value %d)", i+1)
		}
	}
	if err := checkStepRange(t, y); err != nil {
		return res, err
	}
	// Steps by kind: both-sided, up-only (+1 up to s), down-only (−1 from s).
	var nTwo, nUp, nDown int
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			switch pairKind(c[i], c[j]) {
			case 2:
				nTwo++
			case 1:
				nUp++
			case -1:
				nDown++
			}
		}
	}
	if steps := int64(nTwo + nUp + nDown); steps > atsSortedSteps {
		res.Steps = steps
		s0 := int64(nTwo + nUp)
		wants := []int64{s0, s0 + 1, 0, 0} // S(v+) ≤ 0; S(v+) < 0
		if !math.IsNaN(bound) {
			wants[2] = s0 - int64(math.Floor(bound))     // S(v+) ≤ C
			wants[3] = s0 - int64(math.Ceil(-bound)) + 1 // S(v+) < −C
		}
		e := atsStreamEnds(t, y, c, wants, steps, int64(2*nTwo+nUp+nDown))
		res.Lower, res.Upper, res.CILower, res.CIUpper = e[0], e[1], e[2], e[3]
		if !math.IsNaN(res.Lower) && !math.IsNaN(res.Upper) {
			res.Slope = (res.Lower + res.Upper) / 2
		}
		return res, nil
	}
	two := make([]float64, 0, nTwo)
	up := make([]float64, 0, nUp)
	down := make([]float64, 0, nDown)
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			s := (y[j] - y[i]) / (t[j] - t[i])
			switch pairKind(c[i], c[j]) {
			case 2:
				two = append(two, s)
			case 1:
				up = append(up, s)
			case -1:
				down = append(down, s)
			}
		}
	}
	res.Steps = int64(len(two) + len(up) + len(down))
	slices.Sort(two)
	slices.Sort(up)
	slices.Sort(down)
	// S(−∞) = #two + #up. Walk the distinct step values in order; past v,
	// S drops by 2 per two-sided step, 1 per up or down step at v. Each end
	// is the first v with S(v+) at or below its threshold, if S(−∞) is
	// above it.
	sAfter := int64(len(two) + len(up))
	type end struct {
		at     float64 // threshold: S(v+) ≤ at, or S(v+) < at when strict
		strict bool
		armed  bool // S(−∞) is above the threshold
		v      float64
	}
	s0 := float64(sAfter)
	ends := []end{
		{at: 0, armed: s0 > 0},                          // sup{S > 0}
		{at: 0, strict: true, armed: s0 >= 0},           // inf{S < 0}
		{at: bound, armed: s0 > bound},                  // inf{S ≤ C}
		{at: -bound, strict: true, armed: s0 >= -bound}, // sup{S ≥ −C}
	}
	if math.IsNaN(bound) {
		ends[2].armed, ends[3].armed = false, false
	}
	for i := range ends {
		ends[i].v = math.NaN()
	}
	a, b, d := 0, 0, 0
	for a < len(two) || b < len(up) || d < len(down) {
		v := math.Inf(1)
		if a < len(two) {
			v = two[a]
		}
		if b < len(up) && up[b] < v {
			v = up[b]
		}
		if d < len(down) && down[d] < v {
			v = down[d]
		}
		for ; a < len(two) && two[a] == v; a++ {
			sAfter -= 2
		}
		for ; b < len(up) && up[b] == v; b++ {
			sAfter--
		}
		for ; d < len(down) && down[d] == v; d++ {
			sAfter--
		}
		pending := false
		for i := range ends {
			e := &ends[i]
			if e.armed && math.IsNaN(e.v) {
				if sv := float64(sAfter); sv < e.at || (!e.strict && sv == e.at) {
					e.v = v
				} else {
					pending = true
				}
			}
		}
		if !pending {
			break
		}
	}
	res.Lower, res.Upper = ends[0].v, ends[1].v
	if !math.IsNaN(res.Lower) && !math.IsNaN(res.Upper) {
		res.Slope = (res.Lower + res.Upper) / 2
	}
	res.CILower, res.CIUpper = ends[2].v, ends[3].v
	return res, nil
}

// checkStepRange refuses series whose steps (y_j − y_i)/(t_j − t_i) cannot
// all be formed in float64: a time span or value range wider than the
// largest float64 makes some difference infinite and its step NaN (∞/∞ or
// ∞ − ∞), which has no place in the order of the steps. Times are sorted
// and finite, so their span is t[n−1] − t[0].
func checkStepRange(t, y []float64) error {
	n := len(t)
	if n < 2 {
		return nil
	}
	if span := t[n-1] - t[0]; math.IsInf(span, 0) || math.IsNaN(span) {
		return fmt.Errorf("Akritas–Theil–Sen slope: times from %g to %g span more than the largest float64; rescale the times", t[0], t[n-1])
	}
	lo, hi := y[0], y[0]
	for _, v := range y[1:] {
		lo, hi = min(lo, v), max(hi, v)
	}
	if math.IsInf(hi-lo, 0) {
		return fmt.Errorf("Akritas–Theil–Sen slope: values from %g to %g span more than the largest float64; rescale the values", lo, hi)
	}
	return nil
}

// pairKind classifies the pair (i earlier, j later): 2 when the residual
// order can go both ways, 1 when j can only be certainly above i, −1 when
// only certainly below, 0 when never ordered.
func pairKind(ci, cj Censoring) int {
	switch {
	case ci == Uncensored && cj == Uncensored:
		return 2
	case ci == cj:
		return 0
	case ci == BelowLimit || cj == AboveLimit:
		return 1
	}
	return -1
}
