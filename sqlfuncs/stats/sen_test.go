package stats

import (
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// bruteSlopes lists every within-block pair slope, sorted by the exact
// comparator (independent of the selection machinery: no cuts, no sampling).
func bruteOrder(t, y []float64, blocks []int) (*senData, []slopeRef) {
	d := newSenData(t, y, blocks)
	var ps []slopeRef
	for b := 0; b+1 < len(blocks); b++ {
		for i := blocks[b]; i < blocks[b+1]; i++ {
			for j := i + 1; j < blocks[b+1]; j++ {
				ps = append(ps, slopeRef{int32(i), int32(j)})
			}
		}
	}
	d.sortSlopes(ps)
	return d, ps
}

// bruteFloat is the textbook O(n²) reference: float slopes, sorted.
func bruteFloat(t, y []float64) []float64 {
	var s []float64
	for i := range t {
		for j := i + 1; j < len(t); j++ {
			s = append(s, (y[j]-y[i])/(t[j]-t[i]))
		}
	}
	slices.Sort(s)
	return s
}

func randSeries(rng *rand.Rand, n int, kind int) (t, y []float64) {
	t = make([]float64, n)
	y = make([]float64, n)
	tt := 1.6e9
	for i := 0; i < n; i++ {
		switch kind % 3 {
		case 0: // regular daily steps
			tt += 86400
		default: // irregular whole seconds
			tt += float64(1 + rng.IntN(200000))
		}
		t[i] = tt
		switch kind {
		case 0, 1: // continuous values
			y[i] = rng.NormFloat64()*3 + float64(i)*0.001
		case 2, 3: // quantised to 0.25 (many ties; dyadic so differences are exact)
			y[i] = math.Round((rng.NormFloat64()*2+float64(i)*0.002)*4) / 4
		case 4: // heavily tied small integers
			y[i] = float64(rng.IntN(4))
		default: // decimal-quantised (0.01), not dyadic
			y[i] = math.Round((rng.NormFloat64()+float64(i%50)*0.1)*100) / 100
		}
	}
	return
}

func TestSenSelectionMatchesBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	sizes := []int{2, 3, 4, 5, 7, 10, 31, 64, 129, 200, 257, 500, 999, 1500}
	if !testing.Short() {
		sizes = append(sizes, 3000)
	}
	for _, n := range sizes {
		for kind := 0; kind < 6; kind++ {
			tt, yy := randSeries(rng, n, kind)
			d, order := bruteOrder(tt, yy, []int{0, n})
			N := int64(len(order))
			// check several ranks, including the extremes and median
			ranks := []int64{1, N, (N + 1) / 2, N/2 + 1}
			for i := 0; i < 3; i++ {
				ranks = append(ranks, 1+rng.Int64N(N))
			}
			fast := newSenData(tt, yy, []int{0, n})
			for _, k := range ranks {
				got := fast.selectRank(k)
				want := order[k-1]
				if d.cmpSlopes(got, want, d.slopeF(got), d.slopeF(want)) != 0 {
					t.Fatalf("n=%d kind=%d rank %d: selected slope %v (pair %v), brute force %v (pair %v)",
						n, kind, k, d.slopeF(got), got, d.slopeF(want), want)
				}
			}
			// dyadic/integer data: float brute force is exact, compare bitwise
			if kind >= 2 && kind <= 4 {
				fl := bruteFloat(tt, yy)
				r, err := SenSlope(tt, yy, 0.95)
				if err != nil {
					t.Fatal(err)
				}
				var med float64
				if N%2 == 1 {
					med = fl[N/2]
				} else {
					med = (fl[N/2-1] + fl[N/2]) / 2
				}
				if r.Slope != med {
					t.Fatalf("n=%d kind=%d: Sen slope %v, float brute force %v", n, kind, r.Slope, med)
				}
				if r.Lower != fl[r.LowerRank-1] || r.Upper != fl[r.UpperRank-1] {
					t.Fatalf("n=%d kind=%d: interval [%v, %v], brute force [%v, %v]", n, kind, r.Lower, r.Upper, fl[r.LowerRank-1], fl[r.UpperRank-1])
				}
			}
		}
	}
}

