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
// are exactly the inversions between the point orders at lo and at hi, so
// m of them can be drawn uniformly at random with a Fenwick tree; the
// sample order statistics around the target fraction (± 3√m) give new,
// narrower cuts. When at most max(3n, 8192) pairs are left they are
// enumerated (O(n log n + K)) and sorted. All comparisons are exact
// (exact.go), so the result is the k-th order statistic of the exact
// slopes of the given floating-point data; the returned value is that slope
// correctly rounded. Memory is O(n) throughout.
//
// The same machinery selects over the union of within-block pairs (blocks
// of consecutive points, e.g. seasons), used by the seasonal Sen slope.

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

const epsU = 1.0 / (1 << 53)

// slopeRef names the pair (a, b), a < b, of points in one block.
type slopeRef struct{ a, b int32 }

// cut is a position on the slope axis: below it lie the pairs with slope
// < v (incl false) or ≤ v (incl true); inf = −1 / +1 mean −∞ / +∞.
type cut struct {
	inf   int
	v     slopeRef
	incl  bool
	count int64
}

type senData struct {
	t, y   []float64
	x      []float64 // t − t[0], for floating-point keys
	blocks []int     // block b is points blocks[b]..blocks[b+1]-1
	n      int
	pairs  int64
	rng    *rand.Rand

	// scratch
	key, mag  []float64
	tmp       []int32
	items     []keyItem
	radixKeys []uint64
	radixIdx  []int32
	perms     map[permKey][]int32
	// resolved
	tieBlocks []tieBlock
	enumBase  int64
	enumList  []slopeRef
}

type tieBlock struct {
	v           slopeRef
	below, upto int64 // ranks below+1..upto have slope v
}

func newSenData(t, y []float64, blocks []int) *senData {
	n := len(t)
	d := &senData{t: t, y: y, blocks: blocks, n: n}
	d.x = make([]float64, n)
	for i := range t {
		d.x[i] = t[i] - t[0]
	}
	for b := 0; b+1 < len(blocks); b++ {
		m := int64(blocks[b+1] - blocks[b])
		d.pairs += m * (m - 1) / 2
	}
	d.rng = rand.New(rand.NewPCG(uint64(n)*0x9e3779b97f4a7c15+1, 12345))
	return d
}

// slopeF is the floating-point estimate of a slope (relative error ≤ 3u).
func (d *senData) slopeF(r slopeRef) float64 {
	return (d.y[r.b] - d.y[r.a]) / (d.t[r.b] - d.t[r.a])
}

// cmpSlopes compares two slopes exactly.
func (d *senData) cmpSlopes(p, q slopeRef, fp, fq float64) int {
	thr := 8*epsU*(math.Abs(fp)+math.Abs(fq)) + 1e-300
	if diff := fp - fq; diff > thr {
		return 1
	} else if diff < -thr {
		return -1
	}
	// sign(N_p·D_q − N_q·D_p)
	return signDiffProd(d.y[p.b], d.y[p.a], d.t[q.b], d.t[q.a], d.y[q.b], d.y[q.a], d.t[p.b], d.t[p.a])
}

// setKeys prepares the floating-point keys b_i(s) and their error scale.
func (d *senData) setKeys(v slopeRef) {
	if d.key == nil {
		d.key = make([]float64, d.n)
		d.mag = make([]float64, d.n)
	}
	s := d.slopeF(v)
	for i := 0; i < d.n; i++ {
		p := s * d.x[i]
		d.key[i] = d.y[i] - p
		d.mag[i] = math.Abs(d.y[i]) + math.Abs(p)
	}
}

// cmpPts compares b_i and b_j at the slope v exactly (keys must be set).
func (d *senData) cmpPts(i, j int32, v slopeRef) int {
	diff := d.key[i] - d.key[j]
	thr := 16*epsU*(d.mag[i]+d.mag[j]) + 1e-300
	if diff > thr {
		return 1
	} else if diff < -thr {
		return -1
	}
	// sign((y_i − y_j)·D − N·(t_i − t_j))
	return signDiffProd(d.y[i], d.y[j], d.t[v.b], d.t[v.a], d.y[v.b], d.y[v.a], d.t[i], d.t[j])
}

