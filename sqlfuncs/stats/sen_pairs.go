package stats

// Pairs for the Theil–Sen selection: uniform samples of the pairs (all of
// them, or those between two cuts) and the enumeration of the pairs between
// two cuts.

import "slices"

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
