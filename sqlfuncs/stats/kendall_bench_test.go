package stats

// Benchmarks of the Mann–Kendall and Theil–Sen kernels, beside the O(n²)
// reference implementations (pair loop for S, materialised and sorted slopes
// for Sen) at n = 10,000, so that both are measured in the same run:
//
//	go test -run '^$' -bench 'MannKendall|SenSlope|BruteForce' -benchtime 3x ./sqlfuncs/stats/

import (
	"fmt"
	"math"
	"slices"
	"testing"
)

func benchSeries(n int) (t, y []float64) {
	t = make([]float64, n)
	y = make([]float64, n)
	for i := range t {
		t[i] = 1.5e9 + float64(i)*3600 + float64((i*7919)%600)
		// a trend, a cycle and pseudo-random noise quantised to 0.01 (ties)
		y[i] = math.Round((float64(i)*1e-4+math.Sin(float64(i)/300)+float64((i*104729)%1000)/700)*100) / 100
	}
	return
}

func BenchmarkMannKendall(b *testing.B) {
	for _, n := range []int{1000, 10000, 100000} {
		_, y := benchSeries(n)
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				if _, err := MannKendall(y); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkSenSlope(b *testing.B) {
	for _, n := range []int{1000, 10000, 100000} {
		t, y := benchSeries(n)
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				// median and the 95 % interval: four order statistics
				if _, err := SenSlope(t, y, 0.95); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// bruteMK is the O(n²) definition of S.
func bruteMK(y []float64) int64 {
	var s int64
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			if y[j] > y[i] {
				s++
			} else if y[j] < y[i] {
				s--
			}
		}
	}
	return s
}

// bruteSen materialises all n(n−1)/2 slopes (O(n²) memory) and sorts them.
func bruteSen(t, y []float64) float64 {
	s := make([]float64, 0, len(t)*(len(t)-1)/2)
	for i := range t {
		for j := i + 1; j < len(t); j++ {
			s = append(s, (y[j]-y[i])/(t[j]-t[i]))
		}
	}
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

func BenchmarkBruteForce(b *testing.B) {
	t, y := benchSeries(10000)
	b.Run("mann_kendall/n=10000", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			bruteMK(y)
		}
	})
	b.Run("sen_slope/n=10000", func(b *testing.B) {
		b.ReportAllocs()
		for i := 0; i < b.N; i++ {
			bruteSen(t, y)
		}
	})
}

// TestBenchReferencesAgree keeps the brute-force references honest on a
// smaller size (they are what the benchmarks compare against).
func TestBenchReferencesAgree(t *testing.T) {
	tt, yy := benchSeries(1500)
	mk, _ := MannKendall(yy)
	if s := bruteMK(yy); s != mk.S {
		t.Fatalf("S: brute %d, kernel %d", s, mk.S)
	}
	r, _ := SenSlope(tt, yy, 0)
	if bs := bruteSen(tt, yy); math.Abs(bs-r.Slope) > 1e-15*math.Abs(bs) {
		t.Fatalf("Sen: brute %v, kernel %v", bs, r.Slope)
	}
}