// evalCut orders every block by b(v) (ties by time ascending) into perm and
// returns the number of pairs with slope < v and ≤ v.
//
// The points are first sorted by their floating-point keys; keys that
// differ by more than G = 32u·max|mag| are in the exact order, so only
// chains of neighbours closer than G are re-sorted with the exact
// comparator. The pairs below the cut are then the inversions of the time
// indices in that order, counted by an integer merge sort.
func (d *senData) evalCut(v slopeRef, perm []int32) (less, lessEq int64) {
	d.setKeys(v)
	if cap(d.tmp) < d.n {
		d.tmp = make([]int32, d.n)
	}
	if cap(d.items) < d.n {
		d.items = make([]keyItem, d.n)
	}
	var magMax float64
	for _, m := range d.mag {
		magMax = max(magMax, m)
	}
	g := 32*epsU*magMax + 1e-300
	for b := 0; b+1 < len(d.blocks); b++ {
		lo, hi := d.blocks[b], d.blocks[b+1]
		items := d.items[lo:hi]
		for i := range items {
			items[i] = keyItem{d.key[lo+i], int32(lo + i)}
		}
		d.sortKeys(items)
		seg := perm[lo:hi]
		for i := range items {
			seg[i] = items[i].i
		}
		// exact re-sort of near-tie chains
		for i := 0; i < len(items); {
			j := i + 1
			for j < len(items) && items[j].k-items[j-1].k <= g {
				j++
			}
			if j-i > 1 {
				slices.SortFunc(seg[i:j], func(a, b int32) int {
					if c := d.cmpPts(a, b, v); c != 0 {
						return c
					}
					return int(a - b)
				})
				for k := i + 1; k < j; {
					// count exact ties
					l := k
					for l < j && d.cmpPts(seg[l-1], seg[l], v) == 0 {
						l++
					}
					if l > k {
						gsz := int64(l - k + 1)
						lessEq += gsz * (gsz - 1) / 2
						k = l
					} else {
						k++
					}
				}
			}
			i = j
		}
		less += countInversions32(seg, d.tmp[lo:hi])
	}
	lessEq += less
	return
}

type keyItem struct {
	k float64
	i int32
}

// sortKeys sorts items by k, equal keys by i (items arrive in i order): an
// LSD radix sort on the order-preserving bit pattern of k for long blocks
// (stable, so equal keys keep their index order), pdqsort otherwise.
func (d *senData) sortKeys(items []keyItem) {
	n := len(items)
	if n < 4096 {
		slices.SortFunc(items, func(a, b keyItem) int {
			if a.k < b.k {
				return -1
			} else if a.k > b.k {
				return 1
			}
			return int(a.i - b.i)
		})
		return
	}
	if cap(d.radixKeys) < 2*n {
		d.radixKeys = make([]uint64, 2*n)
		d.radixIdx = make([]int32, 2*n)
	}
	ka, kb := d.radixKeys[:n], d.radixKeys[n:2*n]
	ia, ib := d.radixIdx[:n], d.radixIdx[n:2*n]
	for j, it := range items {
		u := math.Float64bits(it.k + 0) // +0 turns −0 into +0
		if u>>63 == 1 {
			u = ^u
		} else {
			u |= 1 << 63
		}
		ka[j], ia[j] = u, it.i
	}
	var count [1 << 16]int
	for shift := uint(0); shift < 64; shift += 16 {
		clear(count[:])
		for _, u := range ka {
			count[(u>>shift)&0xffff]++
		}
		if count[(ka[0]>>shift)&0xffff] == n {
			continue // every key has this digit
		}
		sum := 0
		for b, c := range count {
			count[b] = sum
			sum += c
		}
		for j, u := range ka {
			b := (u >> shift) & 0xffff
			kb[count[b]], ib[count[b]] = u, ia[j]
			count[b]++
		}
		ka, kb = kb, ka
		ia, ib = ib, ia
	}
	for j := range items {
		u := ka[j]
		if u>>63 == 1 {
			u &^= 1 << 63
		} else {
			u = ^u
		}
		items[j] = keyItem{math.Float64frombits(u), ia[j]}
	}
}

// countInversions32 returns the number of pairs i < j with a[i] > a[j]
// without modifying a (tmp is scratch of the same length).
func countInversions32(a, tmp []int32) int64 {
	w := make([]int32, len(a))
	copy(w, a)
	return countInversions(w, tmp)
}

