package stats

// Akritas–Theil–Sen slope: the censored analogue of the Sen slope (Akritas,
// Murphy & LaValley 1995, "The Theil–Sen estimator with doubly censored data
// and applications to astronomy", J. Amer. Statist. Assoc. 90:170–177).
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
// The steps are collected and sorted (O(N log N) for N = n(n−1)/2 pairs);
// sup{S > 0} is the first step value v with S(v+) ≤ 0 and inf{S < 0} the
// first with S(v+) < 0. When S(β) never becomes positive or never becomes
// negative (e.g. every pair ambiguous) the slope is undefined (NaN). Slopes
// are in units of y per unit of t. No intercept or interval is computed.

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// MaxCensoredSenValues bounds n for AkritasTheilSen: the N = n(n−1)/2 step
// values are held in memory (8 bytes each).
const MaxCensoredSenValues = 5000

// CensoredSenResult is the Akritas–Theil–Sen slope.
type CensoredSenResult struct {
	N        int
	Censored int
	Slope    float64 // β̂, NaN when undefined
	Lower    float64 // sup{β : S(β) > 0}, NaN when S(β) is never positive
	Upper    float64 // inf{β : S(β) < 0}, NaN when S(β) is never negative
	Steps    int64   // pairs whose contribution depends on β
}

// AkritasTheilSen computes the slope for values y with marks c at times t
// (sorted ascending, distinct).
func AkritasTheilSen(t, y []float64, c []Censoring) (CensoredSenResult, error) {
	n := len(t)
	if len(y) != n {
		return CensoredSenResult{}, errors.New("t and y differ in length")
	}
	if err := checkCensored(y, c); err != nil {
		return CensoredSenResult{}, err
	}
	if n > MaxCensoredSenValues {
		return CensoredSenResult{}, fmt.Errorf("Akritas–Theil–Sen slope: %d values, at most %d supported", n, MaxCensoredSenValues)
	}
	res := CensoredSenResult{N: n, Slope: math.NaN(), Lower: math.NaN(), Upper: math.NaN()}
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
	// S drops by 2 per two-sided step, 1 per up or down step at v.
	sAfter := int64(len(two) + len(up))
	positive := sAfter > 0
	lower, upper := math.NaN(), math.NaN()
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
		if positive && math.IsNaN(lower) && sAfter <= 0 {
			lower = v
		}
		if sAfter < 0 {
			upper = v
			break
		}
	}
	res.Lower, res.Upper = lower, upper
	if !math.IsNaN(lower) && !math.IsNaN(upper) {
		res.Slope = (lower + upper) / 2
	}
	return res, nil
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
