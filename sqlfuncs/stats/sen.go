package stats

// Theil–Sen slope: the median of the pairwise slopes
//
//	s_ab = (y_b − y_a) / (t_b − t_a),   a < b  (t_a < t_b; times are distinct)
//
// (Theil 1950; Sen 1968, JASA 63:1379–1389), exact for any n in O(n) memory
// and O(n log n) expected time per selected rank.
//
// Selection. For a trial slope s, order the points by b_i(s) = y_i − s·t_i:
// a pair a < b has s_ab < s exactly when b_b(s) < b_a(s), so the number of
// pairs with slope < s (or ≤ s) is an inversion count, found by a merge sort
// in O(n log n). The k-th smallest slope is then found by randomised
// interval shrinking (Matoušek 1991, "Randomized optimal algorithm for slope
// selection", Inf. Process. Lett. 39:183–187; Dillencourt, Mount &
// Netanyahu 1992, Int. J. Comput. Geom. Appl. 2:1–27): keep two cuts
// lo < hi with #(slopes ≤ lo) < k ≤ #(slopes ≤ hi); the pairs between them
// are exactly the inversions between the point orders at lo and at hi.
// Draw m of them uniformly at random (the first round draws pairs directly
// from all pairs); the number of sampled slopes below the target is
// binomial, so the sample order statistics three of its standard
// deviations (plus two) either side of the target's expected position give
// new, narrower cuts. When at most max(8n, 8192) pairs are left they are
// listed and the target is found by selection on the floating-point slopes
// followed by an exact sort of the few slopes too close to it to call.
//
// Each cut's order is sorted starting from the order of the nearest cut
// evaluated before (sen_count.go), and the sort of a window's upper cut
// from its lower cut meets exactly the window's pairs as inversions: it
// lists them, or draws the next round's sample from them, on the way
// (sen_harvest.go). Several ranks are selected together (the median's two
// middle ranks and the interval's two ranks): targets whose windows overlap
// share their cuts, so the usual cost is one direct sample, two cuts (the
// second also drawing the next sample) and two cuts per distinct target
// (the second also listing its window).

// All comparisons are exact (exact.go), so the result is the k-th order
// statistic of the exact slopes of the given floating-point data; the
// returned value is that slope correctly rounded. Random sampling affects
// only the running time. Memory is O(n) throughout (samples and listed
// windows hold at most 8n pairs each, up to twelve orders of n points are
// cached; above 2^18 points listed windows and the first sample at most
// n/2 pairs each, later samples about n/4, three orders); the scratch
// buffers are pooled between calls, except those of a series longer than
// 2^18 points. A caller whose interval
// variance depends on the median selects both on one state (senSession).
//
// The same machinery selects over the union of within-block pairs (blocks
// of consecutive points, e.g. seasons), used by the seasonal Sen slope.

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

const epsU = 1.0 / (1 << 53)

// SenMedian returns the Theil–Sen slope (median of pairwise slopes, in y per
// unit of t) of a series sorted by t with distinct t (n ≥ 2).
func SenMedian(t, y []float64) (float64, error) {
	r, err := senSlopeBlocks(t, y, []int{0, len(t)}, 0, 0, false)
	if err != nil {
		return 0, err
	}
	return r.Slope, nil
}

// SenResult is the Theil–Sen estimate and its confidence interval; slopes
// are in y per unit of t.
type SenResult struct {
	N          int
	Pairs      int64
	Slope      float64
	Confidence float64 // 0 when no interval was requested
	Lower      float64
	Upper      float64
	LowerRank  int64 // 1-based order statistic used for Lower
	UpperRank  int64
	VarS       float64 // Mann–Kendall Var(S) used for the interval
	MedianT    float64
	MedianY    float64
	// median holds the pair(s) whose exact slope is the median: both
	// entries name the same pair for an odd number of pairs, the two
	// middle order statistics for an even number (exactMedian).
	median [2]slopeRef
}

// SenSlope computes the Theil–Sen slope and, when 0 < confidence < 1, its
// rank-based confidence interval (Sen 1968, eq. 2.6; also in Gilbert 1987):
//
//	C  = z_{1−α/2}·√Var(S),  α = 1 − confidence, Var(S) the Mann–Kendall
//	     variance with the tie correction for y (no time ties exist)
//	M1 = (N − C)/2,  M2 = (N + C)/2, each rounded half to even
//	lower = the M1-th smallest slope, upper = the (M2+1)-th smallest,
//	     ranks clamped to 1..N
//
// with N = n(n−1)/2 pairs. This is the rounding and clamping of
// scipy.stats.theilslopes (scipy 1.10.1), which the tests check against.
// For small n the clamped ranks can reach 1 or N, and the interval then
// covers less than the nominal confidence: LowerRank/UpperRank show it.
// MedianT and MedianY are the medians of t and y (mean of the two middle
// values for even n). Times must increase strictly (no ties in time); an
// error names the first offending position otherwise.
func SenSlope(t, y []float64, confidence float64) (SenResult, error) {
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, 0, true)
}

