package stats

// Hamed–Rao correction of the Mann–Kendall variance for serial correlation
// (Hamed & Rao 1998, "A modified Mann–Kendall trend test for autocorrelated
// data", J. Hydrology 204:182–196):
//
//  1. detrend: x_i = y_i − β·t_i with β the Theil–Sen slope (the exact
//     median of the pairwise slopes, sen.go; the mean of the two middle
//     slopes for an even number of pairs);
//  2. rank x (average ranks for ties) and take the sample ACF of the ranks,
//     r_k = Σ_{i=1}^{n−k} (R_i − R̄)(R_{i+k} − R̄) / Σ (R_i − R̄)²  (divisor n
//     in both, package convention);
//  3. keep the lags k = 1..maxLag whose r_k is significant at the 5 % level
//     (two-sided) under independence — the bound is below;
//  4. n/n*_s = 1 + 2/(n(n−1)(n−2)) · Σ_{kept k} (n−k)(n−k−1)(n−k−2)·r_k;
//  5. Var*(S) = Var(S)·n/n*_s, Z* and p* as in MannKendall with Var*(S).
//
// Rank ties. The order of the detrended values is decided exactly in
// decimal arithmetic: every t_i and y_i is read as the shortest decimal
// that converts back to the stored double (the digits the CSV field or SQL
// literal gave, so 3.6 is 36/10), β is the median pair's slope (or the mean
// of the two middle pairs' slopes) in those decimals, and x_i against x_j is
// the sign of (y_i − y_j) − β·(t_i − t_j) in exact rationals. Values that are
// equal in real arithmetic on the readings as written share an average rank
// and distinct values never collide, whatever the rounding of y_i − β·t_i
// would have been. Floating-point keys order the values first; only
// neighbours closer than a proven error bound are compared in math/big
// rationals. The median pair itself is selected on the stored doubles
// (sen.go); that order agrees with the decimal one except between slopes
// that differ only beyond the 15th significant digit.
//
// Significance bound (step 3). The paper keeps the rank autocorrelations
// "significant at the 5 % level" without writing the bound into the
// procedure (recalled from memory; implementations differ), so two are
// offered:
//
//   - BoundNormal (default): |r_k| > z_{0.975}/√n, z_{0.975} = 1.959963985,
//     the large-sample bound for a sample autocorrelation under independence
//     (common practice; Brockwell & Davis, Introduction to Time Series and
//     Forecasting, 2nd ed., 2002, §1.4.1);
//   - BoundAnderson: r_k outside [(−1 − z√(n−k−1))/(n−k),
//     (−1 + z√(n−k−1))/(n−k)], the lag-dependent bound from Anderson (1942,
//     "Distribution of the serial correlation coefficient", Ann. Math. Stat.
//     13:1–13), used in the related corrections of Yue & Wang (recalled from
//     memory).
//
// Undefined correction. When every detrended value is equal (an all-equal
// series, or one exactly on a straight line) the rank ACF is 0/0: the
// factor is NaN (SQL NULL), not 1, and Undefined says why. A factor ≤ 0
// (possible when many negative autocorrelations are kept) leaves VarS, Z and
// P NaN.
//
// Lags count rows, not time: the correction presumes the rows are equally
// spaced in time. maxLag ≤ 0 means every lag 1..n−1 (the rank ACF is
// computed by FFT for many lags, so this is O(n log n)). Needs n ≥ 3.

import (
	"cmp"
	"errors"
	"math"
	"math/big"
	"slices"
	"strconv"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/stat/distuv"
)

// RankACFBound selects the significance bound for the rank
// autocorrelations of the Hamed–Rao correction.
type RankACFBound int

const (
	// BoundNormal keeps lag k when |r_k| > z_{0.975}/√n.
	BoundNormal RankACFBound = iota
	// BoundAnderson keeps lag k when r_k lies outside
	// [(−1 − z√(n−k−1))/(n−k), (−1 + z√(n−k−1))/(n−k)].
	BoundAnderson
)

// String is the bound's name in SQL options and JSON ("normal", "anderson").
func (b RankACFBound) String() string {
	if b == BoundAnderson {
		return "anderson"
	}
	return "normal"
}

// HamedRaoOptions selects the lags and the significance bound.
type HamedRaoOptions struct {
	MaxLag int // examine lags 1..MaxLag; ≤ 0 means every lag 1..n−1
	Bound  RankACFBound
}

// HamedRaoResult is the serial-correlation correction of Var(S).
type HamedRaoResult struct {
	Factor     float64 // n/n*_s; NaN when undefined (see Undefined)
	VarS       float64 // Var(S)·Factor
	Z, P       float64
	LagsUsed   int // number of lags whose rank autocorrelation was significant
	MaxLag     int // largest lag examined
	Bound      RankACFBound
	Threshold  float64 // z_{0.975}/√n for BoundNormal; NaN for BoundAnderson
	SenPerTime float64 // Sen slope used to detrend, in y per unit of t (rounded)
	// Undefined is empty when Factor is a number, else the reason it is not.
	Undefined string
}

