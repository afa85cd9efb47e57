package stats

// Checks of the Akritas–Theil–Sen interval (test inversion, Akritas, Murphy
// & LaValley 1995, JASA 90:170–177; Helsel 2012, Statistics for Censored
// Environmental Data, 2nd ed.): against a brute force written from the
// definition on small censored samples with one and several limits, and,
// without censoring, against the ranks of the sorted pairwise slopes, the
// Sen interval (SenSlope) and scipy.stats.theilslopes (Debian's scipy,
// live).

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os/exec"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

// censBruteInterval evaluates S(β) by brute force (censBruteResidualS)
// below the smallest candidate step value, strictly between consecutive
// distinct candidates and above the largest; lower = inf{β : S(β) ≤ bound}
// and upper = sup{β : S(β) ≥ −bound}, NaN when unbounded.
func censBruteInterval(t, y []float64, c []Censoring, bound float64) (lower, upper float64) {
	var cand []float64
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			cand = append(cand, (y[j]-y[i])/(t[j]-t[i]))
		}
	}
	censSortFloats(cand)
	cand = slices.Compact(cand)
	lower, upper = math.NaN(), math.NaN()
	// Test points: p[0] below every candidate, p[k+1] just after cand[k].
	p := []float64{cand[0] - 1}
	for k, v := range cand {
		if k+1 < len(cand) {
			p = append(p, v+(cand[k+1]-v)/2)
		} else {
			p = append(p, v+1)
		}
	}
	s := make([]int, len(p))
	for k, b := range p {
		s[k] = censBruteResidualS(t, y, c, b)
	}
	for k := range p {
		if float64(s[k]) <= bound {
			if k > 0 {
				lower = cand[k-1]
			}
			break
		}
	}
	for k := len(p) - 1; k >= 0; k-- {
		if float64(s[k]) >= -bound {
			if k < len(p)-1 {
				upper = cand[k]
			}
			break
		}
	}
	return lower, upper
}

func TestAkritasTheilSenIntervalAgainstBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 7))
	bounded := 0
	for k := 0; k < 200; k++ {
		n := 2 + rng.IntN(22)
		y, c := censRandom(rng, n, [][]float64{{2}, {1, 3}, {0.5, 2, 4.5}}[k%3], k%4 == 3)
		tt := make([]float64, n)
		for i := range tt {
			tt[i] = float64(i) + float64(rng.IntN(3))/4
			if k%2 == 1 && c[i] == Uncensored {
				y[i] += 0.3 * tt[i]
			}
		}
		conf := []float64{0.95, 0.9, 0.8, 0.5}[k%4]
		got, err := AkritasTheilSenInterval(tt, y, c, conf)
		if err != nil {
			t.Fatal(err)
		}
		b := censBruteMK(y, c)
		if !censRelEq(got.VarS, b.varFormula, 1e-12) {
			t.Errorf("k=%d: var_s %v, brute %v", k, got.VarS, b.varFormula)
		}
		if b.varFormula == 0 {
			if !math.IsNaN(got.CILower) || !math.IsNaN(got.CIUpper) {
				t.Errorf("k=%d: Var(S) = 0 but interval %v %v", k, got.CILower, got.CIUpper)
			}
			continue
		}
		bound := distuv.UnitNormal.Quantile(1-(1-conf)/2) * math.Sqrt(b.varFormula)
		if !censRelEq(got.Bound, bound, 1e-12) {
			t.Errorf("k=%d: bound %v, want %v", k, got.Bound, bound)
		}
		lo, hi := censBruteInterval(tt, y, c, bound)
		if !censRelEq(got.CILower, lo, 1e-12) || !censRelEq(got.CIUpper, hi, 1e-12) {
			t.Errorf("k=%d n=%d conf %v: interval %v %v; brute %v %v (t %v y %v c %v)", k, n, conf, got.CILower, got.CIUpper, lo, hi, tt, y, c)
		}
		if !math.IsNaN(lo) && !math.IsNaN(hi) {
			bounded++
			if !math.IsNaN(got.Slope) && (got.Slope < lo || got.Slope > hi) {
				t.Errorf("k=%d: slope %v outside its interval %v %v", k, got.Slope, lo, hi)
			}
		}
	}
	if bounded < 40 {
		t.Errorf("only %d of 200 samples had a bounded interval: the draws do not exercise the ends", bounded)
	}
	if _, err := AkritasTheilSenInterval([]float64{0, 1}, []float64{1, 2}, []Censoring{0, 0}, 1); err == nil {
		t.Error("confidence 1 accepted")
	}
}

// uncensoredDraw returns n distinct times and continuous values with a
// trend (no ties in values or, almost surely, in slopes).
func uncensoredDraw(rng *rand.Rand, n int) (tt, y []float64) {
	tt = make([]float64, n)
	y = make([]float64, n)
	for i := range tt {
		tt[i] = 1.5e9 + float64(i)*86400 + float64(rng.IntN(3600))
		y[i] = rng.NormFloat64() + 2e-8*float64(i)*86400
	}
	return tt, y
}