// SenSlopeWithVar is SenSlope with the interval's Var(S) supplied by the
// caller (0: the Mann–Kendall variance of y, computed here): the variance of
// the test the interval is reported with, e.g. the Hamed–Rao corrected one
// (interval–test pairing, kendall.go).
func SenSlopeWithVar(t, y []float64, confidence, varS float64) (SenResult, error) {
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, varS, true)
}

// senSlopeBlocks is the Sen slope over the within-block pairs; with medians
// set it also fills MedianT and MedianY (callers wanting only the slope
// skip their sorts).
func senSlopeBlocks(t, y []float64, blocks []int, confidence, varS float64, medians bool) (SenResult, error) {
	d, res, err := startSen(t, y, blocks)
	if err != nil {
		return res, err
	}
	defer d.release()
	n := len(t)
	// The medians and the tie groups of y from one sorted copy in the
	// pooled scratch (a call allocating O(n) here made the collector run
	// about once per series, which emptied the pool of the selection's much
	// larger buffers).
	interval := confidence > 0 && confidence < 1
	d.sorted = grow(d.sorted, n)
	if medians {
		if slices.IsSorted(t) {
			res.MedianT = medianOfSorted(t)
		} else {
			copy(d.sorted, t)
			d.sortFloats(d.sorted)
			res.MedianT = medianOfSorted(d.sorted)
		}
	}
	var ys []float64 // y sorted, when the median or Var(S) needs it
	if medians || (interval && varS == 0 && len(blocks) == 2) {
		ys = d.sorted
		copy(ys, y)
		d.sortFloats(ys)
	}
	if medians {
		res.MedianY = medianOfSorted(ys)
	}
	if interval && varS == 0 && len(blocks) == 2 {
		varS = mkVarSSorted(ys)
	}
	if n > bigSen {
		d.sorted = nil // not kept through the selection of a long series
	}
	ks := d.medianRanks()
	if interval {
		res.setIntervalRanks(confidence, varS)
		ks = append(ks, res.LowerRank, res.UpperRank)
	}
	sel := d.selectRanks(ks)
	res.setMedian(d, sel[0], sel[1])
	if interval {
		res.setInterval(d, sel[2], sel[3])
	}
	return res, nil
}

// startSen checks the times and takes pooled selection state for t and y
// (the caller releases it when err is nil).
func startSen(t, y []float64, blocks []int) (*senData, SenResult, error) {
	if len(t) != len(y) {
		return nil, SenResult{}, errors.New("t and y differ in length")
	}
	for b := 0; b+1 < len(blocks); b++ {
		for i := blocks[b] + 1; i < blocks[b+1]; i++ {
			if !(t[i] > t[i-1]) {
				return nil, SenResult{}, fmt.Errorf("the Sen slope needs increasing times: t[%d] = %v follows t[%d] = %v", i, t[i], i-1, t[i-1])
			}
		}
	}
	d := newSenData(t, y, blocks)
	res := SenResult{N: len(t), Pairs: d.pairs}
	if d.pairs == 0 {
		d.release()
		return nil, res, errors.New("the Sen slope needs at least 2 values")
	}
	return d, res, nil
}

// medianRanks returns the middle rank(s) of the pairs (1-based; the same
// rank twice for an odd number).
func (d *senData) medianRanks() []int64 {
	N := d.pairs
	return []int64{(N + 1) / 2, N/2 + 1}
}

// setIntervalRanks fills Confidence, VarS and the interval's ranks (the
// rule is documented at SenSlope).
func (r *SenResult) setIntervalRanks(confidence, varS float64) {
	N := r.Pairs
	r.Confidence, r.VarS = confidence, varS
	z := distuv.UnitNormal.Quantile(1 - (1-confidence)/2)
	c := z * math.Sqrt(varS)
	m1 := int64(math.RoundToEven((float64(N) - c) / 2))
	m2 := int64(math.RoundToEven((float64(N) + c) / 2))
	r.LowerRank = min(max(m1, 1), N)
	r.UpperRank = min(max(m2+1, 1), N)
}

// setMedian fills Slope from the pairs of the middle ranks.
func (r *SenResult) setMedian(d *senData, lo, hi slopeRef) {
	r.median = [2]slopeRef{lo, hi}
	if r.Pairs%2 == 1 {
		r.Slope = d.exactSlope(lo)
	} else {
		r.Slope = (d.exactSlope(lo) + d.exactSlope(hi)) / 2
	}
}

// setInterval fills Lower and Upper from the pairs of the interval's ranks.
func (r *SenResult) setInterval(d *senData, lo, hi slopeRef) {
	r.Lower, r.Upper = d.exactSlope(lo), d.exactSlope(hi)
}

// exactSlope is the slope of pair r correctly rounded.
func (d *senData) exactSlope(r slopeRef) float64 {
	return exactQuotient(d.y[r.b], d.y[r.a], d.t[r.b], d.t[r.a])
}

