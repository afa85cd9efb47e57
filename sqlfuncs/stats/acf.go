package stats

// Sample autocovariance, autocorrelation and partial autocorrelation of a
// regularly spaced series with missing values.
//
// Input is a gridded series x_1..x_N (see grid.go): N slots, NaN marks an
// empty slot (a missing value); n ≤ N is the number of present values.
//
// Sample mean: ȳ = (1/n) Σ_{present i} x_i.
//
// Sample autocovariance at lag h (0 ≤ h ≤ N−1):
//
//	S(h)   = Σ_{i : x_i and x_{i+h} both present} (x_i − ȳ)(x_{i+h} − ȳ)
//	m(h)   = the number of such pairs
//	γ̂(h)  = S(h) / (m(h) + h)          (undefined, NaN, when m(h) = 0)
//
// Without missing values m(h) = N − h, so the divisor is N for every lag —
// the usual biased estimator with divisor n, not n − h (common practice;
// Brockwell & Davis, Introduction to Time Series and Forecasting, 2nd ed.,
// 2002, definition 1.4.4). With missing values the divisor m(h) + h is the
// one R's stats::acf uses with na.action = na.pass (R 4.2.2, C function
// acf0 in src/library/stats/src/filter.c; checked empirically in
// testdata/reference/acf_ref.R). It is NOT statsmodels' acovf(...,
// missing="conservative") convention, which divides every lag by n.
//
// Sample autocorrelation: ρ̂(h) = γ̂(h) / γ̂(0), clamped to [−1, 1] as R's
// acf does (the clamp can only act when values are missing); NaN when
// γ̂(0) = 0 (a constant series) or γ̂(h) is undefined.
//
// Sample partial autocorrelation α̂(h), h ≥ 1: the last coefficient φ_hh of
// the Durbin–Levinson recursion on ρ̂(1..h) (Durbin 1960, "The fitting of
// time-series models", Rev. Int. Stat. Inst. 28; Brockwell & Davis 2002,
// section 2.5.3), the convention of R's stats::pacf and statsmodels'
// pacf(method="ldb"), while the sample ACF is positive definite up to lag
// h; NaN from the first lag where it is not (PartialACF).

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/dsp/fourier"
	"gonum.org/v1/gonum/floats"
)

// Autocov holds the sample autocovariances of a gridded series.
type Autocov struct {
	N      int       // present values n
	NSlots int       // grid slots N (present + missing)
	Mean   float64   // ȳ over present values (NaN when n = 0)
	ACVF   []float64 // γ̂(0..L); NaN where undefined (no pairs, or lag ≥ N)
	Pairs  []int     // m(0..L): complete pairs per lag
}

// fftMinLag and fftMinSlots select the FFT path in SampleACVF: it is used
// when maxLag ≥ fftMinLag and the series has at least fftMinSlots slots.
// Below that the direct O(N·L) lag sums (gonum's vectorised dot product)
// cost less than the O(N log N) transform; BenchmarkACVFLag48 and
// BenchmarkACVFLag500 compare the two paths (figures in BENCHMARKS.md).
const (
	fftMinLag   = 1024
	fftMinSlots = 1024
)

// demeaned returns the centred series z (0 in missing slots), the missing
// slots in increasing order (nil when nothing is missing), n and ȳ. The
// mean is computed in two passes (a correction pass) so large offsets keep
// full precision.
func demeaned(x []float64) (z []float64, miss []int, n int, mean float64) {
	sum := 0.0
	for _, v := range x {
		if !math.IsNaN(v) {
			sum += v
			n++
		}
	}
	if n == 0 {
		miss = make([]int, len(x))
		for i := range miss {
			miss[i] = i
		}
		return make([]float64, len(x)), miss, 0, math.NaN()
	}
	mean = sum / float64(n)
	corr := 0.0
	for _, v := range x {
		if !math.IsNaN(v) {
			corr += v - mean
		}
	}
	mean += corr / float64(n)
	z = make([]float64, len(x))
	if n < len(x) {
		miss = make([]int, 0, len(x)-n)
	}
	for i, v := range x {
		if math.IsNaN(v) {
			miss = append(miss, i)
			continue
		}
		z[i] = v - mean
	}
	return z, miss, n, mean
}