// TestSenBlocksMatchBruteForce checks the selection over the union of
// within-block pairs (the seasonal Sen slope) against the sorted list of
// every within-block slope, with blocks large enough to need sampling.
func TestSenBlocksMatchBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	for _, tc := range []struct{ n, blocks int }{{50, 3}, {400, 12}, {1200, 4}, {2400, 12}, {900, 1}} {
		for kind := 0; kind < 6; kind += 2 {
			tt, yy := randSeries(rng, tc.n, kind)
			// assign points to blocks round-robin (like seasons), keep time order within blocks
			var bt, by []float64
			blocks := []int{0}
			for b := 0; b < tc.blocks; b++ {
				for i := b; i < tc.n; i += tc.blocks {
					bt = append(bt, tt[i])
					by = append(by, yy[i])
				}
				blocks = append(blocks, len(bt))
			}
			d, order := bruteOrder(bt, by, blocks)
			N := int64(len(order))
			fast := newSenData(bt, by, blocks)
			if fast.pairs != N {
				t.Fatalf("pairs %d, brute %d", fast.pairs, N)
			}
			for _, k := range []int64{1, N, (N + 1) / 2, N/2 + 1, 1 + rng.Int64N(N)} {
				got := fast.selectRank(k)
				want := order[k-1]
				if d.cmpSlopes(got, want, d.slopeF(got), d.slopeF(want)) != 0 {
					t.Fatalf("n=%d blocks=%d kind=%d rank %d: %v vs brute %v", tc.n, tc.blocks, kind, k, d.slopeF(got), d.slopeF(want))
				}
			}
		}
	}
}

// TestSenLongSeriesPathMatchesBruteForce runs the selection with the
// settings of a series longer than bigSen points (no copy of t and y,
// samples and listings of n/4 and n/2 pairs sized once, three cached
// orders, buffers not pooled) on blocks of 24 consecutive points, whose
// within-block pairs (about 3 million) can still be sorted exactly, and
// checks the median, the interval's ranks and random ranks against that
// order.
func TestSenLongSeriesPathMatchesBruteForce(t *testing.T) {
	if testing.Short() {
		t.Skip("sorts about 3 million slopes")
	}
	rng := rand.New(rand.NewPCG(41, 43))
	n := bigSen + 2000
	for _, kind := range []int{2, 5} {
		tt, yy := randSeries(rng, n, kind)
		blocks := []int{0}
		for b := 24; b < n; b += 24 {
			blocks = append(blocks, b)
		}
		blocks = append(blocks, n)
		d, order := bruteOrder(tt, yy, blocks)
		N := int64(len(order))
		fast := newSenData(tt, yy, blocks)
		if len(fast.pts) != 0 || fast.maxOrders != 3 {
			t.Fatalf("n=%d: not the long-series settings", n)
		}
		ks := []int64{(N + 1) / 2, N/2 + 1, N/2 - N/50, N/2 + N/50, 1, N, 1 + rng.Int64N(N), 1 + rng.Int64N(N)}
		got := fast.selectRanks(ks)
		fast.release()
		for i, k := range ks {
			want := order[k-1]
			if d.cmpSlopes(got[i], want, d.slopeF(got[i]), d.slopeF(want)) != 0 {
				t.Fatalf("kind=%d rank %d of %d: selected %v, brute force %v", kind, k, N, d.slopeF(got[i]), d.slopeF(want))
			}
		}
		// the whole estimate with its interval and medians
		res, err := senSlopeBlocks(tt, yy, blocks, 0.95, 1e9, true)
		if err != nil {
			t.Fatal(err)
		}
		lo, hi := d.exactSlope(order[(N+1)/2-1]), d.exactSlope(order[N/2])
		want := lo
		if N%2 == 0 {
			want = (lo + hi) / 2
		}
		if res.Slope != want {
			t.Fatalf("kind=%d: slope %v, brute force %v", kind, res.Slope, want)
		}
		if res.Lower != d.exactSlope(order[res.LowerRank-1]) || res.Upper != d.exactSlope(order[res.UpperRank-1]) {
			t.Fatalf("kind=%d: interval %v..%v (ranks %d, %d), brute force %v..%v", kind, res.Lower, res.Upper,
				res.LowerRank, res.UpperRank, d.exactSlope(order[res.LowerRank-1]), d.exactSlope(order[res.UpperRank-1]))
		}
		if res.MedianY != Median(yy) || res.MedianT != Median(tt) {
			t.Fatalf("kind=%d: medians %v, %v; want %v, %v", kind, res.MedianT, res.MedianY, Median(tt), Median(yy))
		}
	}
}

