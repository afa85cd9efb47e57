package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// sparseGrid returns a grid of n slots with p readings at random slots.
func sparseGrid(rng *rand.Rand, n, p int) []float64 {
	x := make([]float64, n)
	for i := range x {
		x[i] = math.NaN()
	}
	for k := 0; k < p; k++ {
		x[rng.IntN(n)] = rng.NormFloat64()*3 + 10
	}
	return x
}

// TestSparseACVFMatchesDirect: on sparsely filled grids the sums over
// present pairs give the direct path's pair counts exactly and its
// autocovariances to rounding (the definitions are those of
// SampleACVFDirect, itself checked against R's acf with na.pass in
// acf_test.go).
func TestSparseACVFMatchesDirect(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 19))
	sparseCases := 0
	for k := 0; k < 200; k++ {
		n := 50 + rng.IntN(3000)
		x := sparseGrid(rng, n, 2+rng.IntN(40))
		L := rng.IntN(n + 10)
		if sparse(n, countPresent(x), min(L, n-1)) {
			sparseCases++
		}
		got := SampleACVF(x, L)
		want := SampleACVFDirect(x, L)
		if got.N != want.N || got.NSlots != want.NSlots || got.Mean != want.Mean || len(got.ACVF) != len(want.ACVF) {
			t.Fatalf("case %d: header %+v vs %+v", k, got, want)
		}
		for h := range want.ACVF {
			if got.Pairs[h] != want.Pairs[h] {
				t.Fatalf("case %d lag %d: pairs %d, direct %d", k, h, got.Pairs[h], want.Pairs[h])
			}
			g, w := got.ACVF[h], want.ACVF[h]
			if math.IsNaN(g) != math.IsNaN(w) || math.Abs(g-w) > 1e-12*math.Abs(want.ACVF[0]) {
				t.Fatalf("case %d lag %d: acvf %v, direct %v", k, h, g, w)
			}
		}
	}
	if sparseCases < 100 {
		t.Fatalf("only %d of 200 cases took the sparse path", sparseCases)
	}
}

// TestCrossAllMatchesCrossAt: every lag of CrossAll is CrossAt's, on
// sparse grids (sums over present pairs) and dense ones (CrossAt itself;
// checked against statsmodels and R in crosscorr_test.go).
func TestCrossAllMatchesCrossAt(t *testing.T) {
	rng := rand.New(rand.NewPCG(23, 29))
	for k := 0; k < 200; k++ {
		n := 20 + rng.IntN(2000)
		p := 2 + rng.IntN(40)
		if k%4 == 0 {
			p = n // dense
		}
		x := sparseGrid(rng, n, p)
		y := make([]float64, n)
		for i := range y {
			y[i] = math.NaN()
			if !math.IsNaN(x[i]) {
				y[i] = 0.5*x[i] + rng.NormFloat64()
			}
		}
		st := CrossPrepare(x, y)
		L := rng.IntN(n + 10)
		got := CrossAll(x, y, st, L)
		for j, c := range got {
			w := CrossAt(x, y, st, j-L)
			tol := 1e-12 * math.Sqrt(st.VarX*st.VarY)
			if c.Lag != w.Lag || c.Pairs != w.Pairs || math.IsNaN(c.Cov) != math.IsNaN(w.Cov) ||
				math.Abs(c.Cov-w.Cov) > tol || math.IsNaN(c.Corr) != math.IsNaN(w.Corr) || math.Abs(c.Corr-w.Corr) > 1e-12 {
				t.Fatalf("case %d lag %d: %+v, CrossAt %+v", k, j-L, c, w)
			}
		}
	}
}

// TestSparseGridManyLags: a few dozen readings on a grid of MaxGridSlots
// slots with thousands of lags (what a fine step over a long record gives)
// is summed over the present pairs; the pair counts are checked against a
// count over the readings themselves.
func TestSparseGridManyLags(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 37))
	n := MaxGridSlots
	x := sparseGrid(rng, n, 35)
	p := presentSlots(x)
	a := SampleACVF(x, 3999)
	if a.N != len(p) || a.Pairs[0] != len(p) {
		t.Fatalf("n %d pairs[0] %d, want %d", a.N, a.Pairs[0], len(p))
	}
	want := make([]int, 4000)
	for i, u := range p {
		for _, v := range p[i+1:] {
			if v-u < 4000 {
				want[v-u]++
			}
		}
	}
	for h := 1; h < 4000; h++ {
		if a.Pairs[h] != want[h] {
			t.Fatalf("lag %d: %d pairs, want %d", h, a.Pairs[h], want[h])
		}
	}
	cs := CrossAll(x, x, CrossPrepare(x, x), 3999)
	if cs[3999].Pairs != len(p) || cs[3999].Corr != 1 {
		t.Fatalf("cross lag 0: %+v", cs[3999])
	}
}