// lagPairs returns m(0..L), the number of slot pairs h apart with both
// values present, for a series of N slots (L < N) with the given missing
// slots (increasing), by inclusion–exclusion over the missing slots:
//
//	m(h) = (N − h) − #{missing i < N − h} − #{missing i ≥ h} + c(h),
//	c(h) = #{missing i with i + h missing}
//
// Each missing slot is paired with the missing slots up to L after it, so
// the cost is O(L + M + P) for M missing slots and P pairs of them at most L
// apart: with a few gaps far below the O(N·L) lag products of a presence
// mask, which the function falls back to when P exceeds N(L+1)/4.
// Exact integer counts either way.
func lagPairs(N, L int, miss []int) []int {
	out := make([]int, L+1)
	M := len(miss)
	if missingPairWork(miss, L) > N*(L+1)/4 {
		mask := presenceMask(N, miss)
		for h := range out {
			out[h] = int(floats.Dot(mask[:N-h], mask[h:]))
		}
		return out
	}
	for i, a := range miss {
		for _, b := range miss[i+1:] {
			if b-a > L {
				break
			}
			out[b-a]++
		}
	}
	out[0] = M
	below, upTo := 0, M // #{missing < h}, #{missing < N − h}
	for h := range out {
		for below < M && miss[below] < h {
			below++
		}
		for upTo > 0 && miss[upTo-1] >= N-h {
			upTo--
		}
		out[h] += (N - h) - upTo - (M - below)
	}
	return out
}

// presenceMask is 1 in the present slots of an N-slot series and 0 in the
// missing ones.
func presenceMask(N int, miss []int) []float64 {
	mask := make([]float64, N)
	for i := range mask {
		mask[i] = 1
	}
	for _, i := range miss {
		mask[i] = 0
	}
	return mask
}

// missingPairWork returns the number of pairs of missing slots at most L
// apart (lagPairs' pair loop), in O(M).
func missingPairWork(miss []int, L int) int {
	w, j := 0, 0
	for i, a := range miss {
		for j < len(miss) && miss[j]-a <= L {
			j++
		}
		w += j - i - 1
	}
	return w
}

// lagPairsAt is lagPairs for the single lag h (0 ≤ h < N), in O(M).
func lagPairsAt(N, h int, miss []int) int {
	M := len(miss)
	m := N - h
	c, j := 0, 0
	for _, a := range miss {
		if a < N-h {
			m-- // a pairs with the slot h later
		}
		if a >= h {
			m-- // a pairs with the slot h earlier
		}
		for j < M && miss[j] < a+h {
			j++
		}
		if j < M && miss[j] == a+h {
			c++
		}
	}
	if h == 0 {
		c = M
	}
	return m + c
}

// SampleACVF returns γ̂(0..maxLag) of the gridded series x (NaN = missing),
// choosing sums over present pairs for a sparsely filled grid
// (sparse_lags.go), else direct lag sums or the FFT by size. Lags ≥ N are NaN with zero
// pairs. maxLag < 0 is treated as 0.
func SampleACVF(x []float64, maxLag int) Autocov {
	a, z, miss := newAutocov(x, maxLag)
	if N, L := len(x), min(maxLag, len(x)-1); L >= 0 && sparse(N, a.N, L) {
		sparseACVF(&a, z, presentSlots(x), L)
		return a
	}
	if maxLag >= fftMinLag && len(x) >= fftMinSlots {
		return acvfFFT(a, z, miss)
	}
	return acvfDirect(a, z, miss)
}

func newAutocov(x []float64, maxLag int) (Autocov, []float64, []int) {
	if maxLag < 0 {
		maxLag = 0
	}
	z, miss, n, mean := demeaned(x)
	a := Autocov{N: n, NSlots: len(x), Mean: mean, ACVF: make([]float64, maxLag+1), Pairs: make([]int, maxLag+1)}
	for h := range a.ACVF {
		a.ACVF[h] = math.NaN()
	}
	return a, z, miss
}