// TestSenSelectionSmallRounds forces tiny samples, enumeration limits and
// order caches (as long series use smaller ones) so that selection goes
// through many rounds (windows that miss their target,
// groups of targets splitting, cuts on tied slopes) and checks every rank
// asked for together against the brute-force order.
func TestSenSelectionSmallRounds(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 37))
	for _, n := range []int{5, 17, 60, 150, 400} {
		for kind := 0; kind < 6; kind++ {
			for _, nb := range []int{1, 3} {
				tt, yy := randSeries(rng, n, kind)
				blocks := []int{0}
				for b := 1; b <= nb; b++ {
					blocks = append(blocks, n*b/nb)
				}
				d, order := bruteOrder(tt, yy, blocks)
				N := int64(len(order))
				if N == 0 {
					continue
				}
				for _, sizes := range [][4]int{{4, 8, 2, 12}, {16, 32, 16, 2}, {40, 200, 50, 6}} {
					fast := newSenData(tt, yy, blocks)
					fast.limit, fast.mFirst, fast.mNext = int64(sizes[0]), sizes[1], sizes[2]
					fast.maxOrders = sizes[3] // few cached orders: evictions
					ks := []int64{(N + 1) / 2, N/2 + 1, max(1, N/2-N/20), min(N, N/2+N/20), 1, N}
					for i := 0; i < 4; i++ {
						ks = append(ks, 1+rng.Int64N(N))
					}
					got := fast.selectRanks(ks)
					for i, k := range ks {
						want := order[k-1]
						if d.cmpSlopes(got[i], want, d.slopeF(got[i]), d.slopeF(want)) != 0 {
							t.Fatalf("n=%d kind=%d blocks=%d sizes=%v rank %d: selected %v (pair %v), brute force %v (pair %v)",
								n, kind, nb, sizes, k, d.slopeF(got[i]), got[i], d.slopeF(want), want)
						}
					}
				}
			}
		}
	}
}

// TestExactSelectNearTies checks the final selection step on slopes that
// differ only in the last bits or not at all (chains longer than the first
// window), against an exact sort.
func TestExactSelectNearTies(t *testing.T) {
	// y_i = i·s exactly representable slopes plus tiny perturbations: pairs
	// (0,i) have slopes s + ε_i/i that round to nearby floating values.
	n := 200
	tt := make([]float64, n)
	yy := make([]float64, n)
	for i := range tt {
		tt[i] = float64(i) * 3
		yy[i] = float64(i)*0.1 + float64(i%3)*1e-15
	}
	d, order := bruteOrder(tt, yy, []int{0, n})
	var items []slopeItem
	for _, p := range order {
		items = append(items, slopeItem{d.slopeF(p), p})
	}
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := 0; trial < 50; trial++ {
		rng.Shuffle(len(items), func(i, j int) { items[i], items[j] = items[j], items[i] })
		r := rng.IntN(len(items))
		got := d.exactSelect(items, r)
		want := order[r]
		if d.cmpSlopes(got, want, d.slopeF(got), d.slopeF(want)) != 0 {
			t.Fatalf("rank %d: %v vs %v", r, d.slopeF(got), d.slopeF(want))
		}
	}
}

// TestSelectItemMatchesSort: the selection leaves it[:k] ≤ it[k] ≤ it[k+1:]
// and returns the k-th smallest by f, as a full sort does (common
// practice), on short and long ranges (the sampling step starts above 600
// elements), with many ties and with ±Inf.
func TestSelectItemMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, n := range []int{1, 2, 3, 10, 600, 601, 602, 5000, 40000} {
		for _, distinct := range []int{2, 50, 1 << 30} {
			it := make([]slopeItem, n)
			for i := range it {
				it[i] = slopeItem{f: float64(rng.IntN(distinct)), r: slopeRef{int32(i), int32(i + 1)}}
			}
			if n > 5 {
				it[1].f, it[3].f = math.Inf(-1), math.Inf(1)
			}
			want := make([]float64, n)
			for i := range it {
				want[i] = it[i].f
			}
			slices.Sort(want)
			for _, k := range []int{0, n / 3, n / 2, n - 1, rng.IntN(n)} {
				work := slices.Clone(it)
				got := selectItem(work, k)
				if got.f != want[k] || work[k] != got {
					t.Fatalf("n=%d distinct=%d k=%d: got %v, want %v", n, distinct, k, got.f, want[k])
				}
				for i := range work {
					if (i < k && work[i].f > got.f) || (i > k && work[i].f < got.f) {
						t.Fatalf("n=%d distinct=%d k=%d: it[%d] = %v on the wrong side of %v", n, distinct, k, i, work[i].f, got.f)
					}
				}
				// a permutation of the input
				slices.SortFunc(work, func(a, b slopeItem) int { return int(a.r.a - b.r.a) })
				for i := range work {
					if work[i] != it[i] {
						t.Fatalf("n=%d k=%d: items lost or duplicated", n, k)
					}
				}
			}
		}
	}
}