// permFor fills perm with the point order that realises cut c: pair a < b
// is below c exactly when b precedes a in perm.
func (d *senData) permFor(c cut, perm []int32) {
	switch c.inf {
	case -1:
		for i := range perm {
			perm[i] = int32(i)
		}
		return
	case 1:
		for b := 0; b+1 < len(d.blocks); b++ {
			lo, hi := d.blocks[b], d.blocks[b+1]
			for i := lo; i < hi; i++ {
				perm[i] = int32(hi - 1 - (i - lo))
			}
		}
		return
	}
	k := permKey{c.v, c.incl}
	if p, ok := d.perms[k]; ok {
		copy(perm, p)
		return
	}
	d.evalCut(c.v, perm)
	d.remember(c.v, perm)
	copy(perm, d.perms[k])
}

type permKey struct {
	v    slopeRef
	incl bool
}

// remember caches the orders realising the cuts (v, <) and (v, ≤), given
// the order from evalCut (keys still set for v). At most a few orders are
// kept (O(n) memory).
func (d *senData) remember(v slopeRef, perm []int32) {
	if d.perms == nil || len(d.perms) >= 8 {
		d.perms = map[permKey][]int32{}
	}
	ex := append([]int32(nil), perm...)
	in := append([]int32(nil), perm...)
	// equal keys: later time first
	for i := 0; i < len(in); {
		j := i + 1
		for j < len(in) && !d.isBlockStart(j) && d.cmpPts(in[j-1], in[j], v) == 0 {
			j++
		}
		slices.Reverse(in[i:j])
		i = j
	}
	d.perms[permKey{v, false}] = ex
	d.perms[permKey{v, true}] = in
}

func (d *senData) isBlockStart(i int) bool {
	_, found := slices.BinarySearch(d.blocks, i)
	return found
}

// fenwick is a binary indexed tree of counts over 0..n−1.
type fenwick []int32

func (f fenwick) add(i int) {
	for i++; i < len(f); i += i & -i {
		f[i]++
	}
}

// prefix returns the count of values ≤ i.
func (f fenwick) prefix(i int) int {
	s := 0
	for i++; i > 0; i -= i & -i {
		s += int(f[i])
	}
	return s
}

// kth returns the smallest value v with prefix(v) ≥ k (k ≥ 1).
func (f fenwick) kth(k int) int {
	pos := 0
	step := 1
	for step*2 < len(f) {
		step *= 2
	}
	for ; step > 0; step /= 2 {
		if pos+step < len(f) && int(f[pos+step]) < k {
			pos += step
			k -= int(f[pos])
		}
	}
	return pos // value index = pos (0-based)
}

// interval builds seq (positions in the hi order, listed in lo order) and
// the hi permutation; inversions of seq are the pairs between the cuts.
func (d *senData) interval(lo, hi cut) (seq, pHi []int32) {
	pLo := make([]int32, d.n)
	pHi = make([]int32, d.n)
	d.permFor(lo, pLo)
	d.permFor(hi, pHi)
	pos := make([]int32, d.n)
	for w, p := range pHi {
		pos[p] = int32(w)
	}
	seq = pLo // reuse
	for q, p := range pLo {
		seq[q] = pos[p]
	}
	return seq, pHi
}

func pairOf(a, b int32) slopeRef {
	if a > b {
		a, b = b, a
	}
	return slopeRef{a, b}
}

// sampleBetween draws m pairs uniformly (with replacement) from the T pairs
// between the cuts.
func (d *senData) sampleBetween(lo, hi cut, m int) []slopeRef {
	seq, pHi := d.interval(lo, hi)
	n := d.n
	f := make(fenwick, n+1)
	cum := make([]int64, n) // cum[q] = inversions ending at positions ≤ q
	var total int64
	for q, v := range seq {
		c := q - f.prefix(int(v))
		total += int64(c)
		cum[q] = total
		f.add(int(v))
	}
	if total == 0 {
		return nil
	}
	draws := make([]int64, m)
	for i := range draws {
		draws[i] = d.rng.Int64N(total)
	}
	slices.Sort(draws)
	for i := range f {
		f[i] = 0
	}
	out := make([]slopeRef, 0, m)
	q := 0
	var prev int64
	for _, r := range draws {
		for cum[q] <= r {
			f.add(int(seq[q]))
			prev = cum[q]
			q++
		}
		o := int(r - prev) // 0-based among earlier larger values
		target := f.prefix(int(seq[q])) + o + 1
		w := f.kth(target)
		out = append(out, pairOf(pHi[w], pHi[seq[q]]))
	}
	return out
}

