package stats

// Akritas–Theil–Sen ends without holding the steps in memory.
//
// Each quantity of censored_sen.go is the smallest step value v with
// D(v) ≥ w, where D(v) = S(−∞) − S(v+) is the weight of the steps ≤ v
// (2 for a two-sided step, 1 for a one-sided one) and w follows from the
// threshold: S(v+) ≤ k ⟺ D(v) ≥ S(−∞) − k. That is a weighted order
// statistic of the N = n(n−1)/2 pairwise steps, found here in O(n) memory
// by repeated passes over the pairs (O(n²) time each):
//
//  1. for each end, keep a bracket (lo, hi] known to hold it, with D(lo);
//  2. one pass draws up to atsPivotCount steps uniformly from the bracket
//     (reservoir sampling; in the first round, when the bracket holds every
//     step, atsFirstPivots steps of random pairs, without a pass); a second
//     pass counts the weight and number of
//     steps between consecutive pivots, and the bracket shrinks to the
//     pivot cell where D crosses w;
//  3. once a bracket holds at most atsCollectMax steps, one pass collects
//     them, and they are sorted and walked.
//
// All ends share the passes. The step values are computed by the same
// expression as in the sorted walk, so both give identical results. A
// fixed seed makes the passes reproducible; the results do not depend on
// it.

import (
	"math"
	"math/rand/v2"
	"slices"
)

// Pivots drawn per bracket and round, and the bracket size collected
// whole (variables so that tests can make them small).
var (
	atsPivotCount        = 512
	atsFirstPivots       = 1024 // drawn from random pairs in the first round
	atsCollectMax  int64 = 1 << 18
)

// atsSortedSteps is the largest number of steps AkritasTheilSen sorts in
// memory; above it the ends are found by atsStreamEnds. A variable so that
// tests can force the streaming path on small samples.
var atsSortedSteps int64 = 1 << 22

// atsEachStep calls fn with the step value and weight of every pair whose
// contribution depends on β.
func atsEachStep(t, y []float64, c []Censoring, fn func(s float64, w int64)) {
	n := len(t)
	for i := 0; i < n; i++ {
		ti, yi, ci := t[i], y[i], c[i]
		for j := i + 1; j < n; j++ {
			var w int64
			switch pairKind(ci, c[j]) {
			case 2:
				w = 2
			case 1, -1:
				w = 1
			default:
				continue
			}
			fn((y[j]-yi)/(t[j]-ti), w)
		}
	}
}

type atsBracket struct {
	lo, hi float64 // the end lies in (lo, hi], or [lo, hi] with withLo
	withLo bool    // lo itself belongs (the first bracket, lo = −∞, so that steps of −∞ count)
	dLo    int64   // D(lo)
	count  int64   // steps in (lo, hi]
	want   int64   // w
	done   bool
	v      float64
	// one round's work
	collect  []atsStep
	pivots   []float64
	seen     int64
	weight   []int64 // per pivot cell (piv[k−1], piv[k]]: weight and count,
	cells    []int64 // and of those equal to piv[k]
	eqWeight []int64
	eqCount  []int64
	sampling bool
	shares   *atsBracket // another bracket whose pivots and counts serve this one in the current selection round
}

type atsStep struct {
	s float64
	w int64
}