// TestMKVarSSortedMatchesMannKendall: the Sen interval's Var(S), taken from
// a sorted copy of y, is bit for bit MannKendall(y).VarS (the same tie
// formula, common practice), with and without ties.
func TestMKVarSSortedMatchesMannKendall(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 9))
	for _, n := range []int{2, 3, 10, 1000} {
		for _, levels := range []int{2, 7, 1 << 30} {
			y := make([]float64, n)
			for i := range y {
				y[i] = float64(rng.IntN(levels)) / 8
			}
			mk, err := MannKendall(y)
			if err != nil {
				t.Fatal(err)
			}
			s := slices.Clone(y)
			slices.Sort(s)
			if got := mkVarSSorted(s); got != mk.VarS {
				t.Fatalf("n=%d levels=%d: %v, MannKendall %v", n, levels, got, mk.VarS)
			}
		}
	}
}

// ratSlopes lists every pairwise slope as an exact rational, sorted (the
// definition, without floating-point arithmetic).
func ratSlopes(t, y []float64) []*big.Rat {
	var s []*big.Rat
	for i := range t {
		for j := i + 1; j < len(t); j++ {
			dy := new(big.Rat).Sub(new(big.Rat).SetFloat64(y[j]), new(big.Rat).SetFloat64(y[i]))
			dt := new(big.Rat).Sub(new(big.Rat).SetFloat64(t[j]), new(big.Rat).SetFloat64(t[i]))
			s = append(s, dy.Quo(dy, dt))
		}
	}
	slices.SortFunc(s, func(a, b *big.Rat) int { return a.Cmp(b) })
	return s
}

// TestSenOrderStatisticsMatchEnumeration checks all four order statistics
// of SenSlope (the two middle ranks behind the median and the interval's
// two ranks) against a full enumeration and sort of the pairwise slopes, on
// random n up to a few thousand: regular and irregular time steps with
// quantised values, so that values tie and many pairs share a slope. With
// values on a binary grid and integer times every difference is exact, so
// the sorted floating-point quotients are the correctly rounded exact
// slopes in order (rounding is monotone) and the k-th of them is the value
// SenSlope must return; for decimal values and small n the reference is the
// sort of exact rationals (math/big). Ties in time are rejected.
func TestSenOrderStatisticsMatchEnumeration(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 43))
	sizes := []int{2, 3, 4, 6, 9, 25, 100, 257}
	for range 6 {
		sizes = append(sizes, 2+rng.IntN(1500))
	}
	if !testing.Short() {
		sizes = append(sizes, 2000+rng.IntN(1500))
	}
	for _, n := range sizes {
		for kind := 0; kind < 4; kind++ {
			tt := make([]float64, n)
			yy := make([]float64, n)
			tc := float64(1.6e9)
			for i := range tt {
				if kind%2 == 0 {
					tc += 3600 // regular steps: many pairs with equal slopes
				} else {
					tc += float64(1 + rng.IntN(5000))
				}
				tt[i] = tc
				switch kind / 2 {
				case 0: // quarter steps with a trend: ties and repeated differences
					yy[i] = math.Round(rng.NormFloat64()*8+float64(i)*0.01) / 4
				default: // runs of equal values (a gauge stuck at a level)
					if i == 0 || rng.IntN(4) == 0 {
						yy[i] = float64(rng.IntN(6)) * 0.5
					} else {
						yy[i] = yy[i-1]
					}
				}
			}
			conf := []float64{0.8, 0.9, 0.95, 0.99}[rng.IntN(4)]
			r, err := SenSlope(tt, yy, conf)
			if err != nil {
				t.Fatal(err)
			}
			fl := bruteFloat(tt, yy)
			N := int64(len(fl))
			if r.Pairs != N {
				t.Fatalf("n=%d kind=%d: %d pairs, enumeration %d", n, kind, r.Pairs, N)
			}
			med := fl[(N-1)/2]
			if N%2 == 0 {
				med = (fl[N/2-1] + fl[N/2]) / 2
			}
			if r.Slope != med || r.Lower != fl[r.LowerRank-1] || r.Upper != fl[r.UpperRank-1] {
				t.Fatalf("n=%d kind=%d conf=%v: slope %v [%v, %v] (ranks %d, %d), enumeration %v [%v, %v]",
					n, kind, conf, r.Slope, r.Lower, r.Upper, r.LowerRank, r.UpperRank, med, fl[r.LowerRank-1], fl[r.UpperRank-1])
			}
		}
	}
	// decimal values (differences not exact in binary): exact rationals
	for _, n := range []int{2, 5, 40, 150, 300} {
		tt, yy := randSeries(rng, n, 5)
		for i := range tt {
			if i%3 == 0 {
				tt[i] = 1.6e9 + float64(i)*900 // part regular, part irregular steps
			} else {
				tt[i] = 1.6e9 + float64(i)*900 + float64(rng.IntN(899))
			}
		}
		r, err := SenSlope(tt, yy, 0.95)
		if err != nil {
			t.Fatal(err)
		}
		ex := ratSlopes(tt, yy)
		N := len(ex)
		f := func(k int64) float64 { v, _ := ex[k-1].Float64(); return v }
		med := f(int64(N+1) / 2)
		if N%2 == 0 {
			med = (f(int64(N/2)) + f(int64(N/2+1))) / 2
		}
		if r.Slope != med || r.Lower != f(r.LowerRank) || r.Upper != f(r.UpperRank) {
			t.Fatalf("n=%d decimal: slope %v [%v, %v], exact %v [%v, %v]", n, r.Slope, r.Lower, r.Upper, med, f(r.LowerRank), f(r.UpperRank))
		}
	}
	// ties in time: an error naming the position
	if _, err := SenSlope([]float64{1, 2, 2, 3}, []float64{1, 2, 3, 4}, 0.95); err == nil || !strings.Contains(err.Error(), "t[2]") {
		t.Fatalf("tied times: err = %v", err)
	}
	if _, err := SenSlope([]float64{1, 3, 2}, []float64{1, 2, 3}, 0.95); err == nil {
		t.Fatal("decreasing times: no error")
	}
}

