package stats

// Rank selection over the pairwise slopes for the Theil–Sen estimate (the
// algorithm is described in sen.go): the working state, the cuts evaluated
// so far and the rounds that narrow them around the target ranks.

import (
	"cmp"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
)

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
	t, y             []float64
	pts              []point // (t, y); empty above bigSen points
	maxAbsX, maxAbsY float64
	blocks           []int // block b is points blocks[b]..blocks[b+1]-1
	n                int
	pairs            int64
	rng              *rand.Rand

	// tuning (fields so that tests can force many rounds)
	limit  int64 // enumerate when at most this many pairs are left
	mFirst int   // sample size when drawing from all pairs
	mNext  int   // sample size when drawing between two cuts
	// maxOrders is the number of point orders of evaluated cuts kept
	maxOrders int

	// scratch
	sorted    []float64 // a sorted copy of y (or t) for the medians and ties
	radixA    []uint64  // scratch of sortFloats
	radixB    []uint64
	s, keyTol float64 // slope estimate and key tolerance of the current cut (setKeys)
	tmp, work []int32
	items     []keyItem
	orders    []order // orders of evaluated cuts (v, <), oldest first
	ident     []int32 // 0..n−1
	perm      []int32
	ivHi      []int32
	spacing   []float64
	draws     []int64
	sample    []slopeItem
	// sampleIsAll: sample holds the draw from all pairs (sampleAll)
	sampleIsAll bool
	enum        []slopeItem
	harvests    []*harvest // pairs gathered by cut evaluations in this selection
	chains      [][2]int   // near-tie chains of the current evaluation (for a harvest)
	chainPos    []int32
	chainList   [][]int32
	chainMark   []int32 // zero except while a harvest is corrected
	pcg         rand.PCG
	// evaluated cuts
	cuts      []cut
	tieBlocks []tieBlock
}

type tieBlock struct {
	v           slopeRef
	below, upto int64 // ranks below+1..upto have slope v
}

// bigSen is the series length above which the selection trades a few
// more cut evaluations for less memory (newSenData).
const bigSen = 1 << 18

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
	d.pts = d.pts[:0]
	if n <= bigSen {
		d.pts = grow(d.pts, n)
	}
	d.maxAbsX, d.maxAbsY = 0, 0
	for i := range t {
		if n <= bigSen {
			d.pts[i] = point{t[i], y[i]}
		}
		d.maxAbsX = max(d.maxAbsX, math.Abs(t[i]-t[0]))
		d.maxAbsY = max(d.maxAbsY, math.Abs(y[i]))
	}
	for b := 0; b+1 < len(blocks); b++ {
		m := int64(blocks[b+1] - blocks[b])
		d.pairs += m * (m - 1) / 2
	}
	d.pcg.Seed(uint64(n)*0x9e3779b97f4a7c15+1, 12345)
	if d.rng == nil {
		d.rng = rand.New(&d.pcg)
	}
	if n <= bigSen {
		d.limit = int64(max(8*n, 8192))
		d.mFirst = max(3*n, 4096)
		d.mNext = max(4*n, 4096)
		d.maxOrders = 12
	} else {
		// Long series: smaller samples, listings and order cache keep
		// the selection's memory near 100 bytes per point, for a round
		// or two more of cut evaluations.
		d.limit = int64(n / 2)
		d.mFirst, d.mNext = n/2, n/4
		d.maxOrders = 3
	}
	d.dropOrders()
	d.cuts, d.tieBlocks = d.cuts[:0], d.tieBlocks[:0]
	d.sample, d.sampleIsAll = d.sample[:0], false
	return d
}

// release returns d's buffers to the pool; d must not be used afterwards.
// The buffers of a series longer than bigSen are not kept: they would hold
// about a hundred bytes per point of that series while the caller goes on
// (the Hamed–Rao ranks, the next aggregate).
func (d *senData) release() {
	big := d.n > bigSen
	d.t, d.y, d.blocks = nil, nil, nil
	d.dropOrders()
	if big {
		*d = senData{}
		// a collection now lets the caller's next step reuse the
		// selection's memory (about a hundred bytes per point) instead
		// of adding to it until the heap reaches the collector's goal;
		// one cycle costs far less than the selection
		runtime.GC()
	}
	senPool.Put(d)
}