// finish turns lag sums S(h) and pair counts into γ̂(h) = S(h)/(m(h)+h).
func (a *Autocov) finish(h int, s float64, m int) {
	a.Pairs[h] = m
	if m > 0 {
		a.ACVF[h] = s / float64(m+h)
	}
}

// SampleACVFDirect computes γ̂(0..maxLag) with direct lag sums, O(N·L).
// The products are summed by gonum's vectorised dot product (several partial
// sums), so the last bits can differ from R's acf0, which sums in increasing i.
// Pair counts come from the missing slots (lagPairs).
func SampleACVFDirect(x []float64, maxLag int) Autocov {
	a, z, miss := newAutocov(x, maxLag)
	return acvfDirect(a, z, miss)
}

// acvfDirect is SampleACVFDirect on newAutocov's result.
func acvfDirect(a Autocov, z []float64, miss []int) Autocov {
	N := len(z)
	L := min(len(a.ACVF)-1, N-1)
	if L < 0 {
		return a
	}
	pairs := lagPairs(N, L, miss)
	for h := 0; h <= L; h++ {
		a.finish(h, lagSum(z, h), pairs[h])
	}
	return a
}

// lagSum returns S(h) = Σ z_i·z_{i+h} of a centred series z with zeros in
// the missing slots (0 ≤ h < len(z)): the dot product of the series with
// itself shifted by h, by gonum's unrolled, vectorised dot product
// (floats.Dot).
func lagSum(z []float64, h int) float64 {
	N := len(z)
	return floats.Dot(z[:N-h], z[h:])
}

// ACVFAtLag returns γ̂(0) and γ̂(h) of the gridded series x (NaN = missing)
// and the pair count m(h), in O(N): the same sums as SampleACVFDirect for
// those two lags. gh is NaN when h ≥ N or m(h) = 0; g0 is NaN when no value
// is present.
func ACVFAtLag(x []float64, h int) (g0, gh float64, pairs int) {
	_, z, miss := newAutocov(x, 0)
	N := len(x)
	sum := func(lag int) (float64, int) {
		m := lagPairsAt(N, lag, miss)
		if m == 0 {
			return math.NaN(), 0
		}
		return lagSum(z, lag) / float64(m+lag), m
	}
	if N == 0 {
		return math.NaN(), math.NaN(), 0
	}
	g0, _ = sum(0)
	if h < 0 || h >= N {
		return g0, math.NaN(), 0
	}
	gh, pairs = sum(h)
	return g0, gh, pairs
}

// fftSize returns the smallest integer ≥ n whose only prime factors are 2,
// 3 and 5 (sizes gonum's real FFT handles fastest).
func fftSize(n int) int {
	if n < 2 {
		return 2
	}
	best := math.MaxInt
	for p2 := 1; p2 < 2*n; p2 *= 2 {
		for p3 := p2; p3 < 2*n; p3 *= 3 {
			for p5 := p3; p5 < 2*n; p5 *= 5 {
				if p5 >= n && p5 < best {
					best = p5
				}
			}
		}
	}
	return best
}

// autocorrSums returns Σ_i v_i v_{i+h} for h = 0..maxLag via a zero-padded
// real FFT of length ≥ 2N (no circular wrap-around).
func autocorrSums(f *fourier.FFT, v []float64, maxLag int) []float64 {
	m := f.Len()
	buf := make([]float64, m)
	copy(buf, v)
	c := f.Coefficients(nil, buf)
	for i, z := range c {
		c[i] = complex(real(z)*real(z)+imag(z)*imag(z), 0)
	}
	s := f.Sequence(buf, c)
	out := make([]float64, maxLag+1)
	for h := range out {
		out[h] = s[h] / float64(m)
	}
	return out
}

// SampleACVFFFT computes γ̂(0..maxLag) from the periodogram of the
// zero-padded centred series, O(N log N). Pair counts come from the missing
// slots (lagPairs) when they are few, else from the same transform of the
// presence mask, rounded to integers. Agrees with SampleACVFDirect to about
// 1e-12·γ̂(0) in absolute terms (tested).
func SampleACVFFFT(x []float64, maxLag int) Autocov {
	a, z, miss := newAutocov(x, maxLag)
	return acvfFFT(a, z, miss)
}