// TestSortFloatsMatchesSort: the radix sort used for the medians orders
// like slices.Sort (common practice: any correct sort gives the same
// sequence of values), with negative values, zeros of both signs, ties,
// ±Inf, subnormal and huge magnitudes, below and above the length where
// it takes over.
func TestSortFloatsMatchesSort(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 17))
	d := new(senData)
	for _, n := range []int{0, 1, 5, 511, 512, 513, 3000, 20000, bigSen + 3} {
		for kind := 0; kind < 3; kind++ {
			s := make([]float64, n)
			for i := range s {
				switch kind {
				case 0:
					s[i] = rng.NormFloat64() * 1e3
				case 1: // few levels, many ties, both zeros
					s[i] = []float64{-2.5, math.Copysign(0, -1), 0, 1.25, 7}[rng.IntN(5)]
				default:
					s[i] = []float64{math.Inf(-1), -1e300, -5e-324, 5e-324, 1e-310, 3, 1e300, math.Inf(1)}[rng.IntN(8)] * float64(1+rng.IntN(3))
				}
			}
			want := slices.Clone(s)
			slices.Sort(want)
			d.sortFloats(s)
			for i := range s {
				if s[i] != want[i] { // −0 == +0: the order between zeros of the two signs is free, as in slices.Sort
					t.Fatalf("n=%d kind=%d: position %d is %v, sorted %v", n, kind, i, s[i], want[i])
				}
				// from 512 values on, both sorts used (radix, and
				// slices.Sort beyond bigSen) leave −0 before +0 (the
				// order of their integer images)
				if n >= 512 && i > 0 && s[i] == 0 && s[i-1] == 0 && math.Signbit(s[i]) && !math.Signbit(s[i-1]) {
					t.Fatalf("n=%d kind=%d: +0 before −0 at position %d", n, kind, i)
				}
			}
		}
	}
}

