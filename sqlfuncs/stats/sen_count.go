package stats

// Cut evaluation for the Theil–Sen selection: the point order at a trial
// slope and the exact number of pairwise slopes below it.

import (
	"math"
	"slices"
)

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