// acvfFFT is SampleACVFFFT on newAutocov's result.
func acvfFFT(a Autocov, z []float64, miss []int) Autocov {
	N := len(z)
	if N == 0 {
		return a
	}
	L := min(len(a.ACVF)-1, N-1)
	f := fourier.NewFFT(fftSize(2 * N))
	s := autocorrSums(f, z, L)
	var pairs []int
	// lagPairs' pair loop against a second transform of about 5N·log₂N.
	if missingPairWork(miss, L) <= 4*N {
		pairs = lagPairs(N, L, miss)
	} else {
		mc := autocorrSums(f, presenceMask(N, miss), L)
		pairs = make([]int, L+1)
		for h := range pairs {
			pairs[h] = int(math.Round(mc[h]))
		}
	}
	for h := 0; h <= L; h++ {
		if pairs[h] == 0 {
			s[h] = 0
		}
		a.finish(h, s[h], pairs[h])
	}
	return a
}

// ACF returns ρ̂(h) = γ̂(h)/γ̂(0) for every lag of acvf, clamped to [−1, 1]
// (as R's acf); every entry is NaN when γ̂(0) is 0 or NaN.
func ACF(acvf []float64) []float64 {
	out := make([]float64, len(acvf))
	copy(out, acvf)
	acfInPlace(out)
	return out
}

// acfInPlace turns the sample autocovariances in s into ACF's sample
// autocorrelations, overwriting them (same rules as ACF).
func acfInPlace(s []float64) {
	g0 := math.NaN()
	if len(s) > 0 {
		g0 = s[0]
	}
	for h, g := range s {
		if !(g0 > 0) || math.IsNaN(g) {
			s[h] = math.NaN()
			continue
		}
		r := g / g0
		if h == 0 {
			r = 1
		}
		s[h] = math.Max(-1, math.Min(1, r))
	}
}

// PACF returns the sample partial autocorrelations α̂(1..K) of
// rho = ρ̂(0..K); see PartialACF.
func PACF(rho []float64) []float64 {
	p, _ := PartialACF(rho)
	return p
}

// PACFStop says from which lag the partial autocorrelations are undefined
// and why.
type PACFStop struct {
	Lag    int    // first lag whose α̂ is NaN; 0 when every lag is defined
	Reason string // empty when Lag is 0
}

// PartialACF returns the sample partial autocorrelations α̂(1..K) from
// rho = ρ̂(0..K) by the Durbin–Levinson recursion (Durbin 1960; Brockwell &
// Davis 2002, §2.5.3):
//
//	φ_11 = ρ̂(1)
//	φ_kk = (ρ̂(k) − Σ_{j=1}^{k−1} φ_{k−1,j} ρ̂(k−j)) / (1 − Σ_{j=1}^{k−1} φ_{k−1,j} ρ̂(j))
//	φ_kj = φ_{k−1,j} − φ_kk φ_{k−1,k−j},  j = 1..k−1
//
// out[0] is NaN (α̂(0) is not defined) and out[k] = φ_kk.
//
// The PACF rule. α̂(k) is a partial correlation only while the matrix
// P_{k+1} = [ρ̂(|i−j|)]_{i,j=0..k} is positive definite, and P_{k+1} is
// positive definite exactly when P_k is and |φ_kk| < 1 (the denominator at
// lag k is det P_k / det P_{k−1}, the scaled one-step prediction error
// variance, and det P_{k+1} / det P_k is that times 1 − φ_kk²). Without
// missing values ρ̂ is a positive definite sequence (divisor n; Brockwell &
// Davis 2002, §2.4.2, recalled from memory) and this always holds. With
// missing slots (divisor m(h) + h) it need not: the first lag k with
// |φ_kk| ≥ 1 — or with a non-positive denominator, or an undefined ρ̂(k) (no
// pair of values k slots apart, or a constant series) — and every later lag
// are NaN, and stop names that lag and the reason. So α̂ never leaves
// [−1, 1]. (R's pacf keeps dividing and can return values such as −2.9 or
// 21 there.)
func PartialACF(rho []float64) (out []float64, stop PACFStop) {
	K := len(rho) - 1
	out = make([]float64, len(rho))
	for i := range out {
		out[i] = math.NaN()
	}
	if K < 1 {
		return out, stop
	}
	phi := make([]float64, K+1)
	prev := make([]float64, K+1)
	for k := 1; k <= K; k++ {
		if math.IsNaN(rho[k]) {
			stop.Lag = k
			if math.IsNaN(rho[0]) {
				stop.Reason = "the values are constant, so no autocorrelation is defined"
			} else {
				stop.Reason = fmt.Sprintf("no two values are %d slots apart, so the sample ACF is undefined at lag %d", k, k)
			}
			return out, stop
		}
		num, den := rho[k], 1.0
		for j := 1; j < k; j++ {
			num -= prev[j] * rho[k-j]
			den -= prev[j] * rho[j]
		}
		c := num / den
		if !(den > 0) || !(math.Abs(c) < 1) {
			stop.Lag = k
			stop.Reason = fmt.Sprintf("the gap-aware sample ACF is not positive definite over lags 0..%d (possible with missing slots), so no partial autocorrelation in [−1, 1] exists from lag %d", k, k)
			return out, stop
		}
		phi[k] = c
		for j := 1; j < k; j++ {
			phi[j] = prev[j] - c*prev[k-j]
		}
		out[k] = c
		copy(prev, phi)
	}
	return out, stop
}

