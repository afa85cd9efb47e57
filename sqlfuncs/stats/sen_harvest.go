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
			h.items = slices.Grow(h.items, max(len(left), k/2))
		}
		pr := h.base[r]
		out := h.items[k : k+len(left)]
		d := h.d
		for q, l := range left {
			pl := h.base[l.i]
			a, b := min(pl, pr), max(pl, pr)
			out[q] = slopeItem{(d.y[b] - d.y[a]) / (d.t[b] - d.t[a]), slopeRef{a, b}}
		}
		h.items = h.items[:k+len(left)]
		return
	}
	c := int64(len(left))
	for h.next < h.tot+c {
		p := pairOf(h.base[left[h.next-h.tot].i], h.base[r])
		h.items = append(h.items, slopeItem{h.d.slopeF(p), p})
		h.next += 1 + h.skip()
	}
	h.tot += c
}

// mergeCountKeysHarvest is mergeCountKeys reporting every inversion run to h.
func mergeCountKeysHarvest(a, tmp []keyItem, h *harvest) int64 {
	n := len(a)
	var inv int64
	const run = 16
	for lo := 0; lo < n; lo += run {
		hi := min(lo+run, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1].k > v.k {
				j--
			}
			if j < i {
				h.run(a[j:i], v.i)
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
			if mid >= hi || src[mid-1].k <= src[mid].k {
				copy(dst[lo:hi], src[lo:hi])
				continue
			}
			i := searchAbove(src[lo:mid], src[mid].k) + lo
			e := searchNotBelow(src[mid:hi], src[mid-1].k) + mid
			copy(dst[lo:i], src[lo:i])
			copy(dst[e:hi], src[e:hi])
			j, k := mid, i
			for i < mid && j < e {
				if src[i].k <= src[j].k {
					dst[k] = src[i]
					i++
				} else {
					h.run(src[i:mid], src[j].i)
					dst[k] = src[j]
					inv += int64(mid - i)
					j++
				}
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

// fixChains corrects an enumeration for the near-tie chains that evalCut
// re-sorted exactly: the pairs met inside a chain by the floating-point
// sort are replaced by the chain's exact inversions. chains lists each
// chain as positions of the base order, in the exact new order.
func (h *harvest) fixChains(chains [][]int32, mark []int32, tmp []int32) {
	if !h.enumerate || !h.complete || len(chains) == 0 {
		return
	}
	for c, ch := range chains {
		for _, p := range ch {
			mark[h.base[p]] = int32(c + 1)
		}
	}
	kept := h.items[:0]
	for _, it := range h.items {
		if ma := mark[it.r.a]; ma == 0 || ma != mark[it.r.b] {
			kept = append(kept, it)
		}
	}
	h.items = kept
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
