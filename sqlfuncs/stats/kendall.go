package stats

// Mann–Kendall trend test and Kendall's tau-b against time.
//
// Input: a series (t_i, y_i), i = 1..n, sorted by t with distinct t (the
// SQL layer guarantees this; ties in time are rejected there).
//
//	S      = Σ_{i<j} sgn(y_j − y_i)                         (Mann 1945)
//	Var(S) = [n(n−1)(2n+5) − Σ_g t_g(t_g−1)(2t_g+5)] / 18   (Kendall 1975, ties in y)
//	Z      = (S − 1)/√Var(S) if S > 0, 0 if S = 0, (S + 1)/√Var(S) if S < 0
//	p      = 2·P(N(0,1) > |Z|)
//	tau_b  = S / √(n0·(n0 − n2)),  n0 = n(n−1)/2, n2 = Σ_g t_g(t_g−1)/2
//
// where t_g is the size of the g-th group of tied y values. Times are
// distinct, so the time-tie term of tau-b (n1) is 0 and the variance has no
// time-tie term. S is computed in O(n log n) by counting strict inversions
// of y in time order with a merge sort (Knight 1966): with D discordant
// (strictly inverted) pairs and n2 tied pairs, S = n0 − n2 − 2D.
//
// Interval–test pairing. The Sen slope's rank interval (SenSlope) and the
// test read the same pairwise signs. With N pairs, of which P have a
// positive slope, Q a negative and T a zero slope (equal y), S = P − Q, and
// with C = z_{1−α/2}·√Var(S) for the variance the test uses:
//
//	test rejects upwards   ⟺  S − 1 > C           ⟺  Q + T/2 < (N − C − 1)/2
//	interval's lower > 0   ⟺  Q + T < M1 = round((N − C)/2)
//
// (and the same with P for a downward trend). So an interval computed from
// the same variance as the test — SenSlopeWithVar with the Hamed–Rao
// corrected variance, SeasonalResult.SenWithVar with the between-season
// covariance variance — agrees with "p ≤ α" except when Q + T/2 (or
// P + T/2) lies within half a rank, plus half a rank per zero slope, of
// (N − C)/2: the continuity correction, the rounding of the ranks and zero
// slopes counting whole in the interval but half in S. An interval from a
// different variance than the test's can contradict it by any amount.
//
// These are sample statistics; Z and p are calibrated under the null model of
// independent, identically distributed observations (no serial
// correlation). HamedRao (hamedrao.go) corrects the variance for serial
// correlation.

import (
	"cmp"
	"errors"
	"math"
	"slices"
)

// MKResult holds the Mann–Kendall statistics. Fields that are undefined for
// the data are NaN: Z and P when Var(S) = 0 (n < 2 or all values tied), Tau
// when every y is tied.
type MKResult struct {
	N      int
	S      int64
	VarS   float64
	Z      float64
	P      float64
	Tau    float64
	Pairs  int64 // n0 = n(n−1)/2
	TiedY  int64 // n2 = number of pairs with equal y
	Ties   int64 // number of groups of tied y values (size ≥ 2)
	Concor int64 // concordant pairs (y_j > y_i, i earlier)
	Discor int64 // discordant pairs (y_j < y_i, i earlier)
}

// MannKendall computes the Mann–Kendall statistics of y against its order
// (y must already be in time order). It needs n ≥ 2.
func MannKendall(y []float64) (MKResult, error) {
	n := len(y)
	if n < 2 {
		return MKResult{}, errors.New("Mann–Kendall needs at least 2 values")
	}
	r := MKResult{N: n}
	r.Pairs = int64(n) * int64(n-1) / 2
	buf := append([]float64(nil), y...)
	tmp := make([]float64, n)
	r.Discor = countInversions(buf, tmp)
	// buf is now sorted: tie groups are runs.
	var tieVar float64
	r.Ties, r.TiedY, tieVar = tieGroups(buf)
	r.Concor = r.Pairs - r.TiedY - r.Discor
	r.S = r.Concor - r.Discor
	r.VarS = mkVarS(n, tieVar)
	r.Z = MKZ(r.S, r.VarS)
	r.P = NormalTwoSided(r.Z)
	if d := float64(r.Pairs) * float64(r.Pairs-r.TiedY); d > 0 {
		r.Tau = float64(r.S) / math.Sqrt(d)
	} else {
		r.Tau = math.NaN()
	}
	return r, nil
}

