package stats

import (
	"math"
	"math/rand/v2"
	"testing"
)

// pairCounts returns, over the pairs a Sen slope and a Kendall test are
// built on (all pairs, or the within-season pairs of season-grouped values),
// the numbers of positive, negative and zero slopes and all pairs. Times
// are distinct, so a slope's sign is the sign of y_b − y_a (MannKendall's
// concordant, discordant and tied pairs).
func pairCounts(groups [][]float64) (P, Q, T, N int64) {
	for _, g := range groups {
		if len(g) < 2 {
			continue
		}
		mk, _ := MannKendall(g)
		P, Q, T, N = P+mk.Concor, Q+mk.Discor, T+mk.TiedY, N+mk.Pairs
	}
	return
}

// pairingDisagreement checks "p ≤ 1 − confidence" against "the interval
// excludes 0". They may disagree only by the discreteness documented in
// kendall.go: the count of negative (or, for a downward trend, positive)
// slopes plus half the zero slopes lies within half a rank, plus half a rank
// per zero slope, of (N − C)/2 with C = z·√varS. It returns whether they
// disagree and, if so, whether within that band.
func pairingDisagreement(p, lower, upper, varS, conf float64, P, Q, T, N int64) (disagree, within bool) {
	sig := p <= 1-conf
	excl := lower > 0 || upper < 0
	if sig == excl {
		return false, true
	}
	z := rankACFZ
	if conf != 0.95 {
		z = math.Sqrt2 * math.Erfinv(conf)
	}
	mid := (float64(N) - z*math.Sqrt(varS)) / 2
	half := float64(T) / 2
	d := math.Min(math.Abs(float64(Q)+half-mid), math.Abs(float64(P)+half-mid))
	return true, d <= 0.5+half+1e-9
}

func randomTrendSeries(rng *rand.Rand, n int, step, slope, phi, quantum float64) (t, y []float64) {
	e := 0.0
	for i := 0; i < n; i++ {
		e = phi*e + rng.NormFloat64()
		v := slope*float64(i) + e + 2*math.Sin(2*math.Pi*float64(i)*step/SecondsPerYear)
		if quantum > 0 {
			v = math.Round(v/quantum) * quantum
		}
		t = append(t, 1.3e9+step*float64(i))
		y = append(y, v)
	}
	return t, y
}

// Over random series — serially correlated, with and without quantised
// (tied) values, with weak and strong trends — the stored test and the Sen
// interval beside it never disagree beyond the documented discreteness,
// with and without a seasonal model.
func TestSummaryIntervalPairsWithTest(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261204, 14))
	disagreements := 0
	for k := 0; k < 120; k++ {
		seasonal := k%3 == 2
		n := 40 + rng.IntN(300)
		step := 86400.0 * 7
		if seasonal {
			n = 60 + rng.IntN(120)
			step = SecondsPerYear / 12
		}
		quantum := []float64{0, 0.1, 0.5, 1}[k%4]
		slope := []float64{0, 0.002, 0.01, 0.05}[rng.IntN(4)]
		tt, y := randomTrendSeries(rng, n, step, slope, 0.3+0.6*rng.Float64(), quantum)
		o := SummaryOptions{MaxLag: 12, Alpha: 0.05, Confidence: []float64{0.95, 0.9}[k%2], MinN: 10}
		if seasonal {
			o.PeriodS, o.Harmonics, o.Seasons = SecondsPerYear, 2, 12
		}
		s := SummarizeSeries(tt, y, o)
		if s.MKP == nil || s.SenLower == nil || s.SenVarS == nil {
			t.Fatalf("case %d: missing figures (%q)", k, s.Problem)
		}
		var groups [][]float64
		if seasonal {
			_, by, season := SeasonBlocks(tt, y, o.PeriodS, o.Seasons)
			groups = make([][]float64, o.Seasons)
			for i, g := range season {
				groups[g] = append(groups[g], by[i])
			}
		} else {
			groups = [][]float64{y}
		}
		P, Q, T, N := pairCounts(groups)
		dis, within := pairingDisagreement(*s.MKP, *s.SenLower, *s.SenUpper, *s.SenVarS, o.Confidence, P, Q, T, N)
		if dis {
			disagreements++
		}
		if !within {
			t.Errorf("case %d (%s, n %d): p = %v but interval %v..%v per year from Var(S) %v; P %d Q %d T %d N %d",
				k, s.SenIntervalBasis, n, *s.MKP, *s.SenLower, *s.SenUpper, *s.SenVarS, P, Q, T, N)
		}
		want := map[bool]string{false: "mann-kendall", true: "hamed-rao"}[s.MKCorrectionFactor != nil && *s.MKCorrectionFactor >= 1]
		if seasonal {
			want = map[bool]string{false: "seasonal-kendall", true: "hirsch-slack"}[s.MKMethod == "seasonal-kendall/block-means/hirsch-slack"]
		}
		if s.SenIntervalBasis != want {
			t.Errorf("case %d: sen interval basis %q, stored test %q", k, s.SenIntervalBasis, want)
		}
	}
	t.Logf("%d of 120 cases disagree within the documented discreteness", disagreements)
}