// enumerateBetween lists every pair between the cuts.
func (d *senData) enumerateBetween(lo, hi cut, capHint int64) []slopeRef {
	seq, pHi := d.interval(lo, hi)
	out := make([]slopeRef, 0, capHint)
	tmp := make([]int32, len(seq))
	var rec func(a, t []int32)
	rec = func(a, t []int32) {
		n := len(a)
		if n < 2 {
			return
		}
		mid := n / 2
		rec(a[:mid], t[:mid])
		rec(a[mid:], t[mid:])
		i, j, k := 0, mid, 0
		for i < mid && j < n {
			if a[i] < a[j] {
				t[k] = a[i]
				i++
			} else {
				for l := i; l < mid; l++ {
					out = append(out, pairOf(pHi[a[l]], pHi[a[j]]))
				}
				t[k] = a[j]
				j++
			}
			k++
		}
		k += copy(t[k:], a[i:mid])
		copy(t[k:], a[j:])
		copy(a, t[:n])
	}
	rec(seq, tmp)
	return out
}

type slopeItem struct {
	f float64
	r slopeRef
}

// sortSlopes sorts pairs by exact slope: by the floating-point estimates
// first, then runs of neighbours too close to call (gap ≤ 8u(|f_a| + |f_b|);
// estimates carry at most 3u relative error and their signs are exact, so
// neighbours farther apart are in the exact order, and so is every pair
// separated by such a gap) are re-sorted with the exact comparator.
func (d *senData) sortSlopes(ps []slopeRef) {
	it := d.floatSortSlopes(ps)
	for i := 0; i < len(it); {
		j := i + 1
		for j < len(it) && it[j].f-it[j-1].f <= 8*epsU*(math.Abs(it[j].f)+math.Abs(it[j-1].f))+1e-300 {
			j++
		}
		if j-i > 1 {
			slices.SortFunc(it[i:j], func(a, b slopeItem) int { return d.cmpSlopes(a.r, b.r, a.f, b.f) })
		}
		i = j
	}
	for i := range it {
		ps[i] = it[i].r
	}
}

