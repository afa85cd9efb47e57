package stats

// Ordering of enumerated or sampled slopes for the Theil–Sen selection:
// selection by floating-point estimate, then an exact order where the
// estimates are too close to call.

import (
	"cmp"
	"math"
	"slices"
)

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
// The partitions are branch-free (Lomuto's scheme with a conditional
// increment): more instructions than the scans of Hoare's scheme, but no
// mispredicted branch per element, which costs more on random slopes.
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
		// Partition around the pivot p = a[k] (moved to the end),
		// branch-free: Lomuto's scheme swaps every item to the boundary,
		// which advances when the item is below p. Then [left, j) < p.f,
		// a[j] = p and (j, right] ≥ p.f.
		a[k], a[right] = a[right], a[k]
		t := a[right].f
		l0 := left
		j := partitionBelow(a[left:right], t) + left
		a[j], a[right] = a[right], a[j]
		switch {
		case k == j:
			return
		case k < j:
			right = j - 1
		default:
			left = j + 1
			if j == l0 && left <= right && a[left].f == t {
				// nothing below p: skip the items equal to it at once
				// (many pairs can share one slope)
				j2 := partitionNotAbove(a[left:right+1], t) + left
				if k < j2 {
					return // a[k].f = t, as every item of [left, j2)
				}
				left = j2
			}
		}
	}
}

// partitionBelow moves the items of a with f < t to its front, branch-free,
// and returns their number.
func partitionBelow(a []slopeItem, t float64) int {
	j := 0
	for i := range a {
		x := a[i]
		a[i] = a[j]
		a[j] = x
		c := 0
		if x.f < t {
			c = 1
		}
		j += c
	}
	return j
}

// partitionNotAbove moves the items of a with f ≤ t to its front,
// branch-free, and returns their number.
func partitionNotAbove(a []slopeItem, t float64) int {
	j := 0
	for i := range a {
		x := a[i]
		a[i] = a[j]
		a[j] = x
		c := 0
		if x.f <= t {
			c = 1
		}
		j += c
	}
	return j
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