// CorrelogramLag is one lag of a correlogram. NaN marks an undefined figure.
type CorrelogramLag struct {
	Lag  int
	ACVF float64 // γ̂(h)
	ACF  float64 // ρ̂(h)
	PACF float64 // α̂(h)
	// Band is 1.96/√n with n the number of present values: the half-width
	// of the approximate 95% band for ρ̂(h) under an i.i.d. model (common
	// practice; Brockwell & Davis 2002, §1.4.1).
	Band float64
	// LBQ and LBP: cumulative Ljung–Box statistic over lags 1..h and its
	// χ² upper-tail p-value with h − fitdf degrees of freedom (NaN when
	// h ≤ fitdf or h ≥ n).
	LBQ, LBP float64
	Pairs    int // m(h)
}

// Correlogram summarises a gridded series.
type Correlogram struct {
	N, NSlots, Missing int
	Mean, ACVF0        float64
	Fitdf              int
	Lags               []CorrelogramLag // lags 1..min(maxLag, NSlots−1)
	// PACFStop is the first lag (≤ the last lag of Lags) from which PACF is
	// NaN, with the reason (PartialACF); Lag 0 when every PACF is defined.
	PACFStop PACFStop
}

// ComputeCorrelogram returns the correlogram of the gridded series x (NaN =
// missing) for lags 1..maxLag (lags ≥ NSlots are omitted). fitdf is
// subtracted from the Ljung–Box degrees of freedom.
func ComputeCorrelogram(x []float64, maxLag, fitdf int) Correlogram {
	L := maxLag
	if L > len(x)-1 {
		L = len(x) - 1
	}
	if L < 0 {
		L = 0
	}
	a := SampleACVF(x, L)
	rho := ACF(a.ACVF)
	pacf, stop := PartialACF(rho)
	c := Correlogram{N: a.N, NSlots: a.NSlots, Missing: a.NSlots - a.N, Mean: a.Mean, ACVF0: math.NaN(), Fitdf: fitdf, PACFStop: stop}
	if len(a.ACVF) > 0 {
		c.ACVF0 = a.ACVF[0]
	}
	band := math.NaN()
	if a.N > 0 {
		band = 1.96 / math.Sqrt(float64(a.N))
	}
	lb := ljungBoxTerms(rho, a.N, L)
	for h := 1; h <= L; h++ {
		row := CorrelogramLag{Lag: h, ACVF: a.ACVF[h], ACF: rho[h], PACF: pacf[h], Band: band, LBQ: lb[h], LBP: math.NaN(), Pairs: a.Pairs[h]}
		if df := h - fitdf; df > 0 && !math.IsNaN(lb[h]) {
			row.LBP = ChiSquareUpper(lb[h], float64(df))
		}
		c.Lags = append(c.Lags, row)
	}
	return c
}