// selectItem partially orders it by f (quickselect) and returns the
// element of rank k (0-based).
func selectItem(it []slopeItem, k int) slopeItem {
	lo, hi := 0, len(it)-1
	x := uint64(0x9e3779b97f4a7c15)
	for lo < hi {
		x ^= x << 13
		x ^= x >> 7
		x ^= x << 17
		p := it[lo+int(x%uint64(hi-lo+1))].f
		i, j := lo, hi
		for i <= j {
			for it[i].f < p {
				i++
			}
			for it[j].f > p {
				j--
			}
			if i <= j {
				it[i], it[j] = it[j], it[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return it[k]
		}
	}
	return it[k]
}

// floatSortSlopes sorts pairs by their floating-point slope estimates only
// (enough for choosing sample quantiles, whose exact values are then
// evaluated exactly).
func (d *senData) floatSortSlopes(ps []slopeRef) []slopeItem {
	it := make([]slopeItem, len(ps))
	for i, p := range ps {
		it[i] = slopeItem{d.slopeF(p), p}
	}
	slices.SortFunc(it, func(a, b slopeItem) int {
		if a.f < b.f {
			return -1
		} else if a.f > b.f {
			return 1
		}
		return 0
	})
	for i := range it {
		ps[i] = it[i].r
	}
	return it
}

// selectRank returns a pair whose slope is the k-th smallest (1 ≤ k ≤ pairs).
func (d *senData) selectRank(k int64, cache *[]cut) slopeRef {
	for _, tb := range d.tieBlocks {
		if tb.below < k && k <= tb.upto {
			return tb.v
		}
	}
	if k > d.enumBase && k <= d.enumBase+int64(len(d.enumList)) {
		return d.enumList[k-d.enumBase-1]
	}
	lo := cut{inf: -1, count: 0}
	hi := cut{inf: 1, count: d.pairs}
	for _, c := range *cache {
		if c.count < k && c.count > lo.count {
			lo = c
		}
		if c.count >= k && c.count < hi.count {
			hi = c
		}
	}
	limit := int64(max(3*d.n, 8192))
	mSample := max(d.n, 4096)
	perm := make([]int32, d.n)
	var found *slopeRef
	try := func(v slopeRef) {
		less, lessEq := d.evalCut(v, perm)
		d.remember(v, perm)
		d.tieBlocks = append(d.tieBlocks, tieBlock{v, less, lessEq})
		*cache = append(*cache, cut{v: v, incl: false, count: less}, cut{v: v, incl: true, count: lessEq})
		switch {
		case less < k && k <= lessEq:
			found = &v
		case lessEq < k:
			if lessEq > lo.count || lo.inf != 0 {
				lo = cut{v: v, incl: true, count: lessEq}
			}
		default:
			if less < hi.count || hi.inf != 0 {
				hi = cut{v: v, incl: false, count: less}
			}
		}
	}
	for found == nil {
		T := hi.count - lo.count
		if T <= limit {
			list := d.enumerateBetween(lo, hi, T)
			d.sortSlopes(list)
			d.enumBase, d.enumList = lo.count, list
			return list[k-lo.count-1]
		}
		m := int(min(int64(mSample), T))
		sample := d.sampleBetween(lo, hi, m)
		it := make([]slopeItem, len(sample))
		for i, p := range sample {
			it[i] = slopeItem{d.slopeF(p), p}
		}
		m = len(it)
		f := float64(k-lo.count) / float64(T)
		idx := f*float64(m) - 0.5
		delta := 3*math.Sqrt(float64(m)) + 1
		li := int(math.Floor(idx - delta))
		ui := int(math.Ceil(idx + delta))
		// Only two sample quantiles are needed (by floating-point slope; the
		// chosen pairs are then evaluated exactly), so select, don't sort.
		tried := false
		if li >= 0 && li < m {
			try(selectItem(it, li).r)
			tried = true
		}
		if found == nil && ui < m && ui >= 0 {
			try(selectItem(it, ui).r)
			tried = true
		}
		if !tried {
			try(selectItem(it, m/2).r)
		}
	}
	return *found
}

// SenMedian returns the Theil–Sen slope (median of pairwise slopes, in y per
// unit of t) of a series sorted by t with distinct t (n ≥ 2).
func SenMedian(t, y []float64) (float64, error) {
	r, err := SenSlope(t, y, 0)
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
// values for even n).
func SenSlope(t, y []float64, confidence float64) (SenResult, error) {
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, 0)
}

// SenSlopeWithVar is SenSlope with the Mann–Kendall Var(S) of y supplied by
// a caller that has computed it already (0: compute it here).
func SenSlopeWithVar(t, y []float64, confidence, varS float64) (SenResult, error) {
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, varS)
}

func senSlopeBlocks(t, y []float64, blocks []int, confidence, varS float64) (SenResult, error) {
	n := len(t)
	if n != len(y) {
		return SenResult{}, errors.New("t and y differ in length")
	}
	d := newSenData(t, y, blocks)
	res := SenResult{N: n, Pairs: d.pairs}
	if d.pairs == 0 {
		return res, errors.New("the Sen slope needs at least 2 values")
	}
	var cache []cut
	val := func(r slopeRef) float64 { return exactQuotient(y[r.b], y[r.a], t[r.b], t[r.a]) }
	N := d.pairs
	if N%2 == 1 {
		res.Slope = val(d.selectRank((N+1)/2, &cache))
	} else {
		a := val(d.selectRank(N/2, &cache))
		b := val(d.selectRank(N/2+1, &cache))
		res.Slope = (a + b) / 2
	}
	res.MedianT = Median(t)
	res.MedianY = Median(y)
	if confidence > 0 && confidence < 1 {
		res.Confidence = confidence
		if varS == 0 && len(blocks) == 2 {
			mk, err := MannKendall(y)
			if err != nil {
				return res, err
			}
			varS = mk.VarS
		}
		res.VarS = varS
		z := distuv.UnitNormal.Quantile(1 - (1-confidence)/2)
		c := z * math.Sqrt(varS)
		m1 := int64(math.RoundToEven((float64(N) - c) / 2))
		m2 := int64(math.RoundToEven((float64(N) + c) / 2))
		res.LowerRank = min(max(m1, 1), N)
		res.UpperRank = min(max(m2+1, 1), N)
		res.Lower = val(d.selectRank(res.LowerRank, &cache))
		res.Upper = val(d.selectRank(res.UpperRank, &cache))
	}
	return res, nil
}

// Median returns the median of v (mean of the two middle values for even
// length; NaN when empty) without modifying v.
func Median(v []float64) float64 {
	s := append([]float64(nil), v...)
	slices.Sort(s)
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