// rankACFZ is z_{0.975}, the two-sided 5 % normal quantile.
var rankACFZ = distuv.UnitNormal.Quantile(0.975)

// HamedRao corrects the Mann–Kendall variance for serial correlation with
// the default bound, examining lags 1..maxLag (≤ 0: every lag).
func HamedRao(t, y []float64, mk MKResult, maxLag int) (HamedRaoResult, error) {
	return HamedRaoWith(t, y, mk, HamedRaoOptions{MaxLag: maxLag}, nil)
}

// HamedRaoWith is HamedRao with options. sen, when not nil, is the result
// of SenSlope or SenSlopeWithVar on the same t and y, whose median is then
// reused for the detrending; nil computes it here.
func HamedRaoWith(t, y []float64, mk MKResult, o HamedRaoOptions, sen *SenResult) (HamedRaoResult, error) {
	n := len(y)
	if n < 3 || len(t) != n {
		return HamedRaoResult{}, errors.New("the Hamed–Rao correction needs at least 3 values")
	}
	if sen == nil || sen.N != n || !(sen.median[0].a < sen.median[0].b) {
		r, err := senSlopeBlocks(t, y, []int{0, n}, 0, 0, false)
		if err != nil {
			return HamedRaoResult{}, err
		}
		sen = &r
	}
	beta := newExactSlope(t, y, *sen)
	rk := detrendedRanks(t, y, beta)
	maxLag := o.MaxLag
	if maxLag <= 0 || maxLag > n-1 {
		maxLag = n - 1
	}
	res := HamedRaoResult{MaxLag: maxLag, Bound: o.Bound, SenPerTime: beta.f, Threshold: math.NaN()}
	nf := float64(n)
	if o.Bound == BoundNormal {
		res.Threshold = rankACFZ / math.Sqrt(nf)
	}
	acf := rankACF(rk, maxLag)
	if math.IsNaN(acf[0]) {
		res.Factor, res.VarS, res.Z, res.P = math.NaN(), math.NaN(), math.NaN(), math.NaN()
		res.Undefined = "the Sen-detrended values are all equal, so their rank autocorrelation is 0/0"
		return res, nil
	}
	var sum float64
	for k := 1; k <= maxLag; k++ {
		if !rankACFSignificant(acf[k], n, k, o.Bound) {
			continue
		}
		res.LagsUsed++
		kf := float64(k)
		sum += (nf - kf) * (nf - kf - 1) * (nf - kf - 2) * acf[k]
	}
	res.Factor = 1 + 2*sum/(nf*(nf-1)*(nf-2))
	switch {
	case !(res.Factor > 0):
		res.VarS, res.Z, res.P = math.NaN(), math.NaN(), math.NaN()
		res.Undefined = "the correction factor is not positive (strong negative rank autocorrelation)"
	case mk.VarS > 0:
		res.VarS = mk.VarS * res.Factor
		res.Z = MKZ(mk.S, res.VarS)
		res.P = NormalTwoSided(res.Z)
	default:
		res.VarS, res.Z, res.P = math.NaN(), math.NaN(), math.NaN()
	}
	return res, nil
}

// rankACFSignificant reports whether r (the rank autocorrelation at lag k of
// n values) lies outside the 5 % bound.
func rankACFSignificant(r float64, n, k int, b RankACFBound) bool {
	if math.IsNaN(r) {
		return false
	}
	if b == BoundAnderson {
		m := float64(n - k)
		w := rankACFZ * math.Sqrt(math.Max(m-1, 0))
		return r < (-1-w)/m || r > (-1+w)/m
	}
	return math.Abs(r) > rankACFZ/math.Sqrt(float64(n))
}

// rankACF returns the sample autocorrelations r_0..r_maxLag of x (divisor n)
// as ACF(SampleACVF(x, maxLag).ACVF) gives them (direct lag sums, or the FFT
// for many lags). r_k is NaN for every k if x is constant. x has no missing
// values, so on the FFT path every lag k has n − k pairs: no pair counts
// are kept, and γ̂ and r are formed in place on the transform's lag sums
// (the same operations as SampleACVFFFT and ACF, so the same bits), which
// keeps a long series' memory to the centred values and the transform's
// buffers.
func rankACF(x []float64, maxLag int) []float64 {
	n := len(x)
	if !(maxLag >= fftMinLag && n >= fftMinSlots && maxLag < n) {
		return ACF(SampleACVF(x, maxLag).ACVF)
	}
	z, _, _, _ := demeaned(x)
	s := autocorrSums(fourier.NewFFT(fftSize(2*n)), z, maxLag)
	for h := range s {
		s[h] /= float64(n) // γ̂(h) = S(h)/(m(h) + h), m(h) = n − h
	}
	acfInPlace(s)
	return s
}

