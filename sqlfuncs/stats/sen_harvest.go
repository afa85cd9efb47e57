package stats

// Pairs gathered while a cut is evaluated (see evalCut): sorting the order
// of an evaluated cut (v0, <) by the keys at a new slope v meets every pair
// whose slope lies between v0 and v exactly once, as an inversion. So the
// evaluation of the upper cut of a sample window can list the window's
// pairs (when few enough to enumerate) or draw the next round's sample
// from them, instead of a separate pass over the two orders.

import (
	"math"
	"slices"
)

// harvest collects the pairs with slope in [lo, hi) met while the cut at
// one end is evaluated from the order of the cut at the other end.
type harvest struct {
	enumerate bool    // every pair (else a Bernoulli sample)
	p         float64 // sampling probability of each pair
	limit     int     // enumeration stores at most this many pairs

	lo, hi         slopeRef // the cuts (·, <) bounding the pairs
	lessLo, lessHi int64    // pairs with slope < lo and < hi
	items          []slopeItem
	complete       bool // enumeration: items holds every pair

	// while sorting
	base      []int32 // point at each position of the base order
	mask      uint64  // position bits of a keyItem
	tot, next int64   // inversions met so far; index of the next one drawn
	lambda    float64 // −log(1 − p)
	d         *senData
}

// start prepares h for a sort of base (the order of the cut at one end).
func (h *harvest) start(d *senData, base []int32) {
	h.d, h.base = d, base
	h.items = h.items[:0]
	h.complete = true
	h.tot = 0
	if !h.enumerate {
		h.lambda = -math.Log1p(-min(h.p, 1))
		h.next = h.skip()
	}
}

// pos is the base position of a packed item.
func (h *harvest) pos(it keyItem) int32 { return int32(uint64(it) & h.mask) }

// skip draws the gap before the next sampled inversion (geometric with
// success probability p).
func (h *harvest) skip() int64 {
	g := h.d.rng.ExpFloat64() / h.lambda
	if g >= 1<<62 {
		return 1 << 62
	}
	return int64(g)
}

// run records the inversions of the element at position r with the
// elements at positions left (each earlier in the base order and later in
// the new one).
func (h *harvest) run(left []keyItem, r int32) {
	if h.enumerate {
		k := len(h.items)
		if !h.complete || k+len(left) > h.limit {
			h.complete = false
			return
		}
		if k+len(left) > cap(h.items) {
			h.items = slices.Grow(h.items, min(max(len(left), k/2), h.limit-k))
		}
		pr := h.base[r]
		out := h.items[k : k+len(left)]
		pts, base, mask := h.d.pts, h.base, h.mask
		if len(pts) == 0 { // a long series: no copy of t and y
			t, y := h.d.t, h.d.y
			for q, l := range left {
				pl := base[uint64(l)&mask]
				a, b := min(pl, pr), max(pl, pr)
				out[q] = slopeItem{(y[b] - y[a]) / (t[b] - t[a]), slopeRef{a, b}}
			}
			h.items = h.items[:k+len(left)]
			return
		}
		for q, l := range left {
			pl := base[uint64(l)&mask]
			a, b := min(pl, pr), max(pl, pr)
			pa, pb := &pts[a], &pts[b]
			out[q] = slopeItem{(pb.y - pa.y) / (pb.t - pa.t), slopeRef{a, b}}
		}
		h.items = h.items[:k+len(left)]
		return
	}
	c := int64(len(left))
	for h.next < h.tot+c {
		p := pairOf(h.base[uint64(left[h.next-h.tot])&h.mask], h.base[r])
		h.items = append(h.items, slopeItem{h.d.slopeF(p), p})
		h.next += 1 + h.skip()
	}
	h.tot += c
}

