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
// m of them can be drawn uniformly at random with a Fenwick tree (from all
// pairs, the first round draws pairs directly); the sample order statistics
// around the target fraction (± 3√m) give new, narrower cuts. When at most
// max(8n, 8192) pairs are left they are enumerated (O(n log n + K)) and the
// target is found by selection on the floating-point slopes followed by an
// exact sort of the few slopes too close to it to call.
//
// Several ranks are selected together (the median's two middle ranks and
// the interval's two ranks): one sampling round serves every target whose
// bracket is the same, and targets whose sample windows overlap share their
// cuts, so the usual cost is one direct sample, two cuts, one Fenwick
// sample, two cuts per distinct target and one enumeration per target.
//
// All comparisons are exact (exact.go), so the result is the k-th order
// statistic of the exact slopes of the given floating-point data; the
// returned value is that slope correctly rounded. Random sampling affects
// only the running time. Memory is O(n) throughout (samples and enumerated
// lists hold at most 8n pairs); the scratch buffers are pooled between calls.
//
// The same machinery selects over the union of within-block pairs (blocks
// of consecutive points, e.g. seasons), used by the seasonal Sen slope.

import (
	"cmp"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

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

	// tuning (fields so that tests can force many rounds)
	limit  int64 // enumerate when at most this many pairs are left
	mFirst int   // sample size when drawing from all pairs
	mNext  int   // sample size when drawing between two cuts

	// scratch
	sorted    []float64 // a sorted copy of y (or t) for the medians and ties
	key, mag  []float64
	tmp, work []int32
	items     []keyItem
	perms     map[slopeRef][]int32 // order at (v, <) for evaluated cuts
	permFree  [][]int32            // buffers of dropped orders, for reuse
	perm      []int32
	ivLo      []int32
	ivHi      []int32
	ivPos     []int32
	enumTmp   []int32
	fen       fenwick
	cum       []int64
	spacing   []float64
	draws     []int64
	sample    []slopeItem
	enum      []slopeItem
	pcg       rand.PCG
	// evaluated cuts
	cuts      []cut
	tieBlocks []tieBlock
}

type tieBlock struct {
	v           slopeRef
	below, upto int64 // ranks below+1..upto have slope v
}

// senPool keeps the selection's scratch buffers between calls (a summary
// run computes one Sen slope per series on each worker).
var senPool = sync.Pool{New: func() any { return new(senData) }}

// grow returns s resized to n elements, reusing its storage when it is
// large enough (contents are not preserved).
func grow[T any](s []T, n int) []T { return slices.Grow(s[:0], n)[:n] }

func newSenData(t, y []float64, blocks []int) *senData {
	n := len(t)
	d := senPool.Get().(*senData)
	d.t, d.y, d.blocks, d.n, d.pairs = t, y, blocks, n, 0
	d.x = grow(d.x, n)
	for i := range t {
		d.x[i] = t[i] - t[0]
	}
	for b := 0; b+1 < len(blocks); b++ {
		m := int64(blocks[b+1] - blocks[b])
		d.pairs += m * (m - 1) / 2
	}
	d.pcg.Seed(uint64(n)*0x9e3779b97f4a7c15+1, 12345)
	if d.rng == nil {
		d.rng = rand.New(&d.pcg)
	}
	d.limit = int64(max(8*n, 8192))
	d.mFirst = max(8*n, 4096)
	d.mNext = max(4*n, 4096)
	d.dropPerms()
	d.cuts, d.tieBlocks = d.cuts[:0], d.tieBlocks[:0]
	return d
}

// release returns d's buffers to the pool; d must not be used afterwards.
func (d *senData) release() {
	d.t, d.y, d.blocks = nil, nil, nil
	d.dropPerms()
	senPool.Put(d)
}

