package stats

// Lag sums of sparsely filled grids.
//
// A grid can hold far more slots than readings (a step chosen, or inferred,
// much finer than the typical spacing: up to MaxGridSlots slots for a few
// dozen readings). The lag sums S(h) = Σ z_i·z_{i+h} then have terms only
// where both slots hold a reading, so they are summed over the pairs of
// present slots at most L apart, O(P·k) for P present slots with k of them
// within L of each, instead of O(N·L) over every slot. Same sums, same pair
// counts, same divisors as the direct path (acf.go, crosscorr.go); only the
// order of the floating-point additions differs.

import "math"

// sparseFactor: a grid is treated as sparse when its present-pair work is
// below 1/sparseFactor of the direct path's slot work.
const sparseFactor = 8

// presentSlots returns the indices of the non-NaN values of x, increasing.
func presentSlots(x []float64) []int {
	var p []int
	for i, v := range x {
		if !math.IsNaN(v) {
			p = append(p, i)
		}
	}
	return p
}

// sparse reports whether a grid of n slots with p present values is
// sparse for lags up to L: the present pairs at most L apart, at most
// p·min(p, 2L+1) ordered ones, are fewer than 1/sparseFactor of the n·(2L+1)
// slot products of the direct path.
func sparse(n, p, L int) bool {
	return p*min(p, 2*L+1)*sparseFactor < n*(2*L+1)
}

// countPresent returns the number of non-NaN values of x.
func countPresent(x []float64) int {
	c := 0
	for _, v := range x {
		if !math.IsNaN(v) {
			c++
		}
	}
	return c
}

// sparseACVF fills a (from newAutocov, with its centred series z) for lags
// 0..L from the pairs of present slots p at most L apart.
func sparseACVF(a *Autocov, z []float64, p []int, L int) {
	s := make([]float64, L+1)
	m := make([]int, L+1)
	for i, u := range p {
		zu := z[u]
		for _, v := range p[i:] {
			h := v - u
			if h > L {
				break
			}
			s[h] += zu * z[v]
			m[h]++
		}
	}
	for h := 0; h <= L; h++ {
		a.finish(h, s[h], m[h])
	}
}

// CrossAll returns the cross-covariances of lags −maxLag..maxLag, each as
// CrossAt computes it; sparsely filled grids are summed over the pairs of
// present slots.
func CrossAll(x, y []float64, st CrossStats, maxLag int) []CrossCov {
	if maxLag < 0 {
		maxLag = 0
	}
	out := make([]CrossCov, 2*maxLag+1)
	n := len(x)
	L := min(maxLag, n-1)
	if L < 0 || !sparse(n, max(countPresent(x), countPresent(y)), L) {
		for k := range out {
			out[k] = CrossAt(x, y, st, k-maxLag)
		}
		return out
	}
	px, py := presentSlots(x), presentSlots(y)
	sum := make([]float64, 2*maxLag+1)
	for k := range out {
		out[k] = CrossCov{Lag: k - maxLag, Cov: math.NaN(), Corr: math.NaN()}
	}
	lo := 0
	for _, a := range px {
		for lo < len(py) && py[lo] < a-L {
			lo++
		}
		xa := x[a] - st.MeanX
		for _, b := range py[lo:] {
			h := b - a
			if h > L {
				break
			}
			out[h+maxLag].Pairs++
			sum[h+maxLag] += xa * (y[b] - st.MeanY)
		}
	}
	for k := range out {
		out[k].finish(sum[k], st)
	}
	return out
}