// dropHarvest ends h's use in this selection: its slot, with its buffer,
// goes to the next newHarvest.
func (d *senData) dropHarvest(h *harvest) {
	for i, g := range d.harvests {
		if g == h {
			last := len(d.harvests) - 1
			d.harvests[i], d.harvests[last] = d.harvests[last], h
			d.harvests = d.harvests[:last]
			return
		}
	}
}

// dropOrders empties the order cache, keeping its buffers.
func (d *senData) dropOrders() {
	d.orders = d.orders[:0]
}

// slopeF is the floating-point estimate of a slope (relative error ≤ 3u).
func (d *senData) slopeF(r slopeRef) float64 {
	if len(d.pts) == 0 { // a long series: no copy of t and y
		return (d.y[r.b] - d.y[r.a]) / (d.t[r.b] - d.t[r.a])
	}
	pa, pb := &d.pts[r.a], &d.pts[r.b]
	return (pb.y - pa.y) / (pb.t - pa.t)
}

// point is one observation, t and y side by side for the pair loops.
type point struct{ t, y float64 }

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

// tryCut evaluates the cut at the slope of v (once) and records it. from
// (may be nil: the nearest) is the evaluated cut whose order the
// evaluation starts from, near the expected number of pairs between them
// (0: unknown); h (may be nil) gathers those pairs. It reports whether the
// cut was evaluated now.
func (d *senData) tryCut(v slopeRef, perm []int32, from *order, h *harvest, near float64) bool {
	for _, tb := range d.tieBlocks {
		if tb.v == v {
			return false
		}
	}
	less, lessEq := d.evalCut(v, perm, from, h, near)
	d.remember(v, less, perm)
	d.tieBlocks = append(d.tieBlocks, tieBlock{v, less, lessEq})
	d.cuts = append(d.cuts, cut{v: v, incl: false, count: less}, cut{v: v, incl: true, count: lessEq})
	return true
}

// newHarvest returns an empty harvest slot for this selection.
func (d *senData) newHarvest() *harvest {
	k := len(d.harvests)
	if k < cap(d.harvests) && d.harvests[:k+1][k] != nil {
		d.harvests = d.harvests[:k+1]
	} else {
		d.harvests = append(d.harvests, new(harvest))
	}
	h := d.harvests[k]
	h.items = h.items[:0]
	h.complete = false
	return h
}

// harvestFor returns the harvest gathered between the cuts at lo.v and
// hi.v, of the kind asked for, or nil.
func (d *senData) harvestFor(lo, hi cut, enumerate bool) *harvest {
	if lo.inf != 0 || hi.inf != 0 {
		return nil
	}
	for _, h := range d.harvests {
		if h.lo == lo.v && h.hi == hi.v && h.enumerate == enumerate && (!enumerate || h.complete) {
			return h
		}
	}
	return nil
}

// sampleSize is the number of pairs to draw between two cuts with T pairs
// between them: enough that a window (at most ± 1.5√m of m) is expected to
// hold about a third of limit pairs, 3T/√m ≤ limit/3.
func (d *senData) sampleSize(T float64) int {
	r := 9 * T / float64(d.limit)
	return int(min(float64(d.mNext), max(1024, r*r), T))
}