// atsStreamEnds returns, for each w in wants, the smallest step value v
// with D(v) ≥ w; NaN when w ≤ 0 (the end lies before every step) or w
// exceeds the total weight. steps is the number of steps.
func atsStreamEnds(t, y []float64, c []Censoring, wants []int64, steps, total int64) []float64 {
	out := make([]float64, len(wants))
	var br []*atsBracket
	for k, w := range wants {
		out[k] = math.NaN()
		if w <= 0 || w > total {
			continue
		}
		br = append(br, &atsBracket{lo: math.Inf(-1), withLo: true, hi: math.Inf(1), count: steps, want: w})
	}
	rng := rand.New(rand.NewPCG(1995, 170))
	for {
		var active []*atsBracket
		for _, b := range br {
			if !b.done {
				active = append(active, b)
			}
		}
		if len(active) == 0 {
			break
		}
		// Pass 1: collect small brackets, sample pivots from the others.
		// A bracket still holding every step draws its pivots from random
		// pairs instead, without a pass.
		// Brackets still holding every step share one set of pivots.
		var pass []*atsBracket
		var full *atsBracket
		for _, b := range active {
			b.sampling = b.count > atsCollectMax
			b.collect, b.pivots, b.seen, b.shares = b.collect[:0], b.pivots[:0], 0, nil
			switch {
			case b.sampling && b.count == steps && full != nil:
				b.shares = full
			case b.sampling && b.count == steps && atsDrawPivots(t, y, c, b, rng):
				full = b
			default:
				pass = append(pass, b)
			}
		}
		if len(pass) > 0 {
			atsEachStep(t, y, c, func(s float64, w int64) {
				for _, b := range pass {
					if !b.holds(s) {
						continue
					}
					if !b.sampling {
						b.collect = append(b.collect, atsStep{s, w})
						continue
					}
					b.seen++
					if len(b.pivots) < atsPivotCount {
						b.pivots = append(b.pivots, s)
					} else if r := rng.Int64N(b.seen); r < int64(atsPivotCount) {
						b.pivots[r] = s
					}
				}
			})
		}
		var sampling []*atsBracket
		for _, b := range active {
			if !b.sampling {
				slices.SortFunc(b.collect, func(p, q atsStep) int {
					switch {
					case p.s < q.s:
						return -1
					case p.s > q.s:
						return 1
					}
					return 0
				})
				d := b.dLo
				for _, st := range b.collect {
					if d += st.w; d >= b.want {
						b.v, b.done = st.s, true
						break
					}
				}
				if !b.done {
					// Unreachable while the bracket invariant holds (its
					// steps carry D from dLo past want); a NaN end rather
					// than another pass.
					b.v, b.done = math.NaN(), true
				}
				b.collect = nil
				continue
			}
			if b.shares != nil {
				continue
			}
			slices.Sort(b.pivots)
			b.pivots = slices.Compact(b.pivots)
			p := len(b.pivots)
			b.weight = make([]int64, p+1)
			b.cells = make([]int64, p+1)
			b.eqWeight = make([]int64, p+1)
			b.eqCount = make([]int64, p+1)
			sampling = append(sampling, b)
		}
		var settle []*atsBracket
		for _, b := range active {
			if b.sampling {
				settle = append(settle, b)
			}
		}
		if len(sampling) == 0 {
			continue
		}
		// Pass 2: weight and count of the steps in each pivot cell
		// (piv[k−1], piv[k]], the last cell above the last pivot.
		atsEachStep(t, y, c, func(s float64, w int64) {
			for _, b := range sampling {
				if !b.holds(s) {
					continue
				}
				// k = the first pivot ≥ s (len(pivots) when none).
				piv := b.pivots
				k, hi := 0, len(piv)
				for k < hi {
					m := int(uint(k+hi) >> 1)
					if piv[m] < s {
						k = m + 1
					} else {
						hi = m
					}
				}
				b.weight[k] += w
				b.cells[k]++
				if k < len(b.pivots) && s == b.pivots[k] {
					b.eqWeight[k] += w
					b.eqCount[k]++
				}
			}
		})
		for _, b := range settle {
			if o := b.shares; o != nil {
				b.pivots, b.weight, b.cells, b.eqWeight, b.eqCount = o.pivots, o.weight, o.cells, o.eqWeight, o.eqCount
			}
			d, lo, withLo, found := b.dLo, b.lo, b.withLo, false
			for k, pv := range b.pivots {
				if d+b.weight[k] < b.want {
					d += b.weight[k]
					lo, withLo = pv, false
					continue
				}
				found = true
				// The end is pv or a step of the cell below pv.
				if d+b.weight[k]-b.eqWeight[k] >= b.want {
					b.lo, b.withLo, b.hi, b.dLo, b.count = lo, withLo, math.Nextafter(pv, math.Inf(-1)), d, b.cells[k]-b.eqCount[k]
				} else {
					b.v, b.done = pv, true
				}
				break
			}
			if !found {
				// D stays below w up to the last pivot: the end is above it.
				b.lo, b.withLo, b.dLo, b.count = lo, withLo, d, b.cells[len(b.pivots)]
			}
		}
		for _, b := range settle {
			b.pivots, b.weight, b.cells, b.eqWeight, b.eqCount = nil, nil, nil, nil, nil
		}
	}
	k := 0
	for i, w := range wants {
		if w <= 0 || w > total {
			continue
		}
		out[i] = br[k].v
		k++
	}
	return out
}

// holds reports whether step value s lies in the bracket.
func (b *atsBracket) holds(s float64) bool {
	return (s > b.lo || b.withLo && s == b.lo) && s <= b.hi
}

// atsDrawPivots draws b's pivots from uniformly random pairs, skipping the
// pairs without a step (so each step is equally likely), atsFirstPivots of
// them; it reports false when too few pairs have a step to find them
// quickly.
func atsDrawPivots(t, y []float64, c []Censoring, b *atsBracket, rng *rand.Rand) bool {
	n := len(t)
	for tries := 0; len(b.pivots) < atsFirstPivots; tries++ {
		if tries > 64*atsFirstPivots {
			b.pivots = b.pivots[:0]
			return false
		}
		i, j := rng.IntN(n), rng.IntN(n)
		if i == j {
			continue
		}
		if i > j {
			i, j = j, i
		}
		if pairKind(c[i], c[j]) == 0 {
			continue
		}
		b.pivots = append(b.pivots, (y[j]-y[i])/(t[j]-t[i]))
	}
	return true
}