// senSession selects the median first and the interval later on the same
// selection state, for callers whose interval variance depends on the
// median (the summary's Hamed–Rao correction): the cuts and point orders
// evaluated for the median serve the interval's ranks.
type senSession struct {
	d   *senData
	res SenResult
}

// newSenSession selects the Sen median of t and y (no MedianT/MedianY).
// The caller calls close when err is nil.
func newSenSession(t, y []float64) (*senSession, error) {
	d, res, err := startSen(t, y, []int{0, len(t)})
	if err != nil {
		return nil, err
	}
	ks := d.medianRanks()
	sel := d.selectRanks(ks)
	res.setMedian(d, sel[0], sel[1])
	return &senSession{d: d, res: res}, nil
}

// median is the result holding the median (no interval).
func (s *senSession) median() SenResult { return s.res }

// withInterval returns the median with the interval at confidence
// (0 < confidence < 1) for the variance varS ≥ 0 (0: the Mann–Kendall
// variance of y), as SenSlopeWithVar gives it.
func (s *senSession) withInterval(confidence, varS float64) (SenResult, error) {
	if !(confidence > 0 && confidence < 1) || !(varS >= 0) {
		return SenResult{}, fmt.Errorf("the Sen interval needs 0 < confidence < 1 and Var(S) ≥ 0, got %v and %v", confidence, varS)
	}
	if varS == 0 { // as SenSlopeWithVar: the Mann–Kendall variance of y
		d := s.d
		d.sorted = grow(d.sorted, d.n)
		copy(d.sorted, d.y)
		d.sortFloats(d.sorted)
		varS = mkVarSSorted(d.sorted)
		if d.n > bigSen {
			d.sorted = nil
		}
	}
	res := s.res
	res.setIntervalRanks(confidence, varS)
	sel := s.d.selectRanks([]int64{res.LowerRank, res.UpperRank})
	res.setInterval(s.d, sel[0], sel[1])
	return res, nil
}

// close returns the selection state to the pool.
func (s *senSession) close() {
	if s.d != nil {
		s.d.release()
		s.d = nil
	}
}

// sortFloats sorts s ascending (no NaN; zeros of either sign are equal and
// may come in any order among themselves) with the pooled
// scratch: a least-significant-digit radix sort, 11 bits per pass, of the
// order-preserving integer image of each value (sign bit set for
// non-negative values, all bits flipped for negative ones). Passes whose
// digit is the same for every value are skipped. Short slices use
// slices.Sort; so do slices longer than bigSen (in place, no scratch of
// 16 bytes per value), followed by ordering a run of zeros −0 first as
// the radix sort leaves it.
func (d *senData) sortFloats(s []float64) {
	n := len(s)
	if n < 512 {
		slices.Sort(s)
		return
	}
	if n > bigSen {
		// no scratch: a comparison sort in place, then the zeros of a
		// run of ±0 ordered by sign as the radix sort leaves them
		slices.Sort(s)
		lo, _ := slices.BinarySearch(s, 0)
		neg := 0
		for i := lo; i < n && s[i] == 0; i++ {
			if math.Signbit(s[i]) {
				neg++
			}
		}
		for i := lo; i < n && s[i] == 0; i++ {
			s[i] = 0
			if i-lo < neg {
				s[i] = math.Copysign(0, -1)
			}
		}
		return
	}
	d.radixA = grow(d.radixA, n)
	d.radixB = grow(d.radixB, n)
	a, b := d.radixA, d.radixB
	const bits, digits = 11, 6 // 6 digits of 11 bits cover 64
	var count [digits][1 << bits]int
	for i, f := range s {
		u := math.Float64bits(f)
		u ^= uint64(int64(u)>>63) | 1<<63
		a[i] = u
		count[0][u&(1<<bits-1)]++
		count[1][u>>bits&(1<<bits-1)]++
		count[2][u>>(2*bits)&(1<<bits-1)]++
		count[3][u>>(3*bits)&(1<<bits-1)]++
		count[4][u>>(4*bits)&(1<<bits-1)]++
		count[5][u>>(5*bits)]++
	}
	for p := 0; p < digits; p++ {
		c := &count[p]
		sh := uint(p * bits)
		if c[a[0]>>sh&(1<<bits-1)] == n {
			continue // every value has this digit
		}
		pos := 0
		for v := range c {
			c[v], pos = pos, pos+c[v]
		}
		for _, u := range a {
			k := u >> sh & (1<<bits - 1)
			b[c[k]] = u
			c[k]++
		}
		a, b = b, a
	}
	for i, u := range a {
		s[i] = math.Float64frombits(u ^ ((u>>63 - 1) | 1<<63))
	}
}

// Median returns the median of v (mean of the two middle values for even
// length; NaN when empty) without modifying v.
func Median(v []float64) float64 {
	s := append([]float64(nil), v...)
	slices.Sort(s)
	return medianOfSorted(s)
}

// medianOfSorted is Median of an ascending slice.
func medianOfSorted(s []float64) float64 {
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
