package stats

// Cut evaluation for the Theil–Sen selection: the point order at a trial
// slope and the exact number of pairwise slopes below it.

import (
	"math"
	"math/bits"
	"slices"
)

// setKeys prepares the floating-point keys b_i(s) = y_i − s·x_i, x_i the
// rounded t_i − t_0 (formed with each key), at the slope estimate s of v
// (key) and the bound keyTol on the error of a
// difference of two keys.
//
// Each key is within 6u·(|y_i| + |s·x_i|) of the exact b_i(v) − v·t_0
// (s carries at most 3u relative error, the product and the difference one
// rounding each), so with M = max|y| + |s|·max|x| a computed difference is
// within 12u·M (plus its own rounding) of the exact one; keyTol = 32u·M
// leaves a wide margin. Keys farther apart than keyTol are in the exact
// order.
func (d *senData) setKeys(v slopeRef) {
	d.s = d.slopeF(v)
	d.keyTol = 32*epsU*(d.maxAbsY+math.Abs(d.s)*d.maxAbsX)*(1+16*epsU) + 1e-300
}

// key is b_i at the slope estimate set by setKeys.
func (d *senData) key(i int32) float64 { return d.y[i] - d.s*(d.t[i]-d.t[0]) }

// cmpPts compares b_i and b_j at the slope v exactly (keys must be set).
func (d *senData) cmpPts(i, j int32, v slopeRef) int {
	diff := d.key(i) - d.key(j)
	if diff > d.keyTol {
		return 1
	} else if diff < -d.keyTol {
		return -1
	}
	// sign((y_i − y_j)·D − N·(t_i − t_j))
	return signDiffProd(d.y[i], d.y[j], d.t[v.b], d.t[v.a], d.y[v.b], d.y[v.a], d.t[i], d.t[j])
}