// tieGroups returns, for an ascending slice, the number of tie groups, the
// number of tied pairs Σ g(g−1)/2 and Σ g(g−1)(2g+5) over the groups (sizes
// g > 1).
func tieGroups(sorted []float64) (groups, tiedPairs int64, tieVar float64) {
	n := len(sorted)
	for i := 0; i < n; {
		j := i + 1
		for j < n && sorted[j] == sorted[i] {
			j++
		}
		if g := int64(j - i); g > 1 {
			groups++
			tiedPairs += g * (g - 1) / 2
			gf := float64(g)
			tieVar += gf * (gf - 1) * (2*gf + 5)
		}
		i = j
	}
	return
}

// mkVarS is the tie-corrected variance of S,
// (n(n−1)(2n+5) − Σ g(g−1)(2g+5)) / 18 (Kendall 1975).
func mkVarS(n int, tieVar float64) float64 {
	nf := float64(n)
	return (nf*(nf-1)*(2*nf+5) - tieVar) / 18
}

// mkVarSSorted is MannKendall(y).VarS from y sorted ascending (the same
// operations, so the same bits), without counting S.
func mkVarSSorted(sorted []float64) float64 {
	_, _, tieVar := tieGroups(sorted)
	return mkVarS(len(sorted), tieVar)
}

// MKZ is the continuity-corrected normal score of S: (S − sgn(S))/√var, 0 for
// S = 0, NaN when var ≤ 0.
func MKZ(s int64, varS float64) float64 {
	if !(varS > 0) {
		return math.NaN()
	}
	switch {
	case s > 0:
		return float64(s-1) / math.Sqrt(varS)
	case s < 0:
		return float64(s+1) / math.Sqrt(varS)
	}
	return 0
}

// countInversions sorts a ascending (stable merge sort using tmp, len(tmp) ≥
// len(a)) and returns the number of pairs i < j with a[i] > a[j] strictly
// (Knight 1966: ties are neither counted nor reordered).
func countInversions[T cmp.Ordered](a, tmp []T) int64 {
	n := len(a)
	if n < 2 {
		return 0
	}
	var inv int64
	// Bottom-up merge sort; small runs by insertion sort.
	const run = 16
	for lo := 0; lo < n; lo += run {
		hi := min(lo+run, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1] > v {
				a[j] = a[j-1]
				j--
			}
			inv += int64(i - j)
			a[j] = v
		}
	}
	src, dst := a, tmp[:n]
	for width := run; width < n; width *= 2 {
		for lo := 0; lo < n; lo += 2 * width {
			mid := min(lo+width, n)
			hi := min(lo+2*width, n)
			i, j, k := lo, mid, lo
			for i < mid && j < hi {
				if src[i] <= src[j] {
					dst[k] = src[i]
					i++
				} else {
					dst[k] = src[j]
					inv += int64(mid - i)
					j++
				}
				k++
			}
			k += copy(dst[k:], src[i:mid])
			copy(dst[k:], src[j:hi])
		}
		src, dst = dst, src
	}
	if &src[0] != &a[0] {
		copy(a, src)
	}
	return inv
}

// Ranks returns the ranks 1..n of x, ties getting the average of the ranks
// they span.
func Ranks(x []float64) []float64 {
	n := len(x)
	// (value, index) items sorted by value: one contiguous array, no
	// indirection in the comparisons.
	type item struct {
		v float64
		i int32
	}
	it := make([]item, n)
	for i, v := range x {
		it[i] = item{v, int32(i)}
	}
	slices.SortFunc(it, func(a, b item) int { return cmp.Compare(a.v, b.v) })
	r := make([]float64, n)
	for i := 0; i < n; {
		j := i + 1
		for j < n && it[j].v == it[i].v {
			j++
		}
		avg := float64(i+j+1) / 2 // mean of ranks i+1..j
		for k := i; k < j; k++ {
			r[it[k].i] = avg
		}
		i = j
	}
	return r
}
