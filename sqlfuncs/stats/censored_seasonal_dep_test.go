package stats

// Checks of the between-season covariance for censored values: by
// enumeration of all orders of the cycles (its definition under the null
// model of exchangeable cycles) on complete matrices with one and several
// reporting limits, and, without censoring, against SeasonalDependent
// (Dietz & Killeen 1981 / Hirsch & Slack 1984, checked against
// scipy.stats.mstats.kendalltau_seasonal in kendall_test.go). The
// single-limit scipy check is in censored_ref_test.go.

import (
	"math"
	"math/rand/v2"
	"testing"
)

// censPermSeasonalVariance is Var(Σ_g S_g) over all n! orders of the rows
// (cycles) of a complete n × m matrix, the same order in every season.
func censPermSeasonalVariance(x [][]float64, cx [][]Censoring) float64 {
	n, m := len(x), len(x[0])
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	var count, sum, sumSq float64
	var rec func(k int)
	rec = func(k int) {
		if k == n {
			var s int64
			for g := 0; g < m; g++ {
				for i := 0; i < n; i++ {
					for j := i + 1; j < n; j++ {
						a, b := perm[i], perm[j]
						s += int64(censBruteOrder(x[a][g], cx[a][g], x[b][g], cx[b][g]))
					}
				}
			}
			count++
			sum += float64(s)
			sumSq += float64(s) * float64(s)
			return
		}
		for i := k; i < n; i++ {
			perm[k], perm[i] = perm[i], perm[k]
			rec(k + 1)
			perm[k], perm[i] = perm[i], perm[k]
		}
	}
	rec(0)
	mean := sum / count
	return sumSq/count - mean*mean
}

func TestCensoredSeasonalDependentIsPermutationCovariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 10))
	for k := 0; k < 40; k++ {
		n := 2 + rng.IntN(5) // up to 6! orders
		m := 1 + rng.IntN(4)
		limits := [][]float64{{2}, {1, 3}, {0.5, 2, 4.5}}[k%3]
		x := make([][]float64, n)
		cx := make([][]Censoring, n)
		var y []float64
		var c []Censoring
		var season, cycle []int
		for i := 0; i < n; i++ {
			x[i], cx[i] = censRandom(rng, m, limits, k%4 == 3)
			if k%2 == 1 {
				// seasons that move together: a common cycle effect
				shift := math.Round(rng.NormFloat64() * 2)
				for g := range x[i] {
					if cx[i][g] == Uncensored {
						x[i][g] += shift
					}
				}
			}
			for g := 0; g < m; g++ {
				y, c = append(y, x[i][g]), append(c, cx[i][g])
				season, cycle = append(season, g), append(cycle, 2000+i)
			}
		}
		sk, err := CensoredSeasonalKendall(y, c, season, m)
		if err != nil {
			t.Fatal(err)
		}
		dep, err := CensoredSeasonalDependent(y, c, season, cycle, m, sk.S)
		if err != nil {
			t.Fatal(err)
		}
		want := censPermSeasonalVariance(x, cx)
		if !censRelEq(dep.VarS, want, 1e-9) {
			t.Errorf("k=%d n=%d m=%d: Var_dep %v, permutation variance %v (x %v cx %v)", k, n, m, dep.VarS, want, x, cx)
		}
		if m == 1 && !censRelEq(dep.VarS, sk.VarS, 1e-12) {
			t.Errorf("k=%d: one season: Var_dep %v, Var %v", k, dep.VarS, sk.VarS)
		}
		if dep.Cycles != n || (want > 0 && !censRelEq(dep.Z, MKZ(sk.S, want), 1e-9)) {
			t.Errorf("k=%d: cycles %d z %v", k, dep.Cycles, dep.Z)
		}
	}
}

// TestCensoredSeasonalDependentWithoutCensoring: with no censoring, missing
// cells and ties, the result is SeasonalDependent's.
func TestCensoredSeasonalDependentWithoutCensoring(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 11))
	for k := 0; k < 40; k++ {
		n := 2 + rng.IntN(25)
		m := 1 + rng.IntN(12)
		var y []float64
		var season, cycle []int
		for i := 0; i < n; i++ {
			for g := 0; g < m; g++ {
				if rng.IntN(5) == 0 {
					continue // missing cell
				}
				y = append(y, math.Round(rng.NormFloat64()*2)+0.1*float64(i))
				season, cycle = append(season, g), append(cycle, i)
			}
		}
		if len(y) == 0 {
			continue
		}
		c := make([]Censoring, len(y))
		want, err := SeasonalDependent(y, season, cycle, m, 3)
		if err != nil {
			t.Fatal(err)
		}
		got, err := CensoredSeasonalDependent(y, c, season, cycle, m, 3)
		if err != nil {
			t.Fatal(err)
		}
		if !censRelEq(got.VarS, want.VarS, 1e-12) || got.Cycles != want.Cycles || !censRelEq(got.P, want.P, 1e-12) {
			t.Errorf("k=%d: %+v, SeasonalDependent %+v", k, got, want)
		}
	}
	if _, err := CensoredSeasonalDependent([]float64{1, 2}, []Censoring{0, -1}, []int{0, 0}, []int{5, 5}, 1, 0); err == nil {
		t.Error("two values in one cell accepted")
	}
}