// evalCut orders every block by b(v) (ties by time ascending) into perm and
// returns the number of pairs with slope < v and ≤ v.
//
// It starts from the order of the evaluated cut from (nil: the one nearest
// to v; time order, the cut at −∞, when there is none). Two orders of this kind differ
// exactly on the pairs whose slopes lie between their cuts, so the count
// at v is the base count plus (v above the base) or minus (v below) the
// number of inversions of the base order under the keys at v. The base
// order, as positions, is merge-sorted by the floating-point keys at v
// (quantised and packed with the position, keyItem), counting inversions
// on the way; starting near v keeps the inversions few and the merges
// short. Keys that differ by more than keyTol are in the exact order, so
// only chains of neighbours closer than that can be misordered: they are
// re-sorted with the exact comparator and the count corrected by the
// difference of the chain's inversions after and before.
func (d *senData) evalCut(v slopeRef, perm []int32, from *order, h *harvest, near float64) (less, lessEq int64) {
	fv := d.slopeF(v)
	if from == nil {
		from = d.nearestOrder(fv)
	}
	if from == nil {
		h = nil // pairs below v are gathered only from an evaluated cut
	}
	base, baseLess, dir := d.identity(), int64(0), int64(1)
	if from != nil {
		base, baseLess = from.perm, from.less
		if d.cmpSlopes(v, from.v, fv, from.f) < 0 {
			dir = -1
		}
	}
	if h != nil {
		h.start(d, base)
	}
	// An insertion sort costs O(n + inversions), a merge sort O(n log n)
	// with a larger constant; near is the expected number of inversions
	// (0: unknown), and the insertion sort hands over to a merge sort
	// after a budget of moves.
	insertion := from != nil && near > 0 && near <= 8*float64(d.n)
	budget := int(4*near) + d.n
	d.setKeys(v)
	d.work = grow(d.work, d.n)
	d.tmp = grow(d.tmp, d.n)
	d.items = grow(d.items, 2*d.n)
	sv, t, y := d.s, d.t, d.y
	q := newKeyQuant(d.n, d.maxAbsY+math.Abs(sv)*d.maxAbsX, d.keyTol)
	if h != nil {
		h.mask = q.mask
	}
	g, sh, mask := q.gap, q.shift, q.mask
	byPoint := func(a, b int32) int {
		if c := d.cmpPts(base[a], base[b], v); c != 0 {
			return c
		}
		return int(base[a] - base[b])
	}
	chains := d.chains[:0]
	chainPos := d.chainPos[:0]
	var chainMet int64 // pairs inside those chains that the sort met
	var inv int64
	for b := 0; b+1 < len(d.blocks); b++ {
		lo, hi := d.blocks[b], d.blocks[b+1]
		items := d.items[lo:hi]
		q.pack(items, base[lo:hi], y, t, sv, lo)
		switch {
		case insertion:
			// few inversions expected: one insertion sort
			inv += insertionCountKeysHarvest(items, d.items[d.n+lo:d.n+hi], h, budget)
		case h != nil:
			inv += mergeCountKeysHarvest(items, d.items[d.n+lo:d.n+hi], h)
		default:
			inv += mergeCountKeys(items, d.items[d.n+lo:d.n+hi])
		}
		// One pass writes the points in the new order; then each run of
		// neighbours whose keys are closer than g (a near-tie chain) is
		// re-sorted exactly.
		seg := perm[lo:hi]
		seg = seg[:len(items)]
		for i, it := range items {
			seg[i] = base[uint64(it)&mask]
		}
		for ce := 0; ; {
			var cs int
			if cs, ce = nextChain(items, ce, sh, g); cs == ce {
				break
			}
			chain := seg[cs:ce] // positions in base, then points
			for q := range chain {
				chain[q] = int32(uint64(items[cs+q]) & mask)
			}
			before := d.chainInversions(chain)
			if len(chain) <= 16 {
				for q := 1; q < len(chain); q++ { // insertion sort
					for r := q; r > 0 && byPoint(chain[r-1], chain[r]) > 0; r-- {
						chain[r-1], chain[r] = chain[r], chain[r-1]
					}
				}
			} else {
				slices.SortFunc(chain, byPoint)
			}
			after := d.chainInversions(chain)
			inv += after - before
			if h != nil && (before != 0 || after != 0) {
				// the harvest's pairs inside this chain need correcting
				chains = append(chains, [2]int{len(chainPos), len(chainPos) + len(chain)})
				chainPos = append(chainPos, chain...)
				chainMet += before
			}
			for k := 1; k < len(chain); {
				// count exact ties
				l := k
				for l < len(chain) && d.cmpPts(base[chain[l-1]], base[chain[l]], v) == 0 {
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
			for q, p := range chain {
				chain[q] = base[p]
			}
		}
	}
	less = baseLess + dir*inv
	lessEq += less
	if h != nil {
		if dir < 0 {
			h.lo, h.hi, h.lessLo, h.lessHi = v, from.v, less, baseLess
		} else {
			h.lo, h.hi, h.lessLo, h.lessHi = from.v, v, baseLess, less
		}
		if len(chains) > 0 && h.enumerate && h.complete {
			d.chainMark = grow(d.chainMark, d.n)
			d.chainList = d.chainList[:0]
			for _, c := range chains {
				d.chainList = append(d.chainList, chainPos[c[0]:c[1]])
			}
			h.fixChains(d.chainList, chainMet, d.chainMark, d.work)
		}
		if h.enumerate && h.complete && int64(len(h.items)) != h.lessHi-h.lessLo {
			h.complete = false // not expected; the pairs are listed again
		}
	}
	d.chains, d.chainPos = chains, chainPos
	return
}

// nextChain returns the first run items[cs:ce] at or after from of two or
// more neighbours whose quantised keys differ by at most g (cs = ce =
// len(items) when there is none).
func nextChain(items []keyItem, from int, sh uint, g uint64) (cs, ce int) {
	n := len(items)
	sh &= 63
	i := from + 1
	for ; i < n; i++ {
		if uint64(items[i])>>sh-uint64(items[i-1])>>sh <= g {
			break
		}
	}
	if i >= n {
		return n, n
	}
	cs = i - 1
	for i++; i < n && uint64(items[i])>>sh-uint64(items[i-1])>>sh <= g; i++ {
	}
	return cs, i
}

// chainInversions counts the pairs out of order in a (short lists
// directly, long ones by countInversions on a copy).
func (d *senData) chainInversions(a []int32) int64 {
	if len(a) > 16 {
		w := d.work[:len(a)]
		copy(w, a)
		return countInversions(w, d.tmp)
	}
	var inv int64
	for i := 1; i < len(a); i++ {
		for j := 0; j < i; j++ {
			if a[j] > a[i] {
				inv++
			}
		}
	}
	return inv
}

// identity returns the time order 0..n−1 (the order of the cut at −∞).
func (d *senData) identity() []int32 {
	if len(d.ident) != d.n {
		d.ident = grow(d.ident, d.n)
		for i := range d.ident {
			d.ident[i] = int32(i)
		}
	}
	return d.ident
}

// mergeCountKeys sorts a (merge sort, tmp as scratch of the same length)
// and returns the number of pairs i < j with a[i] > a[j]: for items
// packed in position order, the inversions of the quantised keys. It is
// countInversions written out for keyItem; merges skip the in-order head
// and tail of each pair of runs, so nearly sorted input costs little more
// than copying.
func mergeCountKeys(a, tmp []keyItem) int64 {
	n := len(a)
	var inv int64
	const run = 32
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
			if mid >= hi || src[mid-1] < src[mid] {
				copy(dst[lo:hi], src[lo:hi])
				continue
			}
			// Left items below the right half's first stay in front,
			// right items above the left half's last stay at the back;
			// only the overlap in between is merged.
			i := searchAbove(src[lo:mid], src[mid]) + lo
			e := searchAbove(src[mid:hi], src[mid-1]) + mid
			copy(dst[lo:i], src[lo:i])
			copy(dst[e:hi], src[e:hi])
			j, k := mid, i
			for i < mid && j < e {
				// branch-free: c = 1 takes the right item (strictly smaller)
				x, y := src[i], src[j]
				c := 0
				if y < x {
					c = 1
				}
				dst[k] = min(x, y)
				inv += int64((mid - i) & -c)
				i += 1 - c
				j += c
				k++
			}
			k += copy(dst[k:], src[i:mid])
			copy(dst[k:], src[j:e])
		}
		src, dst = dst, src
	}
	if n > 0 && &src[0] != &a[0] {
		copy(a, src)
	}
	return inv
}