func sortedSlopes(tt, y []float64) []float64 {
	var s []float64
	for i := range y {
		for j := i + 1; j < len(y); j++ {
			s = append(s, (y[j]-y[i])/(tt[j]-tt[i]))
		}
	}
	slices.Sort(s)
	return s
}

// rankOf returns the slope of 1-based rank r, NaN outside 1..N.
func rankOf(s []float64, r int) float64 {
	if r < 1 || r > len(s) {
		return math.NaN()
	}
	return s[r-1]
}

// TestAkritasTheilSenIntervalWithoutCensoring: the ends are the slopes of
// ranks ⌈(N − C)/2⌉ and ⌊(N + C)/2⌋ + 1 (from the definition: S(β) = N − 2k
// just after the k-th smallest slope); they equal the Sen interval
// (SenSlope, Sen 1968 eq. 2.6, itself checked against
// scipy.stats.theilslopes in kendall_test.go) whenever its rounding picks
// the same ranks.
func TestAkritasTheilSenIntervalWithoutCensoring(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 8))
	same := 0
	for k := 0; k < 120; k++ {
		n := 3 + rng.IntN(60)
		tt, y := uncensoredDraw(rng, n)
		conf := []float64{0.95, 0.9, 0.99}[k%3]
		got, err := AkritasTheilSenInterval(tt, y, make([]Censoring, n), conf)
		if err != nil {
			t.Fatal(err)
		}
		sen, err := SenSlope(tt, y, conf)
		if err != nil {
			t.Fatal(err)
		}
		if !censRelEq(got.VarS, sen.VarS, 1e-12) {
			t.Errorf("n=%d: var_s %v, Sen %v", n, got.VarS, sen.VarS)
		}
		s := sortedSlopes(tt, y)
		N := float64(len(s))
		lr := int(math.Ceil((N - got.Bound) / 2))
		ur := int(math.Floor((N+got.Bound)/2)) + 1
		if !censRelEq(got.CILower, rankOf(s, lr), 0) || !censRelEq(got.CIUpper, rankOf(s, ur), 0) {
			t.Errorf("n=%d conf %v: interval %v %v, ranks %d %d give %v %v", n, conf, got.CILower, got.CIUpper, lr, ur, rankOf(s, lr), rankOf(s, ur))
		}
		if int64(lr) == sen.LowerRank && int64(ur) == sen.UpperRank {
			same++
			// SenSlope selects the correctly rounded slopes; the quotient of
			// rounded differences here may differ in the last bit.
			if !censRelEq(got.CILower, sen.Lower, 1e-12) || !censRelEq(got.CIUpper, sen.Upper, 1e-12) {
				t.Errorf("n=%d: interval %v %v, Sen %v %v at the same ranks", n, got.CILower, got.CIUpper, sen.Lower, sen.Upper)
			}
		}
	}
	if same < 20 {
		t.Errorf("only %d cases where the ranks coincide with Sen's", same)
	}
}