// exactSlope is the Theil–Sen median in decimal arithmetic: the slope of
// pair p, or the mean of the slopes of pairs p and q, with every value read
// as its decimal (decimalRat).
type exactSlope struct {
	t, y []float64
	f    float64 // the median as selected on the stored values, rounded
	bErr float64 // bound on |f − β| / u (see newExactSlope)
	rat  *big.Rat
}

// decimalRat returns the shortest decimal that converts back to v (the
// digits a CSV field or SQL literal gave: 3.6 is 36/10), exactly.
func decimalRat(v float64) *big.Rat {
	r, ok := new(big.Rat).SetString(strconv.FormatFloat(v, 'g', -1, 64))
	if !ok {
		r.SetFloat64(v)
	}
	return r
}

func newExactSlope(t, y []float64, sen SenResult) exactSlope {
	e := exactSlope{t: t, y: y, f: sen.Slope}
	slope := func(r slopeRef) *big.Rat {
		num := new(big.Rat).Sub(decimalRat(y[r.b]), decimalRat(y[r.a]))
		den := new(big.Rat).Sub(decimalRat(t[r.b]), decimalRat(t[r.a]))
		return num.Quo(num, den)
	}
	// |β − f|: each pair slope read in decimal is within
	// u·((|y_a| + |y_b|) + |s|(|t_a| + |t_b|))/(t_b − t_a) of the slope of
	// the stored values (each stored value is within u|v| of its decimal),
	// and f is within 2u·|s| of the latter.
	for _, r := range []slopeRef{sen.median[0], sen.median[1]} {
		dt := t[r.b] - t[r.a]
		s := math.Abs((y[r.b] - y[r.a]) / dt)
		e.bErr = math.Max(e.bErr, ((math.Abs(y[r.a])+math.Abs(y[r.b]))+s*(math.Abs(t[r.a])+math.Abs(t[r.b])))/dt+2*s)
	}
	p, q := sen.median[0], sen.median[1]
	e.rat = slope(p)
	if q != p {
		e.rat.Add(e.rat, slope(q))
		e.rat.Quo(e.rat, big.NewRat(2, 1))
	}
	return e
}

// detrendedRanks returns the average ranks of x_i = y_i − β·t_i with the
// order decided exactly (see the file comment).
func detrendedRanks(t, y []float64, beta exactSlope) []float64 {
	n := len(y)
	if beta.rat.Sign() == 0 {
		// Equal doubles are equal decimals and vice versa.
		return Ranks(y)
	}
	type item struct {
		k float64
		i int32
	}
	it := make([]item, n)
	// Key error: the stored y_i and t_i are within u|v| of their decimals;
	// t_i − t_0, f·(t_i − t_0) and the difference are rounded once each; f
	// is within u·bErr of β. errMax bounds the error of every key (over u,
	// with a factor 4 of headroom).
	var errMax float64
	af := math.Abs(beta.f)
	for i := range y {
		d := t[i] - t[0]
		it[i] = item{y[i] - beta.f*d, int32(i)}
		e := 3*math.Abs(y[i]) + af*(math.Abs(t[i])+math.Abs(t[0])+3*math.Abs(d)) + beta.bErr*math.Abs(d)
		errMax = math.Max(errMax, e)
	}
	slices.SortFunc(it, func(a, b item) int { return cmp.Compare(a.k, b.k) })
	// Keys more than twice the error bound apart are in the exact order.
	gap := 8*epsU*errMax + 1e-300
	x := make(map[int32]*big.Rat)
	val := func(i int32) *big.Rat {
		v, ok := x[i]
		if !ok {
			v = new(big.Rat).Mul(beta.rat, decimalRat(t[i]))
			v.Sub(decimalRat(y[i]), v)
			x[i] = v
		}
		return v
	}
	cmpExact := func(a, b int32) int { return val(a).Cmp(val(b)) }
	r := make([]float64, n)
	for i := 0; i < n; {
		j := i + 1
		for j < n && it[j].k-it[j-1].k <= gap {
			j++
		}
		if j-i > 1 {
			slices.SortFunc(it[i:j], func(a, b item) int { return cmpExact(a.i, b.i) })
		}
		for a := i; a < j; {
			b := a + 1
			for b < j && cmpExact(it[b-1].i, it[b].i) == 0 {
				b++
			}
			avg := float64(a+b+1) / 2 // mean of ranks a+1..b
			for k := a; k < b; k++ {
				r[it[k].i] = avg
			}
			a = b
		}
		i = j
	}
	return r
}