// searchAbove returns the first index of a (sorted) with a value > v.
func searchAbove(a []keyItem, v keyItem) int {
	lo, hi := 0, len(a)
	for lo < hi {
		m := int(uint(lo+hi) >> 1)
		if a[m] > v {
			hi = m
		} else {
			lo = m + 1
		}
	}
	return lo
}

// keyItem is a point's key at a cut and its position in the base order,
// packed into one integer: the quantised key in the high bits, the
// position in the low bits (keyQuant). Packed items compare as the keys
// with ties broken by position (a stable sort), and an item moves as one
// machine word.
type keyItem uint64

// keyQuant maps the floating-point keys k of one cut evaluation to
// integers q = ⌊(k + K)·scale⌋, K the power of two at or above
// M·(1 + 2⁻⁵⁰), M = max|y| + |s|·max|x| (so |k| < K), and scale = 2^(B−1)/K
// a power of two: the product is exact, q is a non-decreasing function of
// k and q ≤ 2^B. B = min(52, 63 − shift) leaves the low shift bits for
// positions below 2^shift. The one rounding, of k + K (< 2K), is at most
// 2^(B−53) ≤ ½ in units of q, so q_a − q_b > gap = ⌈keyTol·scale⌉ + 2
// implies k_a − k_b > keyTol: items whose quantised keys differ by more
// than gap are in the exact order, as keys farther apart than keyTol are.
type keyQuant struct {
	off, scale float64 // K and scale; scale 0: every q is 0
	shift      uint
	mask       uint64 // position bits
	gap        uint64
}

func newKeyQuant(n int, M, keyTol float64) keyQuant {
	shift := uint(bits.Len(uint(max(n-1, 1))))
	q := keyQuant{shift: shift, mask: 1<<shift - 1, gap: 1 << 62}
	B := min(52, 63-int(shift))
	_, e := math.Frexp(M * (1 + 1.0/(1<<50))) // K = 2^e
	if !(M > 0) || math.IsInf(M, 0) || B-1-e > 1000 || e > 1000 {
		// No spread, extreme values or magnitudes too small to scale:
		// every q is 0 and each block is one chain, sorted exactly.
		return q
	}
	q.off, q.scale = math.Ldexp(1, e), math.Ldexp(1, B-1-e)
	if gf := math.Ceil(keyTol*q.scale) + 2; gf < 1<<62 {
		q.gap = uint64(gf)
	}
	return q
}

// pack fills items with the quantised keys y[p] − s·(t[p] − t[0]) of the
// points p of base and the positions off, off+1, …
func (q *keyQuant) pack(items []keyItem, base []int32, y, t []float64, s float64, off int) {
	base = base[:len(items)]
	if q.scale == 0 {
		for i := range items {
			items[i] = keyItem(off + i)
		}
		return
	}
	K, scale, sh, t0 := q.off, q.scale, q.shift, t[0]
	for i, p := range base {
		// (k + K)·scale < 2^52: the signed conversion is exact
		items[i] = keyItem(uint64(int64((y[p]-s*(t[p]-t0)+K)*scale))<<(sh&63) | uint64(off+i))
	}
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
	if o := d.findOrder(c.v); o != nil {
		copy(perm, o.perm)
	} else {
		less, _ := d.evalCut(c.v, perm, nil, nil, 0)
		d.remember(c.v, less, perm)
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

// order is the point order realising the evaluated cut (v, <).
type order struct {
	v    slopeRef
	f    float64 // slope estimate of v
	less int64   // pairs with slope < v
	perm []int32
}

// remember caches the order realising the cut (v, <), as left by evalCut.
// At most d.maxOrders orders are kept (O(n) memory); the oldest goes first.
func (d *senData) remember(v slopeRef, less int64, perm []int32) {
	var buf []int32
	if len(d.orders) >= d.maxOrders {
		buf = d.orders[0].perm
		d.orders = append(d.orders[:0], d.orders[1:]...)
	} else if k := len(d.orders); k < cap(d.orders) {
		buf = d.orders[:k+1][k].perm // storage of an order dropped earlier
	}
	buf = grow(buf, d.n)
	copy(buf, perm)
	d.orders = append(d.orders, order{v, d.slopeF(v), less, buf})
}

// findOrder returns the cached order of the cut (v, <), or nil.
func (d *senData) findOrder(v slopeRef) *order {
	for i := range d.orders {
		if d.orders[i].v == v {
			return &d.orders[i]
		}
	}
	return nil
}

// nearestOrder returns the cached order whose slope estimate is nearest to
// f, or nil when none is cached.
func (d *senData) nearestOrder(f float64) *order {
	var best *order
	dist := math.Inf(1)
	for i := range d.orders {
		if e := math.Abs(d.orders[i].f - f); e < dist || best == nil {
			best, dist = &d.orders[i], e
		}
	}
	return best
}