// TestAkritasTheilSenIntervalLiveScipy: without censoring, against
// scipy.stats.theilslopes(y, t, alpha=confidence) (scipy's alpha is the
// confidence level): equal ends where its rounded ranks equal the
// inversion's, and otherwise scipy's ends lie outward (or are clamped to
// the extreme slopes where the inversion's interval is unbounded).
func TestAkritasTheilSenIntervalLiveScipy(t *testing.T) {
	const py = "/usr/bin/python3"
	censLiveTool(t, py, "-c", "import scipy.stats")
	rng := rand.New(rand.NewPCG(20261204, 14))
	type tcase struct {
		T, Y []float64
		Conf float64
	}
	var cases []tcase
	for k := 0; k < 40; k++ {
		tt, y := uncensoredDraw(rng, 3+rng.IntN(80))
		cases = append(cases, tcase{tt, y, []float64{0.95, 0.9, 0.8}[k%3]})
	}
	req, _ := json.Marshal(cases)
	script := `import json, sys
import numpy as np
from scipy.stats import theilslopes
out = []
for c in json.load(sys.stdin):
    r = theilslopes(np.array(c["Y"]), np.array(c["T"]), alpha=c["Conf"])
    out.append([float(r[2]), float(r[3])])
print(json.dumps(out))`
	cmd := exec.Command(py, "-c", script)
	cmd.Stdin = bytes.NewReader(req)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("scipy theilslopes: %v\n%s", err, stderr.String())
	}
	var ends [][2]float64
	if err := json.Unmarshal(out, &ends); err != nil || len(ends) != len(cases) {
		t.Fatalf("scipy output: %v (%d ends)", err, len(ends))
	}
	same := 0
	for i, c := range cases {
		got, err := AkritasTheilSenInterval(c.T, c.Y, make([]Censoring, len(c.T)), c.Conf)
		if err != nil {
			t.Fatal(err)
		}
		s := sortedSlopes(c.T, c.Y)
		N := float64(len(s))
		lr := int(math.Ceil((N - got.Bound) / 2))
		ur := int(math.Floor((N+got.Bound)/2)) + 1
		// scipy 1.10.1 theilslopes: low = slopes[round((N − C)/2) − 1],
		// high = slopes[round((N + C)/2)] (0-based, ranks clamped).
		slr := min(max(int(math.RoundToEven((N-got.Bound)/2)), 1), len(s))
		sur := min(max(int(math.RoundToEven((N+got.Bound)/2))+1, 1), len(s))
		if !mkClose(ends[i][0], rankOf(s, slr), 1e-12) || !mkClose(ends[i][1], rankOf(s, sur), 1e-12) {
			t.Errorf("case %d: scipy %v %v, ranks %d %d give %v %v", i, ends[i][0], ends[i][1], slr, sur, rankOf(s, slr), rankOf(s, sur))
		}
		if slr == lr && sur == ur {
			same++
			if !mkClose(got.CILower, ends[i][0], 1e-12) || !mkClose(got.CIUpper, ends[i][1], 1e-12) {
				t.Errorf("case %d: interval %v %v, scipy %v %v", i, got.CILower, got.CIUpper, ends[i][0], ends[i][1])
			}
		} else if lr >= 1 && ur <= len(s) && (slr > lr || sur < ur) {
			t.Errorf("case %d: scipy ranks %d %d inside the inversion's %d %d", i, slr, sur, lr, ur)
		}
	}
	if same < 5 {
		t.Errorf("only %d cases where the ranks coincide with scipy's", same)
	}
}

// TestAkritasTheilSenStreamingEqualsSorted forces the O(n)-memory search
// (censored_sen_stream.go) on samples small enough to sort and compares
// every end bit for bit with the sorted walk (itself checked against the
// brute force above), with small pivot and collection sizes so that the
// brackets shrink over several rounds; heavy ties (a coarse grid, many
// equal slopes) exercise the cells whose steps equal their pivot.
func TestAkritasTheilSenStreamingEqualsSorted(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 9))
	for k := 0; k < 64; k++ {
		n := 2 + rng.IntN(300)
		y, c := censRandom(rng, n, [][]float64{{2}, {1, 3}, {0.5, 2, 4.5}, {-1}}[k%4], k%3 == 2)
		if k >= 60 {
			// Nearly every value censored: few pairs have a step, so the
			// first pivots cannot be drawn from random pairs.
			n = 300
			y, c = make([]float64, n), make([]Censoring, n)
			for i := range y {
				y[i], c[i] = float64(1+i%3), BelowLimit
			}
			y[k*7%n], c[k*7%n] = 5, Uncensored
		}
		tt := make([]float64, n)
		for i := range tt {
			tt[i] = float64(i)
			if k%5 != 0 {
				tt[i] += float64(rng.IntN(3)) / 4
			}
			if k%2 == 1 && c[i] == Uncensored {
				y[i] += 0.01 * tt[i]
			}
		}
		conf := []float64{0.95, 0.5, 0.99}[k%3]
		want, err := AkritasTheilSenInterval(tt, y, c, conf)
		if err != nil {
			t.Fatal(err)
		}
		saved, savedPiv, savedFirst, savedCol := atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax
		atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax = 0, 2+k%7, 3+k%11, int64(8+k%20)
		got, err := AkritasTheilSenInterval(tt, y, c, conf)
		atsSortedSteps, atsPivotCount, atsFirstPivots, atsCollectMax = saved, savedPiv, savedFirst, savedCol
		if err != nil {
			t.Fatal(err)
		}
		same := func(a, b float64) bool { return a == b || (math.IsNaN(a) && math.IsNaN(b)) }
		if !same(got.Slope, want.Slope) || !same(got.Lower, want.Lower) || !same(got.Upper, want.Upper) ||
			!same(got.CILower, want.CILower) || !same(got.CIUpper, want.CIUpper) || got.Steps != want.Steps {
			t.Errorf("k=%d n=%d: streaming %+v\nsorted %+v", k, n, got, want)
		}
	}
}

func TestAkritasTheilSenLimit(t *testing.T) {
	n := MaxCensoredSenValues + 1
	tt, y := make([]float64, n), make([]float64, n)
	for i := range tt {
		tt[i], y[i] = float64(i), float64(i%7)
	}
	_, err := AkritasTheilSenInterval(tt, y, make([]Censoring, n), 0.95)
	if err == nil || !strings.Contains(err.Error(), "50001 values, at most 50000 supported") {
		t.Errorf("n = %d: %v", n, err)
	}
}