// TestSenSessionMatchesEnumeration: the median selected first and the
// interval selected afterwards on the same state (the summary's order,
// where the interval's variance depends on the median) give the order
// statistics of a full enumeration and sort of the pairwise slopes, for
// variances from zero (ranks 1 and N) through the Mann–Kendall one to
// many times it (ranks far outside the median's first window). Values on a
// quarter grid and integer times make every difference exact, so the
// sorted quotients are the correctly rounded exact slopes in order.
func TestSenSessionMatchesEnumeration(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for _, n := range []int{2, 3, 10, 200, 1500, 3000} {
		tt := make([]float64, n)
		yy := make([]float64, n)
		tc := 1.6e9
		for i := range tt {
			tc += float64(1 + rng.IntN(7200))
			tt[i] = tc
			yy[i] = math.Round(rng.NormFloat64()*6+float64(i)*0.02) / 4
		}
		fl := bruteFloat(tt, yy)
		N := int64(len(fl))
		med := fl[(N-1)/2]
		if N%2 == 0 {
			med = (fl[N/2-1] + fl[N/2]) / 2
		}
		mk, err := MannKendall(yy)
		if err != nil {
			t.Fatal(err)
		}
		for _, v := range []float64{0, 1e-9, mk.VarS, 7 * mk.VarS, 400 * mk.VarS} {
			s, err := newSenSession(tt, yy)
			if err != nil {
				t.Fatal(err)
			}
			if m := s.median(); m.Slope != med {
				t.Fatalf("n=%d: median %v, enumeration %v", n, m.Slope, med)
			}
			r, err := s.withInterval(0.95, v)
			s.close()
			if err != nil {
				t.Fatal(err)
			}
			want, err := SenSlopeWithVar(tt, yy, 0.95, v)
			if err != nil {
				t.Fatal(err)
			}
			if r.LowerRank != want.LowerRank || r.UpperRank != want.UpperRank || r.VarS != want.VarS {
				t.Fatalf("n=%d varS=%v: ranks %d, %d (Var %v), SenSlopeWithVar %d, %d (Var %v)", n, v, r.LowerRank, r.UpperRank, r.VarS, want.LowerRank, want.UpperRank, want.VarS)
			}
			if r.Slope != med || r.Lower != fl[r.LowerRank-1] || r.Upper != fl[r.UpperRank-1] {
				t.Fatalf("n=%d varS=%v: %v [%v, %v] (ranks %d, %d), enumeration %v [%v, %v]",
					n, v, r.Slope, r.Lower, r.Upper, r.LowerRank, r.UpperRank, med, fl[r.LowerRank-1], fl[r.UpperRank-1])
			}
		}
	}
	s, err := newSenSession([]float64{1, 2, 3}, []float64{1, 3, 2})
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	if _, err := s.withInterval(1, 1); err == nil {
		t.Fatal("confidence 1: no error")
	}
}

// TestSenSelectionExtremeMagnitudes: the cut evaluation quantises the
// keys y − s·x by a power-of-two scale of max|y| + |s|·max|x| (keyQuant);
// values near the ends of the float64 range (keys that overflow, scales
// that would), tiny values, and a large offset with small differences
// (keys crowded into a small part of their bound) must still give the
// order statistics of the exact sort of every pairwise slope (bruteOrder,
// no cuts, no sampling), with forced small rounds so that many cuts are
// evaluated. (Keys within keyTol of each other, as for tiny values, make a
// block one chain sorted with the exact comparator: correct, but slow.)
func TestSenSelectionExtremeMagnitudes(t *testing.T) {
	rng := rand.New(rand.NewPCG(53, 59))
	for _, n := range []int{40, 120} {
		for _, tc := range []struct {
			name  string
			scale float64
			off   float64
		}{{"huge", 1e300, 0}, {"near max", 1e307, 0}, {"tiny", 1e-300, 0}, {"subnormal", 1e-318, 0}, {"offset", 1e-3, 1e6}} {
			if tc.name == "subnormal" && n > 40 {
				continue // every comparison exact in rationals: slow
			}
			tt, yy := randSeries(rng, n, 2)
			for i := range yy {
				yy[i] = tc.off + yy[i]*tc.scale
			}
			d, order := bruteOrder(tt, yy, []int{0, n})
			N := int64(len(order))
			ks := []int64{1, N, (N + 1) / 2, N/2 + 1, 1 + rng.Int64N(N), 1 + rng.Int64N(N)}
			for _, sizes := range [][3]int{{8, 16, 8}, {0, 0, 0}} {
				fast := newSenData(tt, yy, []int{0, n})
				if sizes[0] > 0 {
					fast.limit, fast.mFirst, fast.mNext = int64(sizes[0]), sizes[1], sizes[2]
				}
				got := fast.selectRanks(ks)
				for i, k := range ks {
					want := order[k-1]
					if d.cmpSlopes(got[i], want, d.slopeF(got[i]), d.slopeF(want)) != 0 {
						t.Fatalf("%s n=%d sizes=%v rank %d: selected pair %v, brute force %v", tc.name, n, sizes, k, got[i], want)
					}
				}
				fast.release()
			}
		}
	}
}
