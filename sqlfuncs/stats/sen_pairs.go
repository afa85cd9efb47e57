package stats

// Pairs for the Theil–Sen selection: uniform samples of the pairs (all of
// them, or those between two cuts) and the enumeration of the pairs between
// two cuts.

import (
	"math"
	"slices"
)

// interval builds seq (positions in the hi order, listed in lo order) and
// the hi permutation; inversions of seq are the pairs between the cuts.
func (d *senData) interval(lo, hi cut) (seq, pHi []int32) {
	d.perm = grow(d.perm, d.n) // free here: the order a cut evaluation leaves
	d.ivHi = grow(d.ivHi, d.n)
	pLo, pHi := d.perm, d.ivHi
	d.permFor(lo, pLo)
	d.permFor(hi, pHi)
	d.work = grow(d.work, d.n) // free here: evalCut's scratch
	pos := d.work
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

// sampleBetween draws m pairs uniformly (with replacement) from the total
// pairs between the cuts, with their floating-point slopes.
//
// The pairs between the cuts are the inversions of seq; a merge sort meets
// each of them once, in an order fixed by seq, so m sorted draws from
// 0..total−1 pick m of them while the sort counts: a run of c inversions
// (an element taken from the right half before c elements of the left)
// holds the draws that fall in its c indices.
func (d *senData) sampleBetween(lo, hi cut, m int, total int64) []slopeItem {
	if total <= 0 {
		return nil
	}
	seq, pHi := d.interval(lo, hi)
	draws := d.sortedDraws(m, total)
	out := grow(d.sample, m)[:0]
	emit := func(a, b int32) {
		p := pairOf(pHi[a], pHi[b])
		out = append(out, slopeItem{d.slopeF(p), p})
	}
	d.tmp = grow(d.tmp, len(seq)) // free here: evalCut's scratch
	mergeSample(seq, d.tmp, draws, emit)
	d.sample, d.sampleIsAll = out, false
	return out
}

// mergeSample sorts a (distinct values; tmp is scratch of the same length)
// and calls emit(a_i, a_j) for the inversions (i < j, a_i > a_j) whose
// index in the sort's order of meeting them is in draws (ascending; a
// repeated index emits its pair again).
func mergeSample(a, tmp []int32, draws []int64, emit func(x, y int32)) {
	n := len(a)
	var tot int64 // inversions met so far
	di := 0
	next := int64(math.MaxInt64)
	if len(draws) > 0 {
		next = draws[0]
	}
	const run = 16
	for lo := 0; lo < n; lo += run {
		hi := min(lo+run, n)
		for i := lo + 1; i < hi; i++ {
			v := a[i]
			j := i
			for j > lo && a[j-1] > v {
				j--
			}
			c := int64(i - j)
			for next < tot+c {
				emit(a[j+int(next-tot)], v)
				if di++; di < len(draws) {
					next = draws[di]
				} else {
					next = math.MaxInt64
				}
			}
			tot += c
			copy(a[j+1:i+1], a[j:i])
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
				if src[i] < src[j] {
					dst[k] = src[i]
					i++
				} else {
					c := int64(mid - i)
					for next < tot+c {
						emit(src[i+int(next-tot)], src[j])
						if di++; di < len(draws) {
							next = draws[di]
						} else {
							next = math.MaxInt64
						}
					}
					tot += c
					dst[k] = src[j]
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
		// two indices from one 64-bit draw (multiply-shift: the bias of
		// at most sz/2³² per index affects only the running time)
		r := d.pcg.Uint64()
		i, j := int((r&0xffffffff)*uint64(sz)>>32), int((r>>32)*uint64(sz)>>32)
		if i == j {
			continue
		}
		p := pairOf(int32(lo+i), int32(lo+j))
		out = append(out, slopeItem{d.slopeF(p), p})
	}
	d.sample, d.sampleIsAll = out, true
	return out
}

// enumerateBetween lists every pair between the cuts, with its
// floating-point slope. The pairs are the inversions of seq, met by an
// insertion sort in O(n + pairs) steps (it runs only when the pairs number
// at most limit, a small multiple of n).
func (d *senData) enumerateBetween(lo, hi cut, capHint int64) []slopeItem {
	a, pHi := d.interval(lo, hi)
	out := grow(d.enum, int(capHint))[:0]
	for q := 1; q < len(a); q++ {
		v := a[q]
		pv := pHi[v]
		j := q
		for ; j > 0 && a[j-1] > v; j-- {
			a[j] = a[j-1]
			p := pairOf(pHi[a[j]], pv)
			out = append(out, slopeItem{d.slopeF(p), p})
		}
		a[j] = v
	}
	d.enum = out
	return out
}