// selectRanks returns, for each k in ks (1 ≤ k ≤ pairs), a pair whose
// slope is the k-th smallest. Cuts evaluated here are kept for later calls.
//
// Each round either lists the pairs of a bracket (at most limit of them)
// and selects in them, or samples the bracket, picks the sample order
// statistics around each target as the bounds of a narrower window, and
// evaluates those cuts. The upper cut of a window is sorted from the
// lower cut's order, and that sort gathers the window's pairs: all of them
// when few enough to list, else a sample for the next round.
func (d *senData) selectRanks(ks []int64) []slopeRef {
	out := make([]slopeRef, len(ks))
	pending := make([]int, len(ks))
	for i := range pending {
		pending[i] = i
	}
	slices.SortFunc(pending, func(a, b int) int { return cmp.Compare(ks[a], ks[b]) })
	d.perm = grow(d.perm, d.n)
	perm := d.perm
	d.harvests = d.harvests[:0]
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
			// The listed pairs are those with slope in [lo, hi): ranks
			// off+1 .. off+len(items).
			var items []slopeItem
			off := lo.count
			h := d.harvestFor(lo, hi, true)
			if h != nil {
				items, off = h.items, h.lessLo
			} else {
				items = d.enumerateBetween(lo, hi, T)
			}
			for _, i := range group {
				out[i] = d.exactSelect(items, int(ks[i]-off-1))
			}
			if h != nil {
				d.dropHarvest(h) // no later bracket is this one
			}
			pending = others
			continue
		}
		// A sample of the pairs with ranks popLo+1 .. popLo+pop.
		var it []slopeItem
		popLo, pop := lo.count, T
		used := d.harvestFor(lo, hi, false)
		if used != nil && len(used.items) >= 256 {
			it, popLo, pop = used.items, used.lessLo, used.lessHi-used.lessLo
		} else if lo.inf == -1 && hi.inf == 1 {
			it = d.sampleAll(int(min(int64(d.mFirst), T)))
		} else if d.sampleIsAll && 4*T > d.pairs {
			// a wide bracket (a target outside an earlier round's windows):
			// the sample of all pairs still held places its cuts as well
			// (once: a second use would choose the same cuts)
			it, popLo, pop = d.sample, 0, d.pairs
			d.sampleIsAll = false
		} else {
			it = d.sampleBetween(lo, hi, d.sampleSize(float64(T)), T)
		}
		m := len(it)
		// Sample windows around each target (group is in rank order);
		// overlapping windows share their cuts.
		type span struct{ li, ui int }
		var spans []span
		for _, i := range group {
			// The number of sampled pairs below the target is binomial
			// with mean q·m and variance q(1−q)·m: the window reaches
			// three standard deviations (plus two) to each side.
			q := float64(ks[i]-popLo) / float64(pop)
			idx := q*float64(m) - 0.5
			delta := 3*math.Sqrt(float64(m)*q*(1-q)) + 2
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
		// Evaluate the cuts in ascending order; a window with both bounds
		// in the sample has its upper cut sorted from its lower one.
		vs := make([]slopeRef, len(at))
		for q, j := range at {
			vs[q] = it[j].r
		}
		if used != nil {
			d.dropHarvest(used) // no later bracket is this one
		}
		upper := make(map[int]bool, len(spans)) // at index of a window's upper bound
		for _, sp := range spans {
			if sp.li >= 0 && sp.ui < m && sp.li < sp.ui {
				q, _ := slices.BinarySearch(at, sp.ui)
				upper[q] = true
			}
		}
		for q, v := range vs {
			var from *order
			if q > 0 {
				from = d.findOrder(vs[q-1])
			}
			if from == nil {
				d.tryCut(v, perm, nil, nil, 0)
				continue
			}
			e := float64(at[q]-at[q-1]) / float64(m) * float64(pop) // expected pairs between
			if !upper[q] {
				d.tryCut(v, perm, from, nil, e)
				continue
			}
			h := d.newHarvest()
			want := 0.0 // expected number of pairs gathered
			if e <= float64(d.limit) {
				h.enumerate, h.limit = true, int(d.limit)
				want = e
			} else {
				h.enumerate, h.p = false, float64(d.sampleSize(e))/e
				want = h.p * e
			}
			if d.n > bigSen {
				// sized once with a margin: growing by append would
				// allocate several times the final size on a long series
				h.items = slices.Grow(h.items[:0], int(min(1.25*want+4096, float64(d.limit))))
			}
			if !d.tryCut(v, perm, from, h, e) {
				d.harvests = d.harvests[:len(d.harvests)-1]
			}
		}
	}
	return out
}

// selectRank returns a pair whose slope is the k-th smallest.
func (d *senData) selectRank(k int64) slopeRef {
	return d.selectRanks([]int64{k})[0]
}