// dropPerms empties the order cache, keeping its buffers.
func (d *senData) dropPerms() {
	for k, p := range d.perms {
		d.permFree = append(d.permFree, p)
		delete(d.perms, k)
	}
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
	d.key = grow(d.key, d.n)
	d.mag = grow(d.mag, d.n)
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
// The points, in time order, are merge-sorted by their floating-point keys,
// counting inversions on the way (pairs a < b with key_b < key_a). Keys
// that differ by more than G = 32u·max|mag| are in the exact order, so only
// chains of neighbours closer than G can be misordered: they are re-sorted
// with the exact comparator and the count corrected by the difference of
// the chain's inversions after and before.
func (d *senData) evalCut(v slopeRef, perm []int32) (less, lessEq int64) {
	d.setKeys(v)
	d.work = grow(d.work, d.n)
	d.tmp = grow(d.tmp, d.n)
	d.items = grow(d.items, 2*d.n)
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
		less += mergeCountKeys(items, d.items[d.n+lo:d.n+hi])
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
				chain := seg[i:j]
				w := d.work[:len(chain)]
				copy(w, chain)
				less -= countInversions(w, d.tmp)
				slices.SortFunc(chain, func(a, b int32) int {
					if c := d.cmpPts(a, b, v); c != 0 {
						return c
					}
					return int(a - b)
				})
				copy(w, chain)
				less += countInversions(w, d.tmp)
				for k := 1; k < len(chain); {
					// count exact ties
					l := k
					for l < len(chain) && d.cmpPts(chain[l-1], chain[l], v) == 0 {
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
	}
	lessEq += less
	return
}

// mergeCountKeys stably sorts a by k (merge sort, tmp as scratch of the same
// length) and returns the number of pairs i < j with a[i].k > a[j].k. It is
// countInversions for key–index items, written out because a generic
// version with a key function measured twice as slow.
func mergeCountKeys(a, tmp []keyItem) int64 {
	n := len(a)
	var inv int64
	const run = 16
	for lo := 0; lo < n; lo += run {
		hi := min(lo+run, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1].k > v.k {
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
				if src[i].k <= src[j].k {
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
	if n > 0 && &src[0] != &a[0] {
		copy(a, src)
	}
	return inv
}

type keyItem struct {
	k float64
	i int32
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
	if p, ok := d.perms[c.v]; ok {
		copy(perm, p)
	} else {
		d.evalCut(c.v, perm)
		d.remember(c.v, perm)
	}
	if !c.incl {
		return
	}
	// (v, ≤): within each run of exactly equal keys, later time first.
	d.setKeys(c.v)
	for b := 0; b+1 < len(d.blocks); b++ {
		seg := perm[d.blocks[b]:d.blocks[b+1]]
		for i := 0; i < len(seg); {
			j := i + 1
			for j < len(seg) && d.cmpPts(seg[j-1], seg[j], c.v) == 0 {
				j++
			}
			slices.Reverse(seg[i:j])
			i = j
		}
	}
}

// remember caches the order realising the cut (v, <), as left by evalCut.
// At most a few orders are kept (O(n) memory).
func (d *senData) remember(v slopeRef, perm []int32) {
	if d.perms == nil {
		d.perms = map[slopeRef][]int32{}
	}
	if len(d.perms) >= 12 {
		d.dropPerms()
	}
	var buf []int32
	if k := len(d.permFree); k > 0 {
		buf, d.permFree = d.permFree[k-1], d.permFree[:k-1]
	}
	buf = grow(buf, d.n)
	copy(buf, perm)
	d.perms[v] = buf
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
	d.ivLo = grow(d.ivLo, d.n)
	d.ivHi = grow(d.ivHi, d.n)
	pLo, pHi := d.ivLo, d.ivHi
	d.permFor(lo, pLo)
	d.permFor(hi, pHi)
	d.ivPos = grow(d.ivPos, d.n)
	pos := d.ivPos
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

// sampleBetween draws m pairs uniformly (with replacement) from the pairs
// between the cuts, with their floating-point slopes.
func (d *senData) sampleBetween(lo, hi cut, m int) []slopeItem {
	seq, pHi := d.interval(lo, hi)
	n := d.n
	d.fen = grow(d.fen, n+1)
	f := d.fen
	clear(f)
	d.cum = grow(d.cum, n)
	cum := d.cum // cum[q] = inversions ending at positions ≤ q
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
	draws := d.sortedDraws(m, total)
	clear(f)
	out := grow(d.sample, m)[:0]
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
		p := pairOf(pHi[w], pHi[seq[q]])
		out = append(out, slopeItem{d.slopeF(p), p})
	}
	d.sample = out
	return out
}

// sortedDraws returns m integers drawn uniformly from 0..total−1 with
// replacement, in ascending order, in O(m): the order statistics of m
// uniforms are the normalised partial sums of m+1 exponential spacings.
func (d *senData) sortedDraws(m int, total int64) []int64 {
	d.spacing = grow(d.spacing, m+1)
	sp := d.spacing
	var sum float64
	for i := range sp {
		sum += d.rng.ExpFloat64()
		sp[i] = sum
	}
	d.draws = grow(d.draws, m)
	draws := d.draws
	scale := float64(total) / sum
	for i := range draws {
		draws[i] = min(int64(sp[i]*scale), total-1)
	}
	return draws
}

// sampleAll draws m pairs uniformly (with replacement) from all
// within-block pairs, with their floating-point slopes.
func (d *senData) sampleAll(m int) []slopeItem {
	nb := len(d.blocks) - 1
	var cum []int64
	if nb > 1 {
		cum = make([]int64, nb)
		var c int64
		for b := 0; b < nb; b++ {
			sz := int64(d.blocks[b+1] - d.blocks[b])
			c += sz * (sz - 1) / 2
			cum[b] = c
		}
	}
	out := grow(d.sample, m)[:0]
	for len(out) < m {
		b := 0
		if nb > 1 {
			r := d.rng.Int64N(d.pairs)
			b, _ = slices.BinarySearch(cum, r+1)
		}
		lo, sz := d.blocks[b], d.blocks[b+1]-d.blocks[b]
		i, j := d.rng.IntN(sz), d.rng.IntN(sz)
		if i == j {
			continue
		}
		p := pairOf(int32(lo+i), int32(lo+j))
		out = append(out, slopeItem{d.slopeF(p), p})
	}
	d.sample = out
	return out
}

// enumerateBetween lists every pair between the cuts, with its
// floating-point slope.
func (d *senData) enumerateBetween(lo, hi cut, capHint int64) []slopeItem {
	seq, pHi := d.interval(lo, hi)
	out := grow(d.enum, int(capHint))[:0]
	d.enumTmp = grow(d.enumTmp, len(seq))
	tmp := d.enumTmp
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
					p := pairOf(pHi[a[l]], pHi[a[j]])
					out = append(out, slopeItem{d.slopeF(p), p})
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
	d.enum = out
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
		for j < len(it) && it[j].f-it[j-1].f <= slopeTol(it[j].f, it[j-1].f) {
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

// selectItem partially orders it by f and returns the element of rank k
// (0-based): afterwards it[:k] ≤ it[k] ≤ it[k+1:] by f. It is Floyd and
// Rivest's selection (CACM 18(3):165–172, 1975, algorithm SELECT): on a long
// range it first selects within a small sample around the expected
// position, so that the partition element lands next to rank k and the
// range shrinks to a few √n elements after one pass (about 1.5n comparisons
// for a median, against about 3.4n for quickselect with random pivots).
func selectItem(it []slopeItem, k int) slopeItem {
	floydRivest(it, 0, len(it)-1, k)
	return it[k]
}

func floydRivest(a []slopeItem, left, right, k int) {
	for right > left {
		if right-left > 600 {
			n := float64(right - left + 1)
			i := float64(k - left + 1)
			z := math.Log(n)
			s := 0.5 * math.Exp(2*z/3)
			sd := 0.5 * math.Sqrt(z*s*(n-s)/n)
			if i < n/2 {
				sd = -sd
			}
			newLeft := max(left, int(float64(k)-i*s/n+sd))
			newRight := min(right, int(float64(k)+(n-i)*s/n+sd))
			floydRivest(a, newLeft, newRight, k)
		}
		t := a[k].f
		i, j := left, right
		a[left], a[k] = a[k], a[left]
		if a[right].f > t {
			a[right], a[left] = a[left], a[right]
		}
		for i < j {
			a[i], a[j] = a[j], a[i]
			i++
			j--
			for a[i].f < t {
				i++
			}
			for a[j].f > t {
				j--
			}
		}
		if a[left].f == t {
			a[left], a[j] = a[j], a[left]
		} else {
			j++
			a[j], a[right] = a[right], a[j]
		}
		if j <= k {
			left = j + 1
		}
		if k <= j {
			right = j - 1
		}
	}
}

// selectMany partially orders it by f so that it[k] is the element of rank
// k (0-based) for every k in ks (ascending, distinct), in O(m log len(ks)).
func selectMany(it []slopeItem, ks []int) {
	if len(ks) == 0 {
		return
	}
	mid := len(ks) / 2
	k := ks[mid]
	selectItem(it, k) // it[:k] ≤ it[k] ≤ it[k+1:]
	selectMany(it[:k], ks[:mid])
	right := ks[mid+1:]
	shifted := make([]int, len(right))
	for i, r := range right {
		shifted[i] = r - k - 1
	}
	selectMany(it[k+1:], shifted)
}

// floatSortSlopes sorts pairs by their floating-point slope estimates only
// (enough for choosing sample quantiles, whose exact values are then
// evaluated exactly).
func (d *senData) floatSortSlopes(ps []slopeRef) []slopeItem {
	it := make([]slopeItem, len(ps))
	for i, p := range ps {
		it[i] = slopeItem{d.slopeF(p), p}
	}
	slices.SortFunc(it, bySlopeF)
	for i := range it {
		ps[i] = it[i].r
	}
	return it
}

// bySlopeF orders items by their floating-point slope estimates.
func bySlopeF(a, b slopeItem) int { return cmp.Compare(a.f, b.f) }

// slopeTol is the gap above which two floating-point slope estimates are
// in the exact order (each carries at most 3u relative error and its sign is
// exact), and so is every pair of estimates separated by such a gap.
func slopeTol(a, b float64) float64 {
	return 8*epsU*(math.Abs(a)+math.Abs(b)) + 1e-300
}

// exactSelect returns the pair of exact rank r (0-based) among it: the
// rank-r element by floating-point slope, then an exact sort of the chain
// of estimates too close to it to call. it is reordered.
func (d *senData) exactSelect(it []slopeItem, r int) slopeRef {
	fx := selectItem(it, r).f
	delta := 64*epsU*math.Abs(fx) + 1e-300
	var near []slopeItem
	for {
		lowEdge, highEdge := fx-delta, fx+delta
		near = near[:0]
		below, above := 0, 0
		for _, e := range it {
			switch {
			case e.f < lowEdge:
				below++
			case e.f > highEdge:
				above++
			default:
				near = append(near, e)
			}
		}
		slices.SortFunc(near, bySlopeF)
		pos := r - below // 0 ≤ pos < len(near)
		cs, ce := pos, pos+1
		for cs > 0 && near[cs].f-near[cs-1].f <= slopeTol(near[cs].f, near[cs-1].f) {
			cs--
		}
		for ce < len(near) && near[ce].f-near[ce-1].f <= slopeTol(near[ce].f, near[ce-1].f) {
			ce++
		}
		// The chain must be separated from the estimates outside the window.
		lowOK := cs > 0 || below == 0 || near[0].f-lowEdge > slopeTol(near[0].f, lowEdge)
		highOK := ce < len(near) || above == 0 || highEdge-near[len(near)-1].f > slopeTol(near[len(near)-1].f, highEdge)
		if lowOK && highOK {
			chain := near[cs:ce]
			if len(chain) > 1 {
				slices.SortFunc(chain, func(a, b slopeItem) int { return d.cmpSlopes(a.r, b.r, a.f, b.f) })
			}
			return near[pos].r
		}
		delta *= 2
	}
}

// knownRank reports a pair of rank k when an evaluated cut has it.
func (d *senData) knownRank(k int64) (slopeRef, bool) {
	for _, tb := range d.tieBlocks {
		if tb.below < k && k <= tb.upto {
			return tb.v, true
		}
	}
	return slopeRef{}, false
}

// bracket returns the tightest evaluated cuts lo, hi with
// lo.count < k ≤ hi.count.
func (d *senData) bracket(k int64) (lo, hi cut) {
	lo = cut{inf: -1, count: 0}
	hi = cut{inf: 1, count: d.pairs}
	for _, c := range d.cuts {
		if c.count < k && c.count > lo.count {
			lo = c
		}
		if c.count >= k && c.count < hi.count {
			hi = c
		}
	}
	return
}

// tryCut evaluates the cut at the slope of v (once) and records it.
func (d *senData) tryCut(v slopeRef, perm []int32) {
	for _, tb := range d.tieBlocks {
		if tb.v == v {
			return
		}
	}
	less, lessEq := d.evalCut(v, perm)
	d.remember(v, perm)
	d.tieBlocks = append(d.tieBlocks, tieBlock{v, less, lessEq})
	d.cuts = append(d.cuts, cut{v: v, incl: false, count: less}, cut{v: v, incl: true, count: lessEq})
}

// selectRanks returns, for each k in ks (1 ≤ k ≤ pairs), a pair whose
// slope is the k-th smallest. Cuts evaluated here are kept for later calls.
func (d *senData) selectRanks(ks []int64) []slopeRef {
	out := make([]slopeRef, len(ks))
	pending := make([]int, len(ks))
	for i := range pending {
		pending[i] = i
	}
	slices.SortFunc(pending, func(a, b int) int { return cmp.Compare(ks[a], ks[b]) })
	d.perm = grow(d.perm, d.n)
	perm := d.perm
	for len(pending) > 0 {
		rest := pending[:0]
		for _, i := range pending {
			if v, ok := d.knownRank(ks[i]); ok {
				out[i] = v
			} else {
				rest = append(rest, i)
			}
		}
		pending = rest
		if len(pending) == 0 {
			break
		}
		// The targets sharing the first pending target's bracket.
		lo, hi := d.bracket(ks[pending[0]])
		var group, others []int
		for _, i := range pending {
			if l, h := d.bracket(ks[i]); l.count == lo.count && h.count == hi.count {
				group = append(group, i)
			} else {
				others = append(others, i)
			}
		}
		T := hi.count - lo.count
		if T <= d.limit {
			items := d.enumerateBetween(lo, hi, T)
			for _, i := range group {
				out[i] = d.exactSelect(items, int(ks[i]-lo.count-1))
			}
			pending = others
			continue
		}
		var it []slopeItem
		if lo.inf == -1 && hi.inf == 1 {
			it = d.sampleAll(int(min(int64(d.mFirst), T)))
		} else {
			// enough draws that the windows (± 3√m of m) are expected to
			// leave at most 3/4 of limit pairs: 6T/√m ≤ 3·limit/4
			r := 8 * float64(T) / float64(d.limit)
			m := int(min(float64(d.mNext), max(1024, r*r)))
			it = d.sampleBetween(lo, hi, int(min(int64(m), T)))
		}
		m := len(it)
		// Sample windows around each target (group is in rank order);
		// overlapping windows share their cuts.
		delta := 3*math.Sqrt(float64(m)) + 1
		type span struct{ li, ui int }
		var spans []span
		for _, i := range group {
			idx := float64(ks[i]-lo.count)/float64(T)*float64(m) - 0.5
			li, ui := int(math.Floor(idx-delta)), int(math.Ceil(idx+delta))
			if len(spans) > 0 && li <= spans[len(spans)-1].ui {
				spans[len(spans)-1].ui = max(spans[len(spans)-1].ui, ui)
			} else {
				spans = append(spans, span{li, ui})
			}
		}
		// The sample order statistics bounding each window (by
		// floating-point slope; the chosen pairs are then evaluated
		// exactly). A window covering the whole sample gets its median.
		var at []int
		for _, sp := range spans {
			n0 := len(at)
			if sp.li >= 0 && sp.li < m {
				at = append(at, sp.li)
			}
			if sp.ui >= 0 && sp.ui < m {
				at = append(at, sp.ui)
			}
			if len(at) == n0 {
				at = append(at, m/2)
			}
		}
		slices.Sort(at)
		at = slices.Compact(at)
		selectMany(it, at)
		for _, j := range at {
			d.tryCut(it[j].r, perm)
		}
	}
	return out
}

// selectRank returns a pair whose slope is the k-th smallest.
func (d *senData) selectRank(k int64) slopeRef {
	return d.selectRanks([]int64{k})[0]
}

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
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, 0, true)
}

// SenSlopeWithVar is SenSlope with the Mann–Kendall Var(S) of y supplied by
// a caller that has computed it already (0: compute it here).
func SenSlopeWithVar(t, y []float64, confidence, varS float64) (SenResult, error) {
	return senSlopeBlocks(t, y, []int{0, len(t)}, confidence, varS, true)
}

// senSlopeBlocks is the Sen slope over the within-block pairs; with medians
// set it also fills MedianT and MedianY (callers wanting only the slope
// skip their sorts).
func senSlopeBlocks(t, y []float64, blocks []int, confidence, varS float64, medians bool) (SenResult, error) {
	n := len(t)
	if n != len(y) {
		return SenResult{}, errors.New("t and y differ in length")
	}
	d := newSenData(t, y, blocks)
	defer d.release()
	res := SenResult{N: n, Pairs: d.pairs}
	if d.pairs == 0 {
		return res, errors.New("the Sen slope needs at least 2 values")
	}
	val := func(r slopeRef) float64 { return exactQuotient(y[r.b], y[r.a], t[r.b], t[r.a]) }
	N := d.pairs
	ks := []int64{(N + 1) / 2, N/2 + 1} // the middle rank(s)
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
			slices.Sort(d.sorted)
			res.MedianT = medianOfSorted(d.sorted)
		}
	}
	var ys []float64 // y sorted, when the median or Var(S) needs it
	if medians || (interval && varS == 0 && len(blocks) == 2) {
		ys = d.sorted
		copy(ys, y)
		slices.Sort(ys)
	}
	if medians {
		res.MedianY = medianOfSorted(ys)
	}
	if interval {
		res.Confidence = confidence
		if varS == 0 && len(blocks) == 2 {
			varS = mkVarSSorted(ys)
		}
		res.VarS = varS
		z := distuv.UnitNormal.Quantile(1 - (1-confidence)/2)
		c := z * math.Sqrt(varS)
		m1 := int64(math.RoundToEven((float64(N) - c) / 2))
		m2 := int64(math.RoundToEven((float64(N) + c) / 2))
		res.LowerRank = min(max(m1, 1), N)
		res.UpperRank = min(max(m2+1, 1), N)
		ks = append(ks, res.LowerRank, res.UpperRank)
	}
	sel := d.selectRanks(ks)
	if N%2 == 1 {
		res.Slope = val(sel[0])
	} else {
		res.Slope = (val(sel[0]) + val(sel[1])) / 2
	}
	if res.Confidence > 0 {
		res.Lower = val(sel[2])
		res.Upper = val(sel[3])
	}
	return res, nil
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
