package stats

import (
	"math/rand/v2"
	"strconv"
	"testing"
)

// Benchmarks of the censored rank statistics on monthly-style records with
// two reporting limits (no timing is asserted; see BENCHMARKS.md).

func censBenchData(n int) (t, y []float64, c []Censoring) {
	rng := rand.New(rand.NewPCG(5, uint64(n)))
	t = make([]float64, n)
	y, c = censRandom(rng, n, []float64{1, 3}, false)
	for i := range t {
		t[i] = 1.5e9 + float64(i)*2.6e6
	}
	return t, y, c
}

func BenchmarkCensoredMannKendall(b *testing.B) {
	for _, n := range []int{500, 100_000} {
		_, y, c := censBenchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				if _, err := CensoredMannKendall(y, c); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkAkritasTheilSen(b *testing.B) {
	for _, n := range []int{500, 2000} {
		t, y, c := censBenchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				if _, err := AkritasTheilSen(t, y, c); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkAkritasTheilSenInterval: n = 2,000 sorts its steps in memory;
// n = 10,000 (5·10⁷ steps) takes the O(n)-memory passes.
func BenchmarkAkritasTheilSenInterval(b *testing.B) {
	for _, n := range []int{2000, 10_000} {
		t, y, c := censBenchData(n)
		b.Run("n="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				if _, err := AkritasTheilSenInterval(t, y, c, 0.95); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
