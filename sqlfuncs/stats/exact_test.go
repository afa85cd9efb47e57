package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestSignDiffProdExact compares the expansion-based predicate with math/big
// rationals, on random inputs and on near-degenerate ones (products equal
// or differing in the last bits), where a plain float evaluation fails.
func TestSignDiffProdExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	pick := func() float64 {
		switch rng.IntN(4) {
		case 0:
			return math.Round(rng.NormFloat64()*100) / 4
		case 1:
			return 1.6e9 + float64(rng.IntN(1e6))
		case 2:
			return rng.NormFloat64() * math.Pow(10, float64(rng.IntN(20)-10))
		default:
			return math.Round(rng.NormFloat64()*1000) / 100 // decimal, not dyadic
		}
	}
	zeros := 0
	for i := 0; i < 200000; i++ {
		v := [8]float64{pick(), pick(), pick(), pick(), pick(), pick(), pick(), pick()}
		if i%3 == 0 {
			// make (a1−a2)(b1−b2) and (c1−c2)(d1−d2) equal in exact arithmetic or nearly so
			v[4], v[5], v[6], v[7] = v[2], v[3], v[0], v[1]
			if i%2 == 0 {
				v[4] = math.Nextafter(v[4], math.Inf(1))
			}
		}
		got := signDiffProd(v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7])
		want := signDiffProdRat(v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7])
		if got != want {
			t.Fatalf("%v: sign %d, exact %d", v, got, want)
		}
		if want == 0 {
			zeros++
		}
	}
	if zeros == 0 {
		t.Fatal("no exactly-degenerate case was exercised")
	}
	// out-of-range magnitudes take the rational path
	if signDiffProd(1e-200, 0, 1e-200, 0, 0, 0, 0, 0) != 1 || signDiffProd(1e200, 0, -1e200, 0, 0, 0, 0, 0) != -1 {
		t.Error("extreme magnitudes")
	}
}