// mergeCountKeysHarvest is mergeCountKeys reporting every inversion run to h.
func mergeCountKeysHarvest(a, tmp []keyItem, h *harvest) int64 {
	n := len(a)
	var inv int64
	const run = 32
	for lo := 0; lo < n; lo += run {
		hi := min(lo+run, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1] > v {
				j--
			}
			if j < i {
				if h.enumerate || h.next < h.tot+int64(i-j) {
					h.run(a[j:i], h.pos(v))
				} else {
					h.tot += int64(i - j)
				}
				copy(a[j+1:i+1], a[j:i])
				a[j] = v
				inv += int64(i - j)
			}
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
			i := searchAbove(src[lo:mid], src[mid]) + lo
			e := searchAbove(src[mid:hi], src[mid-1]) + mid
			copy(dst[lo:i], src[lo:i])
			copy(dst[e:hi], src[e:hi])
			j, k := mid, i
			if h.enumerate {
				for i < mid && j < e {
					if src[i] < src[j] {
						dst[k] = src[i]
						i++
					} else {
						h.run(src[i:mid], h.pos(src[j]))
						dst[k] = src[j]
						inv += int64(mid - i)
						j++
					}
					k++
				}
			} else {
				// branch-free as in mergeCountKeys; the rare run holding a
				// draw is handed to h
				for i < mid && j < e {
					x, y := src[i], src[j]
					c := 0
					if y < x {
						c = 1
					}
					r := int64((mid - i) & -c)
					if h.next < h.tot+r {
						h.run(src[i:mid], h.pos(y))
					} else {
						h.tot += r
					}
					dst[k] = min(x, y)
					inv += r
					i += 1 - c
					j += c
					k++
				}
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

// insertionCountKeysHarvest stably sorts a by k with an insertion sort,
// reporting every inversion run to h (nil: none), and returns the number
// of inversions. It costs O(len(a) + inversions): the sort of a window's
// upper cut from its lower cut, whose inversions are the window's few
// pairs. After budget element moves it leaves the rest to a merge sort,
// which counts and reports the inversions not met yet (those involving an
// element not yet inserted) once each.
func insertionCountKeysHarvest(a, tmp []keyItem, h *harvest, budget int) int64 {
	var inv int64
	for i := 1; i < len(a); i++ {
		v := a[i]
		if a[i-1] < v {
			continue
		}
		// shift the items above v up by one while looking for its place
		j := i - 1
		a[i] = a[j]
		for j > 0 && a[j-1] > v {
			a[j] = a[j-1]
			j--
		}
		a[j] = v
		if h != nil {
			h.run(a[j+1:i+1], h.pos(v)) // the items v passed, in their order
		}
		inv += int64(i - j)
		if budget -= i - j; budget < 0 {
			if h != nil {
				return inv + mergeCountKeysHarvest(a, tmp, h)
			}
			return inv + mergeCountKeys(a, tmp)
		}
	}
	return inv
}

// fixChains corrects an enumeration for the near-tie chains that evalCut
// re-sorted exactly: the pairs that the floating-point sort met inside a
// chain (met of them) are replaced by the chain's exact inversions. chains
// lists each chain as positions of the base order, in the exact new order.
func (h *harvest) fixChains(chains [][]int32, met int64, mark []int32, tmp []int32) {
	if !h.enumerate || !h.complete || len(chains) == 0 {
		return
	}
	for c, ch := range chains {
		for _, p := range ch {
			mark[h.base[p]] = int32(c + 1)
		}
	}
	items := h.items
	for q := 0; q < len(items) && met > 0; q++ {
		if ma := mark[items[q].r.a]; ma != 0 && ma == mark[items[q].r.b] {
			items[q] = items[len(items)-1] // the order of the list is free
			items = items[:len(items)-1]
			q--
			met--
		}
	}
	h.items = items
	for _, ch := range chains {
		// the chain's inversions relative to the base positions, by an
		// insertion sort of a copy
		w := tmp[:len(ch)]
		copy(w, ch)
		for q := 1; q < len(w); q++ {
			v := w[q]
			j := q
			for ; j > 0 && w[j-1] > v; j-- {
				w[j] = w[j-1]
				p := pairOf(h.base[w[j]], h.base[v])
				h.items = append(h.items, slopeItem{h.d.slopeF(p), p})
			}
			w[j] = v
		}
		for _, p := range ch {
			mark[h.base[p]] = 0
		}
	}
	if len(h.items) > h.limit {
		h.complete = false
	}
}
